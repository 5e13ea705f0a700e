"""The sparse supernodal solver, checked against outside references and the dense loop solve.

References: sympy exact rational solves of the textbook nodal equations
(tests/reference.py) [CALC-exact-nodal]; networkx.resistance_distance
[LIB-networkx-resistance-distance]; Kirchhoff's current law and the power
balance [HB-kcl-tellegen]; the adjustable regulator's output formula
[HB-regulator-adj]; controlled sources [HB-controlled-sources]; the dense loop
solve of synth.circuit.mesh (the cotree method [HB-mesh]), an independent
formulation whose agreement to 1e-9 the issue asks of the sparse path.
"""

from __future__ import annotations

import sys
from fractions import Fraction
from pathlib import Path

import networkx as nx
import numpy as np
import pytest

from synth.circuit.controlled import ControlledSolver
from synth.circuit.measure import Evaluator
from synth.circuit.mesh import MeshSolver
from synth.circuit.network import Network, build_network
from synth.circuit.solvers import network_solver
from synth.circuit.sparse import SPARSE_ABOVE, SparseSolver
from synth.design.reader import design_from_dict

from reference import exact_nodal

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "benchmarks"))
from large_network import grid_tables  # the benchmark's own grid generator


def _relative(a: np.ndarray, b: np.ndarray) -> float:
    return float(np.abs(a - b).max() / max(np.abs(b).max(), 1e-300))


def _grid(resistors: int) -> tuple[Evaluator, np.ndarray]:
    design = design_from_dict(grid_tables(resistors))
    ev = Evaluator(design)
    return ev, np.array([r.value for r in design.resistors], dtype=float)


def _random_network(rng: np.random.Generator, n_nodes: int, n_resistors: int):
    """A connected network with a floating voltage source and a current source."""
    nodes = ["gnd"] + [f"n{k}" for k in range(1, n_nodes)]
    pairs = [(nodes[k], nodes[int(rng.integers(0, k))]) for k in range(1, n_nodes)]
    while len(pairs) < n_resistors:
        a, b = rng.choice(n_nodes, 2, replace=False)
        pairs.append((nodes[a], nodes[b]))
    resistors = [(a, b, int(rng.integers(1, 1000)) * 10 ** int(rng.integers(0, 4)))
                 for a, b in pairs]
    vsources = [("n1", "gnd", 12), (nodes[3], nodes[2], -5)]  # the second floats
    isources = [(nodes[4], nodes[1], Fraction(3, 1000))]
    data = {
        "resistor": [{"ref": f"R{k}", "nodes": [a, b], "value": float(v)}
                     for k, (a, b, v) in enumerate(resistors)],
        "source": [{"ref": f"V{k}", "kind": "voltage", "plus": p, "minus": m, "value": float(v)}
                   for k, (p, m, v) in enumerate(vsources)]
        + [{"ref": "I0", "kind": "current", "from": f, "to": t, "value": float(a)}
           for f, t, a in isources],
    }
    return nodes, resistors, vsources, isources, data


@pytest.mark.parametrize("seed", range(8))
def test_matches_exact_rational_nodal_solve(seed):
    rng = np.random.default_rng(seed)
    nodes, resistors, vsources, isources, data = _random_network(rng, 7, 12)
    # exact rational solve of the same network, to a relative 1e-9 [CALC-exact-nodal]
    voltages, currents, delivered = exact_nodal(nodes, resistors, vsources, isources)
    design = design_from_dict(data)
    ev = Evaluator(design)
    src = ev.nominal_sources
    sol = SparseSolver(ev.network).solve([[r.value for r in design.resistors]],
                                         src.voltages, src.currents, src.setpoints)
    want_v = np.array([float(voltages[n]) for n in ev.network.nodes])
    np.testing.assert_allclose(sol.node_voltages[0], want_v, rtol=1e-9,
                               atol=1e-9 * np.abs(want_v).max())
    n_r = len(resistors)
    want_i = np.array([float(c) for c in currents])
    np.testing.assert_allclose(sol.branch_currents[0, :n_r], want_i, rtol=1e-9,
                               atol=1e-9 * np.abs(want_i).max())
    # a voltage source's current as delivered (out of plus)
    np.testing.assert_allclose(sol.branch_currents[0, n_r:n_r + 2],
                               [float(d) for d in delivered], rtol=1e-9, atol=1e-12)
    assert sol.branch_currents[0, n_r + 2] == pytest.approx(0.003)


