"""Reading positions of one or several parts (synth.design.read_resistor, read_target)."""

from __future__ import annotations

import pytest

from synth.design.reader import design_from_dict
from synth.errors import DesignError


def _design(resistor: dict, target: dict | None = None) -> dict:
    return {
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], **resistor},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
        "target": [target or {"voltage": "out", "equals": "5 V"}],
    }


@pytest.mark.parametrize(("resistor", "fragment"), [
    ({"value": ["1k", "2k"]}, "value is a list of part values only for a position of several"),
    ({"value": "1k", "combine": "series"}, "a fixed position of several parts lists each"),
    ({"value": "1k", "range": ["1k", "2k"]}, "range applies only to a part rnsynth chooses"),
    ({"choose": "E24", "range": ["1k", "2k"], "parts": 3}, "parts applies to a position of"),
    ({"choose": "E24", "range": ["1k", "2k"], "equal_parts": True},
     "equal_parts applies to a position of"),
    ({"choose": "E24", "range": ["1k", "2k"], "combine": "star"}, "combine 'star' is not known"),
    ({"choose": "E24", "range": ["1k", "2k"], "combine": "series", "parts": 7},
     "parts 7 must be a whole number from 2 to 6"),
    ({"choose": "E24", "range": ["1k", "2k"], "combine": "series", "parts": True},
     "must be a whole number from 2 to 6"),
    ({"value": ["1k", "2k"], "combine": "series", "parts": 3},
     "value lists 2 part values but parts is 3"),
    ({"value": ["1k", "-2k"], "combine": "series"}, "must be positive"),
    ({"choose": "E24", "range": ["1k", "2k"], "combine": "series", "equal_parts": "yes"},
     "equal_parts must be true or false"),
    ({"value": ["1k", "2k"], "combine": "series", "equal_parts": True},
     "equal_parts = true but the part values differ"),
    ({"value": "1k", "bom": "no"}, "bom must be true or false"),
])
def test_refused_positions(resistor, fragment):
    with pytest.raises(DesignError, match="resistor R1") as caught:
        design_from_dict(_design(resistor))
    assert fragment in str(caught.value)


def test_a_fixed_position_of_several_parts_reads_each_part():
    design = design_from_dict(_design({"value": ["442k", "432k"], "combine": "series"}))
    position = design.resistors[0].position
    assert position.count == 2 and position.part_values == (442e3, 432e3)
    assert design.resistors[0].value == pytest.approx(874e3)  # series sum [HB-ohm]
    parallel = design_from_dict(_design({"value": ["20k", "20k"], "combine": "parallel"}))
    assert parallel.resistors[0].value == pytest.approx(10e3)  # 20k || 20k [HB-ohm]
    assert design.part_refs == ("R1A", "R1B", "R2")


@pytest.mark.parametrize(("target", "fragment"), [
    ({"voltage": "out", "equals": "5 V", "without": ["R2"]}, "without applies to a resistance"),
    ({"resistance": ["out", "gnd"], "equals": "5k", "without": []}, "without must name resistors"),
    ({"resistance": ["out", "gnd"], "equals": "5k", "without": ["R9"]}, "without names 'R9'"),
    ({"loss": [["out", "gnd"]], "equals": "6 dB"}, "loss must be two voltages"),
    ({"loss": [["out", "gnd"], ["in", "in"]], "equals": "6 dB"}, "reference voltage is between"),
    ({"voltage": "out", "equals": "5 V", "within": "0.1"}, "has no unit"),
])
def test_refused_targets(target, fragment):
    with pytest.raises(DesignError) as caught:
        design_from_dict(_design({"value": "10k"}, target))
    assert fragment in str(caught.value)


def test_a_loss_target_reads_decibels_and_a_resistance_may_leave_parts_out():
    design = design_from_dict(_design(
        {"value": "10k"}, {"loss": [["out", "gnd"], ["in", "gnd"]], "equals": "6.0206 dB",
                           "within": "0.01 dB"}))
    target = design.targets[0]
    assert target.kind == "loss" and target.unit == "dB" and target.equals == pytest.approx(6.0206)
    assert target.label == "loss from in to out"
    seen = design_from_dict(_design({"value": "10k"}, {"resistance": ["out", "gnd"],
                                                        "equals": "10k", "without": "R1"}))
    assert seen.targets[0].without == ("R1",)


def test_loss_and_resistance_without_a_part_are_measured():
    from synth.checking import check

    # a 10k/10k divider halves the voltage: 20 log10 2 = 6.0206 dB [HB-pad]
    loss = check(design_from_dict(_design(
        {"value": "10k"}, {"loss": [["out", "gnd"], ["in", "gnd"]], "equals": "6 dB"})))
    assert loss.targets[0].value == pytest.approx(6.020600, abs=1e-6)
    # with R1 left out, out sees only R2 [HB-ohm]; with it, R1 || R2 = 5k
    alone = check(design_from_dict(_design(
        {"value": "10k"}, {"resistance": ["out", "gnd"], "equals": "10k", "without": ["R1"]})))
    both = check(design_from_dict(_design(
        {"value": "10k"}, {"resistance": ["out", "gnd"], "equals": "5k"})))
    assert alone.targets[0].value == pytest.approx(10e3)
    assert both.targets[0].value == pytest.approx(5e3)
