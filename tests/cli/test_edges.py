"""Inputs at the edges, through the command line as a user gives them (click's CliRunner).

Each case is either refused in one line naming the file or option, the item and the
rule (exit 2, no traceback, nothing written) or answered with a correct verdict (exit
0 or 1).  Expected values come from the divider formula [HB-divider], Ohm's law
[HB-ohm] and exact rational solves [CALC-exact-nodal].
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from synth.cli import cli

from conftest import EXAMPLES

PROBE = next(p for p in EXAMPLES if p.name == "greenhouse_probe.toml")

DIVIDER = """
[design]
title = "edge"
{design}
[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "{supply}"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
value = "{top}"
package = "0603"
{free}
[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
value = "{bottom}"
package = "0603"
{extra}
"""

FREE = 'choose = "E96"\nrange = ["1", "1M"]\n'


def divider_file(tmp_path, supply="10 V", top="10k", bottom="10k", design="", free="",
                 extra=""):
    path = tmp_path / "design.toml"
    path.write_text(DIVIDER.format(supply=supply, top=top, bottom=bottom, design=design,
                                   free=free, extra=extra), encoding="utf-8")
    return path


def target(**keys):
    body = "\n".join(f"{key} = {value}" for key, value in keys.items())
    return f"\n[[target]]\n{body}\n"


def refusal(*args):
    result = CliRunner().invoke(cli, [str(a) for a in args])
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output + result.stderr
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1, result.stderr
    return lines[0]


# -- refusals of design files ----------------------------------------------------------

REFUSED_FILES = [
    # (divider_file keywords, fragment of the one line)
    ({"extra": target(voltage='"out"', equals='"5 V"', within='"-10 mV"')},
     "target #1: within '-10 mV' is negative"),
    ({"extra": target(voltage='"out"', equals='"1e-300 V"', within='"1%"')},
     "equals '1e-300 V' is too small to measure errors against"),
    ({"extra": target(voltage='"out"', equals='"5e-324 V"', within='"1%"'), "free": FREE},
     "equals '5e-324 V' is too small"),
    ({"extra": target(voltage='"out"', equals='"0 V"', within='"1e-320 V"')},
     "within '1e-320 V' is too small"),
    ({"supply": "0 V", "extra": target(ratio='[["out", "gnd"], ["in", "gnd"]]', equals="0.5",
                                       within='"1%"')},
     "target 'ratio of out to in': the ratio's reference voltage V(in) is 0 V for these "
     "values (every voltage of the network is 0 V)"),
    ({"top": "9" * 400 + "R"}, "is not a resistance; a value has at most 100 characters"),
    ({"top": "1e1000000"}, "'1e1000000' is not a finite resistance"),
    ({"design": 'ambient = "-300 C"'}, "is below absolute zero"),
]


@pytest.mark.parametrize(("keywords", "fragment"), REFUSED_FILES,
                         ids=[f[:30] for _, f in REFUSED_FILES])
@pytest.mark.parametrize("command", ["check", "design"])
def test_design_files_at_the_edge_are_refused_in_one_line(tmp_path, command, keywords,
                                                          fragment):
    if command == "design" and "free" not in keywords:
        keywords = {**keywords, "free": FREE}
    path = divider_file(tmp_path, **keywords)
    assert fragment in refusal(command, path, "--samples", "0")


def test_a_400_digit_toml_integer_is_refused_as_not_finite(tmp_path):
    path = divider_file(tmp_path)
    path.write_text(path.read_text(encoding="utf-8").replace('value = "10k"', "value = "
                                                             + "9" * 400, 1), encoding="utf-8")
    assert "resistor R1: value: 999" in (line := refusal("check", path))
    assert "is not a finite resistance" in line and len(line) < 300


def test_a_ratio_over_zero_volts_is_refused_by_design_as_by_check(tmp_path):
    # before: check ended in "All-NaN slice encountered", design in "no candidate could be
    # evaluated" with exit 1
    path = divider_file(tmp_path, supply="0 V", free=FREE,
                        extra=target(ratio='[["out", "gnd"], ["in", "gnd"]]', equals="0.5",
                                     within='"1%"'))
    for command in ("check", "design"):
        assert "reference voltage V(in) is 0 V" in refusal(command, path, "--samples", "0")


def test_a_newline_in_a_node_name_is_refused(tmp_path):
    path = divider_file(tmp_path)
    path.write_text(path.read_text(encoding="utf-8").replace('["out", "gnd"]',
                                                             '["out\\n", "g\\nnd"]'),
                    encoding="utf-8")
    assert "nodes must be a pair of node names" in refusal("check", path)


# -- correct verdicts at the edges of the float range -----------------------------------

def test_parts_of_1e308_ohm_give_the_true_tap_voltage(tmp_path):
    # 10 V over 1e308 + 1e308 ohm: 5 V at the tap [HB-divider], 5e-308 A [HB-ohm]; before,
    # the loop resistance overflowed and the tap read 0 V
    path = divider_file(tmp_path, top="1e308", bottom="1e308",
                        extra=target(voltage='"out"', equals='"5 V"', within='"1%"'))
    result = CliRunner().invoke(cli, ["check", str(path), "--samples", "0", "--json",
                                      "--verify"])
    assert result.exit_code == 0, result.output + result.stderr
    doc = json.loads(result.output)
    assert doc["ok"] is True and doc["nodes"]["out"] == pytest.approx(5.0, rel=1e-14)
    r1 = next(p for p in doc["parts"] if p["ref"] == "R1")
    assert r1["current"] == pytest.approx(5e-308, rel=1e-14)
    assert r1["power"] == pytest.approx(2.5e-307, rel=1e-14)  # V·I, not an underflowed I²R
    assert doc["verify"]["max_difference"] < 1e-14


def test_a_goal_far_below_the_network_gets_its_nearest_design(tmp_path):
    # 1e-90 V from a 10 V divider with R2 = 10k: the least tap voltage is at R1 = 1M
    # (99 mV) [HB-divider]; the ideal fit used to come out as nan
    path = divider_file(tmp_path, free=FREE,
                        extra=target(voltage='"out"', equals='"1e-90 V"', within='"1%"'))
    result = CliRunner().invoke(cli, ["design", str(path), "--samples", "0", "--top", "1"])
    assert result.exit_code == 1, result.output + result.stderr
    assert "ideal values: R1 = 1 MΩ" in result.output and "nan" not in result.output
    assert "1 MΩ" in result.output.split("ranked by")[1]


def test_the_json_of_a_subnormal_supply_is_strict_json(tmp_path):
    path = divider_file(tmp_path, supply="5e-324 V", top="1e-300", bottom="1e-300",
                        extra=target(voltage='"out"', at_least='"0 V"'))
    result = CliRunner().invoke(cli, ["check", str(path), "--json"])
    assert result.exit_code in (0, 1) and "Traceback" not in result.stderr
    text = result.output
    assert "NaN" not in text and "Infinity" not in text
    json.loads(text, parse_constant=lambda name: pytest.fail(f"JSON holds {name}"))


# -- quick commands name the option typed -------------------------------------------------

QUICK = {
    "divider": ["--input", "12 V", "--output", "3 V"],
    "regulator": ["--reference", "0.8 V", "--output", "3.3 V"],
    "led": ["--supply", "5 V", "--forward", "2 V", "--current", "20 mA"],
    "pad": ["--loss", "6 dB"],
    "bias": ["--supply", "10 V", "--collector-current", "1 mA", "--collector-voltage", "5 V"],
    "gain": ["--gain", "10"],
    "thermometer": ["--sensor", "ntc", "--r25", "10k", "--beta", "3950", "--temperature",
                    "0 C:50 C", "--output", "0.6 V:2.2 V", "--reference", "3.3 V"],
}

QUICK_REFUSED = [
    ("regulator", ["--load", "-1k"], "--load '-1k' must be positive"),
    ("regulator", ["--load", "0"], "--load '0' must be positive"),
    ("gain", ["--open-loop-gain", "nan"], "--open-loop-gain must be finite"),
    ("bias", ["--beta", "inf"], "--beta must be finite"),
    ("divider", ["--output", "1e-300 V"], "--output '1e-300 V' is too small"),
    ("led", ["--current", "1e-300 A"], "--current '1e-300 A' is too small"),
    ("pad", ["--loss", "1e-300 dB"], "--loss '1e-300 dB' is too small"),
    ("pad", ["--impedance", "1e-300"], "--impedance '1e-300' is too small"),
    *[(name, ["--within", "-1%"], "--within '-1%' must lie between above 0 % and 1000 %")
      for name in QUICK],
    *[(name, ["--margin", "150%"], "--margin '150%' must lie between above 0 % and 100 %")
      for name in QUICK],
    *[(name, ["--package", "0603x"], "--package '0603x' is not in the package table; did you "
      "mean '0603'?") for name in QUICK],
]


@pytest.mark.parametrize(("command", "options", "fragment"), QUICK_REFUSED,
                         ids=[f"{c}{o[0]}{o[1]}" for c, o, _ in QUICK_REFUSED])
def test_quick_commands_name_the_option_typed(command, options, fragment):
    line = refusal(command, *QUICK[command], *options, "--samples", "0")
    assert fragment in line
    # never the item the command built from it
    assert " options," not in line and "RLOAD" not in line and "[design]" not in line


def test_a_package_list_in_a_message_is_cut_short(tmp_path):
    rows = "\n".join(f"P{k},chip,P{k},P{k}M,0.1,70,155,50,test" for k in range(20_000))
    (tmp_path / "many.csv").write_text(
        "name,mount,imperial,metric,rated_power_w,rated_ambient_c,zero_power_c,"
        "limiting_voltage_v,source\n" + rows + "\n", encoding="utf-8")
    path = divider_file(tmp_path, design='packages = "many.csv"\npackage = "nope"')
    line = refusal("check", path)
    # 20,000 rows, each known by its imperial and metric name
    assert "(40,000 in all)" in line and len(line) < 400


# -- boards -------------------------------------------------------------------------------

def test_a_network_key_that_is_not_tables_is_named(tmp_path):
    board = tmp_path / "board.toml"
    board.write_text("network = 3\n", encoding="utf-8")
    assert "network must be [[network]] tables, not int" in refusal("bom", board)


# -- singular networks: check and design apply the same rules and name the parts ---------

TWO_REGULATORS_ON_ONE_SENSE = """
[[regulator]]
ref = "U1"
output = "o1"
sense = "s"
reference = "gnd"
setpoint = "1 V"
[[regulator]]
ref = "U2"
output = "o2"
sense = "s"
reference = "gnd"
setpoint = "1 V"
[[resistor]]
ref = "R1"
nodes = ["o1", "s"]
value = "1k"
[[resistor]]
ref = "R2"
nodes = ["o2", "s"]
value = "1k"
[[resistor]]
ref = "R3"
nodes = ["s", "gnd"]
value = "1k"
choose = "E24"
range = ["100", "10k"]
[[target]]
voltage = "s"
equals = "1 V"
within = "1%"
"""

LOOP_GAIN_ONE = """
[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "1 V"
[[resistor]]
ref = "R1"
nodes = ["in", "x"]
value = "1k"
[[resistor]]
ref = "R2"
nodes = ["y", "gnd"]
value = "1k"
choose = "E24"
range = ["100", "10k"]
[[controlled]]
ref = "E1"
kind = "vcvs"
plus = "y"
minus = "gnd"
control = ["x", "gnd"]
gain = 1
[[controlled]]
ref = "E2"
kind = "vcvs"
plus = "x"
minus = "gnd"
control = ["y", "gnd"]
gain = 1
[[target]]
voltage = "y"
equals = "1 V"
within = "1%"
"""


@pytest.mark.parametrize(("text", "fragment"), [
    # two regulators hold the same node to 1 V: one equation twice, the outputs undefined
    # (the loop solve's regulator system is singular) [HB-mna]
    (TWO_REGULATORS_ON_ONE_SENSE, "regulators U1, U2 set sense voltages that depend on each "
                                  "other, so the network's equations are singular"),
    # x = y and y = x: 1 - 1·1 = 0, no unique solution [HB-controlled-sources]
    (LOOP_GAIN_ONE, "the controlled sources E1, E2 leave the circuit without a unique "
                    "solution"),
])
@pytest.mark.parametrize("command", ["check", "design"])
def test_a_singular_network_is_refused_by_check_and_design_naming_its_parts(
        tmp_path, command, text, fragment):
    # before: check refused it, design answered "no candidate could be evaluated" (exit 1)
    path = tmp_path / "design.toml"
    path.write_text(text, encoding="utf-8")
    assert fragment in refusal(command, path, "--samples", "0")
