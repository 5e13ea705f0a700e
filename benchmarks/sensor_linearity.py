"""An NTC linearised by 3 free parts over a 50-point grid, proven, against exhaustive enumeration.

Run: python benchmarks/sensor_linearity.py [--grid 50] [--prefix 20000] [--jobs 1] [--repeat 3]

The proofing-box front end of ``rnsynth thermometer --network series-parallel``: a
10 kΩ, B = 3950 K thermistor with RS in series and RP across both on top, RB below,
from 3.3 V; the output must follow the line from 1.2 V at 20 °C to 1.8 V at 40 °C within
0.5 °C, judged on a grid of 50 temperatures (50 operating points).  Each part is chosen
from E96 over 100 Ω .. 10 MΩ (481 values, 111 million combinations).

Printed: the search's wall time (best of the repeats), candidates solved and its proof,
the load average beside it, and, measured in the same run, what exhaustive enumeration
would take: the same solve of the whole 50-point network timed on the first
``--prefix`` combinations (in blocks, as a search solves them) and extrapolated to every
combination.  Goal: proven in under 5 s.
"""

from __future__ import annotations

import os
import sys
import time

import numpy as np

from synth.circuit.measure import Evaluator
from synth.design.model import Design
from synth.design.reader import design_from_dict
from synth.search.choices import choices_for, combination_count
from synth.search.problem import SearchProblem
from synth.spread.records import SpreadSettings
from synth.synthesis import synthesize
from synth.templates.passive import QuickSettings
from synth.templates.thermometer import SensorOptions, thermometer_tables

_BLOCK = 4096


def front_end(grid: int) -> dict[str, object]:
    return thermometer_tables(SensorOptions("ntc", r25="10k", beta="3950", tolerance="1%"),
                              "20 C:40 C", "1.2 V:1.8 V", "3.3 V",
                              QuickSettings(within="0.5 C"), network="series-parallel",
                              grid=grid)


def exhaustive_rate(design: Design, prefix: int) -> tuple[float, int]:
    """Seconds per combination of a plain enumeration, and the combinations it would solve.

    The first ``prefix`` combinations in index order, scored as the search scores an
    enumerated block (every operating point solved, windows and errors measured).
    """
    choices = [choices_for(r, design.origin) for r in design.free_resistors]
    problem = SearchProblem(design, Evaluator(design), choices, relaxed=False)
    total = combination_count(choices)
    shape = tuple(len(c) for c in choices)
    start = time.perf_counter()
    for first in range(0, prefix, _BLOCK):
        flat = np.arange(first, min(first + _BLOCK, prefix))
        problem.score(np.stack(np.unravel_index(flat, shape), axis=1))
    return (time.perf_counter() - start) / prefix, total


def main(argv: list[str]) -> None:
    grid = int(argv[argv.index("--grid") + 1]) if "--grid" in argv else 50
    prefix = int(argv[argv.index("--prefix") + 1]) if "--prefix" in argv else 20_000
    jobs = int(argv[argv.index("--jobs") + 1]) if "--jobs" in argv else 1
    repeat = int(argv[argv.index("--repeat") + 1]) if "--repeat" in argv else 3
    design = design_from_dict(front_end(grid))
    seconds = float("inf")
    for _ in range(repeat):
        start = time.perf_counter()
        result = synthesize(design, top=1, spread=SpreadSettings(samples=0), jobs=jobs)
        seconds = min(seconds, time.perf_counter() - start)
    per, total = exhaustive_rate(design, prefix)
    best = result.candidates[0]
    values = ", ".join(f"{ref} = {value:g}" for ref, value in best.values.items())
    print(f"NTC front end, 3 free parts on E96 over 100..10M, {grid}-point grid "
          f"({len(design.points)} operating points), {result.combinations:,} combinations")
    print(f"  search    : {seconds:.2f} s (best of {repeat}, jobs {jobs}), "
          f"{result.evaluated:,} solved, "
          f"{'proven optimal' if result.proven_optimal else 'NOT proven'}; best {values}, "
          f"largest grid error {abs(best.check.linearity[0].grid_worst_error_c):.3g} °C")
    print(f"  exhaustive: {per * 1e6:.1f} µs per combination on the first {prefix:,}, so "
          f"{per * total:,.0f} s ({per * total / 3600:.1f} h) for all {total:,}")
    print(f"  ratio exhaustive / search: {per * total / seconds:,.0f}x")
    print("  load average (1, 5, 15 min): " + ", ".join(f"{x:.2f}" for x in os.getloadavg()))
    print(f"  goal: proven in under 5 s: "
          f"{'met' if result.proven_optimal and seconds < 5 else 'MISSED'}")


if __name__ == "__main__":
    main(sys.argv[1:])
