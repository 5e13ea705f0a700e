"""BOM output forms: encodings a spreadsheet reads in any locale, designators listed or as
ranges, one row per designator for a board tool, the purchaser's columns and typed JSON.

Values as engineers write them: 4k7 = 4.7 kΩ [IEC60062]; the package table's ratings
[CP-chip-ratings].
"""

from __future__ import annotations

import csv
import io
import json

import pytest
from click.testing import CliRunner

from synth.cli import cli

FIXED = """
[design]
title = "fixed {name}"
package = "0603"

[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "10 V"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
value = "4k7"
tolerance = "1%"
tcr = "100 ppm/C"

[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
value = "4k7"
tolerance = "1%"
tcr = "100 ppm/C"

[[resistor]]
ref = "R3"
nodes = ["out", "gnd"]
value = "10k"
tolerance = "1%"
tcr = "100 ppm/C"
"""


@pytest.fixture
def board(tmp_path):
    (tmp_path / "a.toml").write_text(FIXED.format(name="a"), encoding="utf-8")
    (tmp_path / "board.toml").write_text(
        '[board]\ntitle = "fixed"\n[[network]]\nfile = "a.toml"\ncount = 2\n',
        encoding="utf-8")
    return tmp_path / "board.toml"


def run(*args):
    return CliRunner().invoke(cli, [str(a) for a in args])


def rows(text):
    return list(csv.DictReader(io.StringIO(text.removeprefix("\ufeff"))))


def test_purchaser_columns_and_explicit_designators(board):
    result = run("bom", board, "--quiet")
    assert result.exit_code == 0, result.output
    first, second = rows(result.stdout)
    # two copies of R1, R2 (4k7) and R3 (10k); the second copy renumbered R4-R6
    assert first["references"] == "R1, R2, R4, R5" and first["quantity"] == "4"
    assert (first["value"], first["tolerance"], first["tcr_ppm_per_c"]) == ("4.7 kΩ", "1%", "100.0")
    assert (first["imperial"], first["metric"], first["rated_power_w"]) == ("0603", "1608M", "0.1")
    assert (first["voltage_rating_v"], first["technology"]) == ("50.0", "thick film")
    assert first["description"] == "RES 4.7 kΩ 1 % 0603 0.1 W 100 ppm/°C"
    assert second["references"] == "R3, R6"


def test_ranges_on_request(board):
    first = rows(run("bom", board, "--quiet", "--ranges").stdout)[0]
    assert first["references"] == "R1, R2, R4, R5"  # runs of three or more collapse
    three = board.parent / "three.toml"
    three.write_text('[[network]]\nfile = "a.toml"\ncount = 3\n', encoding="utf-8")
    assert rows(run("bom", three, "--quiet", "--ranges").stdout)[0]["references"] == (
        "R1, R2, R4, R5, R7, R8")
    ascii_text = run("bom", three, "--quiet", "--ranges", "--format", "markdown",
                     "--encoding", "ascii").stdout
    assert "4.7 kohm" in ascii_text and "ppm/degC" in ascii_text and ascii_text.isascii()


def test_encodings(board):
    plain = run("bom", board, "--quiet", "--encoding", "utf-8")
    assert plain.stdout_bytes.startswith(b"line,") and "4.7 kΩ".encode() in plain.stdout_bytes
    ascii_out = run("bom", board, "--quiet", "--encoding", "ascii")
    assert ascii_out.stdout_bytes.isascii()
    first = rows(ascii_out.stdout)[0]
    assert first["value"] == "4.7 kohm"
    assert first["description"] == "RES 4.7 kohm 1 % 0603 0.1 W 100 ppm/degC"
    target = board.parent / "bom.csv"
    assert run("bom", board, "--quiet", "--output", target).exit_code == 0
    assert target.read_bytes().startswith(b"\xef\xbb\xbfline,")


@pytest.mark.parametrize(("args", "fragment"), [
    (("--format", "json", "--encoding", "utf-8-sig"), "--encoding utf-8-sig goes with CSV"),
    (("--encoding", "latin-1"), "Invalid value for '--encoding'"),
])
def test_refused_encodings(board, args, fragment):
    result = run("bom", board, "--quiet", *args)
    assert result.exit_code == 2 and fragment in result.stderr


def test_ascii_refuses_other_characters(board, tmp_path):
    board.write_text(board.read_text().replace('"fixed"', '"Gewächshaus"'), encoding="utf-8")
    result = run("bom", board, "--quiet", "--format", "markdown", "--encoding", "ascii")
    assert result.exit_code == 2
    assert "--encoding ascii: output line 1 holds 'ä'" in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1


def test_per_designator_rows(board):
    result = run("bom", board, "--quiet", "--format", "per-designator")
    assert result.exit_code == 0, result.output
    table = rows(result.stdout)
    assert [r["designator"] for r in table] == ["R1", "R2", "R3", "R4", "R5", "R6"]
    assert [r["code"] for r in table] == ["4K7", "4K7", "10K", "4K7", "4K7", "10K"]
    fourth = table[3]
    assert (fourth["network"], fourth["designator_in_design"], fourth["line"]) == (
        "a #2", "R1", "1")
    assert fourth["description"] == "RES 4.7 kΩ 1 % 0603 0.1 W 100 ppm/°C"


