"""Monte Carlo samples per second and worst-case time, through the batched mesh solve.

Run: python benchmarks/spread_speed.py

* Monte Carlo on a 3-loop ladder (6 toleranced resistors, a toleranced source):
  samples per second of the whole analysis (drawing, solving, measuring
  targets, yield) at 10^5 and 10^6 samples, on one core.
* Worst case of a network with 12 toleranced parts: every one of the 2^12
  vertices solved, sensitivities and interior dissipation peaks included.
"""

from __future__ import annotations

import os
import time

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

from ladders import ladder_tables

from synth.design.reader import design_from_dict
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings


def ladder(loops: int):
    tables = ladder_tables(loops, tolerance="1%", package="0603")
    tables["source"][0]["tolerance"] = "2%"
    last = f"n{loops}"
    return design_from_dict({
        "design": {"temperature": ["-20 C", "70 C"]},
        **tables,
        "target": [{"voltage": last, "equals": "0.93 V" if loops == 3 else "0.117 V",
                    "within": "3%"},
                   {"current": "V1", "at_most": "5 mA"}],
    })


def main() -> None:
    design = ladder(3)
    analyse_spread(design, settings=SpreadSettings(samples=1000))
    for samples in (100_000, 1_000_000):
        start = time.perf_counter()
        result = analyse_spread(design, settings=SpreadSettings(samples=samples))
        seconds = time.perf_counter() - start
        print(f"Monte Carlo, 3-loop ladder, {samples:,} samples: {seconds:.3f} s, "
              f"{samples / seconds:.3e} samples/s (yield {result.yield_fraction:.4f})")
    big = ladder(6)  # 12 toleranced resistors (+ the source: 13 quantities, 8192 vertices)
    start = time.perf_counter()
    result = analyse_spread(big, settings=SpreadSettings(samples=0))
    seconds = time.perf_counter() - start
    print(f"worst case, {len(result.variables)} toleranced quantities "
          f"({2 ** len(result.variables):,} vertices): {seconds:.3f} s")


if __name__ == "__main__":
    main()
