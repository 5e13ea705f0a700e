"""A matched array on the BOM: one part per array, listed with its members' designators.

The board holds a 10 V divider with a matched pair (R1 over R2, 2:1 for a 5 V goal,
[HB-divider]), twice, beside a single divider of its own parts; an array is one orderable
part (common practice for a resistor network, [CP-matched-array]).  The counts are
counted by hand.
"""

from __future__ import annotations

import csv
import io
import json

import pytest
from click.testing import CliRunner

from synth.bom.build import build_bom
from synth.cli import cli
from synth.design.board import load_board

PAIR = """
[design]
title = "{title}"
package = "0603"

[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "10 V"

[[array]]
name = "RN1"
tolerance = "0.1%"
ratio_tolerance = "0.05%"
tcr = "25 ppm/C"
tcr_tracking = "5 ppm/C"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
value = "{r1}"
array = "RN1"

[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
value = "10k"
array = "RN1"

[[resistor]]
ref = "R3"
nodes = ["out", "gnd"]
value = "{r3}"
tolerance = "0.1%"
tcr = "25 ppm/C"

[[target]]
voltage = "out"
at_least = "0 V"
"""


@pytest.fixture
def board(tmp_path):
    (tmp_path / "pair.toml").write_text(PAIR.format(title="pair", r1="10k", r3="1M"),
                                        encoding="utf-8")
    (tmp_path / "odd.toml").write_text(PAIR.format(title="odd", r1="20k", r3="10k"),
                                       encoding="utf-8")
    (tmp_path / "board.toml").write_text(
        '[board]\ntitle = "matched"\n[[network]]\nfile = "pair.toml"\ncount = 2\n'
        '[[network]]\nfile = "odd.toml"\n', encoding="utf-8")
    return tmp_path / "board.toml"


def test_an_array_is_one_part_with_its_members_designators(board):
    result = build_bom(load_board([str(board)]))
    arrays = [line for line in result.lines if line.key.is_array]
    singles = [line for line in result.lines if not line.key.is_array]
    # two copies of the 10k/10k pair: one line, two parts; the 20k/10k pair its own line
    same, odd = sorted(arrays, key=lambda line: line.key.members)
    assert same.key.members == (10e3, 10e3) and same.quantity == 2
    assert same.arrays == (("R1", "R2"), ("R4", "R5"))  # the second copy renumbered
    assert same.references == ("R1", "R2", "R4", "R5")
    assert odd.key.members == (20e3, 10e3) and odd.quantity == 1
    assert odd.key.ratio_tolerance == pytest.approx(0.0005)
    # R3 of each network is a single part: 1M twice, 10k once
    assert sorted((line.key.value, line.quantity) for line in singles) == [(10e3, 1),
                                                                           (1e6, 2)]
    assert result.parts == 2 + 1 + 3


def test_the_outputs_carry_the_array(board):
    runner = CliRunner()
    out = runner.invoke(cli, ["bom", str(board), "--quiet"])
    assert out.exit_code == 0, out.output
    rows = list(csv.DictReader(io.StringIO(out.stdout.removeprefix("\ufeff"))))
    pair = next(r for r in rows if r["value"] == "10 kΩ, 10 kΩ")
    assert pair["quantity"] == "2" and pair["references"] == "R1, R2, R4, R5"
    assert pair["code"] == "10K/10K" and pair["to_buy"] == "2"
    assert pair["description"] == ("RES ARRAY 2 × 10 kΩ, 10 kΩ 0.1 % ratio 0.05 % 0603 0.1 W "
                                   "25 ppm/°C tracking 5 ppm/°C")
    document = json.loads(runner.invoke(cli, ["bom", str(board), "--quiet",
                                              "--format", "json"]).stdout)
    odd = next(line for line in document["lines"] if line["value"] == "20 kΩ, 10 kΩ")
    assert odd["array"] == {"members_ohms": [20e3, 10e3], "ratio_tolerance_fraction": 0.0005,
                            "tcr_tracking_ppm_per_c": 5.0, "arrays": [["R7", "R8"]]}
    assert all(line["array"] is None for line in document["lines"]
               if "," not in line["value"])
    by_designator = runner.invoke(cli, ["bom", str(board), "--quiet",
                                        "--format", "per-designator"]).stdout
    rows = {r["designator"]: r for r in csv.DictReader(
        io.StringIO(by_designator.removeprefix("\ufeff")))}
    # each member keeps its own value for re-import
    assert rows["R7"]["ohms"] == "20000.0" and rows["R8"]["ohms"] == "10000.0"
    assert rows["R7"]["line"] == rows["R8"]["line"]


def test_a_stock_row_never_stands_for_an_array(board, tmp_path):
    (tmp_path / "stock.csv").write_text(
        "value,package,tolerance,tcr,quantity\n10k,0603,0.1%,25 ppm/C,100\n",
        encoding="utf-8")
    loaded = load_board([str(board)])
    from dataclasses import replace
    result = build_bom(replace(loaded, stock_path=tmp_path / "stock.csv"))
    pair = next(line for line in result.lines if line.key.members == (10e3, 10e3))
    assert not pair.in_stock and pair.shortfall == 2
    single = next(line for line in result.lines
                  if not line.key.is_array and line.key.value == 10e3)
    assert single.in_stock
