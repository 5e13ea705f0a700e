"""How reports state a design's operating points (text lines and JSON)."""

from __future__ import annotations

__all__ = ["POINTS_NOTE", "points_json", "points_lines"]

import math
from typing import Any

from synth.design.model import Design
from synth.report.numbers import json_number
from synth.units import format_eng

POINTS_NOTE = ("a source range is checked at its ends, which is exact for voltages, currents, "
               "ratios and losses: they are affine (ratios monotone) in each source's value, so "
               "their extremes over the range lie at its ends")
"""The claim a report makes when a design's points come from source ranges."""


def _settings(design: Design, k: int) -> str:
    point = design.points[k]
    units = {s.copy_of: ("V" if s.kind == "voltage" else "A") for s in design.sources}
    words = [f"{ref} = {format_eng(v, units.get(ref, ''), 6)}"
             for ref, v in point.sources.items()]
    words += [f"{ref} = {format_eng(v, 'Ω', 6)}" for ref, v in point.resistors.items()]
    if point.temperature_c is not None:
        words.append(f"{point.temperature_c:g} °C")
    return f"{point.name} ({', '.join(words)})" if words else point.name


def points_lines(design: Design) -> list[str]:
    """Lines naming each operating point and what it sets; empty without points."""
    if not design.points:
        return []
    lines = ["operating points: " + "; ".join(_settings(design, k)
                                              for k in range(len(design.points)))]
    if any(p.range_ends for p in design.points):
        lines.append(f"note: {POINTS_NOTE}")
        if any(t.kind == "power" and t.bounds[0] > -math.inf for t in design.targets):
            lines.append("note: a power is quadratic in a source's value, so its least value "
                         "over a range may lie inside it; only its ends are checked")
    return lines


def points_json(design: Design) -> list[dict[str, Any]]:
    """One record per operating point: name, source values, resistor values, temperature."""
    return [{"name": p.name, "sources": {k: json_number(v) for k, v in p.sources.items()},
             "resistors": {k: json_number(v) for k, v in p.resistors.items()},
             "temperature": json_number(p.temperature_c)} for p in design.points]
