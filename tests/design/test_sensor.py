"""Reading [[sensor]] and [[linearity]] tables (synth.design.sensor, synth.design.linearity)."""

from __future__ import annotations

import math

import pytest
from click.testing import CliRunner

from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.errors import DesignError


def _design(sensor: dict | None = None, linearity: dict | None = None,
            design: dict | None = None) -> dict:
    return {
        "design": design or {},
        "source": [{"ref": "VREF", "kind": "voltage", "plus": "ref", "minus": "gnd",
                    "value": "3.3 V"}],
        "resistor": [{"ref": "R1", "nodes": ["ref", "out"], "value": "4k7"}],
        "sensor": [{"ref": "RT1", "kind": "ntc", "nodes": ["out", "gnd"], "r25": "10k",
                    "beta": "3950 K", **(sensor or {})}],
        "linearity": [{"sensor": "RT1", "voltage": "out",
                       "line": [["0 C", "2.5 V"], ["50 C", "1.0 V"]], "within": "1 C",
                       **(linearity or {})}],
    }


def test_a_sensor_is_a_resistor_at_ambient_left_off_the_bom():
    # R(T) = R25·exp(B(1/T - 1/T25)) at 40 °C [CP-ntc-beta]
    d = design_from_dict(_design(design={"ambient": "40 C"}))
    assert d.single is not None  # the linearity grid's points expand the design
    rt1 = next(r for r in d.single.resistors if r.ref == "RT1")
    assert rt1.value == pytest.approx(float(d.sensors[0].model.resistance(40.0)))
    assert rt1.value < 10e3
    assert not rt1.bom and rt1.package is None and rt1.tcr == 0
    assert d.linearities[0].grid == 21 and d.linearities[0].within_c == 1.0
    assert d.linearities[0].label == "out against RT1"


def test_rtd_keys_and_default_class():
    d = design_from_dict(_rtd({"r0": "1k", "class": "A"}))
    assert d.sensors[0].model.resistance(0.0) == pytest.approx(1000.0)  # [IEC60751-CVD]
    assert d.sensors[0].model.tolerance_class == "A"
    assert design_from_dict(_rtd({})).sensors[0].model.tolerance_class == "B"


def _rtd(extra: dict) -> dict:
    data = _design()
    data["sensor"] = [{"ref": "RT1", "kind": "rtd", "nodes": ["out", "gnd"], **extra}]
    return data


def test_steinhart_hart_sensor():
    d = design_from_dict(_design(sensor={"r25": None, "beta": None}) | {"sensor": [
        {"ref": "RT1", "kind": "ntc", "nodes": ["out", "gnd"],
         "steinhart_hart": [1.129148e-3, 2.34125e-4, 8.76741e-8], "valid": ["-40 C", "125 C"]}]})
    assert d.sensors[0].model.valid_c == (-40.0, 125.0)
    # [MEM-steinhart-hart-10k]
    assert float(d.sensors[0].model.resistance(25.0)) == pytest.approx(10e3, rel=2e-3)


@pytest.mark.parametrize(("sensor", "fragment"), [
    ({"kind": "ptc"}, "kind 'ptc' is not known"),
    ({"r25": None}, "bad"),
    ({"beta": "-3950"}, "beta '-3950' must be a positive B value"),
    ({"beta": "hot"}, "must be a positive B value"),
    ({"tolerance": "80%"}, "tolerance '80%' must lie between 0 % and 50 %"),
    ({"r0": "100"}, "r0 applies to an rtd, not an ntc"),
    ({"steinhart_hart": [1e-3, 2e-4]}, "give either steinhart_hart or r25 with beta"),
    ({"nodes": ["out", "out"]}, "both ends are on node 'out'"),
    ({"nodes": "out"}, "nodes must be a pair"),
    ({"valid": ["100 C", "0 C"]}, "valid range '100 C'..'0 C' is empty"),
    ({"valid": ["0 C"]}, "valid must be a pair"),
    ({"colour": "red"}, "unknown key 'colour'"),
])
def test_refused_sensors(sensor, fragment):
    data = _design(sensor)
    data["sensor"][0] = {k: v for k, v in data["sensor"][0].items() if v is not None}
    if fragment == "bad":
        fragment = "an ntc needs r25 and beta (or steinhart_hart = [a, b, c]); add r25"
    with pytest.raises(DesignError, match="sensor RT1") as caught:
        design_from_dict(data)
    assert fragment in str(caught.value)


@pytest.mark.parametrize(("extra", "fragment"), [
    ({"class": "D"}, "class 'D' is not an IEC 60751 class"),
    ({"r25": "10k"}, "r25 applies to an ntc, not an rtd"),
    ({"r0": "-100"}, "r0 '-100' must be positive"),
])
def test_refused_rtds(extra, fragment):
    with pytest.raises(DesignError, match="sensor RT1") as caught:
        design_from_dict(_rtd(extra))
    assert fragment in str(caught.value)


def test_missing_coefficients_of_steinhart_hart():
    data = _design()
    data["sensor"] = [{"ref": "RT1", "kind": "ntc", "nodes": ["out", "gnd"],
                       "steinhart_hart": [1e-3, -2e-4, 1e-7]}]
    with pytest.raises(DesignError, match="needs b > 0 and c >= 0"):
        design_from_dict(data)


