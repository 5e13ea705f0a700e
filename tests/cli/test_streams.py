"""Standard streams and output files of the command line (synth.cli.streams).

``-`` as a file operand reads standard input, and as an output writes standard output,
the convention of POSIX utilities [POSIX-dash].  Output files get the user's umask
[POSIX-open] and, without --force, an existing file is kept: plots too.  Devices are
only ever met through a named pipe or a symbolic link inside the test's own folder.
"""

from __future__ import annotations

import errno
import json
import os
import shutil
import stat
import tomllib

import pytest
from click.testing import CliRunner

import synth.inputs
from synth import files
from synth.cli import cli

from conftest import BOARDS, EXAMPLES

PROBE = next(p for p in EXAMPLES if p.name == "greenhouse_probe.toml")
DIVIDER = ["divider", "--input", "12 V", "--output", "3.3 V", "--samples", "0", "--top", "2",
           "--series", "E12"]
FIXED = """
[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "12 V"
[[resistor]]
ref = "R1"
nodes = ["in", "out"]
value = "20k"
package = "0603"
tolerance = "1%"
[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
value = "10k"
package = "0603"
tolerance = "1%"
[[target]]
voltage = "out"
equals = "4 V"
within = "5%"
"""  # 12 V x 10k / 30k = 4 V [HB-divider]


def run(*args: str, stdin: str | bytes | None = None):
    return CliRunner().invoke(cli, list(args), input=stdin)


def refused(*args: str, stdin: str | bytes | None = None) -> str:
    result = run(*args, stdin=stdin)
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output + result.stderr
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1, result.stderr
    return lines[0]


def names(folder):
    return sorted(p.name for p in folder.iterdir())


@pytest.fixture
def few_pictures(monkeypatch):
    """Two small figures in place of a run's pictures (and no front to compute): the
    writing is under test here, the pictures in tests/report."""
    from matplotlib.figure import Figure

    import synth.front
    from synth.report import plots

    def two(*args, **kwargs):
        pictures = []
        for stem in ("network", "spread-1-out"):
            figure = Figure(figsize=(1, 1))
            figure.subplots().plot([0, 1], [0, 1])
            pictures.append((stem, figure))
        return pictures

    monkeypatch.setattr(plots, "check_pictures", two)
    monkeypatch.setattr(plots, "design_pictures", two)
    monkeypatch.setattr(synth.front, "error_front", lambda *args, **kwargs: None)


@pytest.fixture
def umask():
    old = os.umask(0o022)
    os.umask(old)
    yield lambda mask: os.umask(mask)
    os.umask(old)


# -- a design from standard input ---------------------------------------------------------


def test_check_reads_a_design_from_standard_input():
    from_stdin = run("check", "-", "--json", "--samples", "0", stdin=FIXED)
    assert from_stdin.exit_code == 0, from_stdin.output
    document = json.loads(from_stdin.output)
    assert document["file"] == "<stdin>"
    assert document["targets"][0]["value"] == pytest.approx(4.0)  # [HB-divider]


def test_design_reads_a_design_from_standard_input():
    from_file = run("design", str(PROBE), "--json", "--samples", "0", "--top", "2")
    from_stdin = run("design", "-", "--json", "--samples", "0", "--top", "2",
                     stdin=PROBE.read_bytes())
    assert from_stdin.exit_code == from_file.exit_code == 0, from_stdin.output
    a, b = json.loads(from_file.output), json.loads(from_stdin.output)
    assert b["file"] == "<stdin>"
    assert [c["values"] for c in a["candidates"]] == [c["values"] for c in b["candidates"]]


@pytest.mark.parametrize(("text", "fragment"), [
    ("[[source]\n", "rnsynth: <stdin>: not valid TOML"),
    (b"title = \"caf\xe9\"\n", "rnsynth: <stdin>, line 1: not UTF-8 text (it reads as "
                               "Windows-1252"),
    ("[design]\ntitel = 1\n", "rnsynth: <stdin>, [design]: unknown key 'titel'"),
])
def test_a_bad_design_on_standard_input_is_named_stdin(text, fragment):
    for command in ("check", "design"):
        assert refused(command, "-", stdin=text).startswith(fragment)


def test_standard_input_is_bounded_as_a_file_is(monkeypatch):
    monkeypatch.setattr(synth.inputs, "MAX_INPUT_BYTES", 1000)
    line = refused("check", "-", stdin="# " + "x" * 2000 + "\n")
    assert line == "rnsynth: <stdin>: a design file may have at most 1,000 bytes (16 MiB)"


