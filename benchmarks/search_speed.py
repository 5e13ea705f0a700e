"""Time to a proven optimum next to exhaustive search, for 2 to 6 free parts.

Run: python benchmarks/search_speed.py [--quick]

Each row is a resistor ladder (in -> R1 -> t1 -> R2 -> ... -> Rn -> ground,
12 V in) whose taps must sit at set voltages under a 1 mA budget.  It prints
the catalogue product, the candidates the branch and bound solved, its time,
the time of an exhaustive search over the same product (the same batched
evaluation of every candidate: run in full up to 3e7 candidates, beyond that
extrapolated from a timed sample of 2e6 and marked "est."), the ratio, and
whether both found the same optimum.
"""

from __future__ import annotations

import os
import sys
import time

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np

from synth.circuit.measure import Evaluator
from synth.design.reader import design_from_dict
from synth.search.choices import choices_for
from synth.search.problem import SearchProblem
from synth.synthesis import synthesize

TAPS = ["9.1 V", "6.2 V", "3.9 V", "2.2 V", "1.1 V"]
FULL_LIMIT = 30_000_000
SAMPLE = 2_000_000


def ladder(parts: int, series: str, low: str, high: str):
    nodes = ["in"] + [f"t{k}" for k in range(1, parts)] + ["gnd"]
    resistors = [{"ref": f"R{k + 1}", "nodes": [nodes[k], nodes[k + 1]], "choose": series,
                  "range": [low, high]} for k in range(parts)]
    targets = [{"voltage": f"t{k}", "equals": TAPS[k - 1]} for k in range(1, parts)]
    targets.append({"current": "V1", "at_most": "1 mA"})
    return design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": resistors, "target": targets,
    })


def exhaustive(design, limit: int):
    """Best objective over every candidate (or a timed sample), and the seconds it took."""
    ev = Evaluator(design)
    choices = [choices_for(r) for r in design.free_resistors]
    problem = SearchProblem(design, ev, choices, relaxed=False)
    sizes = [len(c) for c in choices]
    total = int(np.prod(sizes, dtype=float))
    count = min(total, limit)
    best = np.inf
    start = time.perf_counter()
    chunk = 1 << 18
    for first in range(0, count, chunk):
        flat = np.arange(first, min(first + chunk, count), dtype=np.int64)
        idx = np.stack(np.unravel_index(flat, sizes), axis=1)
        ranked, _ = problem.score(idx)
        if len(ranked.objective):
            best = min(best, float(ranked.objective.min()))
    seconds = time.perf_counter() - start
    return best, seconds * total / count, count < total


def main(quick: bool) -> None:
    rows = [(2, "E96", "10", "10M"), (2, "E192", "1k", "100k"), (3, "E24", "1k", "100k"),
            (3, "E96", "1k", "100k"), (3, "E192", "1k", "100k"), (4, "E24", "1k", "100k"),
            (4, "E24", "1k", "1M"), (4, "E96", "1k", "100k"), (5, "E12", "1k", "100k"),
            (5, "E24", "1k", "100k"), (6, "E24", "1k", "100k"), (6, "E96", "1k", "100k"),
            (6, "E192", "1k", "100k")]
    if quick:
        rows = rows[:6]
    print(f"{'parts':>5} {'series':>6} {'combinations':>14} {'solved':>12} {'B&B s':>8} "
          f"{'exhaustive s':>14} {'ratio':>9}  same optimum")
    for parts, series, low, high in rows:
        design = ladder(parts, series, low, high)
        start = time.perf_counter()
        result = synthesize(design, top=1)
        bnb = time.perf_counter() - start
        assert result.proven_optimal
        best = result.candidates[0].objective
        limit = FULL_LIMIT if not quick else SAMPLE
        brute, brute_s, estimated = exhaustive(design, limit)
        same = "n/a (sampled)" if estimated else (
            "yes" if abs(brute - best) <= 1e-12 + 1e-9 * best else f"NO ({brute:.3e})")
        mark = " est." if estimated else ""
        print(f"{parts:>5} {series:>6} {result.combinations:>14.3e} {result.evaluated:>12.3e} "
              f"{bnb:>8.3f} {brute_s:>9.2f}{mark:<5} {brute_s / bnb:>8.0f}x  {same}"
              f"  (best error {best:.3e})")


if __name__ == "__main__":
    main("--quick" in sys.argv)
