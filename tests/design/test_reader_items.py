"""Design files refused item by item: [design], [[source]], [[regulator]], [[target]] and the
active parts, each with its file, item, rule and fix on one line and exit code 2 from the
command line.

Values follow [SI-brochure] (units and prefixes, kelvin and degree Celsius); ratios are
plain numbers.  Nothing here is a computed value: the checks are the messages.
"""

from __future__ import annotations

import pytest
from click.testing import CliRunner

from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.errors import DesignError

BASE = """
[design]
title = "divider"

[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "10 V"

[[resistor]]
ref = "R1"
nodes = ["in", "out"]
value = "10k"

[[resistor]]
ref = "R2"
nodes = ["out", "gnd"]
value = "10k"
"""

TITLE = 'title = "divider"'
FREE_R1 = 'value = "10k"\n\n[[resistor]]\nref = "R2"'


def controlled(extra):
    return ('\n[[resistor]]\nref = "R3"\nnodes = ["x", "gnd"]\nvalue = "1k"\n\n'
            '[[controlled]]\nref = "E1"\nkind = "vcvs"\nplus = "x"\nminus = "gnd"\n'
            f'control = ["out", "gnd"]\n{extra}')


def transistor(extra):
    return ('\n[[transistor]]\nref = "Q1"\ntype = "npn"\ncollector = "in"\nbase = "out"\n'
            f'emitter = "e"\n{extra}\n[[resistor]]\nref = "RE"\nnodes = ["e", "gnd"]\n'
            'value = "1k"\n')


REFUSED = [
    # [design]
    ((TITLE, 'temperature = "25 C"'),
     '[design]: temperature must be a pair such as ["-20 C", "60 C"]'),
    ((TITLE, 'temperature = ["60 C", "-20 C"]'),
     "[design]: temperature range '60 C'..'-20 C' is empty; give the low end first"),
    ((TITLE, 'temperature = ["-20 C", "hot"]'),
     "[design]: temperature: 'hot' is not a temperature; write a temperature such as"),
    ((TITLE, 'require = "worstcase"'),
     "[design]: require 'worstcase' is not known; did you mean 'worst-case'?"),
    ((TITLE, 'min_yield = "99%"'),
     '[design]: min_yield applies with require = "yield"; add it or drop min_yield'),
    ((TITLE, 'require = "yield"'),
     '[design]: require = "yield" needs min_yield, such as min_yield = "99%"'),
    ((TITLE, 'require = "yield"\nmin_yield = "0%"'),
     "[design]: min_yield '0%' must lie between above 0 % and 100 %"),
    ((TITLE, "notes = 3"), "[design]: notes must be text"),
    ((TITLE, "title = 3"), "[design]: title must be a non-empty text in quotes, not 3"),
    ((TITLE, 'tolerance = "100%"'), "[design]: tolerance '100%' must lie between 0 % and 99 %"),
    ((TITLE, 'packages = "none.csv"'),
     "[design]: package table 'none.csv' was not found; check the path"),
    # [[source]]
    (('minus = "gnd"', 'minus = "gnd"\nfrom = "gnd"'),
     "source V1: a voltage source takes plus and minus, not 'from'"),
    (('kind = "voltage"', 'kind = "current"'),
     "source V1: a current source takes from and to, not 'plus'"),
    (('minus = "gnd"', 'minus = "in"'),
     "source V1: both terminals are on node 'in'; connect it between two nodes"),
    (('value = "10 V"', 'value = "10 V"\ntolerance = "1 A"'),
     "source V1: tolerance: '1 A' is not a voltage"),
    (('value = "10 V"', ""), "source V1: key 'value' is missing; add it"),
    (('ref = "V1"\n', ""), "source #1: key 'ref' is missing; add ref = \"...\""),
    # [[resistor]]
    (('nodes = ["in", "out"]', 'nodes = ["in", "out", "x"]'),
     'resistor R1: nodes must be a pair of node names such as ["in", "out"]'),
    ((FREE_R1, 'note = "free"\n\n[[resistor]]\nref = "R2"'),
     'resistor R1: give a value (value = "10k") or let rnsynth choose one (choose = "E96")'),
    ((FREE_R1, 'choose = "shelf.csv"\n\n[[resistor]]\nref = "R2"'),
     "resistor R1: stock file 'shelf.csv' was not found beside the design file or in "
     "catalogs/; check the path"),
    ((FREE_R1, 'choose = "E24"\nrange = ["1k"]\n\n[[resistor]]\nref = "R2"'),
     'resistor R1: range must be a pair such as ["1k", "100k"]'),
    ((FREE_R1, 'choose = "E24"\nrange = ["-1k", "10k"]\n\n[[resistor]]\nref = "R2"'),
     "resistor R1: range '-1k'..'10k' must be positive"),
    # [[regulator]]
    ((None, '\n[[regulator]]\nref = "U1"\noutput = "out2"\nsense = "out2"\n'
            'reference = "out2"\nsetpoint = "1 V"\n'),
     "regulator U1: sense and reference are both 'out2'; the setpoint needs two nodes"),
    ((None, '\n[[regulator]]\nref = "U1"\noutput = "gnd"\nsense = "out"\nreference = "gnd"\n'
            'setpoint = "1 V"\n'),
     "regulator U1: output is the ground node; name the node it drives"),
    # [[target]]
    ((None, '\n[[target]]\nvoltage = ["out", "out"]\nequals = "1 V"\n'),
     "target #1: voltage between 'out' and itself is always zero; name two nodes"),
    ((None, '\n[[target]]\nresistance = ["out", "out"]\nequals = "1k"\n'),
     "target #1: resistance between 'out' and itself is always zero; name two nodes"),
    ((None, '\n[[target]]\nvoltage = "out"\n'),
     "target #1: give equals (with an optional within), at_least or at_most"),
    ((None, '\n[[target]]\nvoltage = "out"\nequals = "0 V"\n'),
     "target #1: equals 0 has no relative error; give within as an absolute window"),
    ((None, '\n[[target]]\nvoltage = "out"\nequals = "5 V"\nwithin = "0%"\n'),
     "target #1: within '0%' must lie between above 0 % and 1000 %"),
    ((None, '\n[[target]]\nratio = [["out", "gnd"], ["in", "gnd"]]\nequals = "50%"\n'),
     "target #1: equals: '50%' is not a ratio; write a plain number such as 0.25"),
    ((None, '\n[[target]]\nvoltage = 3\nequals = "1 V"\n'),
     'target #1: voltage must be a node name or a pair of node names such as ["out", "gnd"]'),
    ((None, '\n[[target]]\ncurrent = "X9"\nequals = "1 mA"\n'),
     "target 'current in X9': no part 'X9'; name a resistor or a source"),
    # [[controlled]]
    ((None, controlled("gain = 2\n").replace('minus = "gnd"', 'minus = "x"', 1)),
     "controlled source E1: its output is between node 'x' and itself; name two nodes"),
    ((None, controlled("")), "controlled source E1: gain is missing; add gain = ..."),
    ((None, controlled('gain = "two"\n')),
     "controlled source E1: gain 'two' is not a gain; write a number (vccs: \"2 mS\", ccvs: "
     "\"1k\" ohm)"),
    ((None, controlled('gain = "inf"\n')), "controlled source E1: gain must be finite"),
    ((None, controlled("gain = 2\ngain_range = [1]\n")),
     "controlled source E1: gain_range must be a pair [least, greatest]"),
    ((None, controlled("gain = 2\ngain_range = [3, 4]\n")),
     "controlled source E1: gain_range must hold the gain, with the same sign at both ends"),
    ((None, controlled("gain = 2\ngain_range = [-1, 4]\n")),
     "controlled source E1: gain_range must hold the gain, with the same sign at both ends"),
    ((None, controlled("gain = 2\n").replace('["out", "gnd"]', '["out", "nowhere"]')),
     "controlled source E1: control node 'nowhere' touches no part; name a node of the "
     "circuit"),
    ((None, '\n[[resistor]]\nref = "R3"\nnodes = ["x", "gnd"]\nvalue = "1k"\n\n'
            '[[controlled]]\nref = "F1"\nkind = "cccs"\nfrom = "gnd"\nto = "x"\n'
            'control = "R9"\ngain = 2\n'),
     "controlled source F1: control part 'R9' is not in the circuit; name a resistor or a "
     "source"),
    # [[transistor]] and [[amplifier]]
    ((None, transistor("").replace('base = "out"', 'base = "in"')),
     "transistor Q1: collector, base and emitter must be three different nodes"),
    ((None, transistor('beta = "high"')), "transistor Q1: beta 'high' is not a gain"),
    ((None, transistor("beta = [100, 200, 50]")),
     "transistor Q1: beta must be positive with least <= typical <= greatest"),
    ((None, '\n[[amplifier]]\nref = "A1"\nplus = "out"\nminus = "out"\noutput = "y"\n'),
     "amplifier A1: plus and minus must be different nodes"),
    ((None, '\n[[amplifier]]\nref = "A1"\nplus = "out"\nminus = "gnd"\noutput = "y"\n'
            "open_loop_gain = -5\n"),
     "amplifier A1: open_loop_gain must be positive"),
]