def test_files_named_on_standard_input_are_read_from_the_current_folder(tmp_path,
                                                                        monkeypatch):
    own = tmp_path / "own.csv"
    own.write_text((PROBE.parents[1] / "catalogs" / "packages.csv").read_text(
        encoding="utf-8").replace("0603,", "0603X,", 1), encoding="utf-8")
    text = '[design]\npackages = "own.csv"\n' + FIXED.replace('"0603"', '"0603X"')
    monkeypatch.chdir(tmp_path)
    result = run("check", "-", "--samples", "0", stdin=text)
    assert result.exit_code == 0, result.output + result.stderr
    monkeypatch.chdir(tmp_path.parent)
    assert "package table 'own.csv' was not found" in refused("check", "-", stdin=text)


def test_bom_reads_a_board_from_standard_input(tmp_path, monkeypatch):
    board = BOARDS[0]
    for name in tomllib.loads(board.read_text(encoding="utf-8"))["network"]:
        shutil.copy(board.parent / name["file"], tmp_path / name["file"])
    monkeypatch.chdir(tmp_path)  # the board's design files are read from here
    from_stdin = run("bom", "-", "--format", "json", "--quiet", "--time-limit", "5",
                     stdin=board.read_bytes())
    from_file = run("bom", str(board), "--format", "json", "--quiet", "--time-limit", "5")
    assert from_stdin.exit_code == from_file.exit_code == 0, from_stdin.output
    a, b = json.loads(from_file.stdout), json.loads(from_stdin.stdout)
    assert [line["value"] for line in a["lines"]] == [line["value"] for line in b["lines"]]


def test_bom_reads_a_design_from_standard_input_as_network_stdin():
    result = run("bom", "-", "--format", "json", "--quiet", "--time-limit", "5",
                 stdin=PROBE.read_bytes())
    assert result.exit_code == 0, result.output
    assert [n["name"] for n in json.loads(result.stdout)["networks"]] == ["stdin"]


def test_standard_input_is_read_once():
    line = refused("bom", "-", "-", stdin=PROBE.read_bytes())
    assert line == "rnsynth: -: standard input is named twice; it can be read once"


# -- an output on standard output ---------------------------------------------------------


