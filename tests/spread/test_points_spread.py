"""Spread over operating points: one physical part is one random draw at every point.

The worst case over a source's range is the worst of its two ends, checked against a
dense sweep of the source [HB-superposition] [HB-bilinear]; the yield needs every point
to pass, and with the draws shared a design whose two points see the same ratio has the
yield of one point (independent draws would give about its square) [HB-wca].
"""

from __future__ import annotations

import numpy as np
import pytest

from synth.checking import check
from synth.circuit.measure import Evaluator
from synth.design.reader import design_from_dict
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings
from synth.spread.variables import SpreadVariables


def divider(points=None, vin=None, **source):
    data = {
        "design": {"tcr": "0 ppm/C"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": vin or "10 V", "tolerance": "1%", **source},
                   {"ref": "VREF", "kind": "voltage", "plus": "ref", "minus": "gnd",
                    "value": "2.5 V", "tolerance": "0.5%"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k", "tolerance": "1%"},
                     {"ref": "R2", "nodes": ["ref", "out"], "value": "22k", "tolerance": "1%"},
                     {"ref": "R3", "nodes": ["out", "gnd"], "value": "10k", "tolerance": "1%",
                      "package": "0603"}],
        "target": [{"ratio": [["out", "gnd"], ["in", "gnd"]], "at_least": 0.3}],
    }
    if points:
        data["point"] = points
    return data


def test_copies_share_each_part_and_source_deviation():
    design = design_from_dict(divider(range=["5 V", "10 V"]))
    variables = SpreadVariables(design, Evaluator(design))
    assert variables.names == ("R1", "R2", "R3", "V1", "VREF")
    assert len(variables.tied) == 5  # the second point's copies of R1..R3, V1 and VREF


def test_the_yield_needs_every_point_and_the_draws_are_shared():
    """Two points of the same source value: the yield of one point, not its square."""
    window = [{"voltage": "out", "equals": "4.537 V", "within": "0.6%"}]
    single = divider()
    single["target"] = window
    twice = divider(points=[{"name": "a"}, {"name": "b"}])
    twice["target"] = window
    settings = SpreadSettings(samples=20_000, seed=3)
    one = analyse_spread(design_from_dict(single), settings=settings)
    two = analyse_spread(design_from_dict(twice), settings=settings)
    assert 0.2 < one.yield_fraction < 0.9
    assert two.yield_fraction == pytest.approx(one.yield_fraction, abs=1e-12)
    # the worst cases of the two copies are one worst case
    assert two.targets[0].worst_low == pytest.approx(two.targets[1].worst_low, rel=1e-12)
    assert two.targets[0].worst_low == pytest.approx(one.targets[0].worst_low, rel=1e-12)


def test_the_worst_case_over_a_source_range_is_the_worst_of_its_ends():
    """A dense sweep of V1 over its range, each value's own worst case over the tolerance box,
    never goes beyond the two ends' [HB-superposition] [HB-bilinear]."""
    ranged = design_from_dict(divider(range=["5 V", "10 V"]))
    ends = check(ranged, spread=SpreadSettings(samples=0)).spread
    assert ends is not None
    low = min(t.worst_low for t in ends.targets)
    high = max(t.worst_high for t in ends.targets)
    sweep_low, sweep_high = [], []
    for v in np.linspace(5, 10, 26):
        one = check(design_from_dict(divider(vin=f"{v} V")),
                    spread=SpreadSettings(samples=0)).spread
        assert one is not None
        sweep_low.append(one.targets[0].worst_low)
        sweep_high.append(one.targets[0].worst_high)
    assert min(sweep_low) == pytest.approx(low, rel=1e-12)
    assert max(sweep_high) == pytest.approx(high, rel=1e-12)


def test_each_part_is_judged_at_its_worst_point():
    design = design_from_dict(divider(range=["5 V", "10 V"]))
    spread = check(design, spread=SpreadSettings(samples=0)).spread
    assert spread is not None
    assert [p.ref for p in spread.parts] == ["R1", "R2", "R3"]
    at_ends = {name: check(design_from_dict(divider(vin=f"{v} V")),
                           spread=SpreadSettings(samples=0)).spread
               for name, v in (("V1 low", 5), ("V1 high", 10))}
    for k, part in enumerate(spread.parts):
        worst = {name: one.parts[k].worst_power for name, one in at_ends.items()}
        assert part.worst_power == pytest.approx(max(worst.values()), rel=1e-12)
        assert part.point == max(worst, key=worst.__getitem__)
        assert part.worst_voltage == pytest.approx(
            max(one.parts[k].worst_voltage for one in at_ends.values()), rel=1e-12)
