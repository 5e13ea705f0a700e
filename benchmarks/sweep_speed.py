"""Wall time of a sweep in this process, on local worker processes and on a loopback Dask cluster.

Run: python benchmarks/sweep_speed.py [--points N] [--jobs N]

The same sweep (the bundled sensor preamplifier's bias chosen afresh at N supply
voltages, four free parts on E24 each) runs three or four ways side by side in one run:
``jobs=1`` (every point in this process), ``jobs=N`` local processes (default: every core
this process may use), and a Dask ``LocalCluster`` on 127.0.0.1 with N worker processes
(when Dask distributed is installed).  Each figure is printed with its speed-up over
``jobs=1``, and every run's points are checked equal to the first run's.  A pool's
start-up (fresh interpreters importing numpy and the library) is inside its figure: on
few or quick points it costs more than it saves.
"""

from __future__ import annotations

import argparse
import time
from collections.abc import Callable
from pathlib import Path

from synth.sweep import SweepResult, available_cores, sweep

EXAMPLE = Path(__file__).resolve().parent.parent / "examples" / "sensor_preamp.toml"


def _timed(run: Callable[[], SweepResult]) -> tuple[float, SweepResult]:
    start = time.perf_counter()
    result = run()
    return time.perf_counter() - start, result


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=16, help="grid points (default 16)")
    parser.add_argument("--jobs", type=int, default=available_cores(),
                        help="local processes and cluster workers (default: every core)")
    args = parser.parse_args()
    axes = [f"source.VCC.value=9V:15V:{args.points}"]
    print(f"sweep of {EXAMPLE.name}: {args.points} points over {axes[0]}, "
          f"{available_cores()} core(s) available")
    base_s, base = _timed(lambda: sweep(EXAMPLE, axes, jobs=1))
    rows = [("in this process (jobs=1)", base_s, base)]
    rows.append((f"local processes (jobs={args.jobs})", *_timed(
        lambda: sweep(EXAMPLE, axes, jobs=args.jobs))))
    try:
        from distributed import LocalCluster
    except ImportError:
        print("Dask distributed is not installed: no cluster figure")
    else:
        start = time.perf_counter()
        with LocalCluster(host="127.0.0.1", n_workers=args.jobs, threads_per_worker=1,
                          processes=True, dashboard_address=None) as cluster:
            up_s = time.perf_counter() - start
            seconds, result = _timed(lambda: sweep(EXAMPLE, axes,
                                                   cluster=cluster.scheduler_address))
        rows.append((f"loopback Dask cluster ({args.jobs} workers; start-up "
                     f"{up_s:.2f} s not counted)", seconds, result))
    for name, seconds, result in rows:
        same = "same points" if result.points == base.points else "POINTS DIFFER"
        print(f"{name:<60} {seconds:7.2f} s  x{base_s / seconds:5.2f}  {same}")


if __name__ == "__main__":
    main()
