"""Limits met exactly: the slack of every limit comparison is relative to the limit.

A value within 1e-9 of its limit, relative to the limit, meets it; anything
further is over (synth.rating).  The slack must scale with the limit: an absolute
1e-9 would let a 30 µA limit pass a current 0.001 % over it, and would refuse a
10 MΩ bound that float rounding misses by a few parts in 10¹⁶.
"""

from __future__ import annotations

import pytest

from synth.checking import check
from synth.design.reader import design_from_dict
from synth.rating import LIMIT_SLACK, exceeds, falls_short
from synth.spread.records import SpreadSettings

from conftest import balanced_bridge


@pytest.mark.parametrize(("value", "limit", "over"), [
    (30e-6 * (1 + 0.5 * LIMIT_SLACK), 30e-6, False),
    (30e-6 * (1 + 2e-5), 30e-6, True),  # 0.6 nA over 30 µA: far below an absolute 1e-9
    (10e6 * (1 + 0.5 * LIMIT_SLACK), 10e6, False),  # 5 mΩ over 10 MΩ: within the slack
    (10e6 * (1 + 2 * LIMIT_SLACK), 10e6, True),
    (-30e-6 * (1 - 2e-5), -30e-6, True),  # a negative limit: the slack is |limit|
])
def test_exceeds_is_relative_to_the_limit(value, limit, over):
    assert bool(exceeds(value, limit)) is over
    # the mirror image for a lower limit
    assert bool(falls_short(-value, -limit)) is over


def twelve_volts_through(r1, limit_key):
    return design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "mid"], "value": r1},
                     {"ref": "R2", "nodes": ["mid", "gnd"], "value": "100k"}],
        "target": [{"current": "V1", limit_key: "30 uA"}],
    })


@pytest.mark.parametrize(("r1", "key", "met"), [
    # 12 V / 400 kΩ = 30 µA exactly, up to float rounding: met [HB-ohm]
    ("300k", "at_most", True), ("300k", "at_least", True),
    # 12 V / 399.995 kΩ = 30.000375 µA, over "at most 30 µA" by 1.25e-5 relative
    ("299.995k", "at_most", False),
    # 12 V / 400.005 kΩ = 29.999625 µA, under "at least 30 µA"
    ("300.005k", "at_least", False),
])
def test_check_judges_a_current_limit_with_the_relative_slack(r1, key, met):
    result = check(twelve_volts_through(r1, key))
    target = result.targets[0]
    assert target.met is met and result.ok is met
    assert target.status == ("met" if met else "out of window")
    if not met:
        assert [p.kind for p in result.problems] == ["window"]
        assert "lies outside at " in str(result.problems[0])


@pytest.mark.parametrize(("value", "limit", "noise", "outside"), [
    (-1.1e-16, 0.0, 3.3e-12, False),  # rounding of a 3.3 V solve at a 0 V edge
    (-4e-12, 0.0, 3.3e-12, True),  # beyond the floor: a real shortfall
    (-1.1e-16, 0.0, 0.0, True),  # without a floor a zero edge has no slack at all
    (5.0 - 1e-12, 5.0, 1e-20, False),  # the relative slack still applies under a floor
    (-1e-3, 0.0, float("nan"), True),  # an unknown floor is none
])
def test_a_noise_floor_widens_the_slack_of_a_window_edge(value, limit, noise, outside):
    # a value within the noise floor of an edge cannot be told from it [CP-noise-floor]
    assert bool(falls_short(value, limit, noise)) is outside
    assert bool(exceeds(-value, -limit, noise)) is outside


@pytest.mark.parametrize("target", [
    {"voltage": "out", "at_least": "0 V"},
    {"current": "R3", "at_least": "0 A"},
    {"power": "R3", "at_most": "0 W"},
])
def test_a_node_that_is_zero_exactly_meets_a_window_at_zero(target):
    # the exact solve gives 0 V at the midpoint [CALC-exact-nodal]; the loop solve
    # rounds it to about -1e-16 V, which is noise of the 3.3 V network [CP-noise-floor]
    from reference import exact_nodal

    voltages, _, _ = exact_nodal(["gnd", "a", "b", "out"],
                                 [("a", "out", 4700), ("out", "b", 4700), ("out", "gnd", 1000)],
                                 [("a", "gnd", 3.3), ("gnd", "b", 3.3)])
    assert voltages["out"] == 0
    design = balanced_bridge(target)
    result = check(design)
    assert abs(result.nodes["out"]) < 1e-14
    assert result.ok and result.targets[0].met
    worst = check(design, spread=SpreadSettings(samples=0))  # the nominal point again
    assert worst.targets[0].met


def test_a_real_shortfall_beyond_the_noise_floor_still_fails():
    # 1 mV below a 0 V edge is far beyond 1e-12 of the 3.3 V network [CP-noise-floor]
    design = balanced_bridge({"voltage": "out", "at_least": "1 mV"})
    assert not check(design).ok