def test_bom_output_dash_is_standard_output(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    dash = run("bom", str(PROBE), "--output", "-", "--time-limit", "5")
    plain = run("bom", str(PROBE), "--time-limit", "5")
    assert dash.exit_code == plain.exit_code == 0, dash.output
    assert dash.stdout == plain.stdout and dash.stdout.lstrip("\ufeff").startswith("line,")
    assert "BOM written" not in dash.stdout + dash.stderr and dash.stderr == plain.stderr
    assert names(tmp_path) == []  # no file named "-"


def test_save_dash_puts_the_design_on_standard_output_and_the_report_on_stderr(tmp_path,
                                                                               monkeypatch):
    monkeypatch.chdir(tmp_path)
    result = run(*DIVIDER, "--save", "-")
    assert result.exit_code == 0, result.output
    saved = tomllib.loads(result.stdout)  # nothing but the design on stdout
    assert [r["ref"] for r in saved["resistor"]] == ["R1", "R2"]
    assert "R1" in result.stderr and "design file written" not in result.stderr
    assert names(tmp_path) == []


def test_save_dash_with_json_is_refused():
    line = refused(*DIVIDER, "--save", "-", "--json")
    assert line == ("rnsynth: --save - and --json would both write to standard output; name "
                    "a file for --save")


def test_plots_to_dash_are_refused(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    for args in (("check", str(PROBE), "--samples", "100"), DIVIDER):
        line = refused(*args, "--plots", "-")
        assert line == ("rnsynth: --plots -: plots are PNG and SVG files, not a stream; name "
                        "a folder for them")
    assert names(tmp_path) == []


# -- output files -------------------------------------------------------------------------


def test_outputs_get_the_users_umask(few_pictures, tmp_path, umask):
    umask(0o027)  # mode 0o666 & ~0o027 = 0o640 [POSIX-open]
    assert run("bom", str(PROBE), "--output", str(tmp_path / "bom.csv"), "--quiet",
               "--time-limit", "5").exit_code == 0
    assert run(*DIVIDER, "--save", str(tmp_path / "d.toml"), "--plots",
               str(tmp_path / "plots")).exit_code == 0
    modes = {p.name: stat.S_IMODE(p.stat().st_mode) for p in
             [tmp_path / "bom.csv", tmp_path / "d.toml", *(tmp_path / "plots").iterdir()]}
    assert set(modes.values()) == {0o640} and "network.svg" in modes


@pytest.mark.skipif(os.name != "posix" or not os.path.exists(os.devnull),
                    reason="needs a POSIX null device")
def test_an_output_onto_a_device_is_refused_before_the_work_even_with_force(tmp_path):
    link = tmp_path / "bom.csv"
    link.symlink_to(os.devnull)
    for extra in ((), ("--force",)):
        line = refused("bom", str(PROBE), "--output", str(link), "--quiet", *extra)
        assert line == f"rnsynth: {link}: is not a regular file; write to a file name instead"
    line = refused(*DIVIDER, "--save", str(link), "--force")
    assert line.endswith("is not a regular file; write to a file name instead")
    assert link.is_symlink() and stat.S_ISCHR(os.stat(os.devnull).st_mode)


def test_save_keeps_an_existing_file_unless_force(tmp_path):
    target = tmp_path / "d.toml"
    target.write_text("old\n", encoding="utf-8")
    line = refused(*DIVIDER, "--save", str(target))
    assert line == f"rnsynth: {target}: already exists; pass --force to replace it"
    assert target.read_text(encoding="utf-8") == "old\n"
    assert run(*DIVIDER, "--save", str(target), "--force").exit_code == 0
    assert "resistor" in tomllib.loads(target.read_text(encoding="utf-8"))


@pytest.mark.parametrize("args", [
    ("check", str(PROBE), "--samples", "200"),
    ("design", str(PROBE), "--samples", "200", "--top", "2"),
    (*DIVIDER[:-2], "--samples", "200"),
], ids=["check", "design", "divider"])
def test_plots_keep_existing_files_unless_force(few_pictures, tmp_path, args):
    plots = tmp_path / "plots"
    first = run(*args, "--plots", str(plots))
    assert first.exit_code == 0, first.output
    written = names(plots)
    assert written and all(n.endswith((".png", ".svg")) for n in written)
    assert all(f"plot written: {plots / n}" in first.output for n in written)
    for name in written:
        (plots / name).unlink()
    old = plots / written[-1]
    old.write_bytes(b"old")
    line = refused(*args, "--plots", str(plots))
    assert line == f"rnsynth: {old}: already exists; pass --force to replace it"
    assert old.read_bytes() == b"old" and names(plots) == [old.name]  # nothing else written
    again = run(*args, "--plots", str(plots), "--force")
    assert again.exit_code == 0, again.output
    assert old.read_bytes()[:5] in (b"\x89PNG\r", b"<?xml") and names(plots) == written


def test_a_plot_folder_that_is_a_file_is_refused_before_the_work(tmp_path):
    blocker = tmp_path / "plots"
    blocker.write_text("not a folder", encoding="utf-8")
    line = refused(*DIVIDER, "--plots", str(blocker))  # click's own check of a folder
    assert "--plots" in line and "is a file" in line
    line = refused("check", str(PROBE), "--samples", "100", "--plots", str(blocker / "in"))
    assert line == (f"rnsynth: {blocker / 'in'}: cannot create the plot folder ({blocker} is "
                    "not a folder); name a folder for the plots")
    assert names(tmp_path) == ["plots"]


def test_a_full_disk_while_writing_plots_leaves_nothing(few_pictures, tmp_path, monkeypatch):
    def full(*args, **kwargs):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(files.os, "write", full)
    line = refused(*DIVIDER, "--save", str(tmp_path / "d.toml"), "--plots",
                   str(tmp_path / "new" / "plots"))
    assert line.endswith("could not be written (No space left on device); nothing was written")
    assert names(tmp_path) == []  # no file, no temporary file, no folder made for the plots


def test_a_plot_written_by_another_run_meanwhile_removes_the_others(few_pictures, tmp_path,
                                                                   monkeypatch):
    plots = tmp_path / "plots"
    real = files._write_whole

    def meanwhile(handle, payload):
        real(handle, payload)
        if payload.startswith(b"<?xml"):  # the other run's SVG appears while ours is written
            (plots / "network.svg").write_text("other", encoding="utf-8")

    monkeypatch.setattr(files, "_write_whole", meanwhile)
    line = refused(*DIVIDER, "--save", str(tmp_path / "d.toml"), "--plots", str(plots))
    assert "network.svg: already exists (written by another run meanwhile)" in line
    assert names(tmp_path) == ["plots"] and names(plots) == ["network.svg"]
    assert (plots / "network.svg").read_text(encoding="utf-8") == "other"


def test_a_plot_folder_that_cannot_be_made_is_one_line(few_pictures, tmp_path, monkeypatch):
    from pathlib import Path

    def refused_mkdir(self, *args, **kwargs):
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))

    monkeypatch.setattr(Path, "mkdir", refused_mkdir)
    line = refused("check", str(PROBE), "--samples", "100", "--plots", str(tmp_path / "p"))
    assert line == f"rnsynth: {tmp_path / 'p'}: cannot create the plot folder (Permission denied)"


