"""bom_of_values: the BOM of given values (a review page's), no search and no consolidation.

A 12 V divider with R2 = 10k and a 4 V goal takes R1 = 20k, an E24 value, exactly
(Vout = 12 V · 10k / 30k) [HB-divider] [IEC60063]; the line counts are counted by hand.
"""

from __future__ import annotations

import pytest

from synth.bom.build import bom_of_values
from synth.checking import check
from synth.design.board import load_board
from synth.errors import DesignError
from synth.synthesis import synthesize
from synth.units import format_eng

DIVIDER = """
[design]
title = "{title}"
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
{r1}
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


@pytest.fixture
def board(tmp_path):
    free = tmp_path / "free.toml"
    free.write_text(DIVIDER.format(title="free", r1='choose = "E24"\nrange = ["1k", "100k"]'),
                    encoding="utf-8")
    fixed = tmp_path / "fixed.toml"
    fixed.write_text(DIVIDER.format(title="fixed", r1='value = "10k"'), encoding="utf-8")
    return load_board([str(free), str(fixed)])


def test_lines_are_the_given_values_counted_by_hand(board):
    free, fixed = (net.design for net in board.networks)
    best = synthesize(free, top=3, spread=None).candidates[0]
    checked = check(fixed)
    result = bom_of_values(board, [best, checked])
    # free: 20k + 10k; fixed: 10k + 10k -> 10k x3, 20k x1 [HB-divider]
    assert [(format_eng(line.key.value, "Ω"), line.quantity) for line in result.lines] == [
        ("10 kΩ", 3), ("20 kΩ", 1)]
    assert result.parts == 4
    designators = [p.designator for p in result.placements]
    assert len(set(designators)) == 4  # the second network's R1, R2 are renumbered
    assert result.consolidation.status == "values given"
    assert result.consolidation.choice == (0, 0)
    assert [n.rank for n in result.networks] == [best.rank, 1]
    # the fixed divider gives 6 V against a 4 V goal: its error is (6 - 4) / 4 [HB-divider]
    assert result.networks[1].objective == pytest.approx(0.5)


def test_one_value_set_per_network_is_required(board):
    checked = check(board.networks[1].design)
    with pytest.raises(DesignError, match="1 value sets for 2 networks; give one per network"):
        bom_of_values(board, [checked])


def test_stock_list_marks_what_to_buy(tmp_path):
    stock = tmp_path / "shelf.csv"
    stock.write_text("value,package,tolerance,tcr,quantity\n10k,0603,1%,100ppm,2\n",
                     encoding="utf-8")
    design = tmp_path / "fixed.toml"
    design.write_text(DIVIDER.format(title="fixed", r1='value = "20k"'), encoding="utf-8")
    board_file = tmp_path / "board.toml"
    board_file.write_text('[board]\ntitle = "b"\nstock = "shelf.csv"\n\n[[network]]\n'
                          'file = "fixed.toml"\n', encoding="utf-8")
    board = load_board([str(board_file)])
    result = bom_of_values(board, [check(board.networks[0].design)])
    by_value = {format_eng(line.key.value, "Ω"): line for line in result.lines}
    assert by_value["10 kΩ"].in_stock and by_value["10 kΩ"].shortfall == 0
    assert not by_value["20 kΩ"].in_stock and by_value["20 kΩ"].shortfall == 1
    assert result.consolidation.to_buy == 1
