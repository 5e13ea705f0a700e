"""The batched loop-current solver, checked against outside references.

References: sympy exact rational solves of the textbook nodal equations
(tests/reference.py) [CALC-exact-nodal], networkx.resistance_distance
[LIB-networkx-resistance-distance], the Wheatstone balance condition
[HB-bridge] and loaded-divider formula [HB-loaded-divider] (handbook), exact
effective resistances of K5, K3,3, the Petersen graph and the cube
[CALC-effective-resistance].
"""

from __future__ import annotations

from fractions import Fraction

import networkx as nx
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from synth.circuit.measure import Evaluator
from synth.circuit.mesh import MeshSolver
from synth.circuit.network import build_network
from synth.circuit.nodal import nodal_solve
from synth.design.reader import design_from_dict

from reference import exact_nodal


def random_network(rng, n_nodes, n_resistors, n_v, n_i, values=None):
    """A connected random network as design dict + plain tuples for the reference."""
    nodes = ["gnd"] + [f"n{k}" for k in range(1, n_nodes)]
    pairs = []
    order = rng.permutation(n_nodes)
    for k in range(1, n_nodes):  # a random spanning tree keeps it connected
        pairs.append((nodes[order[k]], nodes[order[rng.integers(0, k)]]))
    while len(pairs) < n_resistors:
        a, b = rng.choice(n_nodes, 2, replace=False)
        pairs.append((nodes[a], nodes[b]))
    if values is None:
        values = [int(rng.integers(1, 1000)) * 10 ** int(rng.integers(0, 4)) for _ in pairs]
    resistors = [(a, b, v) for (a, b), v in zip(pairs, values, strict=True)]
    vsources, isources = [], []
    group = list(range(n_nodes))  # voltage sources must not close a loop among themselves

    def root(x):
        while group[x] != x:
            x = group[x]
        return x

    for _ in range(min(n_v, n_nodes - 1)):
        for _attempt in range(100):
            a, b = (int(x) for x in rng.choice(n_nodes, 2, replace=False))
            if root(a) != root(b):
                group[root(a)] = root(b)
                vsources.append((nodes[a], nodes[b], int(rng.integers(-20, 21))))
                break
    for _ in range(n_i):
        a, b = rng.choice(n_nodes, 2, replace=False)
        isources.append((nodes[a], nodes[b], Fraction(int(rng.integers(-50, 51)), 1000)))
    data = {
        "resistor": [{"ref": f"R{k}", "nodes": [a, b], "value": float(v)}
                     for k, (a, b, v) in enumerate(resistors)],
        "source": [{"ref": f"V{k}", "kind": "voltage", "plus": p, "minus": m, "value": float(v)}
                   for k, (p, m, v) in enumerate(vsources)]
        + [{"ref": f"I{k}", "kind": "current", "from": f, "to": t, "value": float(a)}
           for k, (f, t, a) in enumerate(isources)],
    }
    return nodes, resistors, vsources, isources, data


def solve_design(data):
    design = design_from_dict(data)
    ev = Evaluator(design)
    r = np.array([[r.value for r in design.resistors]])
    src = ev.nominal_sources
    return design, ev, ev.solver.solve(r, src.voltages, src.currents, src.setpoints)


@pytest.mark.parametrize("seed", range(12))
def test_matches_exact_rational_nodal_solve(seed):
    rng = np.random.default_rng(seed)
    nodes, resistors, vsources, isources, data = random_network(
        rng, n_nodes=int(rng.integers(3, 7)), n_resistors=int(rng.integers(4, 10)),
        n_v=int(rng.integers(0, 3)), n_i=int(rng.integers(0, 3)))
    if not vsources and not isources:
        isources.append(("gnd", nodes[1], Fraction(1, 100)))
        data["source"].append({"ref": "IX", "kind": "current", "from": "gnd", "to": nodes[1],
                               "value": 0.01})
    # the exact rational nodal solve, to a relative 1e-9 [CALC-exact-nodal]
    voltages, currents, delivered = exact_nodal(nodes, resistors, vsources, isources)
    _, ev, sol = solve_design(data)
    got_v = sol.node_voltages[0]
    want_v = np.array([float(voltages[n]) for n in ev.network.nodes])
    scale = max(np.abs(want_v).max(), 1e-12)
    np.testing.assert_allclose(got_v, want_v, rtol=1e-9, atol=1e-9 * scale)
    n_r = len(resistors)
    want_i = np.array([float(c) for c in currents])
    np.testing.assert_allclose(sol.branch_currents[0, :n_r], want_i, rtol=1e-9,
                               atol=1e-9 * max(np.abs(want_i).max(), 1e-15))
    n_v = len(vsources)
    np.testing.assert_allclose(sol.branch_currents[0, n_r:n_r + n_v],
                               [float(d) for d in delivered], rtol=1e-9, atol=1e-12)