def test_ambient_outside_the_models_range():
    # IEC 60751 covers -200 to 850 °C [IEC60751-CVD]
    data = _rtd({})
    data["design"] = {"ambient": "900 C"}
    data["linearity"][0]["line"] = [["0 C", "0.1 V"], ["100 C", "0.2 V"]]
    with pytest.raises(DesignError, match=r"\[design\] ambient 900 °C lies outside the rtd "
                                          r"model's valid range -200 °C..850 °C"):
        design_from_dict(data)


@pytest.mark.parametrize(("linearity", "fragment"), [
    ({"line": [["50 C", "1 V"], ["0 C", "2.5 V"]]}, "50 °C..0 °C is reversed"),
    ({"line": [["50 C", "1 V"], ["50 C", "2.5 V"]]}, "50 °C..50 °C is empty"),
    ({"line": [["0 C", "1 V"], ["50 C", "1 V"]]}, "the line's two voltages are equal"),
    ({"line": [["-60 C", "1 V"], ["50 C", "2 V"]]},
     "leaves the ntc model's valid range -55 °C..150 °C"),
    ({"line": [["0 C", "1 V"]]}, "line must be two (temperature, voltage) pairs"),
    ({"line": [["0 C", "1 V", "x"], ["50 C", "2 V"]]}, "line must be two"),
    ({"line": [["0 C", "1 A"], ["50 C", "2 V"]]}, "line:"),
    ({"grid": 0}, "grid 0 must be a whole number of points from 2"),
    ({"grid": 1}, "grid 1 must be"),
    ({"grid": 2.5}, "grid 2.5 must be"),
    ({"grid": True}, "grid True must be"),
    ({"within": "0.5"}, "within '0.5' must be a positive temperature difference"),
    ({"within": "-1 C"}, "must be a positive temperature difference"),
    ({"within": None}, "key 'within' is missing"),
    ({"voltage": None}, "key 'voltage' is missing"),
    ({"sensor": "RT9"}, "sensor 'RT9' is not a [[sensor]] of the design; did you mean 'RT1'?"),
])
def test_refused_linearity(linearity, fragment):
    data = _design(linearity=linearity)
    data["linearity"][0] = {k: v for k, v in data["linearity"][0].items() if v is not None}
    with pytest.raises(DesignError, match="linearity #1") as caught:
        design_from_dict(data)
    assert fragment in str(caught.value)


def test_each_grid_temperature_is_a_point_with_the_sensor_at_it():
    # R(T) = R25·exp(B(1/T - 1/T25)) [CP-ntc-beta]; the line 2.5 V at 0 °C to 1.0 V at 50 °C
    d = design_from_dict(_design(linearity={"grid": 6}))
    assert [p.name for p in d.points] == ["0 °C", "10 °C", "20 °C", "30 °C", "40 °C", "50 °C"]
    for point in d.points:
        t = point.temperature_c
        assert point.resistors["RT1"] == pytest.approx(10e3 * math.exp(
            3950 * (1 / (t + 273.15) - 1 / 298.15)))
    goals = [t.equals for t in d.targets]
    assert goals == pytest.approx([2.5, 2.2, 1.9, 1.6, 1.3, 1.0])
    assert all(t.within_abs == pytest.approx(0.03) and t.reading == ("°C", pytest.approx(-0.03))
               for t in d.targets)


def test_a_points_temperature_sets_the_sensor_and_is_checked_against_its_range():
    data = _design()
    del data["linearity"]
    data["point"] = [{"name": "cold", "temperature": "0 C"},
                     {"name": "warm", "temperature": "40 C", "resistors": {"RT1": "5k"}}]
    d = design_from_dict(data)
    cold, warm = d.points
    assert cold.resistors["RT1"] == pytest.approx(10e3 * math.exp(3950 * (1 / 273.15
                                                                          - 1 / 298.15)))
    assert warm.resistors["RT1"] == 5e3  # a value the point sets itself is kept
    data["point"][0]["temperature"] = "200 C"
    with pytest.raises(DesignError, match="point 'cold': temperature 200 °C lies outside "
                                          "sensor RT1's ntc model's valid range"):
        design_from_dict(data)


def test_a_kelvin_window_is_the_same_size():
    d = design_from_dict(_design(linearity={"within": "0.25 K", "grid": 5, "name": "soil"}))
    assert d.linearities[0].within_c == 0.25
    assert d.linearities[0].label == "soil"


def test_refusal_through_the_command_line_is_one_line_exit_2(tmp_path):
    path = tmp_path / "probe.toml"
    path.write_text('[[source]]\nref = "V"\nkind = "voltage"\nplus = "a"\nminus = "gnd"\n'
                    'value = "1 V"\n[[resistor]]\nref = "R1"\nnodes = ["a", "b"]\n'
                    'value = "1k"\n[[sensor]]\nref = "RT1"\nkind = "rtd"\nnodes = ["b", "gnd"]\n'
                    '[[linearity]]\nsensor = "RT1"\nvoltage = "b"\ngrid = 0\n'
                    'line = [["0 C", "0.1 V"], ["100 C", "0.2 V"]]\nwithin = "1 C"\n',
                    encoding="utf-8")
    result = CliRunner().invoke(cli, ["check", str(path)])
    assert result.exit_code == 2
    assert result.output.count("\n") == 1
    assert "linearity #1: grid 0 must be a whole number" in result.output
