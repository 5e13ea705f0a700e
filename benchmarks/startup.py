"""Start-up time of ``import synth`` and of the quick ``rnsynth`` commands.

Run: python benchmarks/startup.py [--runs N]

Each command runs as a fresh process (wall time of the whole subprocess,
median of N runs, after one warm-up run that fills the file cache and the
bytecode cache), side by side with bare ``python -c pass``, and the figure
is printed with its difference from bare Python.  Goals: ``rnsynth
--version`` within 0.25 s of bare Python, the trivial divider within 0.6 s in all.

``rnsynth`` is the console script installed beside this Python; without one
the same entry point runs through ``python -c``.  Set ``PYTHONPATH`` to
time another checkout with the same interpreter.
"""

from __future__ import annotations

import argparse
import os
import shutil
import statistics
import subprocess
import sys
import time
from pathlib import Path

# goal, seconds, and whether it counts from bare Python (True) or from zero (False)
GOALS_S = {"rnsynth --version": (0.25, True),
           "rnsynth divider --input 12V --output 3.3V": (0.6, False)}


def _rnsynth() -> list[str]:
    script = Path(sys.executable).parent / "rnsynth"
    if script.is_file():
        return [sys.executable, str(script)]
    found = shutil.which("rnsynth")
    if found is not None:
        return [found]
    return [sys.executable, "-c", "import sys; from synth.cli import main; sys.exit(main())"]


def _commands() -> dict[str, list[str]]:
    python, rnsynth = [sys.executable], _rnsynth()
    return {
        "python -c pass": [*python, "-c", "pass"],
        'python -c "import synth"': [*python, "-c", "import synth"],
        "rnsynth --version": [*rnsynth, "--version"],
        "rnsynth --help": [*rnsynth, "--help"],
        "rnsynth series E24": [*rnsynth, "series", "E24"],
        "rnsynth divider --input 12V --output 3.3V":
            [*rnsynth, "divider", "--input", "12V", "--output", "3.3V", "--quiet"],
    }


def _wall_time_s(argv: list[str]) -> float:
    start = time.perf_counter()
    done = subprocess.run(argv, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                          stdin=subprocess.DEVNULL, check=False)
    seconds = time.perf_counter() - start
    if done.returncode not in (0, 1):
        raise SystemExit(f"{' '.join(argv)} failed:\n{done.stderr.decode()}")
    return seconds


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=7, help="runs of each command (median)")
    runs = parser.parse_args().runs
    commands = _commands()
    for argv in commands.values():
        _wall_time_s(argv)  # warm-up
    # interleave the commands so a change of machine load touches every figure alike
    times: dict[str, list[float]] = {name: [] for name in commands}
    for _ in range(runs):
        for name, argv in commands.items():
            times[name].append(_wall_time_s(argv))
    medians = {name: statistics.median(values) for name, values in times.items()}
    bare = medians["python -c pass"]
    print(f"median of {runs} runs, wall time of the whole process "
          f"(PYTHONPATH={os.environ.get('PYTHONPATH', '')!r})")
    print(f"{'command':<44} {'seconds':>8} {'- bare':>8}  goal")
    for name, seconds in medians.items():
        verdict = ""
        if name in GOALS_S:
            goal, from_bare = GOALS_S[name]
            met = (seconds - bare if from_bare else seconds) <= goal
            limit = f"+{goal:.2f} s over bare" if from_bare else f"{goal:.2f} s"
            verdict = f"{'met' if met else 'MISSED'} ({limit})"
        print(f"{name:<44} {seconds:8.3f} {seconds - bare:+8.3f}  {verdict}")


if __name__ == "__main__":
    main()