def test_one_ohm_next_to_ten_megohm():
    # mesh vs nodal [HB-mna] and vs the exact solve [CALC-exact-nodal] on a network mixing
    # 1 ohm and 10 Mohm
    rng = np.random.default_rng(7)
    for _ in range(5):
        values = [int(v) for v in rng.choice([1, 10_000_000], size=9)]
        nodes, resistors, vsources, isources, data = random_network(
            rng, 5, 9, n_v=1, n_i=1, values=values)
        voltages, currents, _ = exact_nodal(nodes, resistors, vsources, isources)
        design, ev, sol = solve_design(data)
        want = np.array([float(voltages[n]) for n in ev.network.nodes])
        np.testing.assert_allclose(sol.node_voltages[0], want, rtol=1e-9,
                                   atol=1e-9 * np.abs(want).max())
        want_i = np.array([float(c) for c in currents])
        np.testing.assert_allclose(sol.branch_currents[0, :9], want_i, rtol=1e-9,
                                   atol=1e-9 * np.abs(want_i).max())
        other = nodal_solve(ev.network, [[r.value for r in design.resistors]],
                            ev.nominal_sources.voltages, ev.nominal_sources.currents)
        np.testing.assert_allclose(sol.node_voltages, other.node_voltages, rtol=1e-9,
                                   atol=1e-9 * np.abs(want).max())


def graph_design(graph):
    nodes = {n: ("gnd" if k == 0 else f"n{n}") for k, n in enumerate(graph.nodes)}
    return design_from_dict({"resistor": [
        {"ref": f"R{k}", "nodes": [nodes[a], nodes[b]], "value": float(d.get("weight", 1.0))}
        for k, (a, b, d) in enumerate(graph.edges(data=True))]}), nodes


def seen(graph, a, b):
    design, names = graph_design(graph)
    ev = Evaluator(design)
    r = np.array([[r.value for r in design.resistors]])
    return float(ev.seen_resistance(r, names[a], names[b])[0])


@pytest.mark.parametrize(("graph", "a", "b", "exact"), [
    # exact effective resistances with unit resistors [CALC-effective-resistance]
    (nx.complete_graph(5), 0, 3, Fraction(2, 5)),
    (nx.complete_bipartite_graph(3, 3), 0, 3, Fraction(5, 9)),  # non-planar, across the sides
    (nx.complete_bipartite_graph(3, 3), 0, 1, Fraction(2, 3)),  # within a side
    (nx.petersen_graph(), 0, 1, Fraction(3, 5)),  # non-planar, adjacent
    (nx.petersen_graph(), 0, 2, Fraction(4, 5)),
    (nx.hypercube_graph(3), (0, 0, 0), (0, 0, 1), Fraction(7, 12)),  # cube edge
    (nx.hypercube_graph(3), (0, 0, 0), (0, 1, 1), Fraction(3, 4)),  # face diagonal
    (nx.hypercube_graph(3), (0, 0, 0), (1, 1, 1), Fraction(5, 6)),  # body diagonal
    # networkx's documented example: R(1,3) = 0.625 = 5/8 [LIB-networkx-resistance-distance]
    (nx.Graph([(1, 2), (1, 3), (1, 4), (3, 4), (3, 5), (4, 5)]), 1, 3, Fraction(5, 8)),
])
def test_effective_resistance_exact_graphs(graph, a, b, exact):
    assert seen(graph, a, b) == pytest.approx(float(exact), rel=1e-12)
    assert nx.resistance_distance(graph, a, b) == pytest.approx(float(exact), rel=1e-9)


