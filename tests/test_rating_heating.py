"""A part's own temperature: its rise P·Rθ, and the allowance it leaves (the lesser of the
derating line and the power that takes the part to the zero-power temperature).

Each figure is worked by hand beside the check: [HB-self-heating], [CP-derating],
[CP-thermal-resistance], [CP-margin].
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from synth.catalog.packages import load_package_table
from synth.rating import allowance, allowed_power, derated_power, temperature_rise

CHIP = load_package_table()["0603"]  # 0.1 W, 70 -> 155 °C, 850 K/W [CP-chip-ratings]


def test_rise_is_power_times_thermal_resistance():
    # ΔT = P·Rθ [HB-self-heating]: 50 mW x 850 K/W = 42.5 K; 20 mW x 500 K/W = 10 K
    assert float(temperature_rise(CHIP, 0.05)) == pytest.approx(42.5, rel=1e-12)
    own = replace(CHIP, thermal_resistance_k_per_w=500.0)
    assert temperature_rise(own, [0.02, -0.02]).tolist() == pytest.approx([10.0, 10.0])
    # no thermal resistance, or no package: no rise
    assert float(temperature_rise(replace(CHIP, thermal_resistance_k_per_w=None), 1.0)) == 0.0
    assert float(temperature_rise(None, 1.0)) == 0.0


def test_slope_thermal_resistance_leaves_the_line_as_it_is():
    # Rθ = 85 K / 0.1 W: the hot-spot limit (155 - T)/850 is the line 0.1 (155 - T)/85 itself
    # [CP-thermal-resistance], [CALC-derating]: 25 °C 100 mW, 85 °C 82.35 mW, 125 °C 35.29 mW
    ambient = np.array([25.0, 70.0, 85.0, 125.0, 155.0, 170.0])
    line = replace(CHIP, thermal_resistance_k_per_w=None)
    assert derated_power(CHIP, ambient) == pytest.approx(derated_power(line, ambient), rel=1e-12)
    assert derated_power(CHIP, ambient).tolist() == pytest.approx(
        [0.1, 0.1, 0.1 * 70 / 85, 0.1 * 30 / 85, 0.0, 0.0], rel=1e-12)


def test_a_part_on_less_copper_is_allowed_less():
    # 1000 K/W: the element reaches 155 °C at (155 - T)/1000 W [HB-self-heating]
    # 25 °C: 130 mW, above the 100 mW rating, so the rating holds;
    # 85 °C: 70 mW, below the line's 82.35 mW [CALC-derating]; 50 % use: 35 mW [CP-margin]
    hot = replace(CHIP, thermal_resistance_k_per_w=1000.0)
    assert float(derated_power(hot, 25.0)) == pytest.approx(0.1, rel=1e-12)
    assert float(derated_power(hot, 85.0)) == pytest.approx(0.07, rel=1e-12)
    assert float(allowed_power(hot, 85.0, 0.5)) == pytest.approx(0.035, rel=1e-12)
    share = allowance(hot, ambient_c=85.0, max_power_use=0.5, max_voltage_use=0.8)
    assert (share.derated_power_w, share.power_w) == pytest.approx((0.07, 0.035), rel=1e-12)
    # the knee moves to 155 - 0.1 x 1000 = 55 °C: at 60 °C 95 mW, the line still 100 mW
    assert float(derated_power(hot, 60.0)) == pytest.approx(0.095, rel=1e-12)
    # beyond the zero-power temperature nothing is allowed, not a negative power
    assert float(derated_power(hot, 170.0)) == 0.0


def test_a_better_mounting_is_not_allowed_more_than_the_rating():
    # 300 K/W is cooler than the rating's own 850 K/W; the line still binds [CP-derating]
    cool = replace(CHIP, thermal_resistance_k_per_w=300.0)
    assert float(derated_power(cool, 85.0)) == pytest.approx(0.1 * 70 / 85, rel=1e-12)
    assert float(derated_power(cool, 25.0)) == pytest.approx(0.1, rel=1e-12)


HOUSE = ("name,mount,imperial,metric,rated_power_w,rated_ambient_c,zero_power_c,"
         "limiting_voltage_v,thermal_resistance_k_per_w,source\n"
         "small-pad,chip,0603,1608M,0.1,70,155,50,1000,house table\n")

DESIGN = """
[design]
packages = "house.csv"
ambient = "85 C"

[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "10 V"

[[resistor]]
ref = "R1"
nodes = ["in", "gnd"]
value = "VALUE"
package = "small-pad"
"""


@pytest.mark.parametrize(("value", "code"), [("4k", 0), ("2.6k", 1)])
def test_the_hot_spot_allowance_through_the_command_line(tmp_path, value, code):
    # 1000 K/W at 85 °C: (155 - 85)/1000 = 70 mW, 50 % use 35 mW [HB-self-heating],
    # [CP-margin]; the line alone would allow 0.1 x 70/85 x 0.5 = 41.18 mW [CALC-derating].
    # 10 V over 4k is 25 mW, within; over 2.6k 38.46 mW [HB-ohm]: under the line, over the
    # part's own temperature limit, so the design fails (exit 1)
    import json

    from click.testing import CliRunner

    from synth.cli import cli

    (tmp_path / "house.csv").write_text(HOUSE, encoding="utf-8")
    path = tmp_path / "d.toml"
    path.write_text(DESIGN.replace("VALUE", value), encoding="utf-8")
    result = CliRunner().invoke(cli, ["check", str(path), "--json"])
    assert result.exit_code == code, result.output
    part = next(p for p in json.loads(result.stdout)["parts"] if p["ref"] == "R1")
    assert part["allowed_power"] == pytest.approx(0.035, rel=1e-9)
    text = CliRunner().invoke(cli, ["check", str(path)]).output
    assert ("note: small-pad at 1000 K/W reaches its zero-power temperature 155 °C at 70 mW "
            "from 85 °C, below its derating line: its own temperature sets its allowance") in text
