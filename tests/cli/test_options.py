"""Option values at the edge: refused while parsing, one line, exit 2 (synth.cli.options)."""

from __future__ import annotations

import json
import os

import pytest
from click.testing import CliRunner

from synth.cli import cli

from conftest import BOARDS, EXAMPLES

DIVIDER = ["divider", "--input", "12 V", "--output", "3.3 V", "--samples", "0"]
HUGE = ["1e1000000", "1e99999999999999999999", "9" * 400, "9" * 400 + "R"]


def refused(*args: str) -> str:
    result = CliRunner().invoke(cli, list(args))
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output + result.stderr
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and len(lines[0]) < 300, result.stderr
    return lines[0]


@pytest.mark.parametrize("number", HUGE, ids=lambda t: t[:12])
@pytest.mark.parametrize(("args", "option"), [
    (["series", "E96", "--nearest", "{}"], "--nearest"),
    (["series", "E96", "--range", "1:{}"], "--range"),
    (["pad", "--impedance", "{}", "--samples", "0"], "--impedance"),
    (["divider", "--input", "{}V", "--output", "1V", "--samples", "0"], "--input"),
    ([*DIVIDER, "--ambient", "{} C"], "--ambient"),
])
def test_numbers_beyond_the_float_range_are_refused_in_options(args, option, number):
    line = refused(*(a.format(number) for a in args))
    assert option in line


@pytest.mark.parametrize(("extra", "fragment"), [
    (["--samples", "99999999999999999999"], "--samples 99999999999999999999 must be 0"),
    (["--samples", "-1"], "--samples -1 must be 0"),
    (["--seed", "-1"], "--seed -1 must be 0 or more"),
    (["--package", ""], "--package: give a package name"),
    (["--package", "  "], "--package: give a package name"),
    (["--ambient", "-300 C"], "--ambient: '-300 C' is below absolute zero"),
    (["--time-limit", "inf"], "--time-limit inf must be a positive number of seconds"),
])
def test_quick_options_out_of_range_are_refused(extra, fragment):
    assert fragment in refused(*DIVIDER, *extra)


@pytest.mark.parametrize("limit", ["nan", "0", "-1", "inf"])
def test_bom_time_limit_must_be_positive_and_finite(limit):
    line = refused("bom", str(BOARDS[0]), "--time-limit", limit, "--quiet")
    assert "--time-limit" in line and "positive number of seconds" in line


def test_series_json_is_strict():
    result = CliRunner().invoke(cli, ["series", "E96", "--nearest", "1e300", "--json"])
    assert result.exit_code == 0
    json.dumps(json.loads(result.output), allow_nan=False)


def test_json_output_never_holds_nan_or_infinity(capsys):
    from synth.cli.options import emit_json

    emit_json({"a": float("nan"), "b": [float("inf"), -float("inf"), 1.5], "c": (2.0,)})
    document = json.loads(capsys.readouterr().out)
    assert document == {"a": None, "b": [None, None, 1.5], "c": [2.0]}


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_check_json_of_every_example_is_strict(path):
    result = CliRunner().invoke(cli, ["check", str(path), "--json", "--samples", "200"])
    assert result.exit_code in (0, 1), result.output
    json.dumps(json.loads(result.output), allow_nan=False)


def test_a_newline_in_a_reference_does_not_split_the_message(tmp_path):
    path = tmp_path / "design.toml"
    path.write_text('[[source]]\nref = "a\\nb"\nkind = "x"\n', encoding="utf-8")
    line = refused("check", str(path))
    # the reference itself is refused (a newline would split every table row it is in),
    # and the message shows it on one line
    assert "source 'a\\nb': ref 'a\\nb' holds a control character" in line


@pytest.mark.parametrize(("args", "fragment"), [
    (["divider", "--top", "x"], "--top': 'x' is not a valid integer"),
    (["series", "E97"], "'E97' is not one of"),
    (["frob"], "No such command 'frob'"),
    (["divider", "--input"], "--input"),
])
def test_usage_errors_are_one_line_too(args, fragment):
    line = refused(*args)
    assert line.startswith("rnsynth: ") and fragment in line and "--help" in line


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
def test_bom_output_to_a_pipe_is_refused_before_the_work(tmp_path):
    # a named pipe of the test's own, never a real device: a regression must not replace one
    fifo = tmp_path / "bom.csv"
    os.mkfifo(fifo)
    line = refused("bom", str(BOARDS[0]), "--output", str(fifo), "--quiet", "--force")
    assert line == f"rnsynth: {fifo}: is not a regular file; write to a file name instead"
