"""Text and JSON of linearity targets: the line, the grid it was checked on, the refinement and
the largest error in °C.
"""

from __future__ import annotations

__all__ = ["linearity_json", "linearity_text"]

from collections.abc import Sequence
from typing import Any

from synth.design.linearity import Linearity
from synth.linearity import LinearityCheck
from synth.report.numbers import json_number
from synth.units import format_eng


def _line_text(lin: Linearity) -> str:
    return (f"{format_eng(lin.low_v, 'V', 5)} at {lin.low_c:g} °C to "
            f"{format_eng(lin.high_v, 'V', 5)} at {lin.high_c:g} °C "
            f"({format_eng(lin.slope, 'V', 4)}/°C)")


def linearity_text(linearities: Sequence[Linearity], checks: Sequence[LinearityCheck]) -> str:
    """One paragraph per linearity target: line, grid, refinement, largest error and verdict.

    Examples
    --------
    >>> import numpy as np
    >>> lin = Linearity("out", "RT1", ("out", "gnd"), 0.0, 100.0, 0.5, 2.5, 0.5, 11)
    >>> c = LinearityCheck("out", "RT1", 0.5, lin.grid_c(), np.zeros(11), np.array([45.0]),
    ...                    np.array([0.2]), 45.0, 0.2, 0.0)
    >>> print(linearity_text([lin], [c]).splitlines()[2])
      largest error +0.2 °C at 45 °C (on the grid alone +0 °C): within ±0.5 °C
    """
    lines = []
    for lin, c in zip(linearities, checks, strict=True):
        step = (lin.high_c - lin.low_c) / (lin.grid - 1)
        lines.append(f"linearity target {lin.label!r}: {_line_text(lin)}")
        lines.append(f"  checked on a grid of {lin.grid} points every {step:.4g} °C from "
                     f"{lin.low_c:g} to {lin.high_c:g} °C, then {len(c.refined_c)} more near "
                     "the largest deviation")
        verdict = (f"within ±{c.within_c:g} °C" if c.met
                   else f"OUTSIDE ±{c.within_c:g} °C")
        lines.append(f"  largest error {c.worst_error_c:+.3g} °C at {c.worst_c:.4g} °C (on the "
                     f"grid alone {c.grid_worst_error_c:+.3g} °C): {verdict}")
    return "\n".join(lines)


def linearity_json(lin: Linearity, check: LinearityCheck) -> dict[str, Any]:
    """JSON record of one linearity target and its check (temperatures and errors in °C)."""
    return {
        "label": lin.label, "sensor": lin.sensor, "nodes": list(lin.nodes),
        "low_c": json_number(lin.low_c), "high_c": json_number(lin.high_c),
        "low_v": json_number(lin.low_v), "high_v": json_number(lin.high_v),
        "slope_v_per_c": json_number(lin.slope), "within_c": json_number(lin.within_c),
        "grid": lin.grid,
        "grid_c": [json_number(float(t)) for t in check.grid_c],
        "grid_error_c": [json_number(float(e)) for e in check.grid_error_c],
        "refined": len(check.refined_c),
        "worst_c": json_number(check.worst_c), "worst_error_c": json_number(check.worst_error_c),
        "grid_worst_error_c": json_number(check.grid_worst_error_c), "met": check.met,
    }
