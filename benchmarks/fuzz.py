"""A long fuzz run of the command line: mutated design files and option values.

Run: python benchmarks/fuzz.py [--cases N] [--seed S]

Draws N cases (default 10,000: design files, designs on standard input, board files
with stock lists, options; some writing a BOM, a design file or plots) from the
generators of ``tests/fuzzing.py`` (the suite runs a bounded number of the same kind),
runs each in process, and prints the count of each outcome: ok (exit 0), fails (exit 1,
a verdict), refused (exit 2, one line), and the problems (a traceback, another exit
code, a refusal of more than one line, a temporary file left beside an output, an
output written by a run that was refused, a JSON report that is not JSON, a case
given ``--time-limit`` that ran past the limit plus 1 s), with an example of each
problem, and the cases slower than ``--slow`` seconds.  The exit code is 1 when any
problem was found.
"""

from __future__ import annotations

import argparse
import collections
import itertools
import math
import random
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

from fuzzing import board_case, design_case, option_args, outcome, stdin_case


def _time_limit(command: list[str]) -> float | None:
    """The ``--time-limit`` a command was given (the last, as click reads it), when it is a
    finite number of seconds."""
    given = [value for option, value in itertools.pairwise(command) if option == "--time-limit"]
    try:
        seconds = float(given[-1]) if given else math.nan
    except ValueError:
        return None
    return seconds if math.isfinite(seconds) and seconds >= 0 else None


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cases", type=int, default=10_000)
    parser.add_argument("--seed", type=int, default=1)
    parser.add_argument("--slow", type=float, default=20.0,
                        help="a case running longer than this (s) is counted as slow")
    args = parser.parse_args()
    rng = random.Random(args.seed)
    counts: collections.Counter[tuple[str, str]] = collections.Counter()
    examples: dict[str, tuple[list[str], str]] = {}
    slowest: tuple[float, list[str]] = (0.0, [])
    start = time.monotonic()
    with tempfile.TemporaryDirectory() as folder:
        for case in range(1, args.cases + 1):
            draw = rng.random()
            source = "design file" if draw < 0.50 else "stdin" if draw < 0.55 \
                else "board file" if draw < 0.65 else "options"
            stdin = None
            if source == "stdin":
                command, stdin = stdin_case(rng)
            else:
                command = (design_case(rng, Path(folder)) if source == "design file"
                           else board_case(rng, Path(folder)) if source == "board file"
                           else option_args(rng, Path(folder)))
            began = time.monotonic()
            result = outcome(command, stdin)
            took = time.monotonic() - began
            counts[(source, result.kind)] += 1
            if took > args.slow:
                counts[(source, "slow")] += 1
                slowest = max(slowest, (took, command))
            limit = _time_limit(command)
            if limit is not None and took > limit + 1.0:
                counts[(source, "over limit")] += 1
                examples.setdefault("over limit", (command, f"{took:.1f} s"))
                print(f"case {case}: over limit: {' '.join(command)[:300]} -> {took:.1f} s",
                      flush=True)
            if result.kind not in ("ok", "fails", "refused"):
                examples.setdefault(result.kind, (command, result.detail))
                print(f"case {case}: {result.kind}: {' '.join(command)[:300]} -> "
                      f"{result.detail[:300]}",
                      flush=True)
            if case % 500 == 0:
                print(f"{case:,} cases, {time.monotonic() - start:.0f} s", flush=True)
    print(f"{args.cases:,} cases in {time.monotonic() - start:.0f} s (seed {args.seed})")
    for (source, kind), count in sorted(counts.items()):
        print(f"  {source:12s} {kind:10s} {count:6,}")
    if slowest[1]:
        print(f"slowest case over {args.slow:g} s: {slowest[0]:.1f} s, {slowest[1][:8]}")
    for kind, (command, detail) in examples.items():
        print(f"example of {kind}: {' '.join(command)[:300]} -> {detail[:300]}")
    return 1 if examples else 0


if __name__ == "__main__":
    sys.exit(main())