@pytest.mark.parametrize("seed", range(8))
def test_effective_resistance_matches_networkx_on_random_graphs(seed):
    rng = np.random.default_rng(100 + seed)
    graph = nx.gnm_random_graph(8, 16, seed=seed)
    while not nx.is_connected(graph):
        graph.add_edge(*rng.choice(8, 2, replace=False))
    for a, b in graph.edges:
        graph[a][b]["weight"] = float(10 ** rng.uniform(0, 6))
    a, b = 0, 5
    # networkx reads the weight as a resistance here [LIB-networkx-resistance-distance]
    assert seen(graph, a, b) == pytest.approx(
        nx.resistance_distance(graph, a, b, weight="weight", invert_weight=True), rel=1e-9)
    # Foster's theorem: sum over edges of R_eff / r = n - 1 [HB-foster]
    design, _ = graph_design(graph)
    ev = Evaluator(design)
    r = np.array([[res.value for res in design.resistors]])
    total = sum(float(ev.seen_resistance(r, res.nodes[0], res.nodes[1])[0]) / res.value
                for res in design.resistors)
    assert total == pytest.approx(graph.number_of_nodes() - 1, rel=1e-9)


def bridge(r1, r2, r3, r4, r5, supply=10.0):
    return {
        "source": [{"ref": "V1", "kind": "voltage", "plus": "top", "minus": "gnd",
                    "value": supply}],
        "resistor": [
            {"ref": "R1", "nodes": ["top", "a"], "value": r1},
            {"ref": "R2", "nodes": ["top", "b"], "value": r2},
            {"ref": "R3", "nodes": ["a", "gnd"], "value": r3},
            {"ref": "R4", "nodes": ["b", "gnd"], "value": r4},
        ] + ([] if r5 is None else [{"ref": "R5", "nodes": ["a", "b"], "value": r5}]),
    }


def test_wheatstone_balance():
    # balanced when R1*R4 = R2*R3: no current in the detector arm (handbook) [HB-bridge]
    _, ev, sol = solve_design(bridge(1000.0, 2200.0, 4700.0, 10340.0, 470.0))
    assert abs(sol.branch_currents[0, 4]) < 1e-15
    v = dict(zip(ev.network.nodes, sol.node_voltages[0], strict=True))
    assert v["a"] == pytest.approx(v["b"], abs=1e-12)


def test_five_resistor_bridge_against_exact_solve():
    values = (1000, 2200, 3300, 4700, 680)
    nodes = ["gnd", "top", "a", "b"]
    resistors = [("top", "a", 1000), ("top", "b", 2200), ("a", "gnd", 3300),
                 ("b", "gnd", 4700), ("a", "b", 680)]
    # the exact rational nodal solve [CALC-exact-nodal]
    voltages, currents, delivered = exact_nodal(nodes, resistors, [("top", "gnd", 10)])
    _, ev, sol = solve_design(bridge(*map(float, values)))
    v = dict(zip(ev.network.nodes, sol.node_voltages[0], strict=True))
    for n in ("a", "b"):
        assert v[n] == pytest.approx(float(voltages[n]), rel=1e-12)
    assert sol.branch_currents[0, 4] == pytest.approx(float(currents[4]), rel=1e-10)
    assert sol.branch_currents[0, 5] == pytest.approx(float(delivered[0]), rel=1e-12)


def test_quarter_bridge_output():
    # V = Vs * dR / (4R + 2dR): 10 V, 1 kohm, dR = 10 ohm gives 24.876 mV [HB-bridge]
    _, ev, sol = solve_design(bridge(1000.0, 1000.0, 1010.0, 1000.0, None))
    v = dict(zip(ev.network.nodes, sol.node_voltages[0], strict=True))
    assert v["a"] - v["b"] == pytest.approx(10 * 10 / (4 * 1000 + 2 * 10), rel=1e-9)
    assert v["a"] - v["b"] == pytest.approx(24.876e-3, abs=5e-7)


def test_loaded_divider():
    # Vin * (R2 || RL) / (R1 + R2 || RL): 12 V, 10k/10k/10k gives 4.000 V [HB-loaded-divider]
    data = {
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"},
                     {"ref": "RL", "nodes": ["out", "gnd"], "value": "10k"}],
    }
    _, ev, sol = solve_design(data)
    assert sol.node_voltages[0, ev.node_index["out"]] == pytest.approx(4.0, rel=1e-14)
    r = np.array([[10e3, 10e3, 10e3]])
    assert ev.seen_resistance(r, "out", "gnd")[0] == pytest.approx(10e3 / 3, rel=1e-12)


