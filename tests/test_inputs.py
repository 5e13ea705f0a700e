"""Input files read safely: regular files only, at most 16 MiB, UTF-8 (synth.inputs)."""

from __future__ import annotations

import os
import shutil

import pytest
from click.testing import CliRunner

import synth.inputs
from synth.catalog.stock import load_stock
from synth.cli import cli
from synth.design.load import load_design
from synth.errors import DesignError
from synth.inputs import read_input_text, read_toml

from conftest import EXAMPLES

PROBE = next(p for p in EXAMPLES if p.name == "greenhouse_probe.toml")


def one_line_refusal(*args: str) -> str:
    result = CliRunner().invoke(cli, list(args))
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output + result.stderr
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1, result.stderr
    return lines[0]


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="needs named pipes")
def test_a_fifo_is_refused_before_it_is_opened(tmp_path):
    fifo = tmp_path / "design.toml"
    os.mkfifo(fifo)  # opening it for reading would block until a writer came
    for command in ("check", "design", "bom"):
        assert "is not a regular file" in one_line_refusal(command, str(fifo))


@pytest.mark.skipif(not os.path.exists("/dev/zero"), reason="needs /dev/zero")
def test_a_device_is_refused_not_read_without_bound(tmp_path):
    link = tmp_path / "design.toml"
    link.symlink_to("/dev/zero")  # a name with the right suffix: the device is still refused
    for args in (("check", str(link)), ("bom", str(link))):
        assert "design.toml: is not a regular file" in one_line_refusal(*args)
    for args in (("check", "/dev/zero"), ("bom", "/dev/zero")):
        assert "/dev/zero: a design" in one_line_refusal(*args)


def test_a_file_over_the_size_cap_is_refused(tmp_path, monkeypatch):
    path = tmp_path / "design.toml"
    path.write_bytes(b"# " + b"x" * 2000 + b"\n")
    monkeypatch.setattr(synth.inputs, "MAX_INPUT_BYTES", 1000)
    with pytest.raises(DesignError, match=r"is 2,003 bytes; a design file may have at most"):
        load_design(path)


@pytest.mark.parametrize("text", ["x = " + "[" * 5000 + "]" * 5000,
                                  "x = " + "{a = " * 3000 + "1" + "}" * 3000])
def test_toml_nested_thousands_deep_is_refused(tmp_path, text):
    path = tmp_path / "deep.toml"
    path.write_text(text + "\n", encoding="utf-8")
    with pytest.raises(DesignError, match="nested too deeply"):
        read_toml(path, "design file")
    assert "nested too deeply" in one_line_refusal("check", str(path))


def test_utf8_with_a_byte_order_mark_is_read(tmp_path):
    path = tmp_path / "probe.toml"
    path.write_bytes(b"\xef\xbb\xbf" + PROBE.read_bytes())
    assert load_design(path).title == load_design(PROBE).title


def test_windows_1252_is_refused_with_the_encoding_named(tmp_path):
    path = tmp_path / "stock.csv"
    path.write_bytes("value,package\n4k7,0603\n# café\n".encode("cp1252"))
    with pytest.raises(DesignError, match=r"line 3: not UTF-8 text \(it reads as Windows-1252"):
        load_stock(path)
    path.write_bytes(b"value,package\n4k7,0603\n\x81\x8d\n")  # bytes no code page here uses
    with pytest.raises(DesignError, match=r"line 3: not UTF-8 text; save it as UTF-8"):
        read_input_text(path, "stock list")


def test_a_csv_field_over_the_csv_limit_is_refused(tmp_path):
    path = tmp_path / "stock.csv"
    path.write_text('value,package\n"' + "1" * 200_000 + '",0603\n', encoding="utf-8")
    with pytest.raises(DesignError, match=r"line 2: not a CSV row the reader accepts \(field"):
        load_stock(path)


def test_stock_and_board_errors_are_one_line(tmp_path):
    shutil.copy(PROBE, tmp_path / "probe.toml")
    board = tmp_path / "board.toml"
    board.write_text('[[network]]\nfile = "probe.toml"\n', encoding="utf-8")
    stock = tmp_path / "stock.csv"
    stock.write_bytes("value\n4k7\n1k\xa0\n".encode("cp1252"))
    line = one_line_refusal("bom", str(board), "--stock", str(stock), "--quiet")
    assert "Windows-1252" in line
    fifo = tmp_path / "fifo.csv"
    if hasattr(os, "mkfifo"):
        os.mkfifo(fifo)
        assert "not a regular file" in one_line_refusal("bom", str(board), "--stock", str(fifo))


def test_a_name_too_long_for_the_file_system_is_not_found(tmp_path):
    shutil.copy(PROBE, tmp_path / "probe.toml")
    board = tmp_path / "board.toml"
    long = "9" * 5000
    board.write_text(f'[board]\nstock = "{long}.csv"\n[[network]]\nfile = "probe.toml"\n',
                     encoding="utf-8")
    assert "was not found" in one_line_refusal("bom", str(board))
    board.write_text(f'[[network]]\nfile = "{long}.toml"\n', encoding="utf-8")
    assert "was not found" in one_line_refusal("bom", str(board))
    board.write_text('[[network]]\nfile = "probe.toml"\n', encoding="utf-8")
    assert "not found" in one_line_refusal("bom", str(board), "--stock", long + ".csv")


