"""What self-heating costs the search's worst case: one nominal solve per candidate block for
the parts' rises, then each candidate's own box.

Run: python benchmarks/self_heating.py

The bundled bench current monitor (`examples/bench_current_monitor.toml`: a shunt and a
readback divider of two free E96 parts) is designed with ``require = "worst-case"`` twice
side by side in this run: on the bundled package table (every package has a thermal
resistance, so each candidate's box follows its parts' rises) and on a copy of the table
without the ``thermal_resistance_k_per_w`` column (no self-heating, the one box of every
candidate).  Each is the best of a few runs; the ratio is printed with the load average, so
contention on a shared machine affects both sides alike.

The code run is the ``synth`` package the interpreter imports (set ``PYTHONPATH`` to time
another checkout).
"""

from __future__ import annotations

import csv
import io
import os
import tempfile
import time
from pathlib import Path

from synth import load_design
from synth.catalog.series import catalog_dir
from synth.synthesis import synthesize

EXAMPLE = Path(__file__).resolve().parent.parent / "examples" / "bench_current_monitor.toml"
REPEAT = 3


def _without_thermal_column(folder: Path) -> Path:
    """A copy of the bundled package table without its thermal resistance column."""
    text = (catalog_dir() / "packages.csv").read_text(encoding="utf-8")
    rows = list(csv.reader(line for line in text.splitlines() if not line.startswith("#")))
    drop = rows[0].index("thermal_resistance_k_per_w")
    out = io.StringIO()
    csv.writer(out, lineterminator="\n").writerows([r[:drop] + r[drop + 1:] for r in rows])
    path = folder / "packages.csv"
    path.write_text(out.getvalue(), encoding="utf-8")
    return path


def _design(folder: Path, own_table: bool) -> Path:
    text = EXAMPLE.read_text(encoding="utf-8").replace(
        'tcr = "100 ppm/C"\n', 'tcr = "100 ppm/C"\nrequire = "worst-case"\n'
        + ('packages = "packages.csv"\n' if own_table else ""), 1)
    path = folder / ("cool.toml" if own_table else "heated.toml")
    path.write_text(text, encoding="utf-8")
    return path


def _best(path: Path) -> tuple[float, str]:
    design = load_design(path)
    times = []
    for _ in range(REPEAT):
        began = time.perf_counter()
        result = synthesize(design, top=3)
        times.append(time.perf_counter() - began)
    best = result.candidates[0]
    return min(times), f"{best.values['R1']:g}/{best.values['R2']:g} ohm, " \
                       f"{'proven' if result.proven_optimal else 'not proven'}"


def main() -> None:
    with tempfile.TemporaryDirectory() as name:
        folder = Path(name)
        _without_thermal_column(folder)
        heated, cool = _design(folder, False), _design(folder, True)
        print(f"load average {os.getloadavg()[0]:.2f} (1 min)")
        t_cool, cool_best = _best(cool)
        t_heated, heated_best = _best(heated)
        print(f"no self-heating:   {t_cool:.3f} s  best {cool_best}")
        print(f"with self-heating: {t_heated:.3f} s  best {heated_best}")
        print(f"ratio {t_heated / t_cool:.2f}")
        print(f"load average {os.getloadavg()[0]:.2f} (1 min)")


if __name__ == "__main__":
    main()
