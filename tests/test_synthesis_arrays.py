"""The search with matched arrays: common deviation at its ends while searching, the designs
shown judged again with it scanned (synth.synthesis, synth.report.verdict).

Two dividers from 10 V, a = R2/(R1 + R2) and b = R4/(R3 + R4), with R2 and R4 in one array
of ±5 %: both move alike to first order, so V(b) - V(a) peaks inside the common range
[HB-divider]; the peak and the ends' values are those the brute-force scan of
tests/spread/test_common_mode.py checks ([CP-matched-array] model).
"""

from __future__ import annotations

from synth.design.reader import design_from_dict
from synth.report.verdict import verdict_text
from synth.synthesis import synthesize


def _design(at_most: str) -> dict:
    fixed = {"tolerance": "0%", "tcr": "0 ppm/C"}
    return {
        "design": {"require": "worst-case"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "a"], "choose": "E24",
                      "range": ["7.5k", "7.5k"], **fixed},
                     {"ref": "R2", "nodes": ["a", "gnd"], "value": "3.3k", "array": "RN1"},
                     {"ref": "R3", "nodes": ["in", "b"], "value": "3.3k", **fixed},
                     {"ref": "R4", "nodes": ["b", "gnd"], "value": "7.5k", "array": "RN1"}],
        "array": [{"name": "RN1", "tolerance": "5%", "ratio_tolerance": "0.02%",
                   "tcr": "0 ppm/C"}],
        "target": [{"name": "b - a", "voltage": ["b", "a"], "at_most": at_most}],
    }


def test_a_design_held_at_the_common_ends_but_not_inside_is_not_called_feasible():
    # nominal 10 V x 4.2/10.8 = 3.88889 V; at the common deviation's ends V(b) - V(a)
    # stays below 3.8874 V, inside it reaches 3.8893 V: the search passes the design, the
    # scan does not
    result = synthesize(design_from_dict(_design("3.8891 V")))
    assert not result.feasible and not result.proven_optimal
    best = result.candidates[0]
    assert not best.feasible and any(p.kind == "window" for p in best.problems)
    assert result.common_mode_rejected
    assert len(best.problems) == 1  # judged once
    lines = verdict_text(result)
    assert lines[0].startswith("result: the search's designs meet every window and limit "
                               "with each matched array's common deviation at its two ends "
                               "only; with it scanned inside its range none of those shown "
                               "does")
    assert "time limit" not in lines[0]
    assert any("judged each matched array's common deviation at its two ends only" in line
               for line in lines)


def test_a_design_that_holds_inside_too_stays_feasible():
    result = synthesize(design_from_dict(_design("3.9 V")))
    assert result.feasible and result.candidates[0].feasible
    assert not result.common_mode_rejected
    assert result.candidates[0].spread is not None
    assert result.candidates[0].spread.targets[0].method == "vertices, common mode scanned"
    lines = verdict_text(result)
    assert lines[0].startswith("result: the best design meets every window and limit")
    assert "designs shown were judged again with it scanned" in lines[1]
