"""Quick commands: divider, regulator, LED and pad, against their published formulas."""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from synth.cli import cli
from synth.design.load import load_design
from synth.design.reader import design_from_dict
from synth.synthesis import synthesize
from synth.templates.passive import (
    QuickSettings,
    led_tables,
    pad_ideal,
    pad_tables,
    regulator_tables,
)


def run(*args):
    return CliRunner().invoke(cli, [str(a) for a in args])


@pytest.mark.parametrize(("shape", "db", "arm", "middle"), [
    # published matched-pad values, 50 ohm (K = 10^(dB/20)) [HB-pad]
    ("T", 3, 8.5499, 141.9262), ("T", 6, 16.6139, 66.9310), ("T", 10, 25.9747, 35.1364),
    ("T", 20, 40.9091, 10.1010),
    ("Pi", 3, 292.4022, 17.6148), ("Pi", 6, 150.4760, 37.3519), ("Pi", 10, 96.2475, 71.1512),
    ("Pi", 20, 61.1111, 247.5000),
])
def test_pad_formulas_and_ideal_values(shape, db, arm, middle):
    exact_arm, exact_middle = pad_ideal(50.0, db, shape)
    assert (exact_arm, exact_middle) == pytest.approx((arm, middle), abs=1e-4)
    design = design_from_dict(pad_tables("50", f"{db} dB", shape, QuickSettings()))
    ideal = synthesize(design, top=1).ideal
    # T: R1 and R3 are the series arms, R2 the shunt; Pi: R1 and R3 shunt, R2 series
    got = (ideal["R1"], ideal["R2"], ideal["R3"])
    assert got == pytest.approx((exact_arm, exact_middle, exact_arm), rel=1e-6)


def test_feedback_formula():
    # V = Vref (1 + Rtop/Rbottom) + I Rtop, I into the feedback pin [CP-regulator-fb]
    design = design_from_dict(regulator_tables("feedback", "0.6 V", "3.3 V", QuickSettings(),
                                               pin_current="2 uA"))
    best = synthesize(design, top=1).candidates[0]
    rt, rb = best.values["RTOP"], best.values["RBOT"]
    assert best.targets[0].value == pytest.approx(0.6 * (1 + rt / rb) + 2e-6 * rt, rel=1e-12)


def test_adjust_formula():
    # V = Vref (1 + Rbottom/Rtop) + I Rbottom, I out of the adjust pin (handbook);
    # 1.25 V, 50 uA with 240/390 gives 3.30075 V [HB-regulator-adj]
    design = design_from_dict(regulator_tables("adjust", "1.25 V", "3.3 V", QuickSettings(
        series="E24", value_range="200:1k"), pin_current="50 uA", min_current="5 mA"))
    result = synthesize(design, top=10)
    for c in result.candidates:
        rt, rb = c.values["RTOP"], c.values["RBOT"]
        assert c.targets[0].value == pytest.approx(1.25 * (1 + rb / rt) + 50e-6 * rb, rel=1e-12)
        assert rt <= 1.25 / 5e-3  # at least 5 mA in the top resistor
    pair = next(c for c in result.candidates if c.values == {"RTOP": 240.0, "RBOT": 390.0})
    assert pair.targets[0].value == pytest.approx(3.30075, rel=1e-12)


@pytest.mark.parametrize(("supply", "forward", "count", "current", "ohms"), [
    # R = (Vs - n Vf) / I (common practice) [CP-led]
    ("5 V", "2.0 V", 1, "20 mA", 150.0), ("3.3 V", "2.0 V", 1, "10 mA", 130.0),
    ("12 V", "2.0 V", 2, "20 mA", 400.0),
])
def test_led_formula(supply, forward, count, current, ohms):
    tables, package = led_tables(supply, forward, count, current,
                                 QuickSettings(series="E96", package=None))
    result = synthesize(design_from_dict(tables), top=1)
    assert result.ideal["R1"] == pytest.approx(ohms, rel=1e-6)
    # the package chosen carries the dissipation with the design margin
    best = result.candidates[0]
    assert best.parts[0].utilization <= 1 and package == best.parts[0].package