def test_json_values_are_typed(board):
    doc = json.loads(run("bom", board, "--quiet", "--format", "json").stdout)
    assert doc["schema_version"] == 1
    line = doc["lines"][0]
    assert line["in_stock"] is False and line["quantity"] == 4 and line["ohms"] == 4700.0
    assert line["tolerance_fraction"] == 0.01 and line["voltage_rating_v"] == 50.0
    assert line["designators"] == ["R1", "R2", "R4", "R5"] and line["stock"] == {}
    assert doc["placements"][3] == {"designator": "R4", "network": "a #2", "original": "R1",
                                    "line": 1}


def test_stock_rows_match_package_tcr_and_pass_their_columns(board):
    shelf = board.parent / "shelf.csv"
    # 4k7: the 0805 reel and the 250 ppm reel do not fit a 0603 100 ppm/C part; the 25 ppm
    # 0603 reel does (better than needed), 3 on hand of 4 needed; 10k: none fits
    shelf.write_text("Value;Package;Tolerance;TCR;Quantity;Part Number;Location\n"
                     "4k7;0805;1%;50;100;PN-0805;A1\n4k7;0603;1%;250;100;PN-250;A2\n"
                     "4k7;0603;1%;25;3;PN-25;A3\n10k;1206;1%;50;100;PN-1206;A4\n",
                     encoding="utf-8")
    result = run("bom", board, "--stock", shelf, "--encoding", "utf-8")
    assert result.exit_code == 0, result.output
    first, second = rows(result.stdout)
    assert (first["in_stock"], first["on_hand"], first["to_buy"]) == ("yes", "3", "1")
    assert (first["stock_part_number"], first["stock_location"]) == ("PN-25", "A3")
    assert (second["in_stock"], second["to_buy"], second["stock_part_number"]) == ("no", "2", "")
    assert ("short: line 1 RES 4.7 kΩ 1 % 0603 0.1 W 100 ppm/°C: need 4, on hand 3, buy 1"
            in result.stderr)
    doc = json.loads(run("bom", board, "--stock", shelf, "--format", "json",
                         "--quiet").stdout)
    assert doc["lines"][0]["stock"] == {"part_number": "PN-25", "location": "A3"}
    assert doc["lines"][1]["stock"] == {}


def test_stock_only_notes_the_shortfall(board):
    shelf = board.parent / "shelf.csv"
    shelf.write_text("value,package,quantity\n4k7,0603,3\n10k,0603,2\n", encoding="utf-8")
    result = run("bom", board, "--stock", shelf, "--stock-only", "--format", "json",
                 "--quiet")
    assert result.exit_code == 0, result.output
    assert json.loads(result.stdout)["notes"] == ["line 1: 4 needed, 3 on hand; 1 to buy"]


def test_designators_written_are_kept(tmp_path):
    from synth.bom.build import renumber

    # a repeat moves above every number on the board; R3, written once, stays R3
    assert renumber([["R1", "R2"], ["R1", "R3"]]) == [{}, {"R1": "R4"}]
    assert renumber([["R1A", "R1B", "R9"], ["R1A", "R1B"]]) == [{}, {"R1A": "R10A",
                                                                   "R1B": "R10B"}]
    (tmp_path / "a.toml").write_text(FIXED.format(name="a").replace('"R2"', '"R20"')
                                     .replace('"R3"', '"R30"'), encoding="utf-8")
    (tmp_path / "b.toml").write_text(FIXED.format(name="b").replace('"R3"', '"R7"'),
                                     encoding="utf-8")
    board = tmp_path / "board.toml"
    board.write_text('[[network]]\nfile = "a.toml"\n[[network]]\nfile = "b.toml"\n',
                     encoding="utf-8")
    doc = json.loads(run("bom", board, "--format", "json", "--quiet").stdout)
    assert doc["renumbered"] == {"b": {"R1": "R31"}}
    kept = sorted(p["designator"] for p in doc["placements"])
    assert kept == ["R1", "R2", "R20", "R30", "R31", "R7"]
    doc = json.loads(run("bom", board, "--format", "json", "--quiet", "--renumber").stdout)
    assert [p["designator"] for p in doc["placements"]] == [f"R{k}" for k in range(1, 7)]
    assert doc["renumbered"]["a"] == {"R20": "R2", "R30": "R3"}


def test_ascii_json_escapes_and_reads_back(board):
    result = run("bom", board, "--quiet", "--format", "json", "--encoding", "ascii")
    assert result.exit_code == 0 and result.stdout_bytes.isascii()
    assert json.loads(result.stdout)["lines"][0]["value"] == "4.7 kΩ"


@pytest.mark.parametrize(("shelf", "fragment"), [
    ("value;tcr\n4k7;warm\n", "shelf.csv, line 2: 'warm' is not a TCR"),
    ("Value,Quantitty\n4k7,3\n", "shelf.csv, line 2: unknown column 'quantitty'; did you mean "
                                 "'quantity'?"),
])
def test_refused_stock_lists_from_the_command_line(board, shelf, fragment):
    (board.parent / "shelf.csv").write_text(shelf, encoding="utf-8")
    result = run("bom", board, "--quiet", "--stock", board.parent / "shelf.csv")
    assert result.exit_code == 2 and fragment in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1
