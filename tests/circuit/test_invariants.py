"""Invariants of solved networks with regulators and controlled sources.

Whatever the resistances and gains, a solution must obey Kirchhoff's current law at
every node and the power balance of Tellegen's theorem: what every source delivers
(independent sources, regulating elements and controlled sources alike) equals what
the resistors dissipate [HB-kcl-tellegen]; every element must obey its own law (Ohm's
law [HB-ohm], a source's value, a regulator's setpoint, a controlled source's
gain × control [HB-controlled-sources]); and the loop-current solve with controlled
sources by superposition must agree with the independent modified nodal solve
[HB-mna] to a relative 1e-9 [CALC-exact-nodal].  Networks are random: a spanning tree
of resistors plus extra ones, one or two voltage sources, a current source, and
regulators and controlled sources of random kinds, gains and connections.

The spread test takes a string of 18 resistors and a toleranced supply, 19 varying
quantities, beyond the 16 whose every vertex is solved: its corners then come from the
signs of the sensitivities.  The tap voltage of a string is monotone in every
resistor and in the supply [HB-divider] [CALC-wca-divider], so those corners are the
true extremes; random points of the box must lie between them.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from synth.checking import check
from synth.circuit.measure import Evaluator, SourceValues
from synth.circuit.nodal import nodal_solve
from synth.design.reader import design_from_dict
from synth.errors import DesignError
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings
from synth.spread.worst_case import EXACT_VARIABLES

KINDS = ("vcvs", "vccs", "ccvs", "cccs")
# gain magnitudes for resistances of 100 Ω .. 100 kΩ: V/V, A/V, V/A, A/A
GAIN_RANGE = {"vcvs": (0.1, 3.0), "vccs": (1e-5, 1e-2), "ccvs": (10.0, 1e5),
              "cccs": (0.1, 3.0)}


class _Groups:
    """Union-find over nodes: voltage-defined branches may not close a loop [HB-mesh]."""

    def __init__(self, n):
        self.parent = list(range(n))

    def root(self, x):
        while self.parent[x] != x:
            x = self.parent[x]
        return x

    def join(self, a, b):
        ra, rb = self.root(a), self.root(b)
        if ra == rb:
            return False
        self.parent[ra] = rb
        return True


def random_topology(rng, n_controlled, n_regulators, kinds=None):
    """A random solvable network as design tables; values are filled in later."""
    n_nodes = int(rng.integers(4, 8))
    nodes = ["gnd"] + [f"n{k}" for k in range(1, n_nodes)]
    pairs = []
    order = rng.permutation(n_nodes)
    for k in range(1, n_nodes):  # a random spanning tree keeps every node reaching ground
        pairs.append((nodes[order[k]], nodes[order[rng.integers(0, k)]]))
    for _ in range(int(rng.integers(1, 4))):
        a, b = rng.choice(n_nodes, 2, replace=False)
        pairs.append((nodes[a], nodes[b]))
    resistors = [{"ref": f"R{k}", "nodes": [a, b]} for k, (a, b) in enumerate(pairs)]
    groups = _Groups(n_nodes)
    held = []  # node pairs of voltage-defined branches: (owner ref, a, b)

    def voltage_pair(owner, must_touch_ground=False):
        for _ in range(200):
            a, b = (int(x) for x in rng.choice(n_nodes, 2, replace=False))
            if must_touch_ground:
                a = 0
                if b == 0:
                    continue
            if groups.join(a, b):
                held.append((owner, a, b))
                return nodes[a], nodes[b]
        return None

    outputs = [voltage_pair(f"U{k}", must_touch_ground=True) for k in range(n_regulators)]
    regulators = [{"ref": f"U{k}", "output": pair[1]}
                  for k, pair in enumerate(outputs) if pair is not None]
    sources = []
    for k in range(int(rng.integers(1, 3))):
        pair = voltage_pair(f"V{k}")
        if pair is not None:
            sources.append({"ref": f"V{k}", "kind": "voltage", "minus": pair[0],
                            "plus": pair[1]})
    a, b = rng.choice(n_nodes, 2, replace=False)
    sources.append({"ref": "I0", "kind": "current", "from": nodes[a], "to": nodes[b]})
    controllers = ([r["ref"] for r in resistors] + [s["ref"] for s in sources]
                   + [g["ref"] for g in regulators])
    controlled = []
    for k in range(n_controlled):
        kind = str(kinds[k] if kinds else rng.choice(KINDS))
        if kind in ("vcvs", "ccvs"):
            pair = voltage_pair(f"X{k}")
            if pair is None:
                kind = "vccs" if kind == "vcvs" else "cccs"
        if kind in ("vccs", "cccs"):
            f, t = rng.choice(n_nodes, 2, replace=False)
            out = {"from": nodes[f], "to": nodes[t]}
        else:
            out = {"minus": pair[0], "plus": pair[1]}
        if kind in ("vcvs", "vccs"):
            c1, c2 = rng.choice(n_nodes, 2, replace=False)
            control = [nodes[c1], nodes[c2]]
        else:
            control = str(rng.choice(controllers))
        controlled.append({"ref": f"X{k}", "kind": kind, **out, "control": control})
    for g in regulators:
        # a sense pair tied together by other voltage-defined branches could not move
        others = _Groups(n_nodes)
        for owner, a, b in held:
            if owner != g["ref"]:
                others.join(a, b)
        for _ in range(200):
            sense, reference = (int(x) for x in rng.choice(n_nodes, 2, replace=False))
            if others.root(sense) != others.root(reference):
                break
        g["sense"], g["reference"] = nodes[sense], nodes[reference]
    return {"resistor": resistors, "source": sources, "regulator": regulators,
            "controlled": controlled}


def fill(tables, data):
    """Draw every resistance, source value, setpoint and gain with hypothesis."""
    log_ohm = st.floats(2.0, 5.0)
    for r in tables["resistor"]:
        r["value"] = 10 ** data.draw(log_ohm)
    for s in tables["source"]:
        s["value"] = (data.draw(st.floats(-24.0, 24.0)) if s["kind"] == "voltage"
                      else data.draw(st.floats(-0.01, 0.01)))
    for g in tables["regulator"]:
        g["setpoint"] = data.draw(st.floats(0.5, 5.0))
    for c in tables["controlled"]:
        low, high = GAIN_RANGE[c["kind"]]
        c["gain"] = (data.draw(st.sampled_from([-1.0, 1.0]))
                     * 10 ** data.draw(st.floats(np.log10(low), np.log10(high))))
    return {key: value for key, value in tables.items() if value}


def solve(data, rows=3):
    """The design, its evaluator, resistances and per-row gains, mesh and nodal solutions."""
    design = design_from_dict(data)
    ev = Evaluator(design)
    base = np.array([r.value for r in design.resistors])
    # several candidates at once: the nominal values and random ones around them
    spread = 10 ** np.random.default_rng(len(base)).uniform(-0.5, 0.5, (rows - 1, len(base)))
    r = np.vstack([base, base * spread])
    src = ev.nominal_sources
    gains = None
    if src.gains is not None:
        varied = np.random.default_rng(7).uniform(0.5, 1.5, (rows - 1, len(src.gains)))
        gains = src.gains * np.vstack([np.ones(len(src.gains)), varied])
    try:
        ev.check_regulators(r)
    except (DesignError, np.linalg.LinAlgError):
        # a regulator that cannot move its sense node is refused, rightly (with two or
        # more regulators as a LinAlgError: see tests/circuit/test_measure.py)
        assume(False)
    sources = SourceValues(src.voltages, src.currents, src.setpoints, gains)
    result = ev.evaluate(r, sources)
    assume(np.all(np.isfinite(result.solution.node_voltages)))
    # a singular or near-singular draw (a loop gain of one, a gain of 1/R across its own
    # control) leaves the answer undetermined or amplifies rounding without bound: keep the
    # draws on which a 1e-9 change of every resistance and gain moves both solvers' answers
    # by less than 1e-6 of their size, so that rounding stays far below the 1e-9 compared
    # (singular designs should be refused: see tests/circuit/test_measure.py)
    jitter = np.random.default_rng(5)
    nudged_r = r * (1 + 1e-9 * jitter.uniform(-1, 1, r.shape))
    nudged_gains = None if gains is None else gains * (1 + 1e-9 * jitter.uniform(-1, 1,
                                                                                 gains.shape))
    nudged = ev.evaluate(nudged_r, SourceValues(src.voltages, src.currents, src.setpoints,
                                                nudged_gains))
    scale = max(float(np.abs(result.solution.node_voltages).max()),
                float(np.abs(result.solution.branch_currents).max() * r.max()), 1e-12)

    def moved(a, b):
        return max(float(np.abs(a.node_voltages - b.node_voltages).max()),
                   float(np.abs(a.branch_currents - b.branch_currents).max() * r.max()))

    assume(moved(nudged.solution, result.solution) < 1e-6 * scale)
    try:
        other = nodal_solve(ev.network, r, src.voltages, src.currents, src.setpoints,
                            gains=gains)
        other_nudged = nodal_solve(ev.network, nudged_r, src.voltages, src.currents,
                                   src.setpoints, gains=nudged_gains)
    except np.linalg.LinAlgError:
        assume(False)  # exactly singular
    assume(moved(other_nudged, other) < 1e-6 * scale)
    return design, ev, r, gains, result, other


def check_invariants(design, ev, r, gains, result, other):
    net = ev.network
    sol = result.solution
    ends = net.branch_ends
    n_r, n_v, n_i = len(net.resistor_refs), len(net.vsource_refs), len(net.isource_refs)
    src = ev.nominal_sources
    for k in range(len(r)):
        v, i = sol.node_voltages[k], sol.branch_currents[k]
        # a floor of 1 µA / 1 µV: a draw whose every current is float noise (all sources
        # near zero) is judged to 1e-15 absolute, not relative to the noise itself
        scale_i = max(float(np.abs(i).max()), 1e-6)
        scale_v = max(float(np.abs(v).max()), 1e-6)
        # Kirchhoff's current law at every node [HB-kcl-tellegen]
        net_out = np.zeros(len(net.nodes))
        np.add.at(net_out, ends[:, 0], i)
        np.add.at(net_out, ends[:, 1], -i)
        assert np.abs(net_out).max() <= 1e-9 * scale_i
        # Ohm's law in every resistor [HB-ohm]
        drop = v[ends[:n_r, 0]] - v[ends[:n_r, 1]]
        np.testing.assert_allclose(drop, i[:n_r] * r[k], rtol=1e-9, atol=1e-9 * scale_v)
        # independent sources and setpoints hold their values
        independent_v = [s for s, ref in enumerate(net.vsource_refs)
                         if ref not in {c.ref for c in net.controlled}]
        for s in independent_v:
            minus, plus = net.vsource_ends[s]
            assert v[plus] - v[minus] == pytest.approx(src.voltages[s], abs=1e-9 * scale_v)
        for g, (sense, reference) in enumerate(net.regulator_sense):
            assert v[sense] - v[reference] == pytest.approx(src.setpoints[g],
                                                            abs=1e-9 * scale_v)
            # the output a regulator reports is the voltage of the node it drives
            output = net.regulator_ends[g, 1]
            assert sol.regulator_outputs[k, g] == pytest.approx(v[output], abs=1e-9 * scale_v)
        # each controlled source gives gain x control [HB-controlled-sources]
        for c_k, c in enumerate(net.controlled):
            gain = c.gain if gains is None else gains[k, c_k]
            control = (v[c.control_nodes[0]] - v[c.control_nodes[1]]
                       if c.control_nodes is not None else i[c.control_branch])
            if c.voltage_output:
                minus, plus = net.vsource_ends[c.slot]
                assert v[plus] - v[minus] == pytest.approx(gain * control, abs=1e-9 * scale_v)
            else:
                assert i[n_r + n_v + c.slot] == pytest.approx(gain * control,
                                                              abs=1e-9 * scale_i)
        # Tellegen: the power every source delivers, controlled ones and regulators
        # included, is the power the resistors dissipate [HB-kcl-tellegen]
        dissipated = float((i[:n_r] ** 2 * r[k]).sum())
        across = v[ends[:, 1]] - v[ends[:, 0]]
        delivered = float((across[n_r:] * i[n_r:]).sum())
        largest = float(np.abs(across[n_r:] * i[n_r:]).max(initial=0.0))
        assert delivered == pytest.approx(dissipated, rel=1e-8, abs=1e-9 * largest + 1e-18)
        assert float(result.resistor_power[k].sum()) == pytest.approx(dissipated, rel=1e-12)
    assert n_i >= 1
    # the loop solve equals the independent nodal solve [HB-mna] [CALC-exact-nodal],
    # relative to the largest voltage, or current times resistance (all node voltages are
    # zero when the sources hold them so, while currents still flow)
    scale_v = max(float(np.abs(sol.node_voltages).max()),
                  float(np.abs(sol.branch_currents).max() * r.max()), 1e-300)
    np.testing.assert_allclose(other.node_voltages, sol.node_voltages, rtol=0,
                               atol=1e-9 * scale_v)
    np.testing.assert_allclose(other.regulator_outputs, sol.regulator_outputs, rtol=0,
                               atol=1e-9 * scale_v)
    scale_i = max(float(np.abs(sol.branch_currents).max()),
                  float(np.abs(sol.node_voltages).max() / r.max()), 1e-300)
    np.testing.assert_allclose(other.branch_currents, sol.branch_currents, rtol=0,
                               atol=1e-9 * scale_i)


LAYOUTS = {
    "one controlled source": (1, 0),
    "two controlled sources": (2, 0),
    "three controlled sources": (3, 0),
    "a regulator and a controlled source": (1, 1),
    "a regulator and two controlled sources": (2, 1),
    "two regulators and a controlled source": (1, 2),
}


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.filter_too_much])
@given(seed=st.integers(0, 2 ** 32 - 1), data=st.data())
@pytest.mark.parametrize("layout", list(LAYOUTS))
def test_random_networks_obey_kirchhoff_tellegen_and_match_nodal(layout, seed, data):
    n_controlled, n_regulators = LAYOUTS[layout]
    tables = random_topology(np.random.default_rng(seed), n_controlled, n_regulators)
    assume(len(tables["regulator"]) == n_regulators)
    check_invariants(*solve(fill(tables, data)))


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.filter_too_much])
@given(seed=st.integers(0, 2 ** 32 - 1), data=st.data())
@pytest.mark.parametrize("kinds", [("vcvs", "ccvs"), ("vccs", "cccs"), ("ccvs", "cccs"),
                                   ("vcvs", "vccs", "ccvs", "cccs")])
def test_every_kind_together(kinds, seed, data):
    tables = random_topology(np.random.default_rng(seed), len(kinds), 1, kinds=kinds)
    assume([c["kind"] for c in tables["controlled"]] == list(kinds))
    check_invariants(*solve(fill(tables, data)))


def amplifier_and_transistor(log_ohms, beta, open_loop_gain):
    """A divider-biased npn stage driven by a non-inverting amplifier stage."""
    r = [10 ** x for x in log_ohms]
    amplifier = {"ref": "A1", "plus": "in", "minus": "fb", "output": "drive"}
    if open_loop_gain is not None:
        amplifier["open_loop_gain"] = open_loop_gain
    return design_from_dict({
        "design": {"tolerance": "0%", "tcr": "0 ppm/C"},
        "source": [{"ref": "VCC", "kind": "voltage", "plus": "vcc", "minus": "gnd",
                    "value": "12 V"},
                   {"ref": "VIN", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "0.5 V"}],
        "resistor": [{"ref": "RF", "nodes": ["drive", "fb"], "value": r[0]},
                     {"ref": "RG", "nodes": ["fb", "gnd"], "value": r[1]},
                     {"ref": "RB", "nodes": ["drive", "b"], "value": r[2]},
                     {"ref": "RBE", "nodes": ["b", "gnd"], "value": r[3]},
                     {"ref": "RC", "nodes": ["vcc", "c"], "value": r[4]},
                     {"ref": "RE", "nodes": ["e", "gnd"], "value": r[5]}],
        "amplifier": [amplifier],
        "transistor": [{"ref": "Q1", "type": "npn", "collector": "c", "base": "b",
                        "emitter": "e", "beta": beta}],
    })


@settings(max_examples=40, deadline=None)
@given(log_ohms=st.lists(st.floats(2.0, 5.0), min_size=6, max_size=6),
       beta=st.floats(20.0, 500.0),
       open_loop_gain=st.one_of(st.none(), st.floats(1e2, 1e6)))
def test_amplifier_and_transistor_balance_power_in_the_report(log_ohms, beta,
                                                              open_loop_gain):
    design = amplifier_and_transistor(log_ohms, beta, open_loop_gain)
    result = check(design, verify=True)
    assert result.verify_difference < 1e-9  # loop and nodal solves agree [HB-mna]
    # the report's own rows: resistors dissipate what the supplies, the base-emitter
    # drop, the collector source and the amplifier's output deliver [HB-kcl-tellegen]
    dissipated = sum(p.power for p in result.parts if p.kind == "resistor")
    others = [p for p in result.parts if p.kind != "resistor"]
    assert {p.ref for p in others} >= {"VCC", "VIN", "Q1.BE", "Q1.C", "A1"}
    delivered = sum(p.power for p in others)
    largest = max(abs(p.power) for p in others)
    assert delivered == pytest.approx(dissipated, rel=1e-8, abs=1e-9 * largest)
    # the collector current is beta times the base current [HB-bjt-bias]; the BE drop
    # delivers minus the base current
    by_ref = {p.ref: p for p in result.parts}
    assert by_ref["Q1.C"].current == pytest.approx(beta * -by_ref["Q1.BE"].current,
                                                   rel=1e-9, abs=1e-15)


def test_string_of_eighteen_with_a_toleranced_supply_beyond_the_exact_limit():
    n = 18
    ohms = np.random.default_rng(3).choice([1e3, 2.2e3, 4.7e3, 10e3], n)
    tap = 11  # R0..R10 above the tap, R11..R17 below it
    nodes = ["in"] + [f"t{k}" for k in range(1, n)] + ["gnd"]
    design = design_from_dict({
        "design": {"tcr": "0 ppm/C"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V", "tolerance": "2%"}],
        "resistor": [{"ref": f"R{k}", "nodes": [nodes[k], nodes[k + 1]], "value": ohms[k],
                      "tolerance": "1%"} for k in range(n)],
        "target": [{"voltage": f"t{tap}", "equals": "3 V"}],
    })
    settings = SpreadSettings(samples=2000, seed=5, keep_samples=True)
    spread = analyse_spread(design, settings=settings)
    assert len(spread.variables) == n + 1 > EXACT_VARIABLES
    t = spread.targets[0]
    assert not t.exact
    # the output 10·(1 + s)·L/(U + L) rises with the supply and the lower resistors and
    # falls with the upper ones [HB-divider]; its extremes are the opposite corners
    upper, lower = ohms[:tap].sum(), ohms[tap:].sum()
    low = 10 * 0.98 * lower * 0.99 / (upper * 1.01 + lower * 0.99)
    high = 10 * 1.02 * lower * 1.01 / (upper * 0.99 + lower * 1.01)
    assert (t.worst_low, t.worst_high) == pytest.approx((low, high), rel=1e-9)
    assert t.high_corner == {"V1": "+", **{f"R{k}": "-" for k in range(tap)},
                             **{f"R{k}": "+" for k in range(tap, n)}}
    # a few hundred random points of the box lie between the extremes
    rng = np.random.default_rng(11)
    d = rng.uniform(-0.01, 0.01, (400, n))
    supply = 10 * (1 + rng.uniform(-0.02, 0.02, 400))
    r = ohms * (1 + d)
    sampled = supply * r[:, tap:].sum(axis=1) / r.sum(axis=1)
    assert np.all((t.worst_low <= sampled) & (sampled <= t.worst_high))
    assert np.all((t.worst_low <= t.mc_values) & (t.mc_values <= t.worst_high))
    # and the same points through rnsynth's own solve agree
    ev = Evaluator(design)
    src = ev.nominal_sources
    solved = ev.evaluate(r[:20], SourceValues(supply[:20, None], src.currents,
                                              src.setpoints)).targets[:, 0]
    np.testing.assert_allclose(solved, sampled[:20], rtol=1e-12)