@pytest.mark.parametrize("resistors", [SPARSE_ABOVE - 4, SPARSE_ABOVE + 1, SPARSE_ABOVE + 20])
def test_same_numbers_as_the_dense_solve_around_the_threshold(resistors):
    # the dense loop solve [HB-mesh] and the sparse one agree to 1e-9 relative: at nominal,
    # across a tolerance box (the iterated path) and far from it (factored alone)
    ev, r0 = _grid(resistors)
    rng = np.random.default_rng(resistors)
    block = r0 * (1 + 0.02 * rng.uniform(-1, 1, (300, len(r0))))
    block[:3] = r0 * rng.uniform(0.05, 20, (3, len(r0)))
    block[3] = r0
    src = ev.nominal_sources
    dense = MeshSolver(ev.network, r0).solve(block, src.voltages, src.currents)
    sparse = SparseSolver(ev.network)
    got = sparse.solve(block, src.voltages, src.currents)
    assert _relative(got.node_voltages, dense.node_voltages) < 1e-9
    assert _relative(got.branch_currents, dense.branch_currents) < 1e-9
    each = np.abs(got.branch_currents - dense.branch_currents) / np.abs(dense.branch_currents)
    assert float(each.max()) < 1e-9  # every current, not only the largest
    assert sparse.iterations > 0  # the tolerance box went through the iteration
    assert sparse.factorizations >= 4  # the three far candidates were factored alone


def test_small_chunks_give_the_same_numbers():
    ev, r0 = _grid(80)
    rng = np.random.default_rng(3)
    block = r0 * (1 + 0.01 * rng.uniform(-1, 1, (40, len(r0))))
    src = ev.nominal_sources
    solver = SparseSolver(ev.network)
    whole = solver.solve(block, src.voltages, src.currents)
    pieces = solver.solve(block, src.voltages, src.currents, chunk=7)
    # the same equations to rounding, whatever the blocks [HB-kcl-tellegen]
    assert _relative(pieces.node_voltages, whole.node_voltages) < 1e-12


def test_grid_resistance_matches_networkx():
    # the seen resistance of a grid above the threshold, solved sparse automatically,
    # against networkx.resistance_distance [LIB-networkx-resistance-distance]
    tables = grid_tables(300)
    design = design_from_dict(tables)
    ev = Evaluator(design)
    assert isinstance(ev.solver, SparseSolver)
    graph = nx.Graph()
    for r in design.resistors:
        graph.add_edge(*r.nodes, weight=r.value)
    # the seen resistance shorts the voltage source: its two nodes are one
    source = tables["source"][0]
    graph = nx.contracted_nodes(graph, source["minus"], source["plus"], self_loops=False)
    r0 = np.array([[r.value for r in design.resistors]])
    for a, b in (("gnd", "n1_1"), ("n3_4", "n9_2"), ("n12_11", "n6_6")):
        want = nx.resistance_distance(graph, a, b, weight="weight", invert_weight=True)
        assert ev.seen_resistance(r0, a, b)[0] == pytest.approx(want, rel=1e-9)


def test_kirchhoff_current_law_and_power_balance():
    # at every node the branch currents sum to zero, and the sources deliver what the
    # resistors dissipate [HB-kcl-tellegen]
    ev, r0 = _grid(200)
    rng = np.random.default_rng(5)
    block = r0 * (1 + 0.05 * rng.uniform(-1, 1, (20, len(r0))))
    src = ev.nominal_sources
    sol = SparseSolver(ev.network).solve(block, src.voltages, src.currents)
    ends = ev.network.branch_ends
    incidence = np.zeros((len(ev.network.nodes), len(ends)))
    incidence[ends[:, 0], np.arange(len(ends))] += 1.0
    incidence[ends[:, 1], np.arange(len(ends))] -= 1.0
    law = sol.branch_currents @ incidence.T
    assert np.abs(law).max() < 1e-12 * np.abs(sol.branch_currents).max()
    n_r = len(r0)
    dissipated = (sol.branch_currents[:, :n_r] ** 2 * block).sum(axis=1)
    delivered = sol.branch_currents[:, n_r] * src.voltages[0]
    np.testing.assert_allclose(delivered, dissipated, rtol=1e-10)


