"""A long fuzz run of the command line: mutated design files and option values.

Run: python benchmarks/fuzz.py [--cases N] [--seed S]

Draws N cases (default 10,000: design files, designs on standard input, board files
with stock lists, options; some writing a BOM, a design file or plots) from the
generators of ``tests/fuzzing.py`` (the suite runs a bounded number of the same kind),
runs each in process, and prints the count of each outcome: ok (exit 0), fails (exit 1,
a verdict), refused (exit 2, one line), and the problems (a traceback, another exit
code, a refusal of more than one line, a temporary file left beside an output, an
output written by a run that was refused), with an example of each problem.  The exit
code is 1 when any problem was found.
"""

from __future__ import annotations

import argparse
import collections
import random
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

from fuzzing import board_case, design_case, option_args, outcome, stdin_case


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cases", type=int, default=10_000)
    parser.add_argument("--seed", type=int, default=1)
    args = parser.parse_args()
    rng = random.Random(args.seed)
    counts: collections.Counter[tuple[str, str]] = collections.Counter()
    examples: dict[str, tuple[list[str], str]] = {}
    start = time.monotonic()
    with tempfile.TemporaryDirectory() as folder:
        for _ in range(args.cases):
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
            result = outcome(command, stdin)
            counts[(source, result.kind)] += 1
            if result.kind not in ("ok", "fails", "refused"):
                examples.setdefault(result.kind, (command, result.detail))
    print(f"{args.cases:,} cases in {time.monotonic() - start:.0f} s (seed {args.seed})")
    for (source, kind), count in sorted(counts.items()):
        print(f"  {source:12s} {kind:10s} {count:6,}")
    for kind, (command, detail) in examples.items():
        print(f"example of {kind}: {command[:6]} -> {detail[:300]}")
    return 1 if examples else 0


if __name__ == "__main__":
    sys.exit(main())