def test_batched_candidates_match_one_by_one_and_chunking_is_invisible():
    rng = np.random.default_rng(3)
    _, _, _, _, data = random_network(rng, 6, 10, n_v=2, n_i=2)
    design = design_from_dict(data)
    ev = Evaluator(design)
    r = 10 ** rng.uniform(1, 6, size=(257, 10))
    src = ev.nominal_sources
    whole = ev.solver.solve(r, src.voltages, src.currents)
    small = ev.solver.solve(r, src.voltages, src.currents, chunk=10)
    np.testing.assert_array_equal(whole.node_voltages, small.node_voltages)
    for k in (0, 100, 256):
        one = ev.solver.solve(r[k], src.voltages, src.currents)
        np.testing.assert_allclose(one.node_voltages[0], whole.node_voltages[k], rtol=1e-13,
                                   atol=1e-13 * np.abs(whole.node_voltages[k]).max())
    # per-candidate source values
    volts = rng.uniform(-5, 5, size=(257, 2))
    each = ev.solver.solve(r, volts, src.currents)
    one = ev.solver.solve(r[5], volts[5], src.currents)
    np.testing.assert_allclose(each.node_voltages[5], one.node_voltages[0], rtol=1e-12, atol=1e-12)


def test_feedback_networks_with_pin_current():
    # three-terminal adjustable regulator: V = Vref (1 + R1/R2) + I_adj R1, R2 OUT-ADJ,
    # R1 ADJ-ground; 1.25 V, 50 uA, 240/390 gives 3.30075 V, 240/720 gives 5.036 V
    # [HB-regulator-adj]
    for r1, expected in ((390.0, 3.30075), (720.0, 5.036)):
        data = {
            "regulator": [{"ref": "U1", "output": "out", "sense": "out", "reference": "adj",
                           "setpoint": "1.25 V"}],
            "source": [{"ref": "IADJ", "kind": "current", "from": "gnd", "to": "adj",
                        "value": "50 uA"}],
            "resistor": [{"ref": "R2", "nodes": ["out", "adj"], "value": 240.0},
                         {"ref": "R1", "nodes": ["adj", "gnd"], "value": r1}],
        }
        _, ev, sol = solve_design(data)
        assert sol.node_voltages[0, ev.node_index["out"]] == pytest.approx(expected, rel=1e-12)
        assert sol.regulator_outputs[0, 0] == pytest.approx(expected, rel=1e-12)
    # feedback-pin regulator: V = Vref (1 + Rtop/Rbottom) + I Rtop [CP-regulator-fb]
    data = {
        "regulator": [{"ref": "U1", "output": "out", "sense": "fb", "reference": "gnd",
                       "setpoint": "0.8 V"}],
        "source": [{"ref": "IFB", "kind": "current", "from": "fb", "to": "gnd",
                    "value": "0.1 uA"}],
        "resistor": [{"ref": "RT", "nodes": ["out", "fb"], "value": 102e3},
                     {"ref": "RB", "nodes": ["fb", "gnd"], "value": 32.4e3},
                     {"ref": "RL", "nodes": ["out", "gnd"], "value": 100.0}],
    }
    _, ev, sol = solve_design(data)
    assert sol.node_voltages[0, ev.node_index["out"]] == pytest.approx(
        0.8 * (1 + 102e3 / 32.4e3) + 0.1e-6 * 102e3, rel=1e-12)


@settings(max_examples=40, deadline=None)
@given(st.integers(min_value=0, max_value=10**6))
def test_kirchhoff_current_law_and_power_balance(seed):
    rng = np.random.default_rng(seed)
    _, _, _, _, data = random_network(rng, int(rng.integers(2, 8)), int(rng.integers(2, 12)),
                                      n_v=int(rng.integers(0, 3)), n_i=int(rng.integers(1, 3)))
    design = design_from_dict(data)
    ev = Evaluator(design)
    net = ev.network
    r = 10 ** rng.uniform(0, 7, size=(4, len(design.resistors)))
    src = ev.nominal_sources
    sol = ev.solver.solve(r, src.voltages, src.currents)
    ends = net.branch_ends
    for k in range(4):
        currents = sol.branch_currents[k]
        net_out = np.zeros(len(net.nodes))
        np.add.at(net_out, ends[:, 0], currents)
        np.add.at(net_out, ends[:, 1], -currents)
        scale = max(np.abs(currents).max(), 1e-300)
        # Kirchhoff's current law at every node, then Tellegen's power balance [HB-kcl-tellegen]
        assert np.abs(net_out).max() <= 1e-9 * scale
        v = sol.node_voltages[k]
        n_r = len(net.resistor_refs)
        dissipated = float((currents[:n_r] ** 2 * r[k]).sum())
        # a source delivering current i out of its plus (or into `to`) at voltage u delivers u*i
        across = v[ends[:, 1]] - v[ends[:, 0]]
        delivered = float((across[n_r:] * currents[n_r:]).sum())
        assert delivered == pytest.approx(dissipated, rel=1e-8, abs=1e-15)
    assert isinstance(MeshSolver(build_network(design)).loop_count, int)


