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
    from synth.cli import options as cli_module

    clock = iter([0.0, 0.5, 1.5, 1.6])
    monkeypatch.setattr(cli_module.time, "monotonic", lambda: next(clock))
    bar = cli_module.Progress(enabled=True)  # started at t = 0
    bar(0.1)  # t = 0.5: too early, nothing shown
    assert capsys.readouterr().err == ""
    bar(0.5)  # t = 1.5
    assert "searching [" in capsys.readouterr().err and bar.shown
    bar.close()
    assert capsys.readouterr().err.strip() == ""  # the line is wiped
    quiet = cli_module.Progress(enabled=False)
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

    def pictures(result, cost="supply", front=None):
        seen.append(cost)
        return []

    monkeypatch.setattr(plots, "design_pictures", pictures)
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


PROBE = next(p for p in EXAMPLES if p.name == "greenhouse_probe.toml")


def _board(tmp_path, text):
    (tmp_path / "probe.toml").write_bytes(PROBE.read_bytes())
    path = tmp_path / "board.toml"
    path.write_text(text, encoding="utf-8")
    return path


@pytest.mark.parametrize(("board", "options", "fragment"), [
    ('[boards]\ntitle = "x"\n', (), "unknown table 'boards'"),
    ('[board]\ncolour = "green"\n[[network]]\nfile = "probe.toml"\n', (),
     "[board]: unknown key 'colour'"),
    ('[board]\npool = 0\n[[network]]\nfile = "probe.toml"\n', (),
     "pool 0 must be a whole number of at least 1"),
    ('[board]\nstock = "shelf.csv"\n[[network]]\nfile = "probe.toml"\n', (),
     "stock file 'shelf.csv' was not found"),
    ('[board]\ntitle = "empty"\n', (), "the board lists no networks"),
    ('network = [1]\n', (), "network #1: write it as a [[network]] table"),
    ('[[network]]\nfile = "probe.toml"\nqty = 2\n', (), "network #1: unknown key 'qty'"),
    ('[[network]]\nname = "probe"\n', (), "network #1: file is missing"),
    ('[[network]]\nfile = "nowhere.toml"\n', (), "design file 'nowhere.toml' was not found"),
    ('[[network]]\nfile = "probe.toml"\ncount = 0\n', (), "count 0 must be a whole number"),
    ('[[network]]\nfile = "probe.toml"\ncount = 9223372036854775807\n', (),
     "count 9223372036854775807 must be a whole number from 1 to 1,000,000"),
    ('board = 1\n[[network]]\nfile = "probe.toml"\n', (), "board must be a [board] table"),
    ('[board]\nstock = true\n[[network]]\nfile = "probe.toml"\n', (),
     "stock must be the name of a CSV file, not bool"),
    ('[[network]]\nfile = "probe.toml"\nname = " "\n', (), "name must be a non-empty text"),
    ('[[network]]\nfile = "probe.toml"\n[[network]]\nfile = "probe.toml"\n', (),
     "network name 'probe' is used twice"),
    ('[[network]]\nfile = "probe.toml"\n', ("--stock", "missing.csv"), "stock file not found"),
    ('[[network]]\nfile = "probe.toml"\n', ("--pool", "0"), "--pool 0 must be at least 1"),
    ('[[network]]\nfile = "probe.toml"\n', ("--stock-only",), "--stock-only needs a stock list"),
])
def test_bom_refuses_bad_board_files(tmp_path, board, options, fragment):
    result = run("bom", str(_board(tmp_path, board)), *options)
    assert result.exit_code == 2, result.output
    assert fragment in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1 and "Traceback" not in result.stderr


NOT_UTF8 = b"[design]\ntitle = \"\xff\"\n"


