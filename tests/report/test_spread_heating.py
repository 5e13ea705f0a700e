"""The spread report's self-heating block: each part's rise, each drifting target's drift with
and without it (relative, or in the target's unit for a zero goal), or the reason it is not
modelled [HB-self-heating]."""

from __future__ import annotations

import pytest

from synth.design.reader import design_from_dict
from synth.report.spread import spread_json, spread_text
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings


def bridge(tcr="100 ppm/C"):
    """Two dividers from 10 V, 1k over 1k (25 mW each) and 10k over 10k (2.5 mW each),
    their outputs' difference 0 V (a bridge null) [HB-divider]."""
    parts = [("R1", "in", "a", "1k"), ("R2", "a", "gnd", "1k"),
             ("R3", "in", "b", "10k"), ("R4", "b", "gnd", "10k")]
    return design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [{"ref": ref, "nodes": [a, b], "value": value, "tolerance": "0%",
                      "tcr": tcr, "package": "0603"} for ref, a, b, value in parts],
        "target": [{"name": "null", "voltage": ["a", "b"], "equals": "0 V", "within": "50 mV"},
                   {"name": "a", "voltage": "a", "equals": "5 V"}]})


def test_a_zero_goal_reports_its_drift_in_its_unit():
    # R1, R2 at 25 mW x 850 K/W = 21.25 K, R3, R4 at 2.125 K [HB-self-heating]; the null
    # moves by ∂V/∂R·R = ±2.5 V per unit for each of R1, R2 (and R3, R4), so its drift RSS is
    # 2.5 V x 100e-6 x sqrt(2 x 21.25² + 2 x 2.125²) [GUM-propagation], all of it self-heating
    spread = analyse_spread(bridge(), settings=SpreadSettings(samples=0))
    text = spread_text(spread, ["V", "V"])
    drift = 2.5 * 100e-6 * (2 * 21.25 ** 2 + 2 * 2.125 ** 2) ** 0.5
    null = spread.targets[0]
    assert null.drift_rss_abs == pytest.approx(drift, rel=1e-5)
    assert "R1 +21.2 K, R2 +21.2 K, R3 +2.12 K, R4 +2.12 K" in text
    block = text.split("self-heating (first order")[1].splitlines()
    row = next(line for line in block if line.startswith("null "))  # 7.5505 mV
    assert "±7.5505 mV" in row and "±0 V" in row and "100%" in row
    # the 5 V output's drift is relative: 2.5 V x 100e-6 x 21.25 x √2 over 5 V = 0.150 %
    row = next(line for line in block if line.startswith("a "))
    assert "±0.15%" in row
    assert spread_json(spread)["targets"][0]["self_heating_share_of_drift"] == pytest.approx(1)


def test_no_drift_no_table():
    spread = analyse_spread(bridge("0 ppm/C"), settings=SpreadSettings(samples=0))
    text = spread_text(spread, ["V", "V"])
    assert "self-heating (first order" in text  # the parts still heat, nothing drifts
    assert "self-heating share of drift variance" not in text
    assert all(t.self_heating_share_of_drift is None for t in spread.targets)
