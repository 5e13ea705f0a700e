"""Speed-up of ``jobs=2`` over ``jobs=1`` on design, check, bom and sweep; results compared.

Run: python benchmarks/jobs.py [--repeat R] [--only design,check,bom,sweep] [--jobs N]

Four workloads, each run with ``jobs=1`` and with ``jobs=N`` (default 2) side by side in
one run, each run in a fresh process of its own so that a pool's start-up (a fork server
importing numpy and the library) is inside the figure, as a command pays it; the
interpreter's own start-up and imports are not:

* design: a 5-part E96 ladder (1 kΩ .. 100 kΩ, 12 V, one tap set, a 1 mA budget: 2.7e11
  combinations, the under-determined row of ``benchmarks/search_speed.py``) proven by the
  search, then the best candidates' Monte Carlo (``SpreadSettings`` of
  ``--design-samples`` samples each);
* check: the bundled bench supply (``examples/bench_supply.toml``) with a Monte Carlo of
  ``--check-samples`` samples;
* bom: a seeded board of ``--networks`` networks (sense dividers, regulator feedback
  dividers and LED resistors over ``--board-series``, default E96, as
  ``benchmarks/bom_consolidation.py`` draws them), every network designed with a pool of
  200 candidates, then consolidated;
* sweep: the bundled sensor preamplifier's bias chosen at ``--points`` supply voltages.

Each run gives a digest (sha256) of its results: the design's JSON document without its
times and the count of candidates solved (``elapsed_s``, ``evaluated``; the ranking,
every candidate's figures and the Monte Carlo figures stay in), the check's JSON, the
BOM's CSV bytes and the sweep's JSON.  A workload's line says whether every run's digest
is the first run's.  Runs of one workload alternate (1, N, N, 1, ...) so that a change of
the machine's load between runs falls on both sides; the figure is the median of the
repeats.  The machine's load average (``os.getloadavg()``) is printed before and after
each workload: on a shared machine a core that another process holds makes the ratio
smaller than the work's own.
"""

from __future__ import annotations

import argparse
import hashlib
import json
import os
import statistics
import subprocess
import sys
import time
from pathlib import Path
from typing import Any

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

HERE = Path(__file__).resolve().parent
EXAMPLES = HERE.parent / "examples"
WORKLOADS = ("design", "check", "bom", "sweep")
BOM_TIME_LIMIT_S = 3600.0
"""The BOM's wall-clock guard: far above its run, so that only the work limit binds (a
network's synthesis gets a share of the guard, and one cut short keeps fewer candidates,
so the BOM may change from run to run, as ``--time-limit`` says; on a busy machine runs
under a guard of 600 s gave different BOMs).  The line says how many notes of a time
limit a run had."""
UNSTABLE = frozenset({"elapsed_s", "evaluated"})
"""Keys of the design document that differ from run to run (times, candidates solved)."""


def _digest(document: Any) -> str:
    text = document if isinstance(document, str) else json.dumps(document, sort_keys=True)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()[:16]


def _stable(document: Any) -> Any:
    if isinstance(document, dict):
        return {k: _stable(v) for k, v in document.items() if k not in UNSTABLE}
    if isinstance(document, list):
        return [_stable(v) for v in document]
    return document


def _ladder():
    from synth.design.reader import design_from_dict

    nodes = ["in", "t1", "t2", "t3", "t4", "gnd"]
    return design_from_dict({
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "12 V"}],
        "resistor": [{"ref": f"R{k + 1}", "nodes": [nodes[k], nodes[k + 1]], "choose": "E96",
                      "range": ["1k", "100k"], "tolerance": "1%"} for k in range(5)],
        "target": [{"voltage": "t2", "equals": "6.2 V", "within": "1%"},
                   {"current": "V1", "at_most": "1 mA"}],
    })


def _board(networks: int, series: str):
    import numpy as np

    sys.path.insert(0, str(HERE))
    from bom_consolidation import network  # the scenario of the consolidation benchmark

    from synth.design.board import Board, BoardNetwork
    from synth.design.reader import design_from_dict
    from synth.synthesis import synthesize

    rng = np.random.default_rng(2026)
    drawn = []
    for number in range(networks):
        while True:  # a network without feasible standard values is drawn again
            design = design_from_dict(network(number % 3, rng, series),
                                      origin=f"network{number + 1}.toml")
            if synthesize(design, top=1).feasible:
                break
        drawn.append(BoardNetwork(f"network {number + 1}", design, 1))
    return Board("benchmark board", tuple(drawn), None, 200)