def test_led_command_picks_a_package():
    result = run("led", "--supply", "5V", "--forward", "2.0V", "--current", "20mA",
                 "--series", "E24", "--package", "auto", "--json")
    doc = json.loads(result.output)
    best = doc["candidates"][0]
    assert best["values"] == {"R1": 150.0}
    # 60 mW: an 0603 allows 50 mW at a 50 % margin, an 0805 62.5 mW
    assert best["parts"][0]["package"] == "0805"


def test_divider_command_and_save(tmp_path):
    target = tmp_path / "divider.toml"
    args = ["divider", "--input", "12 V", "--output", "3.3 V", "--load", "100k",
            "--max-current", "1 mA", "--series", "E24", "--range", "1k:1M", "--top", "3"]
    first = run(*args, "--save", target, "--json")
    assert first.exit_code == 0, first.output
    saved = load_design(target)
    assert [r.ref for r in saved.resistors] == ["R1", "R2", "RLOAD"]
    again = json.loads(run("design", target, "--json").output)
    assert json.loads(first.output)["candidates"] == again["candidates"][:3]
    refused = run(*args, "--save", target)
    assert refused.exit_code == 2 and "already exists; pass --force" in refused.stderr
    assert run(*args, "--save", target, "--force").exit_code == 0
    assert not list(tmp_path.glob(".divider.toml.*"))  # no temporary file left behind


@pytest.mark.parametrize(("args", "fragment"), [
    (("divider", "--input", "12 V", "--output", "15 V"), "must lie between 0 V and the input"),
    (("divider", "--input", "12 X", "--output", "5 V"), "--input: '12 X' is not a voltage"),
    (("divider", "--input", "12 V", "--output", "5 V", "--range", "1M:1k"), "is empty"),
    (("regulator", "--reference", "1.25 V", "--output", "1 V"), "must exceed the reference"),
    (("led", "--supply", "3 V", "--forward", "2 V", "--count", "2", "--current", "10 mA"),
     "does not exceed 2 x 2 V"),
    (("pad", "--loss", "minus six"), "--loss: 'minus six' is not a level in dB"),
    (("divider", "--input", "12 V", "--output", "5 V", "--package", "0604"),
     "package '0604' is not in the package table"),
])
def test_quick_bad_input(args, fragment):
    result = run(*args)
    assert result.exit_code == 2, result.output
    assert fragment in result.stderr and "Traceback" not in result.stderr


def test_infeasible_quick_command_exits_one():
    result = run("divider", "--input", "12 V", "--output", "3.3 V", "--series", "E3",
                 "--within", "0.1%", "--range", "1k:10k")
    assert result.exit_code == 1 and "Binding: target 'output'" in result.output


def test_pad_reports_its_loss_in_db_and_each_port_match_as_the_resistance_presented():
    # the published 6 dB T pad in a 50 ohm line: series arms 16.6139, shunt 66.9310 [HB-pad];
    # each port then presents 50 ohm (not 25 ohm, the port in parallel with its own
    # termination) and the loss is 6 dB
    from synth.checking import check
    from synth.design.reader import design_from_dict

    design = design_from_dict(pad_tables("50", "6 dB", "T", QuickSettings(series="E96")))
    result = check(design, values={"R1": 16.6139, "R2": 66.9310, "R3": 16.6139})
    by_label = {t.label: t for t in result.targets}
    assert by_label["input match"].value == pytest.approx(50.0, rel=1e-5)
    assert by_label["output match"].value == pytest.approx(50.0, rel=1e-5)
    assert by_label["loss"].unit == "dB"
    assert by_label["loss"].value == pytest.approx(6.0, rel=1e-5)
    # the terminations are models: unrated and off the bill of materials
    stand_ins = [r for r in design.resistors if r.ref in ("RS", "RL")]
    assert all(not r.bom and r.package is None for r in stand_ins)