# -- the suffix rule: no other kind of file is read ---------------------------------------

SECRET = "SECRET_KEY = \"do-not-print\"\npassword,hunter2\n"  # TOML and CSV at once


def shared_board(tmp_path, board_text):
    shutil.copy(PROBE, tmp_path / "probe.toml")
    (tmp_path / "notes.txt").write_text(SECRET, encoding="utf-8")
    board = tmp_path / "board.toml"
    board.write_text(board_text, encoding="utf-8")
    return board


@pytest.mark.parametrize(("board_text", "extra", "fragment"), [
    ('[board]\nstock = "notes.txt"\n[[network]]\nfile = "probe.toml"\n', (),
     "board.toml, [board]: stock list 'notes.txt' is not a .csv file; name a file ending in "
     ".csv"),
    ('[[network]]\nfile = "notes.txt"\n', (),
     "board.toml, network #1: design file 'notes.txt' is not a .toml file; name a file "
     "ending in .toml"),
    ('[[network]]\nfile = "probe.toml"\n', ("--stock", "{tmp}/notes.txt"),
     "notes.txt: a stock list must be a .csv file; name a file ending in .csv"),
    ('[[network]]\nfile = "probe.toml"\n', ("{tmp}/notes.txt",),
     "notes.txt: a design or board file must be a .toml file; name a file ending in .toml"),
])
def test_a_file_of_another_kind_is_refused_by_its_name(tmp_path, board_text, extra, fragment):
    board = shared_board(tmp_path, board_text)
    line = one_line_refusal("bom", str(board), *(a.format(tmp=tmp_path) for a in extra),
                            "--quiet")
    assert line.endswith(fragment) and "do-not-print" not in line and "hunter2" not in line


@pytest.mark.parametrize("name", ["notes.txt", "/etc/hostname", "missing.ini", "table.csv.bak"])
def test_a_package_table_must_be_a_csv_file(tmp_path, name):
    (tmp_path / "notes.txt").write_text(SECRET, encoding="utf-8")
    design = tmp_path / "design.toml"
    design.write_text(f'[design]\npackages = "{name}"\n' + PROBE.read_text(encoding="utf-8")
                      .replace("[design]\n", "", 1), encoding="utf-8")
    line = one_line_refusal("check", str(design), "--samples", "0")
    # refused by its name before it is looked for: a missing one is not "not found"
    assert line.endswith(f"design.toml, [design]: package table {name!r} is not a .csv file; "
                         "name a file ending in .csv")
    assert "do-not-print" not in line


def test_a_design_file_must_be_a_toml_file(tmp_path):
    (tmp_path / "notes.txt").write_text(SECRET, encoding="utf-8")
    for command in ("check", "design"):
        line = one_line_refusal(command, str(tmp_path / "notes.txt"))
        assert line == (f"rnsynth: {tmp_path / 'notes.txt'}: a design file must be a .toml "
                        "file; name a file ending in .toml")
    with pytest.raises(DesignError, match=r"a design file must be a \.toml file"):
        load_design(tmp_path / "notes.txt")


def test_the_library_readers_keep_the_rule(tmp_path):
    from synth.catalog.packages import load_package_table

    (tmp_path / "notes.txt").write_text(SECRET, encoding="utf-8")
    with pytest.raises(DesignError, match=r"notes\.txt: a stock list must be a \.csv file"):
        load_stock(tmp_path / "notes.txt")
    with pytest.raises(DesignError, match=r"notes\.txt: a package table must be a \.csv file"):
        load_package_table(tmp_path / "notes.txt")


def test_the_suffix_is_read_in_any_case(tmp_path):
    shutil.copy(PROBE, tmp_path / "PROBE.TOML")
    (tmp_path / "SHELF.CSV").write_text("value,package\n4k7,0603\n", encoding="utf-8")
    assert load_design(tmp_path / "PROBE.TOML").title == load_design(PROBE).title
    assert load_stock(tmp_path / "SHELF.CSV")[0].value == 4700.0


# -- a design from a stream ---------------------------------------------------------------


def test_a_design_from_a_stream_reads_as_the_file_does():
    import io

    from synth.design.load import load_design_stream

    design = load_design_stream(io.BytesIO(PROBE.read_bytes()))
    assert design.origin == "<stdin>" and design.title == load_design(PROBE).title
    assert load_design_stream(io.BytesIO(PROBE.read_bytes()), name="<pipe>").origin == "<pipe>"


def test_a_stream_that_cannot_be_read_is_one_line():
    from synth.inputs import read_stream

    class Broken:
        def read(self, size):
            raise OSError(9, "Bad file descriptor")

    with pytest.raises(DesignError, match=r"^<stdin>: cannot be read \(Bad file descriptor\)$"):
        read_stream(Broken(), "design file")


def test_a_board_reads_dash_only_from_the_stream_it_is_given():
    import io

    from synth.design.board import load_board

    with pytest.raises(DesignError, match="-: no standard input to read here; name a file"):
        load_board(["-"])
    board = load_board(["-"], stdin=io.BytesIO(PROBE.read_bytes()))
    assert [n.name for n in board.networks] == ["stdin"]
    assert board.networks[0].design.origin == "<stdin>"
