"""The package table: a user's own table is read like the bundled one, and a malformed one is
refused with its file, line and the fix (exit code 2 from the command line, one line).

The bundled ratings are typical chip ratings [CP-chip-ratings] with the metric names of
[CP-package-codes].
"""

from __future__ import annotations

import os

import pytest
from click.testing import CliRunner

from synth.catalog.packages import load_package_table
from synth.cli import cli
from synth.errors import DesignError

HEADER = ("name,mount,imperial,metric,rated_power_w,rated_ambient_c,zero_power_c,"
          "limiting_voltage_v,source")
GOOD = "big,chip,2512,6332M,1.5,70,155,300,house table"


def table(tmp_path, *rows, header=HEADER, name="house.csv"):
    path = tmp_path / name
    path.write_text("\n".join(["# a house table", header, *rows]) + "\n", encoding="utf-8")
    return path


def test_own_table_with_its_metric_names(tmp_path):
    ratings = load_package_table(table(tmp_path, GOOD))
    big = ratings["big"]
    assert (big.rated_power_w, big.limiting_voltage_v, big.zero_power_c) == (1.5, 300.0, 155.0)
    assert ratings["6332M"] is big  # also under its metric name [CP-package-codes]
    bundled = load_package_table()
    # 0603 = 1608M, 1/10 W, 50 V [CP-chip-ratings]
    assert bundled["1608M"] == bundled["0603"] and bundled["0603"].rated_power_w == 0.1


def test_technology_column_is_optional_and_bundled(tmp_path):
    # chips are thick film, axial parts metal film [CP-chip-ratings]
    bundled = load_package_table()
    assert (bundled["0603"].technology, bundled["axial-1/4W"].technology) == (
        "thick film", "metal film")
    assert load_package_table(table(tmp_path, GOOD))["big"].technology == ""
    own = table(tmp_path, GOOD.replace(",house table", ",thin film,house table"),
                header=HEADER.replace(",source", ",technology,source"), name="thin.csv")
    assert load_package_table(own)["big"].technology == "thin film"


def test_table_rereads_after_an_edit(tmp_path):
    path = table(tmp_path, GOOD)
    assert load_package_table(path)["big"].rated_power_w == 1.5
    path.write_text(path.read_text().replace(",1.5,", ",2,"), encoding="utf-8")
    stat = path.stat()
    os.utime(path, ns=(stat.st_atime_ns, stat.st_mtime_ns + 10**9))
    assert load_package_table(path)["big"].rated_power_w == 2.0


@pytest.mark.parametrize(("rows", "header", "fragment"), [
    ([GOOD.replace(",1.5,", ",one,")], HEADER, "line 3: rated_power_w 'one' is not a number"),
    ([GOOD.replace(",300,", ",inf,")], HEADER, "line 3: limiting_voltage_v must be finite"),
    ([GOOD.replace(",1.5,", ",0,")], HEADER,
     "line 3: rated_power_w and limiting_voltage_v must be positive"),
    ([GOOD.replace(",70,155,", ",155,70,")], HEADER,
     "line 3: zero_power_c must lie above rated_ambient_c"),
    ([GOOD.replace("big,", ",", 1)], HEADER, "line 3: the package name is empty"),
    ([GOOD, GOOD], HEADER, "line 4: package 'big' is listed twice"),
    ([GOOD.replace(",house table", "")], HEADER.replace(",source", ""),
     "line 3: column 'source' is missing"),
    ([], "# only comments", "the file has no header row"),
    ([], HEADER, "the package table has no rows"),
    ([], "localhost", "the package table has no rows"),  # any one-line file
])
def test_malformed_tables_are_refused(tmp_path, rows, header, fragment):
    path = table(tmp_path, *rows, header=header)
    with pytest.raises(DesignError, match=fragment):
        load_package_table(path)


def test_missing_table_is_refused(tmp_path):
    with pytest.raises(DesignError, match="package table not found; check the path"):
        load_package_table(tmp_path / "none.csv")


DESIGN = """
[design]
packages = "house.csv"

[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "10 V"

[[resistor]]
ref = "R1"
nodes = ["in", "gnd"]
value = "1k"
package = "PKG"
"""


def test_design_with_its_own_table_from_the_command_line(tmp_path):
    table(tmp_path, GOOD)
    design = tmp_path / "d.toml"
    design.write_text(DESIGN.replace("PKG", "big"), encoding="utf-8")
    result = CliRunner().invoke(cli, ["check", str(design)])
    # 10 V across 1k: 100 mW [HB-ohm], within 1.5 W x 50 % [CP-margin]
    assert result.exit_code == 0, result.output
    assert "100 mW" in result.output


@pytest.mark.parametrize(("row", "package", "fragment"), [
    (GOOD.replace(",1.5,", ",one,"), "big", "rated_power_w 'one' is not a number"),
    (GOOD, "bigg", "'bigg' is not in the package table"),
])
def test_bad_table_or_name_from_the_command_line(tmp_path, row, package, fragment):
    table(tmp_path, row)
    design = tmp_path / "d.toml"
    design.write_text(DESIGN.replace("PKG", package), encoding="utf-8")
    result = CliRunner().invoke(cli, ["check", str(design)])
    assert result.exit_code == 2
    assert fragment in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1 and "Traceback" not in result.output


def test_row_longer_than_the_header_is_refused(tmp_path):
    table(tmp_path, GOOD + ",extra")
    design = tmp_path / "d.toml"
    design.write_text(DESIGN.replace("PKG", "big"), encoding="utf-8")
    result = CliRunner().invoke(cli, ["check", str(design)])
    assert result.exit_code == 2
    assert "line 3: the row has more fields than the header" in result.stderr
    with pytest.raises(DesignError, match="line 3: the row has more fields than the header"):
        load_package_table(tmp_path / "house.csv")