def test_a_plot_folder_someone_else_filled_is_kept(few_pictures, tmp_path, monkeypatch):
    plots = tmp_path / "plots"
    real = files._write_whole

    def meanwhile(handle, payload):
        real(handle, payload)
        (plots / "theirs.txt").write_text("x", encoding="utf-8")
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(files, "_write_whole", meanwhile)
    line = refused(*DIVIDER, "--plots", str(plots))
    assert "No space left on device" in line
    assert names(plots) == ["theirs.txt"]  # the folder is not ours alone now: kept


def test_no_pictures_make_no_folder(tmp_path):
    from synth.cli.streams import write_files

    assert write_files([], force=False, folder=str(tmp_path / "p")) == []
    assert names(tmp_path) == []


def line_figure():
    from matplotlib.figure import Figure

    figure = Figure()
    figure.subplots().plot([0, 1], [0, 1])
    return figure


def test_plots_go_into_a_new_folder_and_replace_an_earlier_run_only_with_force(tmp_path):
    from synth.cli.streams import plot_files, write_files
    from synth.errors import DesignError

    folder = tmp_path / "new" / "plots"
    plots = plot_files([("line", line_figure())], str(folder))
    assert write_files(plots, force=False, folder=str(folder)) == [folder / "line.png",
                                                                   folder / "line.svg"]
    assert (folder / "line.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert b"<svg" in (folder / "line.svg").read_bytes()
    with pytest.raises(DesignError, match=r"line\.png: already exists; pass --force"):
        write_files(plots, force=False, folder=str(folder))
    write_files(plots, force=True, folder=str(folder))
    assert names(folder) == ["line.png", "line.svg"]


def test_a_failed_plot_write_leaves_no_partial_file_nor_folder(tmp_path, monkeypatch):
    from synth.cli.streams import plot_files, write_files
    from synth.errors import DesignError

    def full(*args, **kwargs):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    plots = plot_files([("line", line_figure())], str(tmp_path / "new"))
    monkeypatch.setattr(files.os, "write", full)
    with pytest.raises(DesignError, match=r"could not be written \(No space left on device\)"):
        write_files(plots, force=False, folder=str(tmp_path / "new"))
    assert names(tmp_path) == []


@pytest.mark.parametrize("command", ["design", "check"])
def test_plots_past_the_time_limit_are_left_out_and_named(tmp_path, command) -> None:
    # the limit has passed when the plots come: the first figure is drawn, the rest are
    # named in one note and not written; without a limit every figure is drawn
    example = {"design": "railway_signal.toml", "check": "bench_supply.toml"}[command]
    path = next(p for p in EXAMPLES if p.name == example)
    cut = CliRunner().invoke(cli, [command, str(path), "--samples", "100", "--plots",
                                   str(tmp_path / "cut"), "--time-limit", "1e-6"])
    assert cut.exit_code in (0, 1), cut.output + cut.stderr
    assert "Traceback" not in cut.output + cut.stderr
    notes = [line for line in cut.stderr.splitlines() if "plots undrawn" in line]
    assert len(notes) == 1
    drawn = sorted(p.name for p in (tmp_path / "cut").iterdir())
    assert len(drawn) == 2 and {p.rsplit(".", 1)[1] for p in drawn} == {"png", "svg"}
    whole = CliRunner().invoke(cli, [command, str(path), "--samples", "100", "--plots",
                                     str(tmp_path / "whole")])
    assert whole.exit_code in (0, 1) and "plots undrawn" not in whole.stderr
    every = {p.stem for p in (tmp_path / "whole").iterdir()}
    left = notes[0].split("(", 1)[1].split(")", 1)[0].split(", ")
    assert every == {drawn[0].rsplit(".", 1)[0], *left}
    assert f"left {len(left)} of {len(every)} plots" in notes[0]