@pytest.mark.parametrize(("write", "fragment"), [
    (None, "no such file; check the path"),
    ("folder", "is a directory"),  # click's own path check, before any reading
    (b"[design\n", "not valid TOML"),
    (NOT_UTF8, "not UTF-8 text"),
])
@pytest.mark.parametrize("command", ["check", "design", "bom"])
def test_unreadable_design_files_exit_two(request, tmp_path, command, write, fragment):
    path = tmp_path / "design.toml"
    if write == "folder":
        path.mkdir()
    elif write is not None:
        path.write_bytes(write)
    result = run(command, str(path))
    assert result.exit_code == 2, result.output
    assert fragment in result.stderr and "Traceback" not in result.stderr


def test_save_into_a_missing_folder_exits_two(tmp_path):
    target = tmp_path / "no" / "such" / "divider.toml"
    result = run("divider", "--input", "12 V", "--output", "3.3 V", "--samples", "0",
                 "--save", str(target))
    assert result.exit_code == 2 and "does not exist; create it first" in result.stderr


@pytest.mark.parametrize(("args", "fragment"), [
    (("design", str(PROBE), "--top", "0"), "--top 0 must be at least 1"),
    (("check", str(PROBE), "--samples", "-1"), "--samples -1 must be 0"),
    (("check", str(PROBE), "--samples", "10000000001"),
     "--samples 10000000001 must be 0 (no Monte Carlo) to 10,000,000,000"),
    (("design", str(PROBE), "--samples", "10000000001", "--time-limit", "1"),
     "--samples 10000000001 must be 0 (no Monte Carlo) to 10,000,000,000"),
    (("check", str(PROBE), "--time-limit", "0"), "--time-limit 0.0 must be a positive number"),
    (("design", str(PROBE), "--rank-by", "cost"), "'cost' is not one of"),
])
def test_search_and_spread_options_refused(args, fragment):
    result = run(*args)
    assert result.exit_code == 2 and fragment in result.output + result.stderr


def test_plots_are_written_for_check_and_design(tmp_path):
    checked = run("check", str(PROBE), "--samples", "2000", "--plots", str(tmp_path / "c"))
    assert checked.exit_code == 0, checked.output
    assert "plot written:" in checked.output
    designed = run("design", str(PROBE), "--samples", "2000", "--top", "3", "--plot-x",
                   "hottest", "--plots", str(tmp_path / "d"))
    assert designed.exit_code == 0, designed.output
    written = sorted(p.name for p in (tmp_path / "d").iterdir())
    assert any(name.startswith("candidates") and name.endswith(".svg") for name in written)
    assert any(name.endswith(".png") for name in written)
    # every picture, in both formats: the front for a design only
    stems = ["network", "derating-0603", "contributions-1-converter-input",
             "spread-1-converter-input"]
    for folder, extra in (("c", []), ("d", ["candidates", "front"])):
        names = {p.name for p in (tmp_path / folder).iterdir()}
        for stem in stems + extra:
            assert {f"{stem}.png", f"{stem}.svg"} <= names, (folder, stem, sorted(names))
    assert "front.svg" not in {p.name for p in (tmp_path / "c").iterdir()}
    assert not [p for p in (tmp_path / "d").iterdir() if p.name.startswith(".")]


def test_led_package_auto_names_the_package_chosen():
    result = run("led", "--supply", "12 V", "--forward", "2 V", "--current", "20 mA",
                 "--package", "auto", "--samples", "0", "--top", "1")
    assert result.exit_code == 0, result.output
    assert result.output.startswith("package")  # the package chosen is named first


BIAS = ("bias", "--supply", "10 V", "--collector-current", "1 mA", "--collector-voltage", "5 V")
DIVIDER = ("divider", "--input", "12 V", "--output", "3.3 V")
LED = ("led", "--supply", "5 V", "--forward", "2 V", "--current", "20 mA")


