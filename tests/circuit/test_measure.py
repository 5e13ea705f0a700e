"""The evaluator refuses networks without a unique solution: a regulating element that cannot
move its sense node, and controlled sources whose loop gain leaves no solution.

A regulator holds V(sense) − V(reference) at its setpoint by driving its output; when
other voltage-defined branches already fix that difference, nothing sets the output
[HB-mesh] (a loop of voltage-defined branches), and the design is refused with the
regulator named (docs/design-file.md; a one-line message, exit code 2).
"""

from __future__ import annotations

import pytest
from click.testing import CliRunner

from synth.checking import check
from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.errors import DesignError

PINNED = "its output cannot move its sense node"


def regulators(pinned_second):
    """U1 regulates fb through a divider; U2 senses `in`, which V1 holds (when pinned)."""
    second = {"ref": "U2", "output": "out2", "sense": "in" if pinned_second else "fb2",
              "reference": "gnd", "setpoint": "1 V"}
    return {
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "5 V"}],
        "resistor": [{"ref": "R1", "nodes": ["out", "fb"], "value": "10k"},
                     {"ref": "R2", "nodes": ["fb", "gnd"], "value": "10k"},
                     {"ref": "R3", "nodes": ["in", "gnd"], "value": "10k"},
                     {"ref": "R4", "nodes": ["out2", "fb2"], "value": "10k"},
                     {"ref": "R5", "nodes": ["fb2", "gnd"], "value": "10k"}],
        "regulator": [{"ref": "U1", "output": "out", "sense": "fb", "reference": "gnd",
                       "setpoint": "1 V"}, second],
    }


def test_two_regulators_that_can_regulate():
    result = check(design_from_dict(regulators(pinned_second=False)))
    # each holds 1 V at its tap of a 10k/10k divider: 2 V at its output [HB-divider]
    assert result.nodes["out"] == pytest.approx(2.0, rel=1e-12)
    assert result.nodes["out2"] == pytest.approx(2.0, rel=1e-12)


def test_one_regulator_that_cannot_move_its_sense_node():
    tables = regulators(pinned_second=True)
    tables["regulator"] = tables["regulator"][1:]
    with pytest.raises(DesignError, match=f"regulator U2: {PINNED}"):
        check(design_from_dict(tables))


def test_second_regulator_that_cannot_move_its_sense_node_is_named(tmp_path):
    import tomli_w

    path = tmp_path / "two.toml"
    path.write_text(tomli_w.dumps(regulators(pinned_second=True)), encoding="utf-8")
    result = CliRunner().invoke(cli, ["check", str(path)])
    assert result.exit_code == 2 and "Traceback" not in result.output
    assert f"regulator U2: {PINNED}" in result.stderr
    with pytest.raises(DesignError, match=f"regulator U2: {PINNED}"):
        check(design_from_dict(regulators(pinned_second=True)))


def singular_pair(x1_gain):
    """R4 with a gain-1 current source across it, and R0's current returned by X1.

    With X1's gain at −1 the n2/n4 island's currents cancel: Kirchhoff's current law
    there reads 1 mA = 0, so no solution exists [HB-kcl-tellegen].
    """
    return design_from_dict({
        "source": [{"ref": "V0", "kind": "voltage", "plus": "n1", "minus": "n3",
                    "value": "1 V"},
                   {"ref": "I0", "kind": "current", "from": "gnd", "to": "n4",
                    "value": "1 mA"}],
        "resistor": [{"ref": "R0", "nodes": ["n2", "gnd"], "value": "10k"},
                     {"ref": "R1", "nodes": ["n4", "n2"], "value": "100"},
                     {"ref": "R2", "nodes": ["n1", "gnd"], "value": "100"},
                     {"ref": "R3", "nodes": ["n3", "gnd"], "value": "100"},
                     {"ref": "R4", "nodes": ["n1", "n2"], "value": "100"}],
        "controlled": [{"ref": "X0", "kind": "cccs", "from": "n2", "to": "n1",
                        "control": "R4", "gain": 1},
                       {"ref": "X1", "kind": "cccs", "from": "n4", "to": "n1",
                        "control": "R0", "gain": x1_gain}],
    })


def test_two_controlled_sources_with_a_solution():
    result = check(singular_pair(-0.5), verify=True)
    assert result.verify_difference < 1e-9
    # the island: 1 mA = I(R0) - 0.5 I(R0), so 2 mA flows down R0 [HB-kcl-tellegen]
    r0 = next(p for p in result.parts if p.ref == "R0")
    assert r0.current == pytest.approx(2e-3, rel=1e-9)


def test_two_controlled_sources_without_a_solution_are_refused():
    with pytest.raises(DesignError, match="without a unique solution"):
        check(singular_pair(-1))
