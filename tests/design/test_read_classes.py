"""Part classes in a design file (synth.design.read_classes, through the reader)."""

from __future__ import annotations

import pytest

from synth.design.reader import design_from_dict
from synth.errors import DesignError


def _design(resistor: dict, design: dict | None = None) -> dict:
    return {
        "design": design or {},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], **resistor},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
        "target": [{"voltage": "out", "equals": "5 V"}],
    }


def test_a_part_with_classes_is_free_and_stands_as_its_cheapest_class():
    design = design_from_dict(_design({"classes": ["0.1%", "1%"], "range": ["1k", "100k"]}))
    part = design.resistors[0]
    assert part.free and [c.name for c in part.classes] == ["0.1%", "1%"]
    assert (part.choose, part.tolerance, part.tcr) == ("E24+E96", 0.01, pytest.approx(1e-4))
    assert design.resistors[1].classes == ()


def test_the_design_default_applies_to_parts_with_a_range_and_no_choose():
    design = design_from_dict({**_design({"range": ["1k", "100k"]}, {"classes": ["5%", "1%"]}),
                               })
    assert [c.name for c in design.resistors[0].classes] == ["5%", "1%"]
    own = design_from_dict(_design({"choose": "E96", "range": ["1k", "100k"]},
                                   {"classes": ["5%", "1%"]}))
    assert own.resistors[0].classes == () and own.resistors[0].choose == "E96"


@pytest.mark.parametrize(("resistor", "design", "fragment"), [
    ({"classes": ["2%"], "range": ["1k", "2k"]}, None,
     "class '2%' is not in the class table; use one of 5%, 1%, 0.5%, 0.1%, 0.05%"),
    ({"classes": ["0.5 %"], "range": ["1k", "2k"]}, None, "did you mean '0.5%'"),
    ({"classes": ["1%"]}, None, "a part chosen by class needs a range"),
    ({"classes": ["1%"], "range": ["1k", "2k"], "choose": "E96"}, None,
     "choose and classes both set the part's values"),
    ({"classes": ["1%"], "range": ["1k", "2k"], "tolerance": "1%"}, None,
     "tolerance and classes both set the part's tolerance"),
    ({"classes": ["1%"], "range": ["1k", "2k"], "tcr": "5 ppm/C"}, None,
     "tcr and classes both"),
    ({"classes": "1%", "range": ["1k", "2k"]}, None, "classes must be a list of class names"),
    ({"classes": [], "range": ["1k", "2k"]}, None, "classes must be a list"),
    ({"classes": ["1%", "1%"], "range": ["1k", "2k"]}, None, "names class '1%' twice"),
    ({"range": ["1k", "2k"]}, {"classes": ["9%"]}, "class '9%' is not in the class table"),
    ({"classes": ["1%"], "range": ["1k", "2k"], "class": "0.1%"}, None,
     "class '0.1%' is not one of the part's classes (1%)"),
])
def test_refused_classes(resistor, design, fragment):
    with pytest.raises(DesignError, match="resistor R1") as caught:
        design_from_dict(_design(resistor, design))
    assert fragment in str(caught.value)


@pytest.mark.parametrize(("design", "fragment"), [
    ({"classes": [3]}, "[design]: classes must be a list of class names"),
    ({"classes": ["1%"], "class_table": "mine.toml"}, "class table 'mine.toml' is not a .csv file"),
    ({"classes": ["1%"], "class_table": "absent.csv"}, "class table 'absent.csv' was not found"),
])
def test_refused_design_class_settings(design, fragment):
    with pytest.raises(DesignError) as caught:
        design_from_dict(_design({"range": ["1k", "2k"]}, design), origin="probe.toml")
    assert fragment in str(caught.value) and "probe.toml" in str(caught.value)


def test_an_own_table_with_a_negative_cost_is_refused_naming_the_design(tmp_path):
    (tmp_path / "mine.csv").write_text("name,series,tolerance,tcr,cost\nx,E24,1%,,-2\n",
                                       encoding="utf-8")
    with pytest.raises(DesignError, match=r"probe.toml, \[design\]: .*mine.csv, line 2: "
                                          "cost '-2' is negative"):
        design_from_dict(_design({"range": ["1k", "2k"]},
                                 {"classes": ["x"], "class_table": "mine.csv"}),
                         origin=str(tmp_path / "probe.toml"))


def test_a_class_without_tcr_takes_the_design_tcr_and_stock_classes_their_rows(tmp_path):
    (tmp_path / "shelf.csv").write_text("value,tolerance,price\n4.7k,1%,0.1\n5.1k,1%,0.1\n"
                                        "4.99k,0.1%,0.5\n", encoding="utf-8")
    from synth.search.choices import choices_for
    design = design_from_dict(_design({"classes": ["1%", "0.1%"]},
                                      {"class_table": "shelf.csv", "tcr": "50 ppm/C"}),
                              origin=str(tmp_path / "probe.toml"))
    part = design.resistors[0]
    assert part.tcr == pytest.approx(50e-6) and part.classes[1].tcr == pytest.approx(50e-6)
    assert choices_for(part).values.tolist() == [4700.0, 5100.0]  # only the 1 % rows


def test_class_names_the_class_check_uses():
    design = design_from_dict(_design({"classes": ["1%", "0.1%"], "range": ["1k", "100k"],
                                       "class": "0.1%", "value": "10k"}))
    part = design.resistors[0]
    assert (part.tolerance, part.choose, part.value) == (0.001, "E24+E192", 10e3)
