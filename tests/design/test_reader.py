"""Design files: the structure is read exactly, and every bad input is refused clearly.

Each refused input is checked through the command line too: one line on
stderr naming the file and item, exit code 2, no traceback.
"""

from __future__ import annotations

import warnings

import pytest
from click.testing import CliRunner

from synth.circuit.network import build_network
from synth.cli import cli
from synth.design import reader
from synth.design.load import load_design
from synth.errors import DesignError

from conftest import EXAMPLES

BASE = """
[design]
title = "bench supply output sense"
ground = "gnd"
ambient = "40 C"

[[source]]
ref = "V1"
kind = "voltage"
plus = "in"
minus = "gnd"
value = "12 V"
tolerance = "2%"

[[resistor]]
ref = "R1"
nodes = ["in", "sense"]
value = "20k"
package = "0603"

[[resistor]]
ref = "R2"
nodes = ["sense", "gnd"]
value = "10k"
package = "0603"

[[target]]
voltage = "sense"
equals = "4 V"
within = "1%"
"""


def test_base_design_reads(tmp_design):
    design = load_design(tmp_design(BASE))
    assert design.title == "bench supply output sense"
    assert design.ambient_c == 40.0 and design.margin_frac == 0.5
    assert design.voltage_margin_frac == 0.8
    (source,) = design.sources
    assert (source.kind, source.pos, source.neg, source.value, source.tolerance) == (
        "voltage", "in", "gnd", 12.0, 0.02)
    r1 = design.resistors[0]
    assert (r1.nodes, r1.value, r1.tolerance, r1.tcr, r1.package) == (
        ("in", "sense"), 20e3, 0.01, 1e-4, "0603")
    (target,) = design.targets
    assert target.label == "voltage at sense" and target.nodes == ("sense", "gnd")
    assert target.bounds == pytest.approx((3.96, 4.04))


def test_free_part_defaults_to_its_series_tolerance(tmp_design):
    text = BASE.replace('value = "20k"', 'choose = "E24"\nrange = ["1k", "100k"]')
    r1 = load_design(tmp_design(text)).resistors[0]
    assert r1.free and r1.choose == "E24" and r1.range == (1e3, 1e5) and r1.tolerance == 0.05


def test_targets_of_every_kind(tmp_design):
    text = BASE + """
[[target]]
current = "V1"
at_most = "1 mA"

[[target]]
name = "gain"
ratio = [["sense", "gnd"], ["in", "gnd"]]
equals = 0.3333
within = "0.5%"

[[target]]
power = "R1"
at_most = "10 mW"

[[target]]
resistance = ["sense", "gnd"]
at_least = "5k"
at_most = "8k"

[[target]]
voltage = ["in", "sense"]
equals = "8 V"
within = "50 mV"
"""
    targets = load_design(tmp_design(text)).targets
    assert [t.kind for t in targets] == ["voltage", "current", "ratio", "power", "resistance",
                                         "voltage"]
    assert targets[1].bounds == (float("-inf"), 1e-3)
    assert targets[2].label == "gain" and targets[2].nodes == ("sense", "gnd", "in", "gnd")
    assert targets[4].bounds == (5e3, 8e3)
    assert targets[5].bounds == pytest.approx((7.95, 8.05))
    assert [t.label for t in targets] == [
        "voltage at sense", "current in V1", "gain", "power in R1",
        "resistance from sense to gnd", "voltage from in to sense"]


def test_default_labels_name_the_quantity_in_words(tmp_design):
    text = BASE + """
[[target]]
ratio = [["sense", "gnd"], ["in", "gnd"]]
equals = 0.3333

[[target]]
ratio = [["in", "sense"], "in"]
equals = 0.6667

[[target]]
current = "R2"
at_most = "1 mA"
"""
    labels = [t.label for t in load_design(tmp_design(text)).targets]
    assert labels[1:] == ["ratio of sense to in", "ratio of (in - sense) to in", "current in R2"]


