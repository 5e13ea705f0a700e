"""Sweeps (synth.sweep): axes, keys, grids, and every point against an independent reference.

Each point of a sweep must be what a direct synthesis or check of the design file,
edited by hand, gives; a fixed divider swept over its input follows the divider formula.
"""

from __future__ import annotations

import copy
import math

import numpy as np
import pytest

from synth.checking import check
from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.sweep import MAX_POINTS, SweepAxis, grid_designs, sweep, sweep_axis
from synth.synthesis import synthesize

from conftest import ROOT


def divider_tables(free: bool = False) -> dict:
    """12 V into R1 = 10k over R2 = 4.7k; ``free`` lets R1 be chosen from E24."""
    r1 = {"ref": "R1", "nodes": ["in", "out"], "value": "10k", "package": "0603"}
    if free:
        r1.update(choose="E24", range=["1k", "100k"])
    return {
        "design": {"title": "divider"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [r1, {"ref": "R2", "nodes": ["out", "gnd"], "value": "4.7k",
                          "package": "0603"}],
        "target": [{"name": "tap", "voltage": "out", "at_most": "4 V"}],
    }


# -- axes ----------------------------------------------------------------------------------


@pytest.mark.parametrize(("text", "values", "unit"), [
    ("source.V1.value=10 V:15 V:6", (10.0, 11.0, 12.0, 13.0, 14.0, 15.0), "V"),
    ("source.I1.value=1mA:3mA:3", (0.001, 0.002, 0.003), "A"),
    ("resistor.R2.value=1k:4k7:2", (1000.0, 4700.0), "Ω"),
    ("target.1.equals=0.1:0.5:3", (0.1, 0.3, 0.5), ""),
    ("design.ambient=25 C:85C:3", (25.0, 55.0, 85.0), "C"),
    ("design.max_power_use=10%:50%:3", (0.1, 0.3, 0.5), "%"),
    ("resistor.R1.tcr=25 ppm/C:100 ppm/C:2", (25e-6, 100e-6), "ppm/C"),
    ("source.V1.value=5V:5V:1", (5.0,), "V"),
])
def test_axis_values_are_spaced_evenly_with_exact_ends(text, values, unit):
    axis = sweep_axis(text)
    assert axis.unit == unit and axis.spacing == "linear"
    assert axis.values == pytest.approx(values, rel=1e-12)
    assert (axis.values[0], axis.values[-1]) == (values[0], values[-1])


def test_log_axis_is_a_geometric_sequence():
    axis = sweep_axis("resistor.R2.value=1k:1M:7:log")
    assert axis.spacing == "log" and axis.values[0] == 1000.0 and axis.values[-1] == 1e6
    # evenly spaced on a log scale, as numpy.geomspace spaces them [LIB-numpy-geomspace]
    assert axis.values == pytest.approx(tuple(np.geomspace(1e3, 1e6, 7)), rel=1e-12)
    assert sweep_axis("resistor.R2.value=1k:100k:3:lin").values == (1e3, 50_500.0, 1e5)


@pytest.mark.parametrize(("text", "fragment"), [
    ("source.V1.value", "write KEY=LOW:HIGH:STEPS"),
    ("=1V:2V:2", "write KEY=LOW:HIGH:STEPS"),
    ("source.V1.value=1V:2V", "write KEY=LOW:HIGH:STEPS (or"),
    ("source.V1.value=1V:2V:0", "STEPS 0 must be 1 to 10,000"),
    (f"source.V1.value=1V:2V:{MAX_POINTS + 1}", "must be 1 to 10,000"),
    ("source.V1.value=1V:2V:two", "STEPS 'two' is not a whole number"),
    ("source.V1.value=2V:1V:3", "range 2V..1V is empty; give the low end first"),
    ("source.V1.value=1V:1V:3", "3 steps from 1V to the same 1V"),
    ("source.V1.value=1V:2V:1", "1 step cannot reach both"),
    ("source.V1.value=1V:2mA:3", "are in different units"),
    ("source.V1.value=1xV:2V:3", "is not a voltage"),
    ("source.V1.value=0V:2V:3:log", "a log spacing needs both ends above zero"),
])
def test_bad_axes_are_refused_in_one_line(text, fragment):
    with pytest.raises(DesignError, match=None) as caught:
        sweep_axis(text)
    message = str(caught.value)
    assert fragment in message and "\n" not in message


def test_axis_values_are_written_back_exactly():
    for axis in (sweep_axis("design.max_power_use=7%:9%:3"),
                 sweep_axis("resistor.R1.tcr=10ppm/C:30ppm/C:3"),
                 sweep_axis("source.V1.value=1e-5V:3e-5V:3")):
        from synth.units import parse_fraction, parse_quantity, parse_tcr

        parse = {"%": parse_fraction, "ppm/C": parse_tcr,
                 "V": lambda t: parse_quantity(t, "V")}[axis.unit]
        assert [parse(axis.text(v)) for v in axis.values] == list(axis.values)


# -- keys ----------------------------------------------------------------------------------


@pytest.mark.parametrize("key", ["resistor.R2.value", "resistor.2.value", "resistor.#2.value"])
def test_an_item_is_named_by_designator_or_position(key):
    [(_, design)] = grid_designs(divider_tables(), "d.toml", [SweepAxis(key, (2200.0,))])
    assert design.resistors[1].value == 2200.0


def test_a_target_is_named_by_name_label_or_position():
    tables = divider_tables()
    tables["target"].append({"voltage": "out", "at_least": "1 V"})
    for key in ("target.tap.at_most", "target.1.at_most"):
        [(_, design)] = grid_designs(tables, "d.toml", [SweepAxis(key, (5.0,), "V")])
        assert design.targets[0].bounds[1] == 5.0
    [(_, design)] = grid_designs(tables, "d.toml",
                                 [SweepAxis("target.voltage at out.at_least", (2.0,), "V")])
    assert design.targets[1].bounds[0] == 2.0


def test_a_design_setting_absent_from_the_file_is_set():
    [(_, hot)] = grid_designs(divider_tables(), "d.toml",
                              [SweepAxis("design.ambient", (85.0,), "C")])
    assert hot.ambient_c == 85.0


@pytest.mark.parametrize(("key", "fragment"), [
    ("resistors.R1.value", "'resistors' is not a table of a design file; did you mean "
                           "'resistor'?"),
    ("resistor.R9.value", "the design has no resistor 'R9'"),
    ("resistor.R3.value", "name it by its ref or its position (1 to 2)"),
    ("resistor.value", "write resistor.ITEM.FIELD"),
    ("regulator.U1.setpoint", "the design has no [[regulator]]"),
    ("resistor.R1.range", "holds a list or table"),
    ("design.a.b", "write design.FIELD"),
    ("resistor.R1.valeu", "unknown key 'valeu'; did you mean 'value'?"),
])
def test_bad_keys_are_refused_naming_the_fix(key, fragment):
    with pytest.raises(DesignError) as caught:
        grid_designs(divider_tables(free=True), "d.toml", [SweepAxis(key, (1.0,))])
    assert fragment in str(caught.value)
    assert str(caught.value).startswith("--over")


def test_a_point_the_design_reader_refuses_is_bad_input_naming_the_point():
    with pytest.raises(DesignError, match=r"--over at resistor.R2.value = 0.0: d.toml, "
                                          r"resistor R2: .*positive"):
        grid_designs(divider_tables(), "d.toml", [sweep_axis("resistor.R2.value=0:1k:2")])


def test_repeated_keys_no_axes_and_oversized_grids_are_refused():
    axis = sweep_axis("source.V1.value=1V:2V:2")
    with pytest.raises(DesignError, match="is given twice"):
        grid_designs(divider_tables(), "d.toml", [axis, axis])
    with pytest.raises(DesignError, match="needs at least one --over"):
        grid_designs(divider_tables(), "d.toml", [])
    big = [sweep_axis("source.V1.value=1V:2V:101"), sweep_axis("resistor.R2.value=1k:2k:100")]
    with pytest.raises(DesignError, match="10,100 points, over the 10,000"):
        grid_designs(divider_tables(), "d.toml", big)


def test_the_grid_runs_first_axis_slowest():
    grid = grid_designs(divider_tables(), "d.toml", [sweep_axis("source.V1.value=1V:2V:2"),
                                                     sweep_axis("resistor.R2.value=1k:3k:3")])
    assert [v for v, _ in grid] == [(1.0, 1e3), (1.0, 2e3), (1.0, 3e3),
                                    (2.0, 1e3), (2.0, 2e3), (2.0, 3e3)]
    assert [(d.sources[0].value, d.resistors[1].value) for _, d in grid] == \
        [v for v, _ in grid]


# -- points against references ----------------------------------------------------------------


def test_a_fixed_divider_follows_the_divider_formula_and_a_check_can_fail():
    result = sweep(divider_tables(), ["source.V1.value=4V:16V:7"], jobs=1, origin="d.toml")
    assert [p.mode for p in result.points] == ["check"] * 7
    for point in result.points:
        vin = point.values[0]
        # Vout = Vin R2 / (R1 + R2) [HB-divider]; I = Vin / (R1 + R2) [HB-ohm]
        vout = vin * 4700 / (10_000 + 4700)
        assert point.targets["tap"] == pytest.approx(vout, rel=1e-12)
        assert point.supply_current == pytest.approx(vin / 14_700, rel=1e-12)
        assert point.verdict == ("meets" if vout <= 4.0 else "fails")
        assert ("lies outside" in point.note) == (vout > 4.0)
    assert [p.verdict for p in result.points] == ["meets"] * 5 + ["fails"] * 2
    assert not result.ok


def test_each_synthesis_point_equals_a_direct_synthesis_of_the_hand_edited_file():
    tables = divider_tables(free=True)
    tables["target"] = [{"name": "tap", "voltage": "out", "equals": "3.3 V", "within": "2%"}]
    result = sweep(tables, ["source.V1.value=5V:24V:3", "resistor.R2.value=1k:10k:2"],
                   jobs=1, origin="d.toml")
    assert len(result.points) == 6
    for point in result.points:
        vin, r2 = point.values
        edited = copy.deepcopy(tables)
        edited["source"][0]["value"] = f"{vin} V"
        edited["resistor"][1]["value"] = r2
        direct = synthesize(design_from_dict(edited, "d.toml"), top=1)
        best = direct.candidates[0]
        assert point.mode == "design"
        assert point.chosen == best.values
        assert point.objective == best.objective
        assert point.proven is direct.proven_optimal is True
        assert point.supply_current == best.supply_current
        assert point.verdict == ("meets" if direct.feasible else "fails")


def test_a_check_sweep_of_a_free_design_equals_a_direct_check():
    tables = divider_tables(free=True)
    result = sweep(tables, ["source.V1.value=6V:12V:2"], check_only=True, jobs=1)
    for point in result.points:
        edited = copy.deepcopy(tables)
        edited["source"][0]["value"] = point.values[0]
        direct = check(design_from_dict(edited))
        assert point.mode == "check" and point.proven is None
        assert point.chosen == {"R1": 10_000.0}
        assert point.targets == {t.label: t.value for t in direct.targets}
        assert point.supply_current == direct.supply_current


def test_an_infeasible_point_fails_with_its_reason_in_its_row():
    tables = divider_tables(free=True)
    tables["target"] = [{"name": "tap", "voltage": "out", "equals": "3.3 V", "within": "1%"}]
    tables["resistor"][0]["range"] = ["1k", "2k"]
    result = sweep(tables, ["source.V1.value=4.2V:40V:2"], jobs=1)
    for point in result.points:
        edited = copy.deepcopy(tables)
        edited["source"][0]["value"] = f"{point.values[0]} V"
        direct = synthesize(design_from_dict(edited), top=1)
        assert point.objective == direct.candidates[0].objective
        assert point.verdict == ("meets" if direct.feasible else "fails")
    low, high = result.points
    # 4.2 V needs R1 = 4.7k (4.2/3.3 - 1) = 1.28k, inside 1k..2k; 40 V needs 52k [HB-divider]
    assert low.verdict == "meets" and low.note == ""
    assert high.verdict == "fails" and high.proven is True
    assert "lies outside" in high.note
    assert not result.ok


def test_a_point_that_cannot_be_calculated_is_reported_in_its_row():
    tables = divider_tables()
    tables["target"] = [{"name": "half", "ratio": [["out", "gnd"], ["in", "gnd"]],
                         "at_least": 0.3}]
    result = sweep(tables, ["source.V1.value=0V:10V:3"], jobs=1)
    dead, *live = result.points
    assert dead.verdict == "error" and "ratio is undefined" in dead.note
    assert dead.objective is None and dead.targets is None
    # 4.7k / 14.7k [HB-divider]
    assert [p.targets["half"] for p in live] == pytest.approx([4.7 / 14.7] * 2, rel=1e-12)
    assert [p.verdict for p in live] == ["meets", "meets"] and not result.ok


def test_jobs_do_not_change_the_results():
    tables = divider_tables(free=True)
    tables["target"] = [{"name": "tap", "voltage": "out", "equals": "2.5 V"}]
    axes = ["source.V1.value=5V:15V:3"]
    one = sweep(tables, axes, jobs=1)
    two = sweep(tables, axes, jobs=2)
    assert one.runner == "in-process" and two.runner == "local processes"
    assert one.points == two.points


def test_a_bundled_example_sweeps_from_its_file():
    path = ROOT / "examples" / "bench_supply.toml"
    result = sweep(path, ["resistor.R2.value=680:750:3"], jobs=1)
    for point in result.points:
        # Vout = Vref (1 + R2/R1) + Iadj R2 (R1 the file's top resistor), whatever the
        # load on the output
        # [HB-regulator-adj]
        r2 = point.values[0]
        assert point.targets["output"] == pytest.approx(1.25 * (1 + r2 / 240) + 50e-6 * r2,
                                                        rel=1e-9)
    assert math.isfinite(result.points[0].objective or math.nan)


def test_bad_options_are_refused():
    with pytest.raises(DesignError, match="--jobs 0 must be at least 1"):
        sweep(divider_tables(), ["source.V1.value=1V:2V:2"], jobs=0)
    with pytest.raises(DesignError, match="--time-limit -1 must be a positive"):
        sweep(divider_tables(), ["source.V1.value=1V:2V:2"], time_limit_s=-1)
    with pytest.raises(DesignError, match=r"README.md: a design file must be a .toml file"):
        sweep(ROOT / "README.md", ["source.V1.value=1V:2V:2"])


def test_operating_points_are_named_by_name_and_their_targets_by_position():
    tables = divider_tables()
    tables["point"] = [{"name": "low", "sources": {"V1": "6 V"}}, {"name": "high"}]
    with pytest.raises(DesignError, match="sources holds a list or table"):
        grid_designs(tables, "d.toml", [SweepAxis("point.low.sources", (1.0,))])
    result = sweep(tables, ["point.low.temperature=-20C:0C:2", "target.1.at_most=3V:5V:2"],
                   jobs=1)
    for point in result.points:
        # 6 V and 12 V over 10k/4.7k [HB-divider], against the swept bound
        low, high = point.targets["tap @ low"], point.targets["tap @ high"]
        assert (low, high) == pytest.approx((6 * 4.7 / 14.7, 12 * 4.7 / 14.7), rel=1e-12)
        assert point.verdict == ("meets" if high <= point.values[1] else "fails")
    assert [p.verdict for p in result.points] == ["fails", "meets"] * 2