def _one(name: str, jobs: int, args: argparse.Namespace) -> tuple[float, str, str]:
    """One workload run in this process: (seconds, digest, what it did)."""
    from synth.spread.records import SpreadSettings

    if name == "design":
        from synth.report.synthesis import design_json
        from synth.synthesis import synthesize

        design = _ladder()
        start = time.perf_counter()
        result = synthesize(design, top=args.top, jobs=jobs,
                            spread=SpreadSettings(samples=args.design_samples))
        seconds = time.perf_counter() - start
        return (seconds, _digest(_stable(design_json(result))),
                f"{result.combinations:.2e} combinations, "
                f"{'proven' if result.proven_optimal else 'NOT proven'}, top {args.top}, "
                f"{args.design_samples:,} samples each")
    if name == "check":
        from synth.checking import check
        from synth.design.load import load_design
        from synth.report.check import check_json

        design = load_design(EXAMPLES / "bench_supply.toml")
        start = time.perf_counter()
        checked = check(design, spread=SpreadSettings(samples=args.check_samples), jobs=jobs)
        seconds = time.perf_counter() - start
        return (seconds, _digest(check_json(checked)),
                f"{args.check_samples:,} samples, yield "
                f"{checked.spread.yield_fraction if checked.spread else None}")
    if name == "bom":
        from synth.bom.build import build_bom
        from synth.report.bom import render_bom

        board = _board(args.networks, args.board_series)
        start = time.perf_counter()
        bom = build_bom(board, time_limit_s=BOM_TIME_LIMIT_S, jobs=jobs)
        seconds = time.perf_counter() - start
        cuts = sum("time limit" in note for note in bom.notes)
        return (seconds, _digest(render_bom(bom, "csv")),
                f"{args.networks} networks on {args.board_series}, {len(bom.lines)} lines, of "
                f"which consolidation {bom.consolidation.elapsed_s:.2f} s, "
                f"{cuts} time-limit note(s)")
    from synth.report.sweep import sweep_json
    from synth.sweep import sweep

    axes = [f"source.VCC.value=9V:15V:{args.points}"]
    start = time.perf_counter()
    swept = sweep(EXAMPLES / "sensor_preamp.toml", axes, jobs=jobs)
    seconds = time.perf_counter() - start
    return seconds, _digest(sweep_json(swept)), f"{args.points} points"


def _run(name: str, jobs: int, argv: list[str]) -> tuple[float, str, str]:
    out = subprocess.run([sys.executable, __file__, *argv, "--one", name, "--jobs", str(jobs)],
                         check=True, capture_output=True, text=True).stdout
    seconds, digest, what = json.loads(out.strip().splitlines()[-1])
    return float(seconds), str(digest), str(what)


def _load() -> str:
    return " ".join(f"{v:.2f}" for v in os.getloadavg())


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=2, help="runs per side (default 2)")
    parser.add_argument("--only", default=",".join(WORKLOADS),
                        help="workloads, comma-separated (default: all four)")
    parser.add_argument("--jobs", type=int, default=2, help="processes of the parallel side")
    parser.add_argument("--design-samples", type=int, default=4_000_000)
    parser.add_argument("--top", type=int, default=3, help="design candidates (default 3)")
    parser.add_argument("--check-samples", type=int, default=10_000_000)
    parser.add_argument("--networks", type=int, default=50)
    parser.add_argument("--board-series", default="E96")
    parser.add_argument("--points", type=int, default=16)
    parser.add_argument("--one", help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.one is not None:
        print(json.dumps(_one(args.one, args.jobs, args)))
        return
    passed = [f"--design-samples={args.design_samples}", f"--top={args.top}",
              f"--check-samples={args.check_samples}", f"--networks={args.networks}",
              f"--board-series={args.board_series}",
              f"--points={args.points}"]
    from synth.parallel import available_cores

    print(f"jobs=1 against jobs={args.jobs}; {available_cores()} core(s) available; "
          f"{args.repeat} run(s) a side, alternating; load average (1, 5, 15 min) {_load()}")
    print(f"{'workload':<8} {'jobs=1 s':>9} {f'jobs={args.jobs} s':>9} {'speed-up':>9} "
          f"{'results':>10}  load before -> after; what ran")
    for name in args.only.split(","):
        before = _load()
        times: dict[int, list[float]] = {1: [], args.jobs: []}
        digests: set[str] = set()
        what = ""
        for rep in range(args.repeat):
            order = (1, args.jobs) if rep % 2 == 0 else (args.jobs, 1)
            for jobs in order:
                seconds, digest, what = _run(name, jobs, passed)
                times[jobs].append(seconds)
                digests.add(digest)
        one, many = statistics.median(times[1]), statistics.median(times[args.jobs])
        same = "identical" if len(digests) == 1 else "DIFFER"
        print(f"{name:<8} {one:>9.2f} {many:>9.2f} {one / many:>8.2f}x {same:>10}  "
              f"{before} -> {_load()}; {what}", flush=True)


if __name__ == "__main__":
    main()
