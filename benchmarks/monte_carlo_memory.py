"""Peak memory and time of the Monte Carlo at 1e6 .. 1e9 samples on a small divider.

Run: python benchmarks/monte_carlo_memory.py          (1e6, 1e7, 1e8 samples)
     python benchmarks/monte_carlo_memory.py --full   (and 1e9: a few minutes)
     ... --baseline DIR   (also DIR's rnsynth at 1e6 and 1e7: an export of an earlier
                           version, e.g. `git archive REV synth catalogs | tar -x -C DIR`)

Each run is its own process, so that its peak resident memory (``ru_maxrss``) is its
own; the table gives it above the process's resident memory once the library is loaded
and a first small analysis has run ("over base"), the time and the samples per second.
Side by side, at 1e6 and 1e7 samples, the same analysis keeping every sample
(``keep_samples`` with ``kept_samples`` = samples) and, with ``--baseline``, an earlier
version's Monte Carlo as it ran by default (before the streaming, it kept every sample),
with the ratios of their memory to the streamed run's.
"""

from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import time

os.environ.setdefault("OMP_NUM_THREADS", "1")
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")


def _divider():
    from synth.design.reader import design_from_dict

    return design_from_dict({
        "design": {"temperature": ["-20 C", "70 C"]},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
                    "value": "10 V", "tolerance": "1%"}],
        "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k",
                      "tolerance": "1%", "tcr": "100 ppm/C"},
                     {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k",
                      "tolerance": "1%", "tcr": "100 ppm/C"}],
        "target": [{"voltage": "out", "equals": "5 V", "within": "1.5%"}],
    })


def _peak_mib() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # KiB on Linux


def _one(samples: int, mode: str) -> None:
    """One analysis in this process; prints `seconds peak_mib base_mib yield`."""
    from synth.spread.analyse import analyse_spread
    from synth.spread.records import SpreadSettings

    design = _divider()
    analyse_spread(design, settings=SpreadSettings(samples=1000))
    base = _peak_mib()
    settings = (SpreadSettings(samples=samples) if mode == "baseline"  # its own default
                else SpreadSettings(samples=samples, keep_samples=mode == "kept all",
                                    kept_samples=samples))
    start = time.perf_counter()
    result = analyse_spread(design, settings=settings)
    seconds = time.perf_counter() - start
    print(seconds, _peak_mib(), base, result.yield_fraction)


def _run(samples: int, mode: str, tree: str | None = None
         ) -> tuple[float, float, float, float]:
    env = dict(os.environ)
    if tree is not None:
        env["PYTHONPATH"] = tree
    out = subprocess.run([sys.executable, __file__, "--one", str(samples), "--mode", mode],
                         check=True, capture_output=True, text=True, env=env).stdout.split()
    seconds, peak, base, yield_ = (float(v) for v in out)
    return seconds, peak, base, yield_


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--full", action="store_true", help="also run 1e9 samples")
    parser.add_argument("--baseline", metavar="DIR",
                        help="an earlier version's source tree to measure side by side")
    parser.add_argument("--one", type=int, help=argparse.SUPPRESS)
    parser.add_argument("--mode", default="streamed", help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.one is not None:
        _one(args.one, args.mode)
        return
    counts = [10 ** 6, 10 ** 7, 10 ** 8] + ([10 ** 9] if args.full else [])
    print("Monte Carlo of a 2-resistor divider (1 target, TCR, toleranced supply), one core")
    print(f"{'samples':>14} {'mode':>9} {'time s':>9} {'samples/s':>11} {'peak MiB':>9} "
          f"{'over base':>10} {'yield':>8}")
    over: dict[tuple[str, int], float] = {}
    for samples in counts:
        modes = ["streamed"]
        if samples <= 10 ** 7:
            modes += ["kept all"] + (["baseline"] if args.baseline else [])
        for mode in modes:
            seconds, peak, base, yield_ = _run(samples, mode,
                                               args.baseline if mode == "baseline" else None)
            over[mode, samples] = peak - base
            print(f"{samples:>14,} {mode:>9} {seconds:>9.2f} {samples / seconds:>11.3e} "
                  f"{peak:>9.1f} {peak - base:>10.1f} {yield_:>8.5f}", flush=True)
    for (mode, samples), mib in over.items():
        if mode != "streamed":
            print(f"{samples:,} samples: {mode} takes {mib:.1f} MiB over base, streamed "
                  f"{over['streamed', samples]:.1f} MiB: ratio "
                  f"{mib / max(over['streamed', samples], 0.1):.1f}x")
    streamed = {n: mib for (mode, n), mib in over.items() if mode == "streamed"}
    growth = streamed[counts[-1]] - streamed[counts[0]]
    print(f"streamed: {growth:+.1f} MiB from {counts[0]:,} to {counts[-1]:,} samples")


if __name__ == "__main__":
    main()
