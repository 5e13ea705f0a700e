"""A 3-part range mapper over two operating points, proven, against one network of the same size.

Run: python benchmarks/operating_points.py [--series E96] [--repeat 3]

The offset-and-scale network (VIN through R1, VREF = 3.3 V through R2, R3 to ground)
maps -10 V to 0.1 V and +10 V to 3.2 V, each end within 10 mV, every part over three
decades (1 kΩ .. 1 MΩ, 289 E96 values each, 24 million combinations).  Printed: the
search's wall time (best of the repeats), candidates solved, proof, and, side by side in
the same run, the same search on one network (a single point holding the +10 V end) and
the ratio of the two.  Goal: the two-point search proven in under 1 s.
"""

from __future__ import annotations

import sys
import time

from synth.design.reader import design_from_dict
from synth.synthesis import synthesize


def mapper(series: str, points: bool) -> dict[str, object]:
    resistors = [{"ref": ref, "nodes": nodes, "choose": series, "range": ["1k", "1M"]}
                 for ref, nodes in (("R1", ["in", "out"]), ("R2", ["ref", "out"]),
                                    ("R3", ["out", "gnd"]))]
    data: dict[str, object] = {
        "source": [{"ref": "VIN", "kind": "voltage", "plus": "in", "minus": "gnd",
                    **({"range": ["-10 V", "10 V"]} if points else {"value": "10 V"})},
                   {"ref": "VREF", "kind": "voltage", "plus": "ref", "minus": "gnd",
                    "value": "3.3 V"}],
        "resistor": resistors,
    }
    if points:
        data["transfer"] = [{"name": "map", "input": "VIN", "output": "out",
                             "ends": ["0.1 V", "3.2 V"], "within": "10 mV"}]
    else:
        data["target"] = [{"voltage": "out", "equals": "3.2 V", "within": "10 mV"}]
    return data


def run(series: str, points: bool, repeat: int) -> tuple[float, int, bool, int, float]:
    design = design_from_dict(mapper(series, points))
    best = float("inf")
    for _ in range(repeat):
        start = time.perf_counter()
        result = synthesize(design, top=1)
        best = min(best, time.perf_counter() - start)
    return (best, result.evaluated, result.proven_optimal, result.combinations,
            result.candidates[0].objective)


def main(argv: list[str]) -> None:
    series = argv[argv.index("--series") + 1] if "--series" in argv else "E96"
    repeat = int(argv[argv.index("--repeat") + 1]) if "--repeat" in argv else 3
    two = run(series, True, repeat)
    one = run(series, False, repeat)
    print(f"range mapper, 3 free parts on {series} over 1k..1M, {two[3]:,} combinations")
    for name, (seconds, solved, proven, _, objective) in (("two points", two),
                                                          ("one point", one)):
        print(f"  {name:10s}: {seconds:.3f} s (best of {repeat}), {solved:,} solved, "
              f"{'proven optimal' if proven else 'NOT proven'}, objective {objective:.3g}")
    print(f"  ratio two points / one point: {two[0] / one[0]:.2f}x time, "
          f"{two[1] / max(one[1], 1):.2f}x solved")
    print(f"  goal: two points proven in under 1 s: {'met' if two[2] and two[0] < 1 else 'MISSED'}")


if __name__ == "__main__":
    main(sys.argv[1:])
