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
    ("value,tolerence\n1k,1%\n", "line 2: unknown column 'tolerence'; did you mean "
                                 "'tolerance'"),
    ("value,tcr\n1k,hot\n", "line 2: 'hot' is not a TCR"),
    ("value,tcr\n1k,-25\n", "line 2: '-25' is not a TCR"),
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


def test_real_inventory_exports(tmp_path):
    # a ';'-separated export with headers in any case, decimal commas and its own columns
    path = stock(tmp_path, "Value;Package;TOLERANCE;TCR;Quantity;Part Number;Location;Price\n"
                           "4,7k;0603;1%;25 ppm/C;20;RC0603-4K7;A3;0,01\n"
                           "10k;0805;0,5%;50;5;;B1;\n")
    first, second = load_stock(path)
    assert (first.value, first.tolerance, first.tcr, first.quantity) == (4700.0, 0.01, 25e-6, 20)
    assert first.extra == (("part_number", "RC0603-4K7"), ("location", "A3"), ("price", "0,01"))
    assert (second.value, second.package, second.tolerance, second.tcr) == (
        10e3, "0805", 0.005, 50e-6)
    assert stock(tmp_path, "value,colour\n1k,red\n").exists()
    assert load_stock(tmp_path / "shelf.csv")[0].extra == (("colour", "red"),)


def test_unreadable_stock_list_is_refused(tmp_path):
    (tmp_path / "shelf.csv").mkdir()
    with pytest.raises(DesignError, match="is a folder; name a CSV file"):
        load_stock(tmp_path / "shelf.csv")  # a directory


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


def test_design_from_the_shelf_honours_package_tolerance_and_tcr(tmp_path):
    import json

    # R1 is an 0603, 1 %, 100 ppm/C part: the 1k reels are an 0805, a 5 % and a 250 ppm
    # one, none fits; the 1k2 reel (25 ppm, better than needed) does
    stock(tmp_path, "value,package,tolerance,tcr\n1k,0805,1%,50\n1k,0603,5%,50\n"
                    "1k,0603,1%,250\n1k2,0603,1%,25\n")
    design = tmp_path / "d.toml"
    design.write_text(DESIGN.replace('choose = "shelf.csv"',
                                     'choose = "shelf.csv"\npackage = "0603"\n'
                                     'tolerance = "1%"\ntcr = "100 ppm/C"'), encoding="utf-8")
    result = CliRunner().invoke(cli, ["design", str(design), "--json"])
    assert result.exit_code in (0, 1), result.output
    # none of the three 1k reels fits, so the nearest fitting value 1k2 is chosen
    assert json.loads(result.output)["candidates"][0]["values"]["R1"] == 1200.0


def test_row_longer_than_the_header_is_refused(tmp_path):
    result = run_design(tmp_path, "value,package\n1k,0603,extra\n")
    assert result.exit_code == 2
    assert "line 2: the row has more fields than the header" in result.stderr