def run_check(tmp_path, change):
    old, new = change
    if old is None:
        text = BASE + new
    else:
        assert old in BASE
        text = BASE.replace(old, new, 1)
    path = tmp_path / "design.toml"
    path.write_text(text, encoding="utf-8")
    return path, CliRunner().invoke(cli, ["check", str(path)])


@pytest.mark.parametrize(("change", "fragment"), REFUSED,
                         ids=[f"{k}-{fragment[:40]}" for k, (_, fragment) in enumerate(REFUSED)])
def test_refused_item(tmp_path, change, fragment):
    path, result = run_check(tmp_path, change)
    assert result.exit_code == 2, result.output
    assert f"{path}, {fragment}" in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1
    assert "Traceback" not in result.output + result.stderr


@pytest.mark.parametrize(("data", "fragment"), [
    ({"source": 3}, "<design>: source must be an array of tables; write each as [[source]]"),
    ({"source": [3]}, "<design>, source #1: is int, not a table; write it as [source]"),
    ({"resistor": []}, "<design>: the design has no resistors; add [[resistor]] tables"),
])
def test_refused_structure(data, fragment):
    with pytest.raises(DesignError) as raised:
        design_from_dict(data)
    assert fragment in str(raised.value)


@pytest.mark.parametrize(("tolerance", "absolute"), [("0.1 V", 0.1), ("0 V", None)])
def test_source_tolerance_in_volts(tolerance, absolute):
    design = design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V", "tolerance": tolerance}],
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "value": "10k"}]})
    source = design.sources[0]
    assert source.tolerance_abs == (None if absolute is None else pytest.approx(absolute))
    assert source.tolerance == 0.0


def test_ambient_below_absolute_zero_is_refused(tmp_path):
    # 0 K = -273.15 °C [SI-brochure]
    _, result = run_check(tmp_path, (TITLE, 'ambient = "-300 C"'))
    assert result.exit_code == 2 and "below absolute zero" in result.stderr
