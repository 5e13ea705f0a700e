"""Candidate solves per second of the batched mesh solve, next to a per-candidate loop.

Run: python benchmarks/mesh_throughput.py [--quick]

For ladder networks of 2, 3, 4 and 6 loops it prints
* the batched inner routine (MeshSolver.solve_block, entity-first blocks,
  forming the loop matrices included, node voltages and branch currents out);
* the public MeshSolver.solve (candidate axis first, transposes included);
* a per-candidate loop that forms Z and calls numpy.linalg.solve,
and the ratio batched / loop; then Evaluator.evaluate on the same ladder with a voltage
target on its last node and a limit on the supply current (targets, part stresses,
supply current and noise floors out, from candidate-first input: transposed block by
block), next to the general path that solves the whole batch and measures it
candidate-first (Evaluator.evaluate_general, synth/circuit/batch.py), each as a share of
the block solve's rate (the block solve writing into arrays it reuses); all measured in
this one run on one core (best of several interleaved repeats, CPU time of this process).
Then the peak traced memory of a 10^7-candidate run through iter_solve_views that
keeps only the largest node voltage.
"""

from __future__ import annotations

import os
import sys
import time
import tracemalloc

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np
from ladders import ladder_tables

from synth.circuit.measure import Evaluator
from synth.circuit.mesh import MeshSolver
from synth.circuit.network import build_network
from synth.design.reader import design_from_dict


def ladder(loops: int):
    return build_network(design_from_dict(ladder_tables(loops)))


def targeted_ladder(loops: int):
    """The ladder with a voltage target on its last node and a supply-current limit."""
    tables = ladder_tables(loops)
    tables["target"] = [{"voltage": f"n{loops}", "equals": "1 V"},
                        {"current": "V1", "at_most": "10 mA"}]
    return design_from_dict(tables)


def best_of(fn, repeats=3):
    """Least CPU time of ``repeats`` runs, s: one thread (OMP_NUM_THREADS=1), so its CPU
    time is its work; wall time on a shared machine would count other processes' turns."""
    best = float("inf")
    for _ in range(repeats):
        start = time.process_time()
        fn()
        best = min(best, time.process_time() - start)
    return best


def measure(loops: int, rng: np.random.Generator, n_batch: int, n_loop: int) -> None:
    """Print one row: batched block rate, solve() rate, per-candidate loop rate, ratio."""
    net = ladder(loops)
    solver = MeshSolver(net)
    assert solver.loop_count == loops
    n_r = len(net.resistor_refs)
    r = 10 ** rng.uniform(2, 5, size=(n_batch, n_r))
    e = np.array([5.0])
    chunk = solver.preferred_chunk
    r_t = [np.ascontiguousarray(r[s:s + chunk].T) for s in range(0, n_batch, chunk)]
    e_t = np.broadcast_to(e[:, None], (1, chunk)).copy()
    empty = np.zeros((0, chunk))

    def blocks():
        for block in r_t:
            solver.solve_block(block, e_t, empty, empty)

    t_block = best_of(blocks)
    t_solve = best_of(lambda: solver.solve(r, voltages=e), repeats=2)
    loops_b = solver.loop_resistor_matrix
    rhs_const = solver.loop_vsource_matrix @ e

    def per_candidate():
        # the plain way: form Z = B diag(R) B^T for one candidate, then numpy.linalg.solve
        for k in range(n_loop):
            z = (loops_b * r[k]) @ loops_b.T
            np.linalg.solve(z, rhs_const)

    t_loop = best_of(per_candidate, repeats=1)
    rate_block = n_batch / t_block
    rate_loop = n_loop / t_loop
    print(f"{loops:>5} {rate_block:>15.3e} {n_batch / t_solve:>12.3e} {rate_loop:>14.3e} "
          f"{rate_block / rate_loop:>8.0f}x")
    return rate_block


def measure_evaluate(loops: int, rng: np.random.Generator, n_batch: int) -> None:
    """Print one row: block solve, evaluate and the general path's rates, and their shares."""
    ev = Evaluator(targeted_ladder(loops))
    solver = ev.solver
    r = 10 ** rng.uniform(2, 5, size=(n_batch, len(ev.design.resistors)))
    chunk = solver.preferred_chunk
    r_t = [np.ascontiguousarray(r[s:s + chunk].T) for s in range(0, n_batch, chunk)]
    e_t = np.full((1, chunk), 5.0)
    empty = np.zeros((0, chunk))
    # the block solve into arrays it reuses: its own rate, whatever state the memory
    # allocator is in (fresh arrays per block may or may not fault their pages in)
    out = (np.empty((len(ev.network.nodes), chunk)),
           np.empty((len(ev.network.branch_refs), chunk)), np.empty((0, chunk)))

    def blocks():
        for block in r_t:
            solver.solve_block(block, e_t, empty, empty, out=out)

    src = ev.nominal_sources
    best = {"block": np.inf, "evaluate": np.inf, "general": np.inf}
    for _ in range(5):  # interleaved, so that a busy moment hits every figure alike
        best["block"] = min(best["block"], best_of(blocks, repeats=1))
        best["evaluate"] = min(best["evaluate"], best_of(lambda: ev.evaluate(r), repeats=1))
        best["general"] = min(best["general"],
                              best_of(lambda: ev.evaluate_general(r, src), repeats=1))
    rate = {key: n_batch / seconds for key, seconds in best.items()}
    print(f"{loops:>5} {rate['block']:>15.3e} {rate['evaluate']:>14.3e} "
          f"{rate['general']:>13.3e} {rate['block'] / rate['evaluate']:>12.1f}x "
          f"{rate['block'] / rate['general']:>11.1f}x")


def main(quick: bool) -> None:
    rng = np.random.default_rng(0)
    n_batch = 1 << 20 if quick else 1 << 22
    n_loop = 5_000 if quick else 20_000
    print(f"{'loops':>5} {'block solves/s':>15} {'solve() /s':>12} {'loop solves/s':>14} "
          f"{'ratio':>8}")
    for loops in (2, 3, 4, 6):
        measure(loops, rng, n_batch, n_loop)
    print(f"\n{'loops':>5} {'block solves/s':>15} {'evaluate /s':>14} {'general /s':>13} "
          f"{'block/evaluate':>13} {'block/general':>12}")
    for loops in (2, 3, 4, 6):
        measure_evaluate(loops, rng, n_batch // 4)

    n_big = 10**6 if quick else 10**7
    net = ladder(3)
    solver = MeshSolver(net)
    r = 10 ** rng.uniform(2, 5, size=(n_big, len(net.resistor_refs)))
    tracemalloc.start()
    peak_v = -np.inf
    for part in solver.iter_solve_views(r, voltages=[5.0]):
        peak_v = max(peak_v, float(part.node_voltages.max()))
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    print(f"N = {n_big:.0e} through iter_solve_views (3 loops): solver peak traced memory "
          f"{peak / 2**20:.0f} MiB, plus the input array {r.nbytes / 2**20:.0f} MiB "
          f"(total {(peak + r.nbytes) / 2**20:.0f} MiB), max V {peak_v:.3f}")


if __name__ == "__main__":
    main("--quick" in sys.argv)
