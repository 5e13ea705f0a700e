"""House stock lists: the values on the shelf, read from a CSV, and malformed lists refused
with the file, line and fix (exit code 2 from the command line, one line).

Values are written as engineers write them: 4k7 = 4.7 kΩ [IEC60062], 1% [IEC60062-tolerance].
"""

from __future__ import annotations

import pytest
from click.testing import CliRunner

from synth.catalog.stock import load_stock
from synth.cli import cli
from synth.errors import DesignError


def stock(tmp_path, text, name="shelf.csv"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_values_packages_tolerances_and_quantities(tmp_path):
    path = stock(tmp_path, "# shelf B\nvalue,package,tolerance,quantity\n4k7,0603,1%,20\n"
                           "\n10k,,,\n")
    first, second = load_stock(path)
    assert (first.value, first.package, first.tolerance, first.quantity, first.line) == (
        4700.0, "0603", 0.01, 20, 3)
    assert (second.value, second.package, second.tolerance, second.quantity, second.line) == (
        10e3, None, None, None, 5)


@pytest.mark.parametrize(("text", "fragment"), [
    ("ohms\n1k\n", "the header has no 'value' column; name the columns value, package"),
    ("value,colour\n1k,red\n", "line 2: unknown column 'colour'; use value, package"),
    ("value\n1k\nfour\n", "line 3: 'four' is not a resistance; write a resistance such as 4k7"),
    ("value,tolerance\n1k,lots\n", "line 2: 'lots' is not a percentage"),
    ("value\n0\n", "line 2: value '0' must be positive"),
    ("value,quantity\n1k,2.5\n", "line 2: quantity '2.5' is not a whole number"),
    ("value,quantity\n1k,-3\n", "line 2: quantity must not be negative"),
    ("value\n", "the stock list has no values; add rows under the header"),
    ("# nothing\n", "the file has no header row"),
])
def test_malformed_stock_lists_are_refused(tmp_path, text, fragment):
    with pytest.raises(DesignError, match=fragment) as raised:
        load_stock(stock(tmp_path, text))
    assert str(raised.value).startswith(str(tmp_path / "shelf.csv"))


def test_unreadable_stock_list_is_refused(tmp_path):
    with pytest.raises(DesignError, match="is a folder; name a CSV file"):
        load_stock(tmp_path)  # a directory


DESIGN = """
[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "10 V"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
choose = "shelf.csv"

[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
value = "1k"

[[target]]
voltage = "out"
equals = "5 V"
"""


def run_design(tmp_path, shelf):
    stock(tmp_path, shelf)
    design = tmp_path / "d.toml"
    design.write_text(DESIGN, encoding="utf-8")
    return CliRunner().invoke(cli, ["design", str(design), "--json"])


def test_design_from_the_shelf(tmp_path):
    import json

    result = run_design(tmp_path, "value\n470\n1k\n2k2\n")
    assert result.exit_code == 0, result.output
    # 10 V over 1k/1k gives 5 V exactly [HB-divider]
    assert json.loads(result.output)["candidates"][0]["values"]["R1"] == 1000.0


@pytest.mark.parametrize(("shelf", "fragment"), [
    ("value,quantity\n1k,many\n", "line 2: quantity 'many' is not a whole number"),
    ("value\n", "the stock list has no values"),
])
def test_bad_shelf_from_the_command_line(tmp_path, shelf, fragment):
    result = run_design(tmp_path, shelf)
    assert result.exit_code == 2 and fragment in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1


def test_row_longer_than_the_header_is_refused(tmp_path):
    result = run_design(tmp_path, "value,package\n1k,0603,extra\n")
    assert result.exit_code == 2
    assert "line 2: the row has more fields than the header" in result.stderr
