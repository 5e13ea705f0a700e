"""Cost of the error-against-supply front and of drawing every picture, per bundled example.

Run: python benchmarks/front_and_pictures.py

For each example with free parts: the front's points, its exact searches, whether it is
whole, and its time beside one plain synthesis of the same design (the front is one
search per point, each with a supply budget that prunes boxes); then the time to draw
and render (PNG and SVG) every picture of ``design --plots``.  Goal: the front of every
bundled example whole within its 30 s bound, and under 5 x one synthesis.
"""

from __future__ import annotations

import time
from pathlib import Path

from synth.design.load import load_design
from synth.front import error_front
from synth.report.pictures.axes import FORMATS, figure_bytes
from synth.report.plots import design_pictures
from synth.spread.records import SpreadSettings
from synth.synthesis import synthesize

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"


def main() -> None:
    print(f"{'example':<18} {'points':>6} {'runs':>5} {'whole':>6} {'front s':>8} "
          f"{'search s':>9} {'ratio':>6} {'pictures':>8} {'draw s':>7}")
    for path in sorted(EXAMPLES.glob("*.toml")):
        if "board" in path.name:
            continue
        design = load_design(path)
        if not design.free_resistors:
            continue
        start = time.perf_counter()
        result = synthesize(design, spread=SpreadSettings(samples=10_000))
        searched = time.perf_counter() - start
        start = time.perf_counter()
        front = error_front(design)
        fronted = time.perf_counter() - start
        start = time.perf_counter()
        pictures = design_pictures(result, front=front)
        for _, figure in pictures:
            for fmt in FORMATS:
                figure_bytes(figure, fmt)
        drawn = time.perf_counter() - start
        print(f"{path.stem:<18} {len(front.points):>6} {front.runs:>5} "
              f"{'yes' if front.complete else 'no':>6} {fronted:>8.2f} {searched:>9.2f} "
              f"{fronted / searched:>6.2f} {len(pictures):>8} {drawn:>7.2f}")


if __name__ == "__main__":
    main()
