"""Islands that meet only at ground, solved one shape at a time (synth.circuit.islands).

References: an exact rational nodal solve of the whole network (tests/reference.py)
[CALC-exact-nodal]; the modified nodal solve of synth.circuit.nodal and the sparse solve
of the whole network, independent formulations; Kirchhoff's current law at every node
[HB-kcl-tellegen].
"""

from __future__ import annotations

import numpy as np
import pytest

from synth.circuit.islands import IslandSolver, ground_islands
from synth.circuit.measure import Evaluator
from synth.circuit.network import build_network
from synth.circuit.nodal import nodal_solve
from synth.circuit.solvers import network_solver
from synth.circuit.sparse import SPARSE_ABOVE, SparseSolver
from synth.design.reader import design_from_dict

from reference import exact_nodal


def _copies(count: int, shapes: int = 1) -> dict:
    """``count`` islands: a divider with a load and a current source; every ``shapes``-th
    island also has a bridge resistor, so islands of different shapes mix."""
    resistors, sources = [], []
    for k in range(count):
        a, m, b = f"a{k}", f"m{k}", f"b{k}"
        resistors += [{"ref": f"RT{k}", "nodes": [a, m], "value": f"{1 + k % 7}k"},
                      {"ref": f"RB{k}", "nodes": [m, "gnd"], "value": f"{2 + k % 5}k"},
                      {"ref": f"RL{k}", "nodes": [m, b], "value": "4.7k"},
                      {"ref": f"RG{k}", "nodes": [b, "gnd"], "value": "10k"}]
        if shapes > 1 and k % shapes:
            resistors.append({"ref": f"RX{k}", "nodes": [a, b], "value": "22k"})
        sources += [{"ref": f"V{k}", "kind": "voltage", "plus": a, "minus": "gnd",
                     "value": f"{1 + k} V"},
                    {"ref": f"I{k}", "kind": "current", "from": "gnd", "to": b,
                     "value": f"{k + 1} uA"}]
    return {"resistor": resistors, "source": sources}


def _inputs(network, seed=3, n=5):
    rng = np.random.default_rng(seed)
    r = rng.uniform(100.0, 1e5, size=(n, len(network.resistor_refs)))
    e = rng.uniform(-5.0, 5.0, size=(n, len(network.vsource_refs)))
    j = rng.uniform(-1e-3, 1e-3, size=len(network.isource_refs))
    return r, e, j


def test_islands_are_the_groups_that_meet_only_at_ground():
    network = build_network(design_from_dict(_copies(3)))
    islands = ground_islands(network)
    assert [sorted(network.nodes[i] for i in island) for island in islands] == [
        ["a0", "b0", "m0"], ["a1", "b1", "m1"], ["a2", "b2", "m2"]]


@pytest.mark.parametrize("shapes", [1, 2])
def test_the_islands_solve_equals_the_whole_networks(shapes):
    """Against the nodal and the sparse solve of the whole network, and an exact solve."""
    network = build_network(design_from_dict(_copies(20, shapes)))
    solver = IslandSolver(network)
    assert len(solver.groups) == shapes
    r, e, j = _inputs(network)
    got = solver.solve(r, e, j)
    for other in (nodal_solve(network, r, e, j), SparseSolver(network).solve(r, e, j)):
        np.testing.assert_allclose(got.node_voltages, other.node_voltages, rtol=1e-9,
                                   atol=1e-12)
        np.testing.assert_allclose(got.branch_currents, other.branch_currents, rtol=1e-9,
                                   atol=1e-15)
    # one candidate exactly [CALC-exact-nodal]
    names = network.nodes
    exact_v, exact_i, exact_s = exact_nodal(
        list(names), [(names[a], names[b], float(x)) for (a, b), x
                      in zip(network.resistor_ends, r[0], strict=True)],
        [(names[p], names[m], float(x)) for (m, p), x
         in zip(network.vsource_ends, e[0], strict=True)],
        [(names[f], names[t], float(x)) for (f, t), x in zip(network.isource_ends, j, strict=True)])
    for k, name in enumerate(names):
        assert got.node_voltages[0, k] == pytest.approx(float(exact_v[name]), rel=1e-10,
                                                        abs=1e-12)
    n_r = len(network.resistor_refs)
    np.testing.assert_allclose(got.branch_currents[0, :n_r], [float(x) for x in exact_i],
                               rtol=1e-9, atol=1e-15)
    np.testing.assert_allclose(got.branch_currents[0, n_r:n_r + len(exact_s)],
                               [float(x) for x in exact_s], rtol=1e-9, atol=1e-15)
    # Kirchhoff's current law at every node [HB-kcl-tellegen]
    incidence = np.zeros((len(names), len(network.branch_refs)))
    for b, (a, c) in enumerate(network.branch_ends):
        incidence[a, b] += 1.0
        incidence[c, b] -= 1.0
    # every branch's current flows from its first end to its second (a source's: through
    # it, out of the end it delivers into)
    leaving = got.branch_currents @ incidence.T
    assert np.abs(leaving[:, 1:]).max() < 1e-12


