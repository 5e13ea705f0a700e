"""Matched resistor arrays in design files (synth.design.array): members, figures, refusals.

The figures follow [CP-matched-array]: an absolute tolerance A per member, a ratio
tolerance ρ ≤ A between members, a TCR and a tracking τ ≤ TCR.
"""

from __future__ import annotations

import copy

import pytest
from click.testing import CliRunner

from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.errors import DesignError

PAIR = {
    "design": {"package": "0603"},
    "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                "value": "10 V"}],
    "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k", "array": "RN1"},
                 {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k", "array": "RN1"},
                 {"ref": "R3", "nodes": ["out", "gnd"], "value": "1M"}],
    "array": [{"name": "RN1", "tolerance": "0.1%", "ratio_tolerance": "0.02%",
               "tcr": "25 ppm/C", "tcr_tracking": "5 ppm/C"}],
    "target": [{"voltage": "out", "equals": "5 V"}],
}


def _changed(edit) -> dict:
    data = copy.deepcopy(PAIR)
    edit(data)
    return data


def test_members_take_the_arrays_figures_and_package():
    design = design_from_dict(PAIR)
    (array,) = design.arrays
    assert array.members == ("R1", "R2") and array.package == "0603"
    # common ±(A − ρ/2), own ±ρ/2; TCR split the same way [CP-matched-array]
    assert array.common_tolerance == pytest.approx(0.0009)
    assert array.member_tolerance == pytest.approx(0.0001)
    assert array.common_tcr == pytest.approx(22.5e-6)
    assert array.member_tcr == pytest.approx(2.5e-6)
    r1, r2, r3 = design.resistors
    assert (r1.array, r2.array, r3.array) == ("RN1", "RN1", None)
    assert r1.tolerance == pytest.approx(0.001) and r1.tcr == pytest.approx(25e-6)
    assert r3.tolerance == pytest.approx(0.01)  # the design default, untouched


def test_an_array_may_list_its_members_and_its_package():
    def edit(data: dict) -> None:
        for r in data["resistor"]:
            r.pop("array", None)
        data["design"].pop("package")
        data["array"][0].update(members=["R2", "R1"], package="0805")
    design = design_from_dict(_changed(edit))
    assert design.arrays[0].members == ("R1", "R2")  # in file order
    assert [r.package for r in design.resistors] == ["0805", "0805", None]


def test_tracking_defaults_to_the_tcr_and_the_tcr_to_the_design_default():
    def edit(data: dict) -> None:
        del data["array"][0]["tcr"], data["array"][0]["tcr_tracking"]
        data["design"]["tcr"] = "50 ppm/C"
    (array,) = design_from_dict(_changed(edit)).arrays
    assert array.tcr == pytest.approx(50e-6) and array.tcr_tracking == pytest.approx(50e-6)


def _sensor(data: dict) -> None:
    data["sensor"] = [{"ref": "RT1", "kind": "rtd", "nodes": ["out", "gnd"]}]
    data["array"][0]["members"] = ["RT1"]


@pytest.mark.parametrize(("edit", "fragment"), [
    (lambda d: d["array"][0].update(members=["V1"]),
     "array RN1: member 'V1' is a voltage source, not a resistor; list resistors only"),
    (_sensor, "member 'RT1' is a temperature sensor, not a resistor"),
    (lambda d: d["resistor"][2].update(array="RN1", bom=False),
     "member R3 is left off the BOM (it models a load, a sensor or an input), not a "
     "resistor part"),
    (lambda d: d["resistor"][2].update(array="RN1", value=["1M", "1M"], combine="series"),
     "member R3 is a position of 2 parts; an array member is one resistor"),
    (lambda d: d["array"][0].update(ratio_tolerance="0.2%"),
     "array RN1: ratio_tolerance '0.2%' is larger than tolerance '0.1%'"),
    (lambda d: d["array"][0].update(tcr_tracking="30 ppm/C"),
     "tcr_tracking '30 ppm/C' is larger than the TCR (25 ppm/K)"),
    (lambda d: d["resistor"][1].update(package="0805"),
     "array RN1: members R1 (0603) and R2 (0805) are on different packages; an array is one "
     "package"),
    (lambda d: d["array"][0].update(package="0805") or d["resistor"][0].update(package="0603"),
     "member R1 is on package '0603' but the array is one '0805' package"),
    (lambda d: d["resistor"][0].update(array="RN2"),
     "resistor R1: array 'RN2' has no [[array]] table; did you mean 'RN1'?"),
    (lambda d: d["resistor"][1].pop("array"),
     "array RN1: it has 1 member; an array matches two or more resistors"),
    (lambda d: d["array"][0].pop("ratio_tolerance"), "key 'ratio_tolerance' is missing"),
    (lambda d: d["array"][0].pop("tolerance"), "key 'tolerance' is missing"),
    (lambda d: d["resistor"][0].update(tolerance="1%"),
     "resistor R1: it is a member of array RN1, which sets its tolerance; drop tolerance"),
    (lambda d: d["resistor"][1].update(classes=["1%"], range=["1k", "100k"]),
     "resistor R2: it is a member of array RN1, which sets its classes; drop classes"),
    (lambda d: d["array"].append(dict(d["array"][0])), "the name is used by two [[array]]"),
    (lambda d: d["array"][0].update(name="R3") or [r.update(array="R3") for r in
                                                   d["resistor"][:2]],
     "array R3: the name is also a part's designator"),
    (lambda d: d["array"][0].update(members="R1"), "members must be a list of resistor"),
    (lambda d: d["array"][0].update(members=["R9"]), "member 'R9' is not a resistor of the"),
    (lambda d: d["array"].append({"name": "RN2", "tolerance": "1%", "ratio_tolerance": "1%",
                                  "members": ["R1", "R3"]}),
     "member R1 names array 'RN1'; a resistor belongs to one array"),
    (lambda d: d["array"][0].update(package="0604"), "package '0604' is not in the package"),
    (lambda d: d["array"][0].update(tolerans="1%"), "unknown key 'tolerans'"),
])
def test_refused_arrays(edit, fragment):
    with pytest.raises(DesignError) as caught:
        design_from_dict(_changed(edit), "d.toml")
    message = str(caught.value)
    assert fragment in message and message.startswith("d.toml, ")
    assert "\n" not in message


def test_a_refused_array_exits_2_with_one_line(tmp_path):
    path = tmp_path / "pair.toml"
    path.write_text(
        '[[source]]\nref = "V1"\nkind = "voltage"\nplus = "in"\nminus = "gnd"\nvalue = "10 V"\n'
        '[[resistor]]\nref = "R1"\nnodes = ["in", "out"]\nvalue = "10k"\narray = "RN1"\n'
        '[[resistor]]\nref = "R2"\nnodes = ["out", "gnd"]\nvalue = "10k"\narray = "RN1"\n'
        '[[array]]\nname = "RN1"\ntolerance = "0.1%"\nratio_tolerance = "0.5%"\n',
        encoding="utf-8")
    result = CliRunner().invoke(cli, ["check", str(path)])
    assert result.exit_code == 2
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and "ratio_tolerance '0.5%' is larger than tolerance" in lines[0]
    assert "Traceback" not in result.output + result.stderr


def test_a_member_listed_twice_or_also_marked_joins_once():
    def edit(data: dict) -> None:
        data["array"][0]["members"] = ["R1", "R1", "R2"]
    assert design_from_dict(_changed(edit)).arrays[0].members == ("R1", "R2")