REFUSED = [
    # (change to BASE: (old, new) or appended text, message fragment)
    (("[design]", "[desing]"), "unknown table 'desing'; did you mean 'design'?"),
    (('package = "0603"\n\n[[resistor]]', 'package = "0603"\ntolerence = "1%"\n\n[[resistor]]'),
     "resistor R1: unknown key 'tolerence'; did you mean 'tolerance'?"),
    (('voltage = "sense"', 'voltage = "sens"'),
     "node 'sens' is not in the circuit; did you mean 'sense'?"),
    (('ref = "R2"', 'ref = "R1"'), "reference designator 'R1' is already used"),
    (('value = "20k"', 'value = "-20k"'), "resistor R1: value '-20k' must be positive"),
    (('value = "20k"', 'value = 0'), "resistor R1: value 0 must be positive"),
    (('value = "20k"', 'value = inf'), "not a finite resistance"),
    (('value = "20k"', 'value = "20kk"'), "resistor R1: value: '20kk' is not a resistance"),
    (('value = "20k"', 'choose = "E96"\nrange = ["1M", "10k"]'),
     "range 1M..10k is empty; give the low end first"),
    (('value = "20k"', 'choose = "E97"\nrange = ["1k", "10k"]'),
     "unknown series 'E97'; did you mean 'E96'?"),
    (('value = "20k"', 'choose = "E96"'), "needs a range"),
    (('value = "20k"\npackage = "0603"', 'value = "20k"\npackage = "0604"'),
     "package '0604' is not in the package table; did you mean '0603'?"),
    (('nodes = ["in", "sense"]', 'nodes = ["in", "in"]'), "both ends are on node 'in'"),
    (('kind = "voltage"', 'kind = "voltag"'),
     "kind 'voltag' is not known; did you mean 'voltage'?"),
    (('value = "12 V"', 'value = "12 A"'), "source V1: value: '12 A' is not a voltage"),
    (('ambient = "40 C"', 'margin = 0.5'), "margin: 0.5 is not a percentage"),
    (('ambient = "40 C"', 'max_power_use = 0.5'), "max_power_use: 0.5 is not a percentage"),
    (('ambient = "40 C"', 'max_voltage_use = "0%"'),
     "max_voltage_use '0%' must lie between above 0 % and 100 %"),
    (('ambient = "40 C"', 'max_power_use = "40%"\nmargin = "40%"'),
     "[design]: margin and max_power_use are the same setting; keep max_power_use and "
     "delete margin"),
    (('ambient = "40 C"', 'voltage_margin = "70%"\nmax_voltage_use = "70%"'),
     "[design]: voltage_margin and max_voltage_use are the same setting; keep "
     "max_voltage_use and delete voltage_margin"),
    (('value = "20k"', 'value = "4.7meg"'),
     "resistor R1: value: '4.7meg' is not a resistance; write M for mega (4.7M)"),
    (('ground = "gnd"', 'ground = "0"'), "ground node '0' touches no part"),
    (('within = "1%"', 'within = "1%"\nat_most = "5 V"'), "use equals (with within) or"),
    ((None, '\n[[target]]\nvoltage = "in"\ncurrent = "V1"\nat_most = "1 A"\n'),
     "name exactly one of"),
    ((None, '\n[[target]]\ncurrent = "V1"\nat_least = "2 mA"\nat_most = "1 mA"\n'),
     "lies above at_most"),
    ((None, '\n[[target]]\ncurrent = "V1"\nwithin = "1%"\n'), "within needs equals"),
    ((None, '\n[[target]]\npower = "R9"\nat_most = "1 W"\n'), "no resistor 'R9'"),
    # topology
    ((None, '\n[[resistor]]\nref = "R3"\nnodes = ["x", "y"]\nvalue = "1k"\n'),
     "node(s) x, y (parts R3) have no path to ground 'gnd'"),
    ((None, '\n[[source]]\nref = "V2"\nkind = "voltage"\nplus = "in"\nminus = "gnd"\n'
            'value = "5 V"\n'), "close a loop through nodes"),
    ((None, '\n[[source]]\nref = "I1"\nkind = "current"\nfrom = "gnd"\nto = "x"\n'
            'value = "1 mA"\n\n[[resistor]]\nref = "R3"\nnodes = ["x", "y"]\nvalue = "1k"\n\n'
            '[[source]]\nref = "I2"\nkind = "current"\nfrom = "y"\nto = "gnd"\nvalue = "1 mA"\n'),
     "a cut of current sources"),
    ((None, '\n[[regulator]]\nref = "U1"\noutput = "out"\nsense = "fbb"\nreference = "gnd"\n'
            'setpoint = "1.25 V"\n\n[[resistor]]\nref = "R3"\nnodes = ["out", "gnd"]\n'
            'value = "1k"\n'), "sense node 'fbb' touches no part"),
    ((None, '\n[[regulator]]\nref = "U1"\noutput = "out"\nsense = "in"\nreference = "gnd"\n'
            'setpoint = "1.25 V"\n\n[[resistor]]\nref = "R3"\nnodes = ["out", "gnd"]\n'
            'value = "1k"\n'), "its output cannot move its sense node"),
    (("title =", "title = = "), "not valid TOML"),
]