def test_a_large_design_of_operating_points_gets_the_islands_solve():
    """Copies beyond the sparse threshold: one loop solve per shape, same numbers."""
    network = build_network(design_from_dict(_copies(20)))
    assert len(network.resistor_refs) > SPARSE_ABOVE
    chosen = network_solver(network)
    assert isinstance(chosen, IslandSolver)
    assert chosen.largest_island == 4 and chosen.loop_count == 20 * 2
    assert chosen.preferred_chunk >= 1
    forced = network_solver(network, sparse=True)
    assert isinstance(forced, SparseSolver)
    small = build_network(design_from_dict(_copies(3)))
    assert not isinstance(network_solver(small), IslandSolver)
    r, e, j = _inputs(network, n=1)
    one = chosen.solve(r[0], e[0], j)  # a single candidate, sources shared
    np.testing.assert_allclose(one.node_voltages, forced.solve(r, e, j).node_voltages,
                               rtol=1e-9, atol=1e-12)


def test_an_island_beyond_the_threshold_keeps_the_sparse_solve():
    big = _copies(1)
    big["resistor"] += [{"ref": f"RW{k}", "nodes": ["a0", "b0"], "value": "1M"}
                        for k in range(SPARSE_ABOVE)]
    more = _copies(2)
    data = {"resistor": big["resistor"] + [r for r in more["resistor"] if r["ref"][-1] == "1"],
            "source": big["source"] + [s for s in more["source"] if s["ref"][-1] == "1"]}
    network = build_network(design_from_dict(data))
    assert len(ground_islands(network)) == 2
    assert isinstance(network_solver(network), SparseSolver)


def test_refused_networks_and_shapes():
    network = build_network(design_from_dict(_copies(3)))
    with pytest.raises(ValueError, match="expected shape"):
        IslandSolver(network).solve(np.ones((2, 3)), np.ones(3), np.ones(3))
    with pytest.raises(ValueError, match="no controlled sources"):
        IslandSolver(network).solve(np.ones(12), np.ones(3), np.ones(3), gains=[1.0])
    one = build_network(design_from_dict(_copies(1)))
    with pytest.raises(ValueError, match="two islands or more"):
        IslandSolver(one)
    regulated = _copies(2)
    regulated["regulator"] = [{"ref": "U1", "output": "a0", "sense": "m0",
                               "reference": "gnd", "setpoint": "1 V"}]
    regulated["source"] = [s for s in regulated["source"] if s["ref"] != "V0"]
    with pytest.raises(ValueError, match="without regulators"):
        IslandSolver(build_network(design_from_dict(regulated)))


def test_the_evaluator_of_a_sensor_front_end_measures_alike_on_either_solve():
    from synth.templates.passive import QuickSettings
    from synth.templates.thermometer import SensorOptions, thermometer_tables

    design = design_from_dict(thermometer_tables(
        SensorOptions("ntc", r25="10k", beta="3950"), "0 C:50 C", "0.6 V:2.2 V", "3.3 V",
        QuickSettings(), network="series-parallel", grid=30))
    evaluator = Evaluator(design)
    assert isinstance(evaluator.solver, IslandSolver)
    r = evaluator.follow(np.tile(evaluator.weights, (4, 1)) * np.linspace(0.5, 2, 4)[:, None])
    fast = evaluator.evaluate(r).targets
    evaluator.solver = SparseSolver(evaluator.network)
    np.testing.assert_allclose(fast, evaluator.evaluate(r).targets, rtol=1e-10)
