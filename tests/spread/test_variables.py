"""Varying quantities: a source toleranced absolutely varies by addition and may span zero.

With exact resistors, the spread of a divider's output is the source's: 10 V ± 0.1 V
over 10k/10k gives 5 V ± 50 mV, and a 0 A ± 10 µA leakage into 10k‖10k = 5k gives
0 V ± 50 mV [HB-divider] [HB-ohm]; the worst case lies at the source's two ends
[HB-bilinear] [CALC-wca-divider].
"""

from __future__ import annotations

import numpy as np
import pytest

from synth.design.reader import design_from_dict
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings


def divider(sources, goal):
    return design_from_dict({
        "design": {"tolerance": "0%", "tcr": "0 ppm/C"},
        "source": sources,
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
        "target": [{"voltage": "out", **goal}],
    })


def test_voltage_toleranced_in_volts():
    design = divider([{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                       "value": "10 V", "tolerance": "0.1 V"}], {"equals": "5 V"})
    settings = SpreadSettings(samples=4000, seed=1, keep_samples=True)
    spread = analyse_spread(design, settings=settings)
    t = spread.targets[0]
    assert spread.variables == ("V1",)
    assert (t.worst_low, t.worst_high) == pytest.approx((4.95, 5.05), rel=1e-12)
    assert t.high_corner == {"V1": "+"}
    assert np.all((t.mc_values >= 4.95 - 1e-12) & (t.mc_values <= 5.05 + 1e-12))
    # uniform over ±50 mV: a standard deviation of 50 mV / √3 [CP-sigma]
    assert t.mc_std == pytest.approx(0.05 / np.sqrt(3), rel=0.05)


def test_leakage_around_zero_amperes():
    design = divider([{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                       "value": "0 V"},
                      {"ref": "ILEAK", "kind": "current", "from": "gnd", "to": "out",
                       "value": "0 A", "tolerance": "10 uA"}],
                     {"equals": "0 V", "within": "60 mV"})
    settings = SpreadSettings(samples=4000, seed=1, keep_samples=True)
    spread = analyse_spread(design, settings=settings)
    t = spread.targets[0]
    assert spread.variables == ("ILEAK",)
    assert t.nominal == pytest.approx(0.0, abs=1e-15)
    assert (t.worst_low, t.worst_high) == pytest.approx((-0.05, 0.05), rel=1e-12)
    assert np.min(t.mc_values) < 0 < np.max(t.mc_values)  # it spans zero
    assert spread.yield_fraction == 1.0  # ±50 mV inside ±60 mV
