"""Consolidation of mixed boards of 10, 50 and 200 networks, stage by stage.

Run: python benchmarks/bom_consolidation.py [--series E24|E96] [--work-limit UNITS]
     [--sizes 10,50,200] [--compare]

A seeded scenario of a controller family: feedback dividers of adjustable
regulators (0.6, 0.8 or 1.25 V references), sense dividers from 3.3–24 V rails
(±2 % windows) and LED series resistors (±5 %), 1 % 0603 parts, the dividers
over the chosen series from 1 kΩ to 1 MΩ.  Every network is designed with a
pool of up to 200 candidates; printed per board: design time, then each
stage's value, proof, bound, gap (value - bound), work units and wall time.
With ``--compare`` the same board is consolidated again as one model without
the reductions and components (``presolved=False``), and the ratios of work
units and wall time are printed side by side.
"""

from __future__ import annotations

import sys
import time

import numpy as np

from synth.bom.build import bom_parts
from synth.bom.consolidate import DEFAULT_WORK_LIMIT, Consolidation, Pool, consolidate
from synth.design.reader import design_from_dict
from synth.synthesis import synthesize


def _pair(series: str, top: str, mid: str) -> list[dict[str, object]]:
    return [{"ref": "R1", "nodes": [top, mid], "choose": series, "range": ["1k", "1M"],
             "tolerance": "1%"},
            {"ref": "R2", "nodes": [mid, "gnd"], "choose": series, "range": ["1k", "1M"],
             "tolerance": "1%"}]


def network(kind: int, rng: np.random.Generator, series: str) -> dict[str, object]:
    """One design of the scenario: 0 a sense divider, 1 a regulator, 2 an LED."""
    if kind == 0:
        vin = float(rng.choice([3.3, 5.0, 12.0, 15.0, 24.0]))
        vout = float(rng.uniform(0.1, 0.9)) * vin
        return {"design": {"package": "0603"},
                "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                            "value": f"{vin:.3g} V"}],
                "resistor": _pair(series, "in", "out"),
                "target": [{"voltage": "out", "equals": f"{vout:.3g} V", "within": "2%"}]}
    if kind == 1:
        ref = float(rng.choice([0.6, 0.8, 1.25]))
        vout = float(rng.choice([1.2, 1.8, 2.5, 3.3, 5.0, 12.0]))
        vout = 3.3 if vout <= 1.2 * ref else vout
        return {"design": {"package": "0603", "ground": "gnd"},
                "regulator": [{"ref": "U1", "output": "out", "sense": "out", "reference": "fb",
                               "setpoint": f"{ref} V", "tolerance": "1%"}],
                "resistor": _pair(series, "out", "fb"),
                "target": [{"voltage": "out", "equals": f"{vout} V", "within": "2%"},
                           {"current": "R1", "at_least": "10 uA"}]}
    bus = float(rng.choice([3.3, 5.0, 12.0, 24.0]))
    drop = float(rng.choice([1.8, 2.0, 2.9, 3.1]))
    bus = 5.0 if drop >= bus - 0.5 else bus
    milliamps = float(rng.choice([1, 2, 5, 10] if bus <= 5 else [1, 2]))
    return {"design": {"package": "0603", "ground": "gnd"},
            "source": [{"ref": "BUS", "kind": "voltage", "plus": "bus", "minus": "gnd",
                        "value": f"{bus} V"},
                       {"ref": "D1", "kind": "voltage", "plus": "anode", "minus": "gnd",
                        "value": f"{drop} V"}],
            "resistor": [{"ref": "R1", "nodes": ["bus", "anode"], "choose": series,
                          "range": ["10", "100k"], "tolerance": "1%"}],
            "target": [{"current": "R1", "equals": f"{milliamps} mA", "within": "5%"}]}


def board(size: int, series: str) -> list[Pool]:
    rng = np.random.default_rng(2026)
    pools = []
    for number in range(size):
        while True:  # a drawn network without feasible standard values is drawn again
            design = design_from_dict(network(number % 3, rng, series))
            result = synthesize(design, top=200)
            if result.feasible:
                break
        pools.append(Pool([frozenset(k for _, k in bom_parts(design, c.values))
                           for c in result.candidates], [c.objective for c in result.candidates]))
    return pools


def _report(label: str, result: Consolidation) -> None:
    print(f"  {label}: {result.lines} lines (at least {result.lines_bound}), "
          f"{result.elapsed_s:.2f} s, {result.status}")
    for stage in result.stages:
        print(f"    {stage.name}: {stage.value:.6g} {'proven' if stage.proven else 'unproven'}"
              f" (bound {stage.bound:.6g}, gap {stage.value - stage.bound:.3g}"
              f"{', ' + stage.scope if stage.scope else ''}), "
              f"{stage.work:.2f} work units, {stage.elapsed_s:.2f} s")


def main(series: str, work_limit: float, sizes: list[int], compare: bool) -> None:
    for size in sizes:
        start = time.perf_counter()
        pools = board(size, series)
        design_s = time.perf_counter() - start
        before = len(set().union(*(p.lines[0] for p in pools)))
        print(f"{size} networks ({series}): designed in {design_s:.1f} s; "
              f"{before} lines at each network's own best")
        result = consolidate(pools, work_limit=work_limit, time_limit_s=600.0)
        _report("reduced, by components", result)
        if compare:
            whole = consolidate(pools, work_limit=work_limit, time_limit_s=600.0,
                                presolved=False)
            _report("one model (before)", whole)
            work = sum(s.work for s in result.stages)
            old_work = sum(s.work for s in whole.stages)
            print(f"  ratio one model / reduced: work {old_work / max(work, 1e-9):.1f}x, "
                  f"time {whole.elapsed_s / max(result.elapsed_s, 1e-9):.1f}x")


if __name__ == "__main__":
    chosen = sys.argv[sys.argv.index("--series") + 1] if "--series" in sys.argv else "E24"
    limit = (float(sys.argv[sys.argv.index("--work-limit") + 1]) if "--work-limit" in sys.argv
             else DEFAULT_WORK_LIMIT)
    wanted = ([int(n) for n in sys.argv[sys.argv.index("--sizes") + 1].split(",")]
              if "--sizes" in sys.argv else [10, 50, 200])
    main(chosen, limit, wanted, "--compare" in sys.argv)
