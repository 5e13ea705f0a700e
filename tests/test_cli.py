"""The command line, end to end with click's CliRunner."""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from synth import __version__
from synth.cli import cli

from conftest import EXAMPLES


def run(*args):
    return CliRunner().invoke(cli, list(args))


def test_version_and_help():
    result = run("--version")
    assert result.exit_code == 0 and __version__ in result.output
    assert run("--help").exit_code == 0
    for command in cli.commands:
        result = run(command, "--help")
        assert result.exit_code == 0 and "Usage" in result.output


def test_series_listing_and_json():
    result = run("series", "E96", "--range", "1k:10k", "--json")
    values = json.loads(result.output)
    assert result.exit_code == 0 and len(values) == 97 and values[:3] == [1000.0, 1020.0, 1050.0]
    text = run("series", "E12", "--range", "1k:2k").output
    assert "1.2 kΩ  1K2" in text
    assert json.loads(run("series", "e24", "--nearest", "1563", "--json").output) == [1600.0]


@pytest.mark.parametrize(("args", "fragment"), [
    (("series", "E96", "--range", "10k:1k"), "is empty or not positive"),
    (("series", "E96", "--range", "1k"), "separated by a colon"),
    (("series", "E96", "--nearest", "abc"), "--nearest: 'abc' is not a resistance"),
])
def test_series_bad_options(args, fragment):
    result = run(*args)
    assert result.exit_code == 2 and fragment in result.stderr


def test_unknown_series_is_a_usage_error():
    result = run("series", "E97")
    assert result.exit_code == 2 and "E97" in result.output + result.stderr


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_examples_check_cleanly(path):
    result = run("check", str(path), "--verify")
    assert result.exit_code == 0, result.output
    assert "all targets met" in result.output
    assert "mesh and nodal solves differ by at most" in result.output


def test_check_json_fields():
    path = next(p for p in EXAMPLES if p.name == "greenhouse_probe.toml")
    result = run("check", str(path), "--json", "--verify")
    doc = json.loads(result.output)
    assert doc["ok"] is True
    assert set(doc["nodes"]) == {"gnd", "vbat", "sense"} and doc["nodes"]["vbat"] == 13.8
    for part in doc["parts"]:
        assert {"ref", "current", "power", "allowed_power", "utilization"} <= set(part)
    r1 = next(p for p in doc["parts"] if p["ref"] == "R1")
    assert r1["power"] == pytest.approx(r1["current"] ** 2 * 324e3)
    assert doc["verify"]["max_difference"] < 1e-12


def test_failing_design_exits_one(tmp_design):
    path = tmp_design("""
[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "10 V"

[[resistor]]
ref = "R1"
nodes = ["in", "gnd"]
value = "100"
package = "0603"
""")
    result = run("check", str(path))
    assert result.exit_code == 1 and "FAILS" in result.output and "char the board" in result.output


def test_progress_bar_after_a_second(monkeypatch, capsys):
    from synth import cli as cli_module

    clock = iter([0.0, 0.5, 1.5, 1.6])
    monkeypatch.setattr(cli_module.time, "monotonic", lambda: next(clock))
    bar = cli_module._Progress(enabled=True)  # started at t = 0
    bar(0.1)  # t = 0.5: too early, nothing shown
    assert capsys.readouterr().err == ""
    bar(0.5)  # t = 1.5
    assert "searching [" in capsys.readouterr().err and bar.shown
    bar.close()
    assert capsys.readouterr().err.strip() == ""  # the line is wiped
    quiet = cli_module._Progress(enabled=False)
    quiet(0.9)
    assert capsys.readouterr().err == "" and not quiet.shown


@pytest.mark.parametrize(("args", "fragment"), [
    (("divider", "--input", "12 V", "--output", "3.3 V", "--within", "10 mA"),
     "--within: '10 mA' is not a voltage"),
    (("divider", "--input", "12 V", "--output", "3.3 V", "--ambient", "hot"),
     "--ambient: 'hot' is not a temperature"),
    (("divider", "--input", "12 V", "--output", "3.3 V", "--margin", "lots"),
     "--margin: 'lots' is not a percentage"),
    (("divider", "--input", "12 V", "--output", "3.3 V", "--load", "big"),
     "--load: 'big' is not a resistance"),
    (("led", "--supply", "5 V", "--forward", "2 V", "--current", "20 mV"),
     "--current: '20 mV' is not a current"),
    (("gain", "--gain", "10", "--within", "tight"), "--within: 'tight' is neither"),
    (("regulator", "--reference", "0.8 V", "--output", "3.3 V", "--range", "1k-10k"),
     "separated by a colon"),
])
def test_option_values_refused_while_parsing(args, fragment):
    result = run(*args)
    assert result.exit_code == 2, result.output
    assert fragment in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1 and "Traceback" not in result.stderr


def test_range_option_reads_one_rule_for_series_and_quick_commands():
    for args in (("series", "E12", "--range", "10k:1k"),
                 ("divider", "--input", "12 V", "--output", "3.3 V", "--range", "10k:1k")):
        result = run(*args)
        assert result.exit_code == 2 and "is empty or not positive" in result.stderr


@pytest.mark.parametrize(("options", "axis", "deprecated"), [
    ((), "supply", False),
    (("--plot-x", "hottest"), "hottest", False),
    (("--cost", "distinct"), "distinct", True),
])
def test_plot_axis_option_and_its_old_name(monkeypatch, tmp_path, options, axis, deprecated):
    from synth.report import plots

    seen = []

    def scatter(result, folder, cost="supply"):
        seen.append(cost)
        return []

    monkeypatch.setattr(plots, "candidate_scatter", scatter)
    monkeypatch.setattr(plots, "target_histograms", lambda *args: [])
    result = run("divider", "--input", "12 V", "--output", "3.3 V", "--samples", "0",
                 "--top", "2", "--plots", str(tmp_path), *options)
    assert result.exit_code == 0, result.output
    assert seen == [axis]
    note = [line for line in result.stderr.splitlines() if "deprecated" in line]
    assert note == (["rnsynth: --cost is deprecated and goes in the next version; use --plot-x"]
                    if deprecated else [])


def test_bias_rules_use_the_supply_and_least_beta_given():
    result = run("bias", "--supply", "10 V", "--collector-current", "1 mA",
                 "--collector-voltage", "5 V", "--beta", "100:40:300", "--samples", "0",
                 "--top", "1", "--json")
    assert result.exit_code == 0, result.output
    rules = json.loads(result.output)["rules"]
    assert any("least β 40" in line for line in rules)
    assert any("% of the supply" in line for line in rules)
