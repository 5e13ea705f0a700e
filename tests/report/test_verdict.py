"""The verdict line and target statuses in words (synth.report.verdict)."""

from __future__ import annotations

from synth.design.reader import design_from_dict
from synth.report.synthesis import design_json, design_text
from synth.report.verdict import verdict_text
from synth.spread.records import SpreadSettings
from synth.synthesis import synthesize


def _divider(goal: dict, **design: str) -> dict:
    return {
        "design": {"title": "48 V sense", "package": "0603", **design},
        "source": [{"ref": "VIN", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "48 V"}],
        "resistor": [
            {"ref": "R1", "nodes": ["in", "out"], "choose": "E96", "range": ["100", "10M"]},
            {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E96", "range": ["100", "10M"]},
            {"ref": "RLOAD", "nodes": ["out", "gnd"], "value": "1M", "bom": False}],
        "target": [{"name": "output", "voltage": "out", **goal}],
    }


def test_a_soft_goal_traded_for_a_limit_is_reported_missed_with_the_limit_named():
    # R1 must see 48 - 3.3 = 44.7 V for the goal, over an 0603's 50 V x 80 % = 40 V
    # [CP-chip-ratings], [CP-margin]: the goal is missed, not met
    result = synthesize(design_from_dict(_divider({"equals": "3.3 V"})), top=1, spread=None)
    lines = verdict_text(result)
    assert lines[0].startswith("result: the best design meets every window and limit at "
                               "nominal values, but 1 goal(s) are missed")
    status = lines[-1]
    assert status.startswith("  output: goal missed by +142% because a limit binds (R1 would")
    assert "0603 allows 40 V at 80 % use" in status
    assert "without that limit the standard values reach +0.00103%" in status
    document = design_json(result)
    assert document["binding_limits"][0]["kind"] == "voltage"
    assert document["candidates"][0]["targets"][0]["status"] == "goal missed"
    assert "MISSED" in design_text(result)


def test_the_verdict_names_the_basis_and_the_yield():
    design = design_from_dict(_divider({"equals": "3.3 V", "within": "5%"}, package="0805"))
    result = synthesize(design, top=2, spread=SpreadSettings(samples=2000, seed=2))
    head = verdict_text(result)[0]
    assert head.startswith("result: the best design meets every window and limit at nominal "
                           "values; Monte Carlo yield ")
    assert "(95 % interval " in head
    worst = synthesize(design, top=2, require="worst-case", spread=None)
    assert "over the whole tolerance box (worst case)" in verdict_text(worst)[0]
    assert "  output: met" in verdict_text(worst)


def test_nearest_designs_on_the_worst_case_basis_show_out_of_band():
    # a window of +-0.5 % that 1 % parts cannot hold over their box [HB-wca]
    design = design_from_dict(_divider({"equals": "3.3 V", "within": "0.5%"}, package="0805"))
    result = synthesize(design, top=2, require="worst-case", spread=None)
    assert not result.feasible
    lines = verdict_text(result)
    assert lines[0].startswith("result: NO standard values meet every window and limit over "
                               "the whole tolerance box")
    assert "at worst case, target output" in "\n".join(lines)
    assert "  output: met at nominal values, out of its window on the required basis" in lines
