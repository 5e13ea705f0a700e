"""Controlled sources, transistors and amplifiers.

Checks: controlled-source networks [HB-controlled-sources] against an exact
sympy solve (tests/reference.py) [CALC-exact-nodal]; the textbook
voltage-divider bias case [HB-bjt-bias] (10 V, 10k/2.2k, RE 1k, RC 3.6k,
V_BE 0.7 V: I_E = 1.10328 mA and V_C = 6.0282 V as β → ∞, I_E = 1.08393 mA at
β = 100; computed exactly [CALC-bjt-bias]; the bias rules from standard
electronics texts, from memory [MEM-bjt-rules]); op-amp gains 1 + Rf/Rg and
−Rf/Rin (standard op-amp texts) [HB-opamp].
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from brute import exhaustive
from click.testing import CliRunner

from synth.checking import check
from synth.cli import cli
from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings
from synth.synthesis import synthesize
from synth.templates.active import bias_tables, gain_tables
from synth.templates.passive import QuickSettings

from reference import exact_nodal

NETWORK = {
    "source": [{"ref": "V1", "kind": "voltage", "plus": "a", "minus": "gnd", "value": 5.0},
               {"ref": "I1", "kind": "current", "from": "gnd", "to": "c", "value": 0.002}],
    "resistor": [{"ref": "R1", "nodes": ["a", "b"], "value": 1000.0},
                 {"ref": "R2", "nodes": ["b", "gnd"], "value": 2200.0},
                 {"ref": "R3", "nodes": ["b", "c"], "value": 470.0},
                 {"ref": "R4", "nodes": ["c", "gnd"], "value": 3300.0},
                 {"ref": "R5", "nodes": ["d", "gnd"], "value": 1500.0},
                 {"ref": "R6", "nodes": ["c", "d"], "value": 680.0}],
}
PLAIN = [("a", "b", 1000), ("b", "gnd", 2200), ("b", "c", 470), ("c", "gnd", 3300),
         ("d", "gnd", 1500), ("c", "d", 680)]


@pytest.mark.parametrize(("table", "reference"), [
    ({"kind": "vcvs", "plus": "d", "minus": "gnd", "control": ["b", "gnd"], "gain": 3},
     ("vcvs", "d", "gnd", ("v", "b", "gnd"), 3)),
    ({"kind": "vccs", "from": "gnd", "to": "d", "control": ["a", "b"], "gain": "2 mS"},
     ("vccs", "d", "gnd", ("v", "a", "b"), 0.002)),
    ({"kind": "ccvs", "plus": "d", "minus": "gnd", "control": "R3", "gain": "1k"},
     ("ccvs", "d", "gnd", ("r", 2), 1000)),
    ({"kind": "cccs", "from": "gnd", "to": "d", "control": "V1", "gain": 2.5},
     ("cccs", "d", "gnd", ("s", 0), 2.5)),
    ({"kind": "cccs", "from": "c", "to": "d", "control": "R1", "gain": -0.5},
     ("cccs", "d", "c", ("r", 0), -0.5)),
])
def test_controlled_sources_match_exact_solve(table, reference):
    data = {**NETWORK, "controlled": [{"ref": "X1", **table}]}
    design = design_from_dict(data)
    result = check(design, verify=True)
    # controlled sources [HB-controlled-sources] against the exact solve [CALC-exact-nodal]
    voltages, _, _ = exact_nodal(["gnd", "a", "b", "c", "d"], PLAIN, [("a", "gnd", 5)],
                                 [("gnd", "c", 0.002)], [reference])
    for node in ("a", "b", "c", "d"):
        assert result.nodes[node] == pytest.approx(float(voltages[node]), rel=1e-10, abs=1e-12)
    assert result.verify_difference < 1e-10  # loop solve and nodal solve agree


def bias_design(beta, vce_sat="0.2 V", rc="3.6k", polarity="npn", exact_parts=False):
    supply = "10 V" if polarity == "npn" else "-10 V"
    defaults = {"tolerance": "0%", "tcr": "0 ppm/C"} if exact_parts else {}
    return design_from_dict({
        "design": defaults,
        "source": [{"ref": "VCC", "kind": "voltage", "plus": "vcc", "minus": "gnd",
                    "value": supply}],
        "resistor": [{"ref": "R1", "nodes": ["vcc", "b"], "value": "10k"},
                     {"ref": "R2", "nodes": ["b", "gnd"], "value": "2.2k"},
                     {"ref": "RC", "nodes": ["vcc", "c"], "value": rc},
                     {"ref": "RE", "nodes": ["e", "gnd"], "value": "1k"}],
        "transistor": [{"ref": "Q1", "type": polarity, "collector": "c", "base": "b",
                        "emitter": "e", "vbe": "0.7 V", "beta": beta, "vce_sat": vce_sat}],
    })


def test_textbook_divider_bias():
    # the worked textbook case, β → ∞ and β = 100 [CALC-bjt-bias]
    ideal = check(bias_design(1e12), verify=True)
    assert ideal.nodes["e"] / 1e3 == pytest.approx(1.10328e-3, rel=1e-5)
    assert ideal.nodes["c"] == pytest.approx(6.0282, rel=1e-5)
    finite = check(bias_design(100), verify=True)
    assert finite.nodes["e"] / 1e3 == pytest.approx(1.08393e-3, rel=1e-5)
    assert finite.verify_difference < 1e-12
    # exact: I_E = (V_TH - V_BE) / (R_E + R_TH / (beta + 1)) [HB-bjt-bias]
    v_th, r_th = 10 * 2.2 / 12.2, 10e3 * 2.2e3 / 12.2e3
    assert finite.nodes["e"] / 1e3 == pytest.approx((v_th - 0.7) / (1e3 + r_th / 101),
                                                    rel=1e-12)
    q1 = {p.ref: p for p in finite.parts}
    assert q1["Q1.C"].current == pytest.approx(-100 * q1["Q1.BE"].current, rel=1e-12)


def test_pnp_mirrors_npn():
    npn = check(bias_design(100))
    pnp = check(bias_design(100, polarity="pnp"))
    for node in ("b", "c", "e"):
        assert pnp.nodes[node] == pytest.approx(-npn.nodes[node], rel=1e-12)


def test_active_region_is_checked():
    saturated = check(bias_design(100, rc="10k"))
    active = next(t for t in saturated.targets if t.label == "Q1 active")
    assert not active.met and not saturated.ok
    assert active.value < 0.2


def test_worst_case_over_the_beta_range():
    design = bias_design([100, 50, 300], exact_parts=True)
    spread = analyse_spread(design, settings=SpreadSettings(samples=0))
    assert spread.variables == ("Q1.C",)
    emitter = next(t for t in spread.targets if t.label == "Q1 active")
    lows = [check(bias_design(b)).targets[0].value for b in (50, 300)]
    assert (emitter.worst_low, emitter.worst_high) == pytest.approx(sorted(lows), rel=1e-9)


def test_bias_search_is_exact():
    tables = bias_tables("12 V", "2 mA", "7 V", QuickSettings(series="E6", package=None))
    design = design_from_dict(tables)
    result = synthesize(design, top=3)
    objectives, total = exhaustive(design)
    assert result.proven_optimal and total == result.combinations
    np.testing.assert_allclose([c.objective for c in result.candidates], objectives[:3],
                               rtol=1e-9, atol=1e-12)


@pytest.mark.parametrize("inverting", [False, True])
def test_amplifier_gain_formulas(inverting):
    tables = gain_tables("10", QuickSettings(series="E24"), inverting=inverting)
    best = synthesize(design_from_dict(tables), top=1).candidates[0]
    gain = best.targets[0].value
    # the closed-loop gains of standard op-amp texts [HB-opamp]
    if inverting:  # -Rf/Rin
        assert gain == pytest.approx(-best.values["RF"] / best.values["RIN"], rel=1e-12)
    else:  # 1 + Rf/Rg
        assert gain == pytest.approx(1 + best.values["RF"] / best.values["RG"], rel=1e-12)


def test_finite_open_loop_gain():
    # closed loop A / (1 + A·RG/(RF+RG)) (standard op-amp texts) [HB-opamp]
    design = design_from_dict({
        "source": [{"ref": "VIN", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "0.1 V"}],
        "amplifier": [{"ref": "U1", "plus": "in", "minus": "fb", "output": "out",
                       "open_loop_gain": 1000}],
        "resistor": [{"ref": "RF", "nodes": ["out", "fb"], "value": "90k"},
                     {"ref": "RG", "nodes": ["fb", "gnd"], "value": "10k"}],
        "target": [{"ratio": ["out", "in"], "equals": 10}],
    })
    result = check(design, verify=True)
    assert result.targets[0].value == pytest.approx(1000 / (1 + 1000 * 0.1), rel=1e-12)
    assert result.verify_difference < 1e-12


@pytest.mark.parametrize(("table", "fragment"), [
    ({"controlled": [{"ref": "X1", "kind": "vxvs", "plus": "a", "minus": "gnd",
                      "control": ["a", "b"], "gain": 2}]}, "kind 'vxvs' is not known"),
    ({"controlled": [{"ref": "X1", "kind": "ccvs", "plus": "d", "minus": "gnd",
                      "control": "R9", "gain": 2}]}, "control part 'R9' is not in the circuit"),
    ({"controlled": [{"ref": "X1", "kind": "vcvs", "plus": "d", "minus": "gnd",
                      "gain": 2}]}, "control is missing"),
    ({"controlled": [{"ref": "X1", "kind": "cccs", "from": "gnd", "to": "d", "control": "V1",
                      "gain": 1}, {"ref": "X2", "kind": "cccs", "from": "gnd", "to": "b",
                                   "control": "X1", "gain": 1}]},
     "another controlled current source"),
    ({"transistor": [{"ref": "Q1", "type": "nmos", "collector": "c", "base": "b",
                      "emitter": "d"}]}, "type 'nmos' is not known"),
    ({"transistor": [{"ref": "Q1", "type": "npn", "collector": "c", "base": "b",
                      "emitter": "d", "beta": [100, 300, 50]}]}, "least <= typical <= greatest"),
    ({"controlled": [{"ref": "X1", "kind": "vcvs", "plus": "d", "minus": "gnd",
                      "control": ["a", "b"], "gain": True}]}, "gain must be a number"),
    ({"controlled": [{"ref": "X1", "kind": "vcvs", "plus": "d", "minus": "gnd",
                      "control": ["a", "b"], "gain": 10 ** 400}]}, "gain .* is not a gain"),
    ({"controlled": [{"ref": "X1", "kind": "vcvs", "plus": "d", "minus": "gnd",
                      "control": ["a", "b"], "gain": float("nan")}]}, "gain must be finite"),
    ({"amplifier": [{"ref": "U1", "plus": "a", "minus": "b", "output": "d",
                     "open_loop_gain": float("nan")}]}, "open_loop_gain must be finite"),
    ({"amplifier": [{"ref": "U1", "plus": "a", "minus": "b", "output": "d",
                     "open_loop_gain": False}]}, "open_loop_gain must be a number"),
])
def test_refused_active_parts(table, fragment):
    with pytest.raises(DesignError, match=fragment):
        design_from_dict({**NETWORK, **table})


def test_bias_and_gain_commands():
    runner = CliRunner()
    result = runner.invoke(cli, ["bias", "--supply", "10 V", "--collector-current", "1 mA",
                                 "--collector-voltage", "6 V", "--series", "E24",
                                 "--samples", "2000"])
    assert result.exit_code == 0, result.output
    assert "rules of thumb" in result.output and "against β" in result.output
    doc = json.loads(runner.invoke(cli, [
        "gain", "--gain", "4.7", "--inverting", "--input-resistance", "22k", "--json",
        "--samples", "0", "--series", "E24"]).output)
    best = doc["candidates"][0]
    assert best["values"]["RIN"] == 22e3
    assert best["targets"][0]["value"] == pytest.approx(-best["values"]["RF"] / 22e3)
