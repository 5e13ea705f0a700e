"""Boards with networks whose values are all given, stock lists without packages, and the
summary's wording of what consolidation proved.

Ratings and margins: an 0603 at 25 °C may dissipate 0.1 W × 50 % = 50 mW
[CP-chip-ratings] [CP-margin]; 10 V across 1k dissipates 100 mW [HB-ohm].
"""

from __future__ import annotations

import json
from dataclasses import replace

import pytest
from click.testing import CliRunner

from synth.bom.build import build_bom
from synth.cli import cli
from synth.design.board import load_board
from synth.report.bom import bom_summary

FREE = """
[design]
title = "free"
package = "0603"

[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "12 V"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
choose = "E24"
range = ["1k", "100k"]
tolerance = "1%"

[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
value = "10k"
tolerance = "1%"

[[target]]
voltage = "out"
equals = "4 V"
within = "1%"
"""

FIXED = """
[design]
title = "fixed"
package = "0603"

[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "VOLTS"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
value = "10k"
tolerance = "1%"

[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
value = "10k"
tolerance = "1%"

[[target]]
voltage = "out"
equals = "GOAL"
"""

BOARD = """
[board]
title = "bench"

[[network]]
file = "free.toml"

[[network]]
file = "fixed.toml"
"""


def make_board(tmp_path, volts="10 V", goal="5.05 V"):
    (tmp_path / "free.toml").write_text(FREE, encoding="utf-8")
    (tmp_path / "fixed.toml").write_text(FIXED.replace("VOLTS", volts).replace("GOAL", goal),
                                         encoding="utf-8")
    (tmp_path / "board.toml").write_text(BOARD, encoding="utf-8")
    return tmp_path / "board.toml"


def run(*args):
    return CliRunner().invoke(cli, ["bom", *map(str, args)])


def test_a_network_with_given_values_keeps_them(tmp_path):
    result = run(make_board(tmp_path), "--format", "json", "--quiet")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.output)
    free, fixed = doc["networks"]
    # 12 V, 20k over 10k gives 4 V [HB-divider]; the fixed divider gives 5 V for 5.05 V
    assert free["values"] == {"R1": 20e3, "R2": 10e3}
    assert fixed["values"] == {"R1": 10e3, "R2": 10e3}
    assert fixed["rank"] == 1 and fixed["pool"] == 1
    assert fixed["objective"] == pytest.approx(0.05 / 5.05, rel=1e-9)
    # the later network's designators are renumbered after the first's
    assert doc["renumbered"] == {"fixed": {"R1": "R3", "R2": "R4"}}
    quantity = {line["value"]: line["quantity"] for line in doc["lines"]}
    assert quantity == {"10 kΩ": 3, "20 kΩ": 1}


def test_a_network_with_given_values_that_fails_exits_one(tmp_path):
    board = make_board(tmp_path, volts="20 V")  # 10 V across each 10k: 10 mW, fine
    assert run(board, "--quiet").exit_code == 0
    board = make_board(tmp_path, volts="100 V")  # 50 V across each: 250 mW and 50 V
    result = run(board, "--quiet")
    assert result.exit_code == 1
    assert "network 'fixed' fails: R1 dissipates 250 mW, over its allowed 50 mW" in (
        result.stderr)
    assert len(result.stderr.strip().splitlines()) == 1


def test_a_stock_list_without_packages_matches_any_package(tmp_path):
    board = make_board(tmp_path)
    (tmp_path / "shelf.csv").write_text("value,quantity\n10k,2\n20k,5\n", encoding="utf-8")
    doc = json.loads(run(board, "--stock", tmp_path / "shelf.csv", "--format", "json",
                         "--quiet").output)
    by_value = {line["value"]: line for line in doc["lines"]}
    assert by_value["10 kΩ"]["in_stock"] is True and by_value["10 kΩ"]["to_buy"] == 1
    assert by_value["20 kΩ"]["in_stock"] is True and by_value["20 kΩ"]["to_buy"] == 0


def test_summary_says_what_the_consolidation_proved(tmp_path):
    board = make_board(tmp_path)
    (tmp_path / "shelf.csv").write_text("value\n20k\n", encoding="utf-8")
    result = build_bom(load_board([board], stock=tmp_path / "shelf.csv"))
    text = bom_summary(result)
    assert "2 BOM lines, 4 parts, 2 networks" in text and "(0 saved, optimal)" in text
    assert "renumbered in fixed: R1 → R3, R2 → R4" in text
    assert "stock: 1 lines in stock, 1 to buy or top up" in text
    assert "fixed: candidate 1 of 1 (largest error 0.99%)" in text
    assert "free: candidate 1 of" in text and "(exact)" in text
    c = result.consolidation
    assert c.optimal and c.stages[-1].scope == "every choice"
    for_lines = replace(result, consolidation=replace(
        c, optimal=False, status="lines: OPTIMAL; error: OPTIMAL FOR THE CHOSEN LINES",
        stages=(*c.stages[:-1], replace(c.stages[-1], scope="chosen lines"))))
    assert ("fewest lines proven; least total error proven for the chosen lines, not over "
            "every choice with as few") in bom_summary(for_lines)
    partly = replace(result, consolidation=replace(
        c, optimal=False, status="lines: OPTIMAL; to buy: FEASIBLE; error: FEASIBLE",
        stages=(c.stages[0], replace(c.stages[1], proven=False), c.stages[2])))
    assert ("fewest lines proven; later priorities best found within the limit "
            "(lines: OPTIMAL; to buy: FEASIBLE; error: FEASIBLE)") in bom_summary(partly)
    neither = replace(partly, consolidation=replace(partly.consolidation, lines_optimal=False,
                                                    status="lines: FEASIBLE"))
    bound = result.consolidation.lines_bound
    assert (f"best found within the time limit, at least {bound} lines (lines: FEASIBLE)"
            in bom_summary(neither))