def test_regulator_output_and_determinant():
    # adjustable regulator: V = Vref (1 + R1/R2) + I_adj R1 [HB-regulator-adj], with a
    # long resistive load beside it (a chain of 70 resistors) so the sparse path runs
    chain = [{"ref": f"RL{k}", "nodes": [f"l{k}", f"l{k + 1}" if k < 69 else "gnd"],
              "value": 100.0} for k in range(70)]
    chain[0]["nodes"][0] = "out"
    data = {
        "regulator": [{"ref": "U1", "output": "out", "sense": "out", "reference": "adj",
                       "setpoint": "1.25 V"}],
        "source": [{"ref": "IADJ", "kind": "current", "from": "gnd", "to": "adj",
                    "value": "50 uA"}],
        "resistor": [{"ref": "R2", "nodes": ["out", "adj"], "value": 240.0},
                     {"ref": "R1", "nodes": ["adj", "gnd"], "value": 390.0}, *chain],
    }
    design = design_from_dict(data)
    ev = Evaluator(design)
    assert isinstance(ev.solver, SparseSolver)
    r0 = np.array([r.value for r in design.resistors])
    rng = np.random.default_rng(2)
    block = np.vstack([r0, r0 * (1 + 0.01 * rng.uniform(-1, 1, (9, len(r0))))])
    src = ev.nominal_sources
    got = ev.solver.solve(block, src.voltages, src.currents, src.setpoints)
    assert got.regulator_outputs[0, 0] == pytest.approx(1.25 * (1 + 390 / 240) + 50e-6 * 390,
                                                        rel=1e-12)
    dense = MeshSolver(ev.network, r0).solve(block, src.voltages, src.currents, src.setpoints)
    assert _relative(got.node_voltages, dense.node_voltages) < 1e-9
    assert _relative(got.branch_currents, dense.branch_currents) < 1e-9
    # the determinant keeps one sign over the box, as the dense one does
    assert got.regulator_determinant is not None
    assert np.all(np.sign(got.regulator_determinant) == np.sign(got.regulator_determinant[0]))
    assert np.all(got.regulator_determinant != 0)


def test_regulator_that_cannot_move_its_sense_node_gives_nan():
    # the sense node is tied to ground by a source: the output sets nothing
    net = Network(origin="", nodes=("gnd", "out", "s"), resistor_refs=("R1", "R2"),
                  resistor_ends=np.array([[1, 0], [2, 0]]), vsource_refs=("V1",),
                  vsource_ends=np.array([[0, 2]]), isource_refs=(),
                  isource_ends=np.zeros((0, 2), int), regulator_refs=("U1",),
                  regulator_ends=np.array([[0, 1]]), regulator_sense=np.array([[2, 0]]))
    sol = SparseSolver(net).solve([[1e3, 1e3]], [1.0], None, [0.5])
    assert np.isnan(sol.regulator_outputs[0, 0])
    assert sol.regulator_determinant is not None and sol.regulator_determinant[0] == 0


def test_controlled_sources_around_the_sparse_solve():
    # a VCVS of gain 3 buffering a divider [HB-controlled-sources], a grid hung on its
    # output: the sparse and dense superpositions agree
    tables = grid_tables(80)
    tables["source"][0]["value"] = "2 V"
    tables["controlled"] = [{"ref": "E1", "kind": "vcvs", "plus": "buf", "minus": "gnd",
                             "control": ["n1_1", "gnd"], "gain": 3}]
    tables["resistor"].append({"ref": "RB", "nodes": ["buf", "n2_2"], "value": "1k"})
    design = design_from_dict(tables)
    network = build_network(design)
    r0 = np.array([[r.value for r in design.resistors]])
    ev = Evaluator(design)
    assert isinstance(ev.solver, ControlledSolver)
    assert isinstance(ev.solver.inner, SparseSolver)
    src = ev.nominal_sources
    got = ev.solver.solve(r0, src.voltages, src.currents, src.setpoints)
    dense = ControlledSolver(network, r0[0]).solve(r0, src.voltages, src.currents,
                                                   src.setpoints)
    assert _relative(got.node_voltages, dense.node_voltages) < 1e-9
    v = got.node_voltages[0]
    assert v[ev.node_index["buf"]] == pytest.approx(3 * v[ev.node_index["n1_1"]], rel=1e-12)


def test_the_choice_of_solver():
    small, _ = _grid(SPARSE_ABOVE - 4)
    large, _ = _grid(SPARSE_ABOVE + 20)
    assert len(small.network.resistor_refs) <= SPARSE_ABOVE
    assert isinstance(small.solver, MeshSolver)
    assert isinstance(large.solver, SparseSolver)
    assert isinstance(network_solver(small.network, sparse=True), SparseSolver)
    forced = network_solver(large.network, sparse=False)
    assert isinstance(forced, MeshSolver)
    # both count the same independent loops (b - n + 1 less the tied branches) [HB-mesh]
    assert large.solver.loop_count == forced.loop_count


