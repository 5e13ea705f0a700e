"""What a matched array costs the worst case: the common deviation scanned at every vertex.

Run: python benchmarks/array_spread.py

A chain of N resistors from 10 V (a ladder of 10 kΩ, the middle node and the supply
current as targets) is analysed without Monte Carlo twice side by side in this run: every
part independent (2^N vertices), and the first M parts one matched array (2^N vertices of
the own deviations, each at m + 3 or more points of the common deviation, at least 9).
The ratio of the two wall times is printed beside each pair, with the load average, so
contention on a shared machine affects both sides alike.

The code run is the ``synth`` package the interpreter imports (set ``PYTHONPATH`` to time
another checkout).
"""

from __future__ import annotations

import os
import time

from synth.design.reader import design_from_dict
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings

CASES = ((10, 2), (12, 4), (14, 6), (16, 8))
"""(parts, members of the array)."""


def _chain(parts: int, members: int) -> dict:
    resistors = []
    for k in range(parts):
        part = {"ref": f"R{k + 1}", "nodes": [f"n{k}", f"n{k + 1}" if k < parts - 1 else "gnd"],
                "value": "10k"}
        part.update({"array": "RN1"} if k < members else {"tolerance": "0.1%"})
        resistors.append(part)
    data = {
        "design": {"temperature": ["0 C", "50 C"], "tcr": "25 ppm/C"},
        "source": [{"ref": "V1", "kind": "voltage", "plus": "n0", "minus": "gnd",
                    "value": "10 V"}],
        "resistor": resistors,
        "target": [{"voltage": f"n{parts // 2}", "at_least": "0 V"},
                   {"current": "V1", "at_least": "0 A"}],
    }
    if members:
        data["array"] = [{"name": "RN1", "tolerance": "0.1%", "ratio_tolerance": "0.02%",
                          "tcr": "25 ppm/C", "tcr_tracking": "5 ppm/C"}]
    return data


def _seconds(data: dict) -> tuple[float, str]:
    design = design_from_dict(data)
    began = time.perf_counter()
    spread = analyse_spread(design, settings=SpreadSettings(samples=0))
    return time.perf_counter() - began, spread.targets[0].method


def main() -> None:
    print(f"load average {os.getloadavg()[0]:.2f} (1 min)")
    print(f"{'parts':>5} {'members':>7} {'independent s':>13} {'array s':>8} {'ratio':>6}  "
          "method")
    for parts, members in CASES:
        alone, _ = _seconds(_chain(parts, 0))
        matched, method = _seconds(_chain(parts, members))
        print(f"{parts:>5} {members:>7} {alone:>13.3f} {matched:>8.3f} "
              f"{matched / alone:>6.1f}  {method}")
    print(f"load average {os.getloadavg()[0]:.2f} (1 min)")


if __name__ == "__main__":
    main()
