"""Consolidation of a 50-network board with up to 200 feasible candidates per network.

Run: python benchmarks/bom_consolidation.py [--time-limit SECONDS]

Fifty dividers with random input and output voltages (seeded), each with a
±2 % window over E24 from 1 kΩ to 1 MΩ, are designed with a pool of up to
200 feasible candidates; the CP-SAT consolidation then picks one per
network.  Printed: pool sizes, design time, consolidation time, whether it
was proven optimal, and the lines before (each network at its own best) and
after.
"""

from __future__ import annotations

import sys
import time

import numpy as np

from synth.bom.build import bom_parts
from synth.bom.consolidate import Pool, consolidate
from synth.design.reader import design_from_dict
from synth.synthesis import synthesize


def divider(vin: float, vout: float):
    return design_from_dict({
        "design": {"package": "0603"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": f"{vin:.3g} V"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
                      "range": ["1k", "1M"], "tolerance": "1%"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E24",
                      "range": ["1k", "1M"], "tolerance": "1%"}],
        "target": [{"voltage": "out", "equals": f"{vout:.3g} V", "within": "2%"}],
    })


def main(time_limit: float) -> None:
    rng = np.random.default_rng(2026)
    start = time.perf_counter()
    pools = []
    for _ in range(50):
        vin = float(rng.choice([3.3, 5.0, 12.0, 15.0, 24.0, 48.0]))
        vout = float(rng.uniform(0.1, 0.9)) * vin
        design = divider(vin, vout)
        result = synthesize(design, top=200)
        lines = [frozenset(k for _, k in bom_parts(design, c.values)) for c in result.candidates]
        pools.append(Pool(lines, [c.objective for c in result.candidates]))
    design_s = time.perf_counter() - start
    sizes = [len(p.lines) for p in pools]
    before = len(set().union(*(p.lines[0] for p in pools)))
    result = consolidate(pools, time_limit_s=time_limit)
    print(f"50 networks, pools of {min(sizes)} to {max(sizes)} candidates "
          f"(mean {np.mean(sizes):.0f}); designing took {design_s:.2f} s")
    verdict = ("proven optimal" if result.optimal else
               "fewest lines proven, total error best found within the limit"
               if result.lines_optimal else "best found within the limit")
    print(f"consolidation: {result.elapsed_s:.2f} s ({result.status}), {verdict}; "
          f"lines {before} -> {result.lines} ({before - result.lines} saved), "
          f"total error {result.total_error:.4f}")


if __name__ == "__main__":
    limit = float(sys.argv[sys.argv.index("--time-limit") + 1]) if "--time-limit" in sys.argv \
        else 60.0
    main(limit)
