"""Text tables and JSON records of analysis results.

Pure formatting: functions here take result records and return strings or
JSON-ready dicts; printing and file writing stay in the command line.
"""

from __future__ import annotations

__all__ = [
    "check_json", "check_text", "part_json", "problem_json", "target_json", "window_text",
]

import math
from typing import Any

from tabulate import tabulate

from synth.design.model import Design
from synth.rating import derated_power, hot_spot_binds
from synth.report.linearity import linearity_json, linearity_text
from synth.report.numbers import NOISE_FRACTION, json_number
from synth.report.points import points_json, points_lines
from synth.report.spread import spread_json, spread_text
from synth.report.verdict import check_verdict_text, error_text
from synth.results import CheckResult, PartReport, Problem, TargetReport
from synth.units import format_eng, format_rkm, format_window

_UNIT_OF = {"voltage": "V", "current": "A", "power": "W", "resistance": "Ω", "ratio": ""}


def _quantity(value: float, unit: str, digits: int = 5) -> str:
    if unit == "":
        return f"{value:.{digits}g}"
    return format_eng(value, unit, digits)


def _percent(value: float | None, signed: bool = False) -> str:
    if value is None or not math.isfinite(value):
        return "-"
    if abs(value) < NOISE_FRACTION:
        return "0%"  # float noise of an exact result is not data
    return f"{value * 100:+.3g}%" if signed else f"{value * 100:.3g}%"


def window_text(target: TargetReport) -> str:
    """The hard window of a target as text (``"2.97 V .. 3.03 V"``, ``"at most 1 mA"``)."""
    text = format_window(target.low, target.high, target.unit, 5)
    return "-" if text == "any value" else text


def _part_row(part: PartReport) -> list[str]:
    if part.kind == "resistor":
        value = f"{format_eng(part.value, 'Ω')} ({format_rkm(part.value)})"
    elif part.kind.startswith("controlled"):
        value = f"gain {part.value:.6g}"
    else:
        value = _quantity(part.value, "A" if part.kind == "current source" else "V")
    return [
        part.ref,
        part.kind,
        value,
        format_eng(part.current, "A"),
        format_eng(part.voltage, "V"),
        format_eng(part.power, "W"),
        part.package or "-",
        "-" if part.allowed_power is None else format_eng(part.allowed_power, "W"),
        _percent(part.utilization),
        _percent(part.voltage_utilization),
    ]


def _target_rows(targets: tuple[TargetReport, ...]) -> list[list[str]]:
    return [
        [
            t.label,
            _quantity(t.value, t.unit, 6),
            "-" if t.goal is None else _quantity(t.goal, t.unit, 6),
            error_text(t),
            window_text(t),
            "yes" if t.met else "NO",
        ]
        for t in targets
    ]


def _hot_spot_notes(design: Design, parts: tuple[PartReport, ...]) -> list[str]:
    """A note per package whose own temperature, not its derating line, sets the allowance."""
    notes = []
    hot = design.rating_ambient_c
    for name in dict.fromkeys(p.package for p in parts if p.kind == "resistor" and p.package):
        rating = design.packages[name]
        if rating.thermal_resistance_k_per_w and hot_spot_binds(rating, hot):
            notes.append(
                f"note: {name} at {rating.thermal_resistance_k_per_w:g} K/W reaches its "
                f"zero-power temperature {rating.zero_power_c:g} °C at "
                f"{format_eng(float(derated_power(rating, hot)), 'W')} from {hot:g} °C, "
                "below its derating line: its own temperature sets its allowance")
    return notes


