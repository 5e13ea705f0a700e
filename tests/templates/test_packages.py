"""--package auto (synth.templates.packages)."""

from __future__ import annotations

import pytest

from synth.design.reader import design_from_dict
from synth.synthesis import synthesize
from synth.templates.packages import PackageChoice, package_order, synthesize_auto


def _sink(window: str) -> dict:
    # 5 V across one E3 resistor that must draw 9.8 mA: the ideal 510 ohm dissipates 49 mW
    return {
        "design": {"title": "sink", "package": "0603"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "5 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "choose": "E3",
                      "range": ["100", "10k"]}],
        "target": [{"current": "V1", "equals": "9.8 mA", "within": window}],
    }


def test_package_order_is_chips_by_power_then_leaded_parts():
    order = [p.name for p in package_order(design_from_dict(_sink("10%")).packages)]
    chips = [name for name in order if not name.startswith("axial")]
    assert order[:len(chips)] == chips  # every chip before every leaded part
    assert chips[:3] == ["0201", "0402", "0603"]
    assert order[-1].startswith("axial")


def test_a_package_steps_up_when_the_standard_value_breaks_its_allowance():
    # the ideal 49 mW fits an 0603 (0.1 W x 50 % = 50 mW [CP-chip-ratings], [CP-margin]);
    # the only E3 value in the window, 470 ohm, dissipates 25/470 = 53.2 mW, over it but
    # within an 0805's 62.5 mW: the automatic choice steps up once
    tables, _design, result, chosen = synthesize_auto(
        _sink("10%"), "sink", lambda d: synthesize(d, top=1, spread=None))
    assert chosen == [PackageChoice("R1", "0805")]
    assert result.feasible and result.candidates[0].values["R1"] == 470.0
    part = result.candidates[0].parts[0]
    assert part.power == pytest.approx(25 / 470) and part.allowed_power == pytest.approx(0.0625)
    assert tables["resistor"][0]["package"] == "0805"


def test_a_string_when_no_single_package_takes_the_voltage():
    # 1 kV across one position: no package allows it (the largest limiting voltage in the
    # table is 500 V, 400 V at 80 % use [CP-axial-ratings]): a series string of equal parts
    tables = {
        "design": {"title": "bleeder"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "hv", "minus": "gnd",
                    "value": "1 kV"}],
        "resistor": [{"ref": "R1", "nodes": ["hv", "gnd"], "choose": "E24",
                      "range": ["1M", "20M"]}],
        "target": [{"current": "V1", "equals": "100 uA", "within": "5%"}],
    }
    _, design, result, chosen = synthesize_auto(
        tables, "bleeder", lambda d: synthesize(d, top=1, spread=None))
    assert chosen[0].parts >= 3 and "in series" in str(chosen[0])
    assert design.resistors[0].position.equal_parts
    assert result.feasible
    for part in result.candidates[0].parts:
        if part.kind == "resistor":
            assert part.voltage <= part.allowed_voltage * (1 + 1e-9)