def test_refused_input():
    ev, r0 = _grid(80)
    solver = SparseSolver(ev.network)
    with pytest.raises(ValueError, match="expected shape"):
        solver.solve([r0[:-1]], [5.0])
    with pytest.raises(ValueError, match="no controlled sources"):
        solver.solve([r0], [5.0], gains=[1.0])
    looped = Network(origin="", nodes=("gnd", "a"), resistor_refs=("R1",),
                     resistor_ends=np.array([[1, 0]]), vsource_refs=("V1", "V2"),
                     vsource_ends=np.array([[0, 1], [0, 1]]), isource_refs=(),
                     isource_ends=np.zeros((0, 2), int))
    with pytest.raises(ValueError, match="topology"):
        SparseSolver(looped)


def test_network_of_voltage_sources_only_between_its_nodes():
    # every node tied to ground by sources: nothing to factor, Ohm's law only
    net = Network(origin="", nodes=("gnd", "a", "b"), resistor_refs=("R1",),
                  resistor_ends=np.array([[1, 2]]), vsource_refs=("V1", "V2"),
                  vsource_ends=np.array([[0, 1], [2, 1]]), isource_refs=(),
                  isource_ends=np.zeros((0, 2), int))
    sol = SparseSolver(net).solve([[1e3]], [10.0, 4.0])
    # V(a) = 10, V(a) - V(b) = 4: 4 mA through R1 [CALC-exact-nodal]
    voltages, currents, delivered = exact_nodal(["gnd", "a", "b"], [("a", "b", 1000)],
                                                [("a", "gnd", 10), ("a", "b", 4)])
    assert sol.node_voltages[0].tolist() == pytest.approx(
        [float(voltages[n]) for n in ("gnd", "a", "b")])
    assert sol.branch_currents[0].tolist() == pytest.approx(
        [float(currents[0]), *(float(d) for d in delivered)])


def test_dependent_regulators_are_named_on_a_large_network():
    # two regulators holding the same sense node: the network's equations are singular
    # (no unique outputs) [HB-mna], and both are named
    from synth.errors import DesignError

    chain = [{"ref": f"RL{k}", "nodes": [f"l{k}", f"l{k + 1}" if k < 69 else "gnd"],
              "value": 100.0} for k in range(70)]
    chain[0]["nodes"][0] = "fb"
    data = {
        "regulator": [{"ref": "U1", "output": "o1", "sense": "fb", "reference": "gnd",
                       "setpoint": "1.25 V"},
                      {"ref": "U2", "output": "o2", "sense": "fb", "reference": "gnd",
                       "setpoint": "1.25 V"}],
        "resistor": [{"ref": "RA", "nodes": ["o1", "fb"], "value": 1e3},
                     {"ref": "RB", "nodes": ["o2", "fb"], "value": 1e3}, *chain],
    }
    design = design_from_dict(data)
    ev = Evaluator(design)
    assert isinstance(ev.solver, SparseSolver)
    with pytest.raises(DesignError,
                       match="regulators U1, U2 set sense voltages that depend on each other"):
        ev.check_regulators(np.array([r.value for r in design.resistors]))
    assert ev.solver.last_regulator_system.shape == (1, 2, 2)



@pytest.mark.parametrize("ohms", [1e308, 1.7e308, 1e300, 1e-300])
def test_resistances_near_the_float_limits_are_solved_per_unit(ohms):
    # 7 V across a string of 70 equal resistors: the tap after 35 of them sits at 3.5 V
    # [HB-divider] and 7 V / (70 R) flows through each [HB-ohm].  Unscaled, the conductances
    # of 1e308 ohm are subnormal and the tap came out at infinity: the sparse solve takes the
    # loop solve's per-unit form.
    n = 70
    net = build_network(design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "n0", "minus": "gnd",
                    "value": 7.0}],
        "resistor": [{"ref": f"R{k}", "nodes": [f"n{k}", f"n{k + 1}" if k < n - 1 else "gnd"],
                      "value": ohms} for k in range(n)]}))
    solution = SparseSolver(net).solve([[ohms] * n], voltages=[7.0])
    assert solution.node_voltages[0, net.nodes.index("n35")] == pytest.approx(3.5, rel=1e-12)
    assert solution.branch_currents[0, 0] == pytest.approx(7.0 / (n * ohms), rel=1e-12)
