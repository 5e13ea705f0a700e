"""The binding target or limit named when no standard values meet every window and limit.

A 12 V divider with R1 of E24 from 1k to 10k over a fixed 1k cannot reach 0.5 V: its
nearest design, R1 = 10k, gives 12 × 1/11 = 1.0909 V [HB-divider] and dissipates
(12/11k)² × 10k = 11.9 mW in R1 [HB-ohm].  Which problem is named depends on which is
further over: the window's gap over the goal, or the power's share over the 0603
allowance of 0.1 W × (155 − T)/85 × 50 % [CP-chip-ratings] [CP-derating] [CP-margin].
"""

from __future__ import annotations

from synth.binding import limit_text
from synth.design.reader import design_from_dict
from synth.results import Problem
from synth.synthesis import synthesize


def divider(ambient, goal="0.5 V"):
    return design_from_dict({
        "design": {"ambient": ambient, "package": "0603"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
                      "range": ["1k", "10k"]},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "1k"}],
        "target": [{"voltage": "out", "equals": goal, "within": "1%"}],
    })


def test_the_window_binds_when_it_is_further_over():
    # at 140 °C: 11.9 mW over 8.824 mW is 35 % over; 1.0909 V is 118 % over the 0.5 V goal
    result = synthesize(divider("140 C"), top=2)
    assert not result.feasible and result.candidates[0].values == {"R1": 10e3}
    assert result.binding == ("target 'voltage at out' (target voltage at out = 1.09091 V "
                              "lies outside 495 mV .. 505 mV)")


def test_the_power_limit_binds_when_it_is_further_over():
    # at 150 °C the allowance is 0.1 W x 5/85 x 50 % = 2.941 mW: 11.9 mW is 305 % over
    result = synthesize(divider("150 C"), top=2)
    assert not result.feasible
    assert result.binding == ("R1 would dissipate 11.9 mW; 0603 allows 2.941 mW (50 % of "
                              "100 mW derated to 150 °C); a larger package or a parallel "
                              "pair fixes it")


def test_an_unrated_part_is_named_with_its_problem():
    design = divider("25 C")
    problem = Problem("power", "R9", 0.02, 0.01, "W")
    assert limit_text(design, problem) == "R9: R9 dissipates 20 mW, over its allowed 10 mW"


def test_a_part_allowed_nothing_is_named():
    # at 160 °C, past the 155 °C zero-power point, an 0603 may dissipate nothing
    result = synthesize(divider("160 C", goal="4 V"), top=2)
    assert not result.feasible
    assert result.binding is not None and "R1" in result.binding