@pytest.mark.parametrize(("args", "fragment"), [
    ((*BIAS, "--beta", "many"), "--beta 'many' must be a number or typical:least:greatest"),
    ((*BIAS, "--beta", "100:200:300"), "0 < least <= typical <= greatest"),
    (("bias", "--supply", "10 V", "--collector-current", "1 mA", "--collector-voltage",
      "0.5 V"), "--collector-voltage must lie between a tenth of the supply and the supply"),
    ((*BIAS, "--vbe", "8 V"), "--vbe 8 V must be positive and well below the supply"),
    (("gain", "--gain", "ten"), "--gain 'ten' must be a plain number such as 10"),
    (("gain", "--gain", "-2", "--inverting"), "--gain must be positive"),
    (("gain", "--gain", "0.5"), "a non-inverting stage has a gain above 1"),
    (("gain", "--gain", "10", "--open-loop-gain", "lots"), "--open-loop-gain 'lots' must be"),
    (("gain", "--gain", "10", "--inverting", "--input-resistance", "0"),
     "--input-resistance must be positive"),
    (("gain", "--gain", "10", "--input-resistance", "10k"),
     "a non-inverting stage's input resistance is the amplifier's own"),
    ((*DIVIDER, "--load", "0"), "--load '0' must be positive"),
    ((*DIVIDER, "--series", "E97"), "'E97' is not one of"),
    ((*LED, "--range", "1k:10k"), "--range does not apply to led"),
    ((*LED, "--count", "0"), "--count 0 must be at least 1"),
    (("led", "--supply", "5 V", "--forward", "2 V", "--current", "0 A"),
     "--current and --forward must be positive"),
    (("pad", "--loss", "0 dB"), "--impedance and --loss must be positive"),
    (("pad", "--loss", "6 dB", "--impedance", "fifty"), "--impedance: 'fifty' is not"),
    (("regulator", "--reference", "0.8 V", "--output", "3.3 V", "--pin-current", "1 uV"),
     "--pin-current: '1 uV' is not a current"),
])
def test_quick_commands_refuse_bad_options(args, fragment):
    result = run(*args)
    assert result.exit_code == 2, result.output
    assert fragment in result.output + result.stderr and "Traceback" not in result.stderr


@pytest.mark.parametrize("command", ["check", "design"])
def test_ten_billion_samples_shrink_to_fit_the_time_limit_and_say_so(command):
    # the time limit has passed by the time the Monte Carlo starts: its first pilot's
    # 1,000 samples (check) or none (design) run, and the output says how many of how many
    args = (command, str(PROBE), "--samples", "10000000000", "--time-limit", "1e-6")
    result = run(*args, *(["--quiet"] if command == "design" else []))
    assert result.exit_code in (0, 1), result.output + result.stderr
    ran = "1,000" if command == "check" else "0"
    note = (f"note: Monte Carlo cut from 10,000,000,000 to {ran} samples to fit the time "
            "limit" if command == "check" else
            "Monte Carlo: skipped: 0 of 10,000,000,000 samples run")
    assert note in result.output
    doc = json.loads(run(*args, "--json", *(["--quiet"] if command == "design" else [])).stdout)
    if command == "check":
        spread = doc["spread"]
        assert spread["samples"] == 10_000_000_000
        assert (spread["samples_run"], spread["samples_cut"]) == (1000, "time limit")
    else:
        assert {"stage": "Monte Carlo", "asked": 10_000_000_000, "done": 0} == {
            k: v for k, v in next(c for c in doc["cuts"] if c["stage"] == "Monte Carlo"
                                  ).items() if k != "note"}


def test_the_console_script_runs_one_linear_algebra_thread_unless_told(monkeypatch):
    import os

    import synth.cli

    ran = []
    monkeypatch.setattr(synth.cli, "cli", lambda **kwargs: ran.append(kwargs))
    for name in synth.cli.BLAS_THREADS:
        monkeypatch.delenv(name, raising=False)
    monkeypatch.setenv("OMP_NUM_THREADS", "3")  # the user's own choice is kept
    synth.cli.main()
    assert ran == [{"prog_name": "rnsynth"}]
    assert os.environ["OPENBLAS_NUM_THREADS"] == "1" and os.environ["MKL_NUM_THREADS"] == "1"
    assert os.environ["OMP_NUM_THREADS"] == "3"