@pytest.mark.parametrize(("ohms", "current_source"), [
    (1e308, 0.0), (1.7e308, 0.0), (1e300, 0.0), (1e-300, 0.0), (1e308, 1e-308),
])
def test_resistances_near_the_float_limits_are_solved_per_unit(ohms, current_source):
    # 10 V across R + R: 5 V at the tap [HB-divider], 10 V / 2R through both [HB-ohm];
    # a current source J into the tap adds J·R/2 there; solved unscaled, R + R
    # overflows (1e308 + 1e308 = inf) and every voltage but the source's came out 0 V
    net = build_network(design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": 10.0},
                   {"ref": "J1", "kind": "current", "from": "gnd", "to": "out",
                    "value": current_source}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": ohms},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": ohms}]}))
    expected = 5.0 + current_source * ohms / 2
    for solution in (MeshSolver(net).solve([[ohms, ohms]], voltages=[10.0],
                                           currents=[current_source]),
                     nodal_solve(net, [[ohms, ohms]], voltages=[10.0],
                                 currents=[current_source])):
        out = solution.node_voltages[0, net.nodes.index("out")]
        assert out == pytest.approx(expected, rel=1e-14)
        assert solution.branch_currents[0, 0] == pytest.approx(
            (10.0 - expected) / ohms, rel=1e-14)


def test_ordinary_blocks_are_solved_as_they_are():
    from synth.circuit.kernels import resistance_scale

    # no scaling at all unless a resistance lies beyond about 1e180 ohm (or all below
    # 1e-181): the everyday solve is bit for bit what it was
    assert resistance_scale(np.array([[1.0, 1e15], [1e-3, 1e170]])) is None
    scale = resistance_scale(np.array([[1e3, 1e308], [1e3, 1.0]]))
    assert scale is not None and scale[0] == 1.0 and np.log2(scale[1]) == 524


def _bridge_regulator(controlled):
    """U1 holds V(a) - V(b) = 1 V across the diagonal of a bridge it drives from `out`;
    with `controlled`, E1 gives V(c) = 2 (V(a) - V(b)) into R5."""
    tables = {
        "resistor": [{"ref": "R1", "nodes": ["out", "a"], "value": "1k"},
                     {"ref": "R2", "nodes": ["a", "gnd"], "value": "1k"},
                     {"ref": "R3", "nodes": ["out", "b"], "value": "1k"},
                     {"ref": "R4", "nodes": ["b", "gnd"], "value": "1k"},
                     {"ref": "R5", "nodes": ["c", "gnd"], "value": "1k"}],
        "regulator": [{"ref": "U1", "output": "out", "sense": "a", "reference": "b",
                       "setpoint": "1 V"}]}
    if controlled:
        tables["controlled"] = [{"ref": "E1", "kind": "vcvs", "plus": "c", "minus": "gnd",
                                 "control": ["a", "b"], "gain": 2}]
    return design_from_dict(tables)


@pytest.mark.parametrize("controlled", [False, True])
def test_a_regulator_facing_a_balanced_bridge_has_no_solution_and_no_warning(controlled):
    import warnings

    from synth.circuit.measure import Evaluator

    design = _bridge_regulator(controlled)
    ev = Evaluator(design)
    src = ev.nominal_sources
    # a balanced bridge: the output cannot move V(a) - V(b); with R2 = 2k it can:
    # V(a) - V(b) = V(out) (2/3 - 1/2) = 1 V needs 6 V [HB-divider]
    r = np.array([[1e3, 1e3, 1e3, 1e3, 1e3], [1e3, 2e3, 1e3, 1e3, 1e3]])
    with warnings.catch_warnings():
        warnings.simplefilter("error", RuntimeWarning)
        sol = ev.solver.solve(r, src.voltages, src.currents, src.setpoints, gains=src.gains)
    driven = [ev.node_index[name] for name in ("out", "a", "b")]
    assert np.isnan(sol.regulator_outputs[0]).all() and np.isnan(sol.node_voltages[0, driven]).all()
    volts = dict(zip(ev.node_index, sol.node_voltages[1], strict=True))
    assert volts["out"] == pytest.approx(6.0) and volts["a"] - volts["b"] == pytest.approx(1.0)
    if controlled:
        assert volts["c"] == pytest.approx(2.0)
