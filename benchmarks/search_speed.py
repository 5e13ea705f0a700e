"""Time to a proven optimum next to exhaustive search, for 2 to 8 free parts.

Run: python benchmarks/search_speed.py [--quick]

Each row is a resistor ladder (in -> R1 -> t1 -> R2 -> ... -> Rn -> ground,
12 V in) whose taps must sit at set voltages under a 1 mA budget.  The first
rows set every tap (fully targeted); the last rows set only a few taps and
leave the parts between them free (under-determined: a divider chain with one
tap that matters).  It prints
the catalogue product, the candidates the branch and bound solved, its time,
the time of an exhaustive search over the same product (the same batched
evaluation of every candidate: run in full up to 3e7 candidates, beyond that
extrapolated from a timed sample of 2e6 and marked "est."), the ratio, and
whether both found the same optimum.  Times are CPU time of this one thread (on a shared
machine wall time counts other processes' turns); the branch and bound's is the least of
REPEATS runs after a first one (which also loads what a first call loads), so a busy
moment does not decide a row of a few milliseconds.
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
UNDER_DETERMINED = [
    (4, "E24", "1k", "100k", {2: "6.2 V"}),
    (5, "E24", "1k", "100k", {2: "6.2 V"}),
    (5, "E96", "1k", "100k", {2: "6.2 V"}),
    (7, "E24", "1k", "100k", {2: "8.2 V", 4: "4.7 V", 6: "1.5 V"}),
    (8, "E24", "1k", "100k", {2: "9.1 V", 5: "5.1 V", 7: "2.2 V"}),
]
"""Ladders whose targets leave parts free: (parts, series, low, high, {tap: volts})."""
REPEATS = 5
"""Timed runs of each branch and bound after the first (the least counts); a search that
takes more than a second is timed once."""
TIME_LIMIT_S = 120.0
"""A search still open after this is cut short and marked "cut" (its ratio is then a floor)."""


def ladder(parts: int, series: str, low: str, high: str, taps: dict[int, str] | None = None):
    """The ladder; ``taps`` maps tap numbers to voltages (default: every tap from TAPS)."""
    nodes = ["in"] + [f"t{k}" for k in range(1, parts)] + ["gnd"]
    resistors = [{"ref": f"R{k + 1}", "nodes": [nodes[k], nodes[k + 1]], "choose": series,
                  "range": [low, high]} for k in range(parts)]
    taps = taps or {k: TAPS[k - 1] for k in range(1, parts)}
    targets = [{"voltage": f"t{k}", "equals": volts} for k, volts in taps.items()]
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
    start = time.process_time()
    chunk = 1 << 18
    for first in range(0, count, chunk):
        flat = np.arange(first, min(first + chunk, count), dtype=np.int64)
        idx = np.stack(np.unravel_index(flat, sizes), axis=1)
        ranked, _ = problem.score(idx)
        if len(ranked.objective):
            best = min(best, float(ranked.objective.min()))
    seconds = time.process_time() - start
    return best, seconds * total / count, count < total


def main(quick: bool) -> None:
    rows = [(2, "E96", "10", "10M"), (2, "E192", "1k", "100k"), (3, "E24", "1k", "100k"),
            (3, "E96", "1k", "100k"), (3, "E192", "1k", "100k"), (4, "E24", "1k", "100k"),
            (4, "E24", "1k", "1M"), (4, "E96", "1k", "100k"), (5, "E12", "1k", "100k"),
            (5, "E24", "1k", "100k"), (6, "E24", "1k", "100k"), (6, "E96", "1k", "100k"),
            (6, "E192", "1k", "100k")]
    rows = [(*row, None) for row in rows] + UNDER_DETERMINED
    if quick:
        rows = rows[:6] + UNDER_DETERMINED[:1]
    only = [a for a in sys.argv[1:] if not a.startswith("-")]
    if only:  # row numbers, to time a few rows side by side
        rows = [rows[int(a)] for a in only]
    print(f"{'parts':>5} {'taps':>5} {'series':>6} {'combinations':>14} {'solved':>12} "
          f"{'B&B s':>8} {'exhaustive s':>14} {'ratio':>9}  same optimum")
    for parts, series, low, high, taps in rows:
        design = ladder(parts, series, low, high, taps)
        start = time.process_time()
        result = synthesize(design, top=1, time_limit_s=TIME_LIMIT_S)
        bnb = time.process_time() - start
        for _ in range(REPEATS if bnb < 1.0 else 0):
            start = time.process_time()
            result = synthesize(design, top=1, time_limit_s=TIME_LIMIT_S)
            bnb = min(bnb, time.process_time() - start)
        best = result.candidates[0].objective
        limit = FULL_LIMIT if not quick else SAMPLE
        brute, brute_s, estimated = exhaustive(design, limit)
        same = ("n/a (unproven)" if not result.proven_optimal else "n/a (sampled)" if estimated
                else "yes" if abs(brute - best) <= 1e-12 + 1e-9 * best else f"NO ({brute:.3e})")
        mark = " est." if estimated else ""
        set_taps = parts - 1 if taps is None else len(taps)
        cut = "" if result.proven_optimal else " cut"
        print(f"{parts:>5} {set_taps:>5} {series:>6} {result.combinations:>14.3e} "
              f"{result.evaluated:>12.3e} {bnb:>8.3f}{cut:<4} {brute_s:>9.2f}{mark:<5} "
              f"{brute_s / bnb:>8.0f}x  {same}"
              f"  (best error {best:.3e})")


if __name__ == "__main__":
    main("--quick" in sys.argv)