@pytest.mark.parametrize(("change", "fragment"), REFUSED)
def test_refused_input(tmp_design, change, fragment):
    old, new = change
    if old is None:
        text = BASE + new
    else:
        assert old in BASE
        text = BASE.replace(old, new, 1)
    path = tmp_design(text)
    runner = CliRunner()
    result = runner.invoke(cli, ["check", str(path)])
    assert result.exit_code == 2, result.output
    assert fragment in result.stderr
    assert str(path) in result.stderr
    assert "Traceback" not in result.output and "Traceback" not in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1
    if "TOML" not in fragment and "output cannot move" not in fragment:
        with pytest.raises(DesignError):
            build_network(load_design(path))


def test_use_limits_read_under_their_names(tmp_design):
    text = BASE.replace('ambient = "40 C"',
                        'ambient = "40 C"\nmax_power_use = "60%"\nmax_voltage_use = "70%"')
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # the current names give no deprecation note
        design = load_design(tmp_design(text))
    assert design.margin_frac == 0.6 and design.voltage_margin_frac == 0.7


@pytest.mark.parametrize(("old", "new", "field"), [
    ("margin", "max_power_use", "margin_frac"),
    ("voltage_margin", "max_voltage_use", "voltage_margin_frac"),
])
def test_old_use_limit_names_still_read_with_a_note(tmp_design, old, new, field):
    path = tmp_design(BASE.replace('ambient = "40 C"', f'ambient = "40 C"\n{old} = "60%"'))
    with pytest.warns(DeprecationWarning) as caught:
        design = load_design(path)
    assert getattr(design, field) == 0.6
    (note,) = [str(w.message) for w in caught if w.category is DeprecationWarning]
    assert note == (f"{path}, [design]: {old} is the old name of {new} (same meaning) and "
                    f"will be dropped; rename it to {new}")
    assert "\n" not in note
    with pytest.warns(DeprecationWarning):
        settings = reader._read_design_table(str(path), {old: "60%"})
    assert settings["deprecations"] == (note,)  # for the command line to print


def test_old_use_limit_names_still_check_from_the_command_line(tmp_design):
    path = tmp_design(BASE.replace('ambient = "40 C"',
                                   'ambient = "40 C"\nmargin = "50%"\nvoltage_margin = "80%"'))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", DeprecationWarning)  # the command may show it itself
        result = CliRunner().invoke(cli, ["check", str(path)])
    assert result.exit_code == 0, result.output
    assert "50 % of its derated power and 80 % of its limiting element voltage" in result.output


def test_missing_file_and_folder(tmp_path):
    runner = CliRunner()
    result = runner.invoke(cli, ["check", str(tmp_path / "nope.toml")])
    assert result.exit_code == 2 and "no such file; check the path" in result.stderr
    result = runner.invoke(cli, ["check", str(tmp_path)])
    assert result.exit_code == 2


def test_check_asks_for_values_of_free_parts(tmp_design):
    text = BASE.replace('value = "20k"', 'choose = "E24"\nrange = ["1k", "100k"]')
    design = load_design(tmp_design(text))
    assert [r.ref for r in design.free_resistors] == ["R1"]


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_examples_read(path):
    design = load_design(path)
    assert design.resistors and design.title
