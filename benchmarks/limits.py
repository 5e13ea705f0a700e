"""Do the limits a user sets hold?  Wall time and peak memory of time-limited commands.

Run: python benchmarks/limits.py

Each command runs as a fresh process, one after another in this run, and its
wall time (the whole process, start-up included) and peak resident memory
(``ru_maxrss`` of that child alone, from ``os.wait4``) are printed side by
side with the ratio of the wall time to the goal (the time limit plus 1 s)
and whether memory stayed under 1 GiB.  The commands:

* a design of twenty free parts (``benchmarks/threshold_string.toml``, a
  20-resistor threshold string) at ``--time-limit 5``;
* an example at ``--time-limit 0.01`` (a limit already spent by start-up);
* an example with a catalogue product of 12.8 million at ``--top 100000
  --time-limit 15`` (a hundred thousand candidates to re-check and spread);
* the twenty free parts at ``--top 1000000 --time-limit 15`` (thousands of feasible
  candidates: the ranking shrinks to what can be re-checked and shown) and at
  ``--time-limit 0.5``;
* an example at ``--samples 10000000 --time-limit 10`` (the most samples a
  run may ask for; 100,000,000 is refused as input);
* ``check --verify --time-limit 5`` of a grid of 1,000 resistors (the grid of
  ``benchmarks/large_network.py``).

The code run is the ``synth`` package the interpreter imports (set
``PYTHONPATH`` to time another checkout).
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
GIB_KB = 1 << 20  # ru_maxrss is in KiB on Linux

CASES = [
    ("20 free parts, --time-limit 5", 5.0,
     ["design", str(ROOT / "benchmarks" / "threshold_string.toml"), "--time-limit", "5"]),
    ("example, --time-limit 0.01", 0.01,
     ["design", str(ROOT / "examples" / "vent_sensor.toml"), "--time-limit", "0.01"]),
    ("--top 100000 --time-limit 15", 15.0,
     ["design", str(ROOT / "examples" / "sensor_preamp.toml"), "--top", "100000",
      "--time-limit", "15"]),
    ("20 parts, --top 1000000 --time-limit 15", 15.0,
     ["design", str(ROOT / "benchmarks" / "threshold_string.toml"), "--top", "1000000",
      "--time-limit", "15"]),
    ("20 parts, --time-limit 0.5", 0.5,
     ["design", str(ROOT / "benchmarks" / "threshold_string.toml"), "--time-limit", "0.5"]),
    ("--samples 10000000 --time-limit 10", 10.0,
     ["design", str(ROOT / "examples" / "vent_sensor.toml"), "--samples", "10000000",
      "--time-limit", "10"]),
]


def _run(args: list[str]) -> tuple[float, int, int]:
    """Wall time (s), peak RSS (KiB) and exit code of one fresh ``rnsynth ARGS`` process."""
    argv = [sys.executable, "-c",
            "import sys; from synth.cli import main; sys.argv[0] = 'rnsynth'; main()",
            *args, *(["--quiet"] if args[0] == "design" else [])]
    with tempfile.TemporaryFile() as errors:
        start = time.perf_counter()
        child = subprocess.Popen(argv, stdout=subprocess.DEVNULL, stderr=errors,
                                 stdin=subprocess.DEVNULL)
        _, status, usage = os.wait4(child.pid, 0)
        seconds = time.perf_counter() - start
        child.returncode = os.waitstatus_to_exitcode(status)
        errors.seek(0)
        message = errors.read().decode(errors="replace").strip()
    if child.returncode not in (0, 1):
        raise SystemExit(f"{' '.join(args)} exited {child.returncode}: {message}")
    return seconds, int(usage.ru_maxrss), child.returncode


def _grid_case(folder: str) -> tuple[str, float, list[str]]:
    """``check --verify --time-limit 5`` of a 1,000-resistor grid (benchmarks/large_network.py)."""
    sys.path.insert(0, str(ROOT / "benchmarks"))
    from large_network import _toml, grid_tables

    path = Path(folder, "grid.toml")
    path.write_text(_toml(grid_tables(1000)), encoding="utf-8")
    return ("check 1,000-resistor grid, --time-limit 5", 5.0,
            ["check", str(path), "--verify", "--time-limit", "5"])


def main() -> None:
    rows = []
    with tempfile.TemporaryDirectory() as folder:
        for label, limit, args in [*CASES, _grid_case(folder)]:
            seconds, peak_kb, code = _run(args)
            goal = limit + 1.0
            rows.append((label, seconds, goal, seconds / goal, peak_kb / 1024,
                         peak_kb < GIB_KB, code))
    print(f"{'command':<40} {'wall s':>8} {'goal s':>7} {'wall/goal':>10} {'peak MiB':>9} "
          f"{'< 1 GiB':>8} {'exit':>5}")
    for label, seconds, goal, ratio, mib, under, code in rows:
        print(f"{label:<40} {seconds:>8.2f} {goal:>7.2f} {ratio:>10.2f} {mib:>9.0f} "
              f"{'yes' if under else 'NO':>8} {code:>5}")
    bare_start = time.perf_counter()
    subprocess.run([sys.executable, "-c", "import numpy"], check=True)
    print(f"(for scale: python -c 'import numpy' takes {time.perf_counter() - bare_start:.2f} s "
          "here)")


if __name__ == "__main__":
    main()
