"""Time and peak memory of a whole ``check`` of large resistor grids.

Run: python benchmarks/large_network.py [SIZE ...] [--samples N] [--timeout S]

Each size is a grid of about SIZE resistors (see :func:`grid_tables`): a 5 V
source across two opposite corners, every resistor 1 % with 100 ppm/°C over
0 to 70 °C, and four targets (a node voltage, the source current, one
resistor's dissipation and the resistance seen between two neighbouring
nodes).  Every size runs in a fresh process (``rnsynth check --verify
--json``, the Monte Carlo at ``--samples``, default the command's own 100,000)
and prints its wall time and peak resident memory (the process's maxrss).
A size that runs past ``--timeout`` seconds (default 600) is stopped and
reported as such.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

VALUES = ("1k", "2k2", "4k7", "1k5", "3k3")


def grid_shape(resistors: int) -> tuple[int, int]:
    """Rows and columns of nodes whose grid holds about ``resistors`` resistors.

    A grid of r × c nodes holds r(c - 1) + c(r - 1) resistors; the grid is
    square or one column wider.
    """
    side = max(2, round((1 + math.sqrt(1 + 2 * resistors)) / 2))
    rows, cols = side, side
    if 2 * rows * cols - rows - cols < resistors - side:
        cols += 1
    return rows, cols


def grid_tables(resistors: int, samples_note: str = "") -> dict[str, Any]:
    """Design-file tables of a grid of about ``resistors`` resistors."""
    rows, cols = grid_shape(resistors)

    def node(i: int, j: int) -> str:
        return "gnd" if (i, j) == (0, 0) else f"n{i}_{j}"

    parts = []
    for i in range(rows):
        for j in range(cols):
            for di, dj in ((0, 1), (1, 0)):
                if i + di < rows and j + dj < cols:
                    parts.append({"ref": f"R{len(parts) + 1}",
                                  "nodes": [node(i, j), node(i + di, j + dj)],
                                  "value": VALUES[len(parts) % len(VALUES)],
                                  "tolerance": "1%", "tcr": "100 ppm/C"})
    middle = node(rows // 2, cols // 2)
    return {
        "design": {"title": f"grid of {len(parts)} resistors{samples_note}",
                   "ground": "gnd", "temperature": ["0 C", "70 C"], "package": "0603"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": node(rows - 1, cols - 1),
                    "minus": "gnd", "value": "5 V", "tolerance": "1%"}],
        "resistor": parts,
        "target": [
            {"voltage": middle, "at_least": "0.5 V", "at_most": "4.5 V"},
            {"current": "V1", "at_most": "1 A"},
            {"power": "R1", "at_most": "100 mW"},
            {"resistance": [middle, node(rows // 2, cols // 2 + 1)], "at_most": "10k"},
        ],
    }


def _toml(tables: dict[str, Any]) -> str:
    """The tables as TOML (strings, lists of strings and arrays of tables only)."""
    def value(v: Any) -> str:
        return json.dumps(v) if not isinstance(v, list) else "[" + ", ".join(map(value, v)) + "]"

    lines = ["[design]"] + [f"{k} = {value(v)}" for k, v in tables["design"].items()]
    for name in ("source", "resistor", "target"):
        for row in tables[name]:
            lines += ["", f"[[{name}]]"] + [f"{k} = {value(v)}" for k, v in row.items()]
    return "\n".join(lines) + "\n"


_CHILD = """
import json, resource, sys, time
from click.testing import CliRunner
from synth.cli import cli
start = time.perf_counter()
out = CliRunner().invoke(cli, ["check", sys.argv[1], "--verify", "--json",
                               "--samples", sys.argv[2]])
seconds = time.perf_counter() - start
if out.exit_code not in (0, 1):
    raise SystemExit(out.output + repr(out.exception))
record = json.loads(out.output)
spread = record.get("spread") or {}
print(json.dumps({"seconds": seconds,
                  "peak_mib": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
                  "verify": (record.get("verify") or {}).get("max_difference"),
                  "worst_case": [t.get("worst_case_method", "exact" if t["exact"] else "corners")
                                 for t in spread.get("targets", [])],
                  "samples": spread.get("samples_run", spread.get("samples"))}))
"""


def run(resistors: int, samples: int, timeout: float) -> str:
    """One size in a fresh process: a line of figures, or why there are none."""
    tables = grid_tables(resistors)
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder, "grid.toml")
        path.write_text(_toml(tables), encoding="utf-8")
        start = time.perf_counter()
        try:
            done = subprocess.run([sys.executable, "-c", _CHILD, str(path), str(samples)],
                                  capture_output=True, text=True, timeout=timeout,
                                  env={**os.environ, "OMP_NUM_THREADS": "1",
                                       "OPENBLAS_NUM_THREADS": "1"})
        except subprocess.TimeoutExpired:
            return (f"{len(tables['resistor']):5d} resistors: stopped after {timeout:g} s "
                    "(no figure)")
        if done.returncode:
            return f"{len(tables['resistor']):5d} resistors: failed: {done.stderr.strip()[-300:]}"
        figures = json.loads(done.stdout.strip().splitlines()[-1])
        wall = time.perf_counter() - start
    worst = ", ".join(sorted(set(figures["worst_case"])))
    return (f"{len(tables['resistor']):5d} resistors: check --verify {figures['seconds']:8.2f} s "
            f"({wall:.2f} s with start-up), peak {figures['peak_mib']:7.1f} MiB, "
            f"{figures['samples']:,} samples, worst case by {worst}, "
            f"nodal difference {figures['verify']:.1e}")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("sizes", nargs="*", type=int, default=[100, 300, 1000, 3000])
    parser.add_argument("--samples", type=int, default=100_000)
    parser.add_argument("--timeout", type=float, default=600.0)
    args = parser.parse_args()
    print(f"rnsynth check --verify of resistor grids, {args.samples:,} Monte Carlo samples; "
          f"this process {resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024:.0f} MiB")
    for size in args.sizes:
        print(run(size, args.samples, args.timeout), flush=True)


if __name__ == "__main__":
    main()
