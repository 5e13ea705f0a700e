"""The package table's thermal resistance: an optional column, read as K/W, refused when it is
not a finite number of zero or more (one line, exit code 2 from the command line).

The bundled values are each row's derating slope [CP-thermal-resistance].
"""

from __future__ import annotations

import pytest
from click.testing import CliRunner

from synth.catalog.packages import load_package_table
from synth.cli import cli
from synth.errors import DesignError

HEADER = ("name,mount,imperial,metric,rated_power_w,rated_ambient_c,zero_power_c,"
          "limiting_voltage_v,thermal_resistance_k_per_w,source")
GOOD = "warm,chip,1206,3216M,0.25,70,155,200,500,house table"

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
package = "warm"
"""


def table(tmp_path, *rows, header=HEADER, name="house.csv"):
    path = tmp_path / name
    path.write_text("\n".join(["# a house table", header, *rows]) + "\n", encoding="utf-8")
    return path


def test_bundled_values_are_the_derating_slope():
    bundled = load_package_table()
    # Rθ = (155 - 70) / P70 [CP-thermal-resistance]: 0603 850 K/W, 1206 340, 2512 85
    assert bundled["0603"].thermal_resistance_k_per_w == 850.0
    assert bundled["1206"].thermal_resistance_k_per_w == 340.0
    assert bundled["2512"].thermal_resistance_k_per_w == 85.0
    for rating in bundled.values():  # never above the slope (rounded down) [CP-thermal-resistance]
        slope = (rating.zero_power_c - rating.rated_ambient_c) / rating.rated_power_w
        assert rating.thermal_resistance_k_per_w is not None
        assert 0.99 * slope <= rating.thermal_resistance_k_per_w <= slope


def test_column_is_optional_and_a_cell_may_be_empty(tmp_path):
    own = load_package_table(table(tmp_path, GOOD))
    assert own["warm"].thermal_resistance_k_per_w == 500.0
    old_header = HEADER.replace(",thermal_resistance_k_per_w", "")
    old = load_package_table(table(tmp_path, GOOD.replace(",500,", ","), header=old_header,
                                   name="old.csv"))
    assert old["warm"].thermal_resistance_k_per_w is None  # absent: no self-heating
    empty = load_package_table(table(tmp_path, GOOD.replace(",500,", ",,"), name="empty.csv"))
    assert empty["warm"].thermal_resistance_k_per_w is None
    zero = load_package_table(table(tmp_path, GOOD.replace(",500,", ",0,"), name="zero.csv"))
    assert zero["warm"].thermal_resistance_k_per_w == 0.0


@pytest.mark.parametrize(("cell", "fragment"), [
    ("-5", "line 3: thermal_resistance_k_per_w '-5' must be a finite number of K/W, zero or more"),
    ("hot", "line 3: thermal_resistance_k_per_w 'hot' is not a number"),
    ("500 K/W", "line 3: thermal_resistance_k_per_w '500 K/W' is not a number"),
    ("inf", "line 3: thermal_resistance_k_per_w 'inf' must be a finite number"),
    ("nan", "line 3: thermal_resistance_k_per_w 'nan' must be a finite number"),
])
def test_bad_thermal_resistance_is_refused(tmp_path, cell, fragment):
    path = table(tmp_path, GOOD.replace(",500,", f",{cell},"))
    with pytest.raises(DesignError, match=fragment):
        load_package_table(path)
    design = tmp_path / "d.toml"
    design.write_text(DESIGN, encoding="utf-8")
    result = CliRunner().invoke(cli, ["check", str(design)])
    assert result.exit_code == 2, result.output
    assert fragment in result.stderr and "house.csv" in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1 and "Traceback" not in result.output