def check_text(result: CheckResult) -> str:
    """The report ``rnsynth check`` prints, in the order of the job.

    The verdict first (with the problems and cautions), then the targets, then
    each part's stress, the supply and the cross-check of the solve, then the
    spread when asked for, and the node voltages last.
    """
    design = result.design
    lines = [design.title or "(untitled design)", f"file: {design.origin}",
             f"ambient {design.ambient_c:g} °C; a part may use up to "
             f"{design.margin_frac * 100:g} % of its derated power and "
             f"{design.voltage_margin_frac * 100:g} % of its limiting element voltage",
             *points_lines(design), ""]
    lines.append("result: " + check_verdict_text(result))
    lines.extend(result.cautions)
    for ref, value in result.filled.items():
        lines.append(f"note: {ref} has no value; checked at its ideal value "
                     f"{format_eng(value, 'Ω', 6)} (run rnsynth design to choose a standard one)")
    if result.targets:
        lines.append("")
        lines.append(tabulate(_target_rows(result.targets),
                              headers=["target", "value", "goal", "error", "window", "met"],
                              disable_numparse=True))
    if result.linearity:
        lines.append("")
        lines.append(linearity_text(result.design.linearities, result.linearity))
    lines.append("")
    at_points = bool(design.points)
    lines.append(tabulate(
        [_part_row(p) + ([p.point or "-"] if at_points else []) for p in result.parts],
        headers=["part", "kind", "value", "current", "voltage", "power", "package",
                 "allowed", "P use", "V use", *(["at point"] if at_points else [])],
        disable_numparse=True,
    ))
    if at_points:
        lines.append("note: each resistor is listed once, at the operating point where it "
                     "uses the most of its allowed dissipation")
    lines.extend(_hot_spot_notes(design, result.parts))
    if any(p.kind == "resistor" and p.package is None for p in result.parts):
        lines.append("note: parts without a package are not checked against a power rating")
    supply = (f"supply current: {format_eng(result.supply_current, 'A')}" if design.has_supply
              else "no supply current (no voltage source or regulator)")
    lines.append(f"{supply}; largest voltage in the circuit: "
                 f"{format_eng(result.max_voltage, 'V')}")
    if result.verify_difference is not None:
        lines.append(f"verify: mesh and nodal solves differ by at most "
                     f"{result.verify_difference:.2e} (relative)")
    if result.spread is not None:
        lines.append("")
        lines.append(spread_text(result.spread, [t.unit for t in result.targets]))
    lines.append("")
    lines.append(tabulate([[name, format_eng(v, "V", 6)] for name, v in result.nodes.items()],
                          headers=["node", "voltage"], disable_numparse=True))
    return "\n".join(lines)


def target_json(target: TargetReport) -> dict[str, Any]:
    """JSON record of one target."""
    return {
        "label": target.label, "kind": target.kind, "unit": target.unit,
        "value": json_number(target.value), "goal": json_number(target.goal),
        "low": json_number(target.low), "high": json_number(target.high),
        "error": json_number(target.error), "met": target.met,
        "error_unit": target.error_unit or ("" if target.relative else target.unit),
        "status": target.status,
        "binding": target.binding, "unlimited_error": json_number(target.unlimited_error),
    }


def problem_json(problem: Problem) -> dict[str, Any]:
    """One problem as typed JSON: kind, subject, value, limit, unit (and the window)."""
    out: dict[str, Any] = {"kind": problem.kind, "subject": problem.subject,
                           "value": json_number(problem.value),
                           "limit": json_number(problem.limit), "unit": problem.unit}
    if problem.kind == "window":
        out["low"], out["high"] = json_number(problem.low), json_number(problem.high)
    out["basis"] = problem.basis
    return out


def part_json(part: PartReport) -> dict[str, Any]:
    """JSON record of one part."""
    return {
        "ref": part.ref, "kind": part.kind, "value": json_number(part.value),
        "current": json_number(part.current), "voltage": json_number(part.voltage),
        "power": json_number(part.power), "package": part.package,
        "rated_power": json_number(part.rated_power),
        "allowed_power": json_number(part.allowed_power),
        "utilization": json_number(part.utilization),
        "limiting_voltage": json_number(part.limiting_voltage),
        "allowed_voltage": json_number(part.allowed_voltage),
        "voltage_utilization": json_number(part.voltage_utilization),
        "position": part.position,
        **({"point": part.point} if part.point is not None else {}),
    }


CHECK_SCHEMA_VERSION = 1  # see synth/schemas/check.schema.json


def check_json(result: CheckResult) -> dict[str, Any]:
    """The JSON document ``rnsynth check --json`` prints."""
    doc: dict[str, Any] = {
        "schema_version": CHECK_SCHEMA_VERSION,
        "file": result.design.origin,
        "title": result.design.title,
        "ok": result.ok,
        "nodes": {k: json_number(v) for k, v in result.nodes.items()},
        "parts": [part_json(p) for p in result.parts],
        "targets": [target_json(t) for t in result.targets],
        "supply_current": (json_number(result.supply_current) if result.design.has_supply
                           else None),
        "max_voltage": json_number(result.max_voltage),
        "problems": [str(p) for p in result.problems],
        "problem_details": [problem_json(p) for p in result.problems],
        "cautions": list(result.cautions),
        "filled": dict(result.filled),
    }
    if result.design.points:
        doc["points"] = points_json(result.design)
    if result.linearity:
        doc["linearity"] = [linearity_json(lin, c) for lin, c in
                            zip(result.design.linearities, result.linearity, strict=True)]
    if result.verify_difference is not None:
        doc["verify"] = {"max_difference": result.verify_difference}
    if result.spread is not None:
        doc["spread"] = spread_json(result.spread)
    return doc
