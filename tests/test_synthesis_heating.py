"""The search's worst case holds the parts' self-heating: a shunt whose own rise takes it out of
a tight window over the tolerance box is refused on that basis, and accepted when its package
table gives it no thermal resistance [HB-self-heating], [CP-tcr]."""

from __future__ import annotations

from click.testing import CliRunner

from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.synthesis import synthesize

TABLE = ("name,mount,imperial,metric,rated_power_w,rated_ambient_c,zero_power_c,"
         "limiting_voltage_v,source\ncool,chip,2512,6332M,1,70,155,200,house table\n")


def shunt_design(within, package="2512"):
    return {
        "design": {"require": "worst-case"},
        "source": [{"ref": "I1", "kind": "current", "from": "gnd", "to": "sense",
                    "value": "1 A"}],
        "resistor": [{"ref": "RS", "nodes": ["sense", "gnd"], "choose": "E24",
                      "range": ["0.05", "0.2"], "tolerance": "0%", "tcr": "100 ppm/C",
                      "package": package}],
        "target": [{"voltage": "sense", "equals": "0.1 V", "within": within}],
    }


def test_a_window_narrower_than_the_self_heating_drift_is_not_met():
    # 0.1 ohm at 1 A: 0.1 W, 8.5 K on 85 K/W, 100 ppm/K: ±0.085 % [HB-self-heating]
    wide = synthesize(design_from_dict(shunt_design("0.1%")))
    assert wide.feasible and wide.candidates[0].values["RS"] == 0.1
    narrow = synthesize(design_from_dict(shunt_design("0.05%")))
    assert not narrow.feasible


def test_without_a_thermal_resistance_the_narrow_window_holds(tmp_path):
    import tomli_w

    (tmp_path / "cool.csv").write_text(TABLE, encoding="utf-8")
    raw = shunt_design("0.05%", package="cool")
    raw["design"]["packages"] = "cool.csv"
    path = tmp_path / "d.toml"
    path.write_bytes(tomli_w.dumps(raw).encode())
    result = CliRunner().invoke(cli, ["design", str(path)])
    assert result.exit_code == 0, result.output
    hot = tmp_path / "hot.toml"
    hot.write_bytes(tomli_w.dumps(shunt_design("0.05%")).encode())
    result = CliRunner().invoke(cli, ["design", str(hot)])
    assert result.exit_code == 1, result.output
