"""Operating points: reading ``[[point]]`` tables and source ranges, the expanded design, and
the refusals of bad points.

Checks against the outside world: the offset-and-scale network's output by superposition
[HB-superposition] and by an exact rational nodal solve [CALC-exact-nodal]; the affine
dependence of node voltages on a source's value [HB-superposition].
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest
from click.testing import CliRunner

from synth.checking import check
from synth.cli import cli
from synth.design.model import OperatingPoint
from synth.design.points import expand_points, range_points
from synth.design.reader import design_from_dict
from synth.errors import DesignError
from tests.reference import exact_nodal


def mapper(values=("10k", "20k", "30k"), points=None, **source):
    """VIN through R1 into out, VREF through R2 into out, R3 from out to ground."""
    data = {
        "source": [{"ref": "VIN", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "0 V", **source},
                   {"ref": "VREF", "kind": "voltage", "plus": "ref", "minus": "gnd",
                    "value": "2.5 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": values[0]},
                     {"ref": "R2", "nodes": ["ref", "out"], "value": values[1]},
                     {"ref": "R3", "nodes": ["out", "gnd"], "value": values[2]}],
        "target": [{"voltage": "out", "at_least": "0 V"}],
    }
    if points is not None:
        data["point"] = points
    return data


TWO = [{"name": "low", "sources": {"VIN": "-10 V"}},
       {"name": "high", "sources": {"VIN": "10 V"}}]


def superposition(vin, vref, r1, r2, r3):
    """out = (VIN/R1 + VREF/R2) / (1/R1 + 1/R2 + 1/R3) [HB-superposition]."""
    return (vin / r1 + vref / r2) / (1 / r1 + 1 / r2 + 1 / r3)


def test_each_point_is_its_own_copy_of_the_network():
    design = design_from_dict(mapper(points=TWO))
    assert [p.name for p in design.points] == ["low", "high"]
    assert [t.label for t in design.targets] == ["voltage at out @ low", "voltage at out @ high"]
    assert [r.ref for r in design.physical_resistors] == ["R1", "R2", "R3"]
    result = check(design)
    for name, vin in (("low", -10.0), ("high", 10.0)):
        # [HB-superposition], and the exact rational nodal solve [CALC-exact-nodal]
        expected = superposition(vin, 2.5, 10e3, 20e3, 30e3)
        assert result.nodes[f"out@{name}"] == pytest.approx(expected, rel=1e-12)
        volts, _, _ = exact_nodal(["gnd", "in", "ref", "out"],
                                  [("in", "out", 10_000), ("ref", "out", 20_000),
                                   ("out", "gnd", 30_000)],
                                  [("in", "gnd", Fraction(int(vin))),
                                   ("ref", "gnd", Fraction(5, 2))])
        assert result.nodes[f"out@{name}"] == pytest.approx(float(volts["out"]), rel=1e-12)
    # one report per physical resistor, at the point of its largest dissipation
    resistors = [p for p in result.parts if p.kind == "resistor"]
    assert [p.ref for p in resistors] == ["R1", "R2", "R3"]
    assert sorted(result.values) == ["R1", "R2", "R3"]
    by_point = {p.point: p for p in result.parts if p.kind == "voltage source"}
    assert set(by_point) == {"low", "high"}
    for part in resistors:
        powers = []
        for name in ("low", "high"):
            out = result.nodes[f"out@{name}"]
            ends = {"R1": (result.nodes[f"in@{name}"], out),
                    "R2": (result.nodes[f"ref@{name}"], out), "R3": (out, 0.0)}[part.ref]
            powers.append(((ends[0] - ends[1]) ** 2 / part.value, name))  # [HB-ohm]
        assert part.power == pytest.approx(max(powers)[0], rel=1e-9)
        assert part.point == max(powers)[1]


def test_a_source_range_becomes_its_two_ends_and_at_picks_points():
    data = mapper(range=["-10 V", "10 V"])
    data["target"].append({"voltage": "out", "at_most": "5 V", "at": "VIN high"})
    design = design_from_dict(data)
    assert [p.name for p in design.points] == ["VIN low", "VIN high"]
    assert [p.sources["VIN"] for p in design.points] == [-10.0, 10.0]
    assert [t.label for t in design.targets] == [
        "voltage at out @ VIN low", "voltage at out @ VIN high", "voltage at out @ VIN high"]
    # the source's value defaults to the middle of its range
    assert design.single is not None and design.single.sources[0].value == 0.0


def test_a_named_point_with_a_range_stands_for_each_of_its_ends():
    points = [{"name": "cold", "temperature": "-20 C", "sources": {"VIN": ["1 V", "2 V"]}},
              {"name": "hot", "temperature": "70 C"}]
    data = mapper(points=points)
    data["target"] = [{"voltage": "out", "at_least": "0 V", "at": "cold"}]
    design = design_from_dict(data)
    assert [p.name for p in design.points] == ["cold, VIN low", "cold, VIN high", "hot"]
    assert [p.temperature_c for p in design.points] == [-20.0, -20.0, 70.0]
    assert [t.point for t in design.targets] == ["cold, VIN low", "cold, VIN high"]


def test_a_point_may_set_a_fixed_resistor_such_as_a_sensor():
    points = [{"name": "a", "resistors": {"R3": "10k"}}, {"name": "b", "resistors": {"R3": "40k"}},
              {"name": "c"}]
    result = check(design_from_dict(mapper(points=points)))
    for name, r3 in (("a", 10e3), ("b", 40e3), ("c", 30e3)):
        assert result.nodes[f"out@{name}"] == pytest.approx(
            superposition(0.0, 2.5, 10e3, 20e3, r3), rel=1e-12)  # [HB-superposition]


def test_node_voltages_are_affine_in_a_source_so_a_range_is_judged_at_its_ends():
    """A dense sweep of VIN never leaves the span of the two ends [HB-superposition]."""
    design = design_from_dict(mapper(range=["-10 V", "10 V"]))
    result = check(design)
    ends = [result.nodes["out@VIN low"], result.nodes["out@VIN high"]]
    sweep = [check(design_from_dict(mapper(value=f"{v} V"))).nodes["out"]
             for v in np.linspace(-10, 10, 41)]
    assert min(sweep) == pytest.approx(min(ends), rel=1e-12)
    assert max(sweep) == pytest.approx(max(ends), rel=1e-12)
    # and the sweep is a straight line between them
    line = np.linspace(ends[0], ends[1], 41)
    assert np.allclose(sweep, line, rtol=0, atol=1e-12)


def test_the_library_builds_points_in_memory():
    single = design_from_dict(mapper())
    design = expand_points(single, [OperatingPoint("x", {"VIN": 1.0}),
                                    OperatingPoint("y", {"VIN": 2.0}, 80.0, {"R3": 15e3})])
    assert design.single is single
    assert check(design).nodes["out@y"] == pytest.approx(
        superposition(2.0, 2.5, 10e3, 20e3, 15e3), rel=1e-12)
    ends = range_points([OperatingPoint("p", temperature_c=5.0)], {"VIN": (0.0, 1.0)})
    assert [(e.name, e.sources["VIN"], e.temperature_c, e.range_ends) for e in ends] == [
        ("p, VIN low", 0.0, 5.0, ("VIN",)), ("p, VIN high", 1.0, 5.0, ("VIN",))]


@pytest.mark.parametrize("change, fragment", [
    (lambda d: d.update(point=[{"name": "a", "sources": {"VXX": "1 V"}}]),
     "point 'a': sources names 'VXX', not a source of the design"),
    (lambda d: d.update(point=[{"name": "a"}, {"name": "a"}]),
     "point 'a': another point has the same name"),
    (lambda d: d["source"][0].update(range=["5 V", "1 V"]),
     "source VIN: range '5 V'..'1 V' is empty or reversed"),
    (lambda d: d.update(point=[{"name": "a", "sources": {"VIN": ["2 V", "2 V"]}}]),
     "point 'a': range '2 V'..'2 V' is empty or reversed"),
    (lambda d: d.update(point=[{"name": "a", "temperature": "-300 C"}]),
     "point 'a': temperature: '-300 C' is below absolute zero"),
    (lambda d: (d.update(point=[{"name": "a"}]),
                d["target"][0].update(at="b")),
     "at names point 'b', which is not defined"),
    (lambda d: d["target"][0].update(at="b"),
     "at names point 'b', but the design has no operating points"),
    (lambda d: d.update(point=[{"name": "a", "resistors": {"R9": "1k"}}]),
     "point 'a': no resistor 'R9'"),
    (lambda d: (d["resistor"][0].update(choose="E24", range=["1k", "10k"]),
                d["resistor"][0].pop("value"),
                d.update(point=[{"name": "a", "resistors": {"R1": "1k"}}])),
     "resistor R1 is chosen by the search"),
    (lambda d: d.update(point=[{"name": "x@y"}]), "without '@'"),
    (lambda d: d.update(point=[{"name": "a", "colour": "red"}]), "unknown key 'colour'"),
])
def test_bad_points_are_refused_in_one_line(change, fragment, tmp_path):
    data = mapper()
    change(data)
    with pytest.raises(DesignError) as caught:
        design_from_dict(data, "d.toml")
    message = str(caught.value)
    assert fragment in message and "\n" not in message
    assert message.startswith("d.toml")


def test_the_command_line_refuses_a_bad_point_with_exit_code_2(tmp_path):
    path = tmp_path / "d.toml"
    path.write_text('''
[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "5 V"
[[resistor]]
ref = "R1"
nodes = ["in", "gnd"]
value = "1k"
[[point]]
name = "a"
sources = {V2 = "1 V"}
''', encoding="utf-8")
    result = CliRunner().invoke(cli, ["check", str(path)])
    assert result.exit_code == 2
    assert "point 'a': sources names 'V2'" in result.output
    assert "Traceback" not in result.output


@pytest.mark.parametrize("points, fragment", [
    ([], "need at least one point"),
    ([OperatingPoint("a"), OperatingPoint("a")], "another point has the same name"),
    ([OperatingPoint("a", {"V9": 1.0})], "no source 'V9'"),
    ([OperatingPoint("a", {"VIN": float("nan")})], "the value of VIN must be finite"),
    ([OperatingPoint("a", resistors={"R1": -1.0})], "must be a positive resistance"),
    ([OperatingPoint("a", temperature_c=-300.0)], "below absolute zero (-273.15 °C)"),
    ([OperatingPoint("")], "printable text without '@'"),
])
def test_the_library_refuses_bad_points(points, fragment):
    with pytest.raises(DesignError) as caught:
        expand_points(design_from_dict(mapper(), "d.toml"), points)
    assert fragment in str(caught.value)


def test_a_point_may_not_set_a_position_of_several_parts_nor_expand_twice():
    data = mapper()
    data["resistor"][2].update(combine="series", value=["10k", "20k"])
    single = design_from_dict(data)
    with pytest.raises(DesignError, match="a position of several parts"):
        expand_points(single, [OperatingPoint("a", resistors={"R3": 1e3})])
    twice = expand_points(single, [OperatingPoint("a")])
    with pytest.raises(DesignError, match="already has operating points"):
        expand_points(twice, [OperatingPoint("b")])
