"""The sweep's keys: TABLE.ITEM.FIELD names one value of a design file, and the tables are
copied with values set there (the grid-level behaviour is in test_sweep.py)."""

from __future__ import annotations

import copy

import pytest

from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.sweep_keys import ARRAYS, TABLES, edit_tables, place_of


def divider_tables(free: bool = False) -> dict:
    """12 V into R1 = 10k over R2 = 4.7k; ``free`` lets R1 be chosen from E24."""
    r1 = {"ref": "R1", "nodes": ["in", "out"], "value": "10k"}
    if free:
        r1.update(choose="E24", range=["1k", "100k"])
    return {
        "design": {"title": "divider"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [r1, {"ref": "R2", "nodes": ["out", "gnd"], "value": "4.7k"}],
        "target": [{"name": "tap", "voltage": "out", "at_most": "4 V"}],
    }


def test_every_array_of_tables_can_start_a_key():
    assert TABLES[0] == "design" and set(TABLES[1:]) == set(ARRAYS)


@pytest.mark.parametrize("key", ["resistor.R2.value", "resistor.2.value", "resistor.#2.value"])
def test_an_item_is_found_by_designator_or_position(key):
    tables = divider_tables()
    assert place_of(tables, design_from_dict(tables), key) == ("resistor", 1, "value")


def test_a_target_is_found_by_name_label_or_position():
    tables = divider_tables()
    tables["target"].append({"voltage": "out", "at_least": "1 V"})
    design = design_from_dict(tables)
    assert place_of(tables, design, "target.tap.at_most") == ("target", 0, "at_most")
    assert place_of(tables, design, "target.1.at_most") == ("target", 0, "at_most")
    assert place_of(tables, design, "target.voltage at out.at_least") == (
        "target", 1, "at_least")


def test_edited_tables_are_a_copy_with_each_value_set():
    tables = divider_tables()
    before = copy.deepcopy(tables)
    edited = edit_tables(tables, [("resistor", 1, "value"), ("design", None, "ambient")],
                         [2200.0, "85 C"])
    assert edited["resistor"][1]["value"] == 2200.0 and edited["design"]["ambient"] == "85 C"
    assert tables == before
    bare = {k: v for k, v in tables.items() if k != "design"}
    assert edit_tables(bare, [("design", None, "ambient")], ["40 C"])["design"] == {
        "ambient": "40 C"}


def test_a_design_that_is_not_a_table_is_refused():
    tables = {**divider_tables(), "design": "x"}
    with pytest.raises(DesignError, match=r"--over design.ambient: \[design\] is not a table"):
        edit_tables(tables, [("design", None, "ambient")], ["40 C"])


@pytest.mark.parametrize(("key", "fragment"), [
    ("resistors.R1.value", "'resistors' is not a table of a design file; did you mean "
                           "'resistor'?"),
    ("resistor.R9.value", "the design has no resistor 'R9'"),
    ("resistor.R3.value", "name it by its ref or its position (1 to 2)"),
    ("resistor.value", "write resistor.ITEM.FIELD"),
    ("regulator.U1.setpoint", "the design has no [[regulator]]"),
    ("resistor.R1.range", "holds a list or table"),
    ("design.a.b", "write design.FIELD"),
])
def test_keys_that_name_nothing_are_refused_naming_the_fix(key, fragment):
    tables = divider_tables(free=True)
    with pytest.raises(DesignError) as caught:
        place_of(tables, design_from_dict(tables), key)
    assert fragment in str(caught.value) and str(caught.value).startswith(f"--over {key}")
