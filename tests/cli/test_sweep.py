"""``rnsynth sweep``: formats, files, exit codes and refusals, end to end through the CLI."""

from __future__ import annotations

import csv
import io
import json

import jsonschema
import pytest
from click.testing import CliRunner

from synth.cli import cli
from synth.schemas import schema_path

from conftest import ROOT

PROBE = str(ROOT / "examples" / "greenhouse_probe.toml")

DIVIDER = '''
[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "12 V"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
value = "10k"

[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
value = "4.7k"

[[target]]
name = "tap"
voltage = "out"
at_most = "4 V"
'''


def run(*args: str, stdin: str | None = None):
    return CliRunner().invoke(cli, list(args), input=stdin)


@pytest.fixture
def divider(tmp_path):
    path = tmp_path / "divider.toml"
    path.write_text(DIVIDER, encoding="utf-8")
    return str(path)


def validate(text: str) -> dict:
    schema = json.loads(schema_path("sweep").read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    document = json.loads(text)
    jsonschema.validate(document, schema, cls=jsonschema.Draft202012Validator)
    return document


def test_a_sweep_whose_points_all_meet_prints_its_table_and_exits_0():
    result = run("sweep", PROBE, "--over", "source.VBAT.value=12V:15V:2", "--jobs", "1")
    assert result.exit_code == 0, result.output
    lines = result.stdout.splitlines()
    assert lines[0].split()[:4] == ["source.VBAT.value", "verdict", "largest", "error"]
    assert lines[2].startswith("12 V") and " meets " in lines[2] and " yes " in lines[2]
    assert lines[3].startswith("15 V") and "365 kΩ" in lines[3]
    assert lines[-1].endswith("2 point(s), 2 meet every window and limit, 0 fail")


def test_a_failing_point_exits_1_with_every_point_s_verdict(divider):
    result = run("sweep", divider, "--over", "source.V1.value=4V:16V:4", "--jobs", "1",
                 "--format", "csv")
    assert result.exit_code == 1, result.output
    rows = list(csv.DictReader(io.StringIO(result.stdout)))
    assert [r["verdict"] for r in rows] == ["meets", "meets", "meets", "fails"]
    for row in rows:
        vin = float(row["source.V1.value"])
        # Vout = Vin R2/(R1 + R2) [HB-divider]: 1.28, 2.56, 3.84 and 5.12 V against 4 V
        vout = vin * 4.7 / 14.7
        assert float(row["target: tap"]) == pytest.approx(vout, rel=1e-12)
        assert row["verdict"] == ("meets" if vout <= 4 else "fails")
        assert row["mode"] == "check" and row["proven"] == ""
    assert "lies outside" in rows[-1]["note"] and rows[0]["note"] == ""


def test_json_validates_and_does_not_depend_on_jobs(divider):
    args = ["sweep", divider, "--over", "source.V1.value=4V:16V:3",
            "--over", "resistor.R2.value=1k:10k:3:log", "--json"]
    one, two = run(*args, "--jobs", "1"), run(*args, "--jobs", "2")
    assert one.exit_code == two.exit_code == 1, one.output
    assert one.stdout == two.stdout
    document = validate(one.stdout)
    assert document["ok"] is False and len(document["points"]) == 9
    assert document["axes"][1] == {"key": "resistor.R2.value", "unit": "Ω", "spacing": "log",
                                   "values": pytest.approx([1e3, 10 ** 3.5, 1e4], rel=1e-12)}
    assert [p["values"]["source.V1.value"] for p in document["points"][:4]] == [4, 4, 4, 10]


def test_outputs_go_to_files_by_suffix_with_a_plot(divider, tmp_path):
    out, plot = tmp_path / "sweep.json", tmp_path / "sweep.svg"
    args = ["sweep", divider, "--over", "source.V1.value=4V:16V:3", "--jobs", "1",
            "--output", str(out), "--plot", str(plot)]
    result = run(*args)
    assert result.exit_code == 1, result.output
    assert validate(out.read_text(encoding="utf-8"))["points"][2]["verdict"] == "fails"
    assert plot.read_text(encoding="utf-8").startswith("<?xml")
    assert f"sweep written: {out}" in result.stdout and f"plot written: {plot}" in result.stdout
    assert "3 point(s), 2 meet every window and limit, 1 fail" in result.stdout
    again = run(*args)
    assert again.exit_code == 2 and "already exists; pass --force" in again.stderr
    assert run(*args, "--force").exit_code == 1


def test_a_png_plot_and_a_csv_file(divider, tmp_path):
    out, plot = tmp_path / "s.csv", tmp_path / "s.png"
    result = run("sweep", divider, "--over", "source.V1.value=1V:2V:2", "--jobs", "1",
                 "--output", str(out), "--plot", str(plot))
    assert result.exit_code == 0, result.output
    assert plot.read_bytes().startswith(b"\x89PNG")
    assert out.read_text(encoding="utf-8").startswith("source.V1.value,mode,verdict,")


def test_the_design_is_read_from_standard_input_and_results_written_to_it():
    result = run("sweep", "-", "--over", "source.V1.value=1V:2V:2", "--jobs", "1",
                 "--output", "-", "--format", "json", stdin=DIVIDER)
    assert result.exit_code == 0, result.output
    assert validate(result.stdout)["file"] == "<stdin>"


def test_check_forces_a_check_of_a_free_design():
    result = run("sweep", PROBE, "--over", "source.VBAT.value=12V:15V:2", "--check",
                 "--jobs", "1", "--json")
    points = json.loads(result.stdout)["points"]
    assert [p["mode"] for p in points] == ["check", "check"]
    assert [p["chosen"] for p in points] == [{"R1": 324_000.0}] * 2
    assert [p["proven"] for p in points] == [None, None]


def test_the_readme_example_runs():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    line = next(x.strip() for x in text.splitlines() if x.strip().startswith("rnsynth sweep "))
    import shlex

    args = shlex.split(line)[1:]
    args[1] = str(ROOT / args[1])
    result = run(*args, "--jobs", "1")
    assert result.exit_code == 0, result.output
    assert "meet every window and limit" in result.stdout


@pytest.mark.parametrize(("extra", "fragment"), [
    (["--over", "source.V9.value=1V:2V:2"], "the design has no source 'V9'"),
    (["--over", "source.V1.value=2V:1V:2"], "range 2V..1V is empty"),
    (["--over", "source.V1.value=1V:2V:0"], "STEPS 0 must be 1 to 10,000"),
    (["--over", "source.V1.value=1V:2V:10001"], "STEPS 10001 must be 1 to 10,000"),
    (["--over", "source.V1.value=1V:2V:101", "--over", "resistor.R1.value=1k:2k:100"],
     "10,100 points, over the 10,000"),
    (["--over", "source.V1.value=1mA:2mA:2"], "source V1: value"),
    (["--over", "source.V1.value=1V:2V:2", "--jobs", "0"], "--jobs 0 must be at least 1"),
    (["--over", "source.V1.value=1V:2V:2", "--time-limit", "0"], "--time-limit 0.0 must be"),
    (["--over", "source.V1.value=1V:2V:2", "--output", "out.xlsx"], "--output out.xlsx"),
    (["--over", "source.V1.value=1V:2V:2", "--plot", "p.pdf"], "--plot p.pdf: name a .png"),
    (["--over", "source.V1.value=1V:2V:2", "--json", "--format", "csv"], "two formats"),
    (["--over", "source.V1.value=1V:2V:2", "--cluster", "nonsense"],
     "cannot reach a Dask scheduler there"),
    ([], "Missing option '--over'"),
])
def test_bad_input_is_one_line_and_exit_2(divider, extra, fragment):
    result = run("sweep", divider, *extra)
    assert result.exit_code == 2, result.output
    assert fragment in result.stderr and "Traceback" not in result.output
    assert len(result.stderr.strip().splitlines()) == 1
    assert result.stdout == ""


def test_a_missing_file_is_bad_input(tmp_path):
    result = run("sweep", str(tmp_path / "none.toml"), "--over", "source.V1.value=1V:2V:2")
    assert result.exit_code == 2 and "none.toml" in result.stderr


def test_sweep_help_loads_no_heavy_library():
    import subprocess
    import sys

    probe = ("import json, sys\nfrom synth.cli import main\n"
             "sys.argv = ['rnsynth', 'sweep', '--help']\n"
             "try:\n    main()\nexcept SystemExit:\n    pass\n"
             "print(json.dumps(sorted({m.split('.')[0] for m in sys.modules})), file=sys.stderr)")
    done = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                          check=False, stdin=subprocess.DEVNULL)
    loaded = set(json.loads(done.stderr.strip().splitlines()[-1]))
    assert "KEY=LOW:HIGH:STEPS" in done.stdout
    assert not loaded & {"numpy", "scipy", "matplotlib", "ortools", "distributed", "tabulate"}
