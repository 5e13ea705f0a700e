"""A sweep's results as a table, CSV or JSON (no computation here).

Every format has one row per grid point, in grid order (first axis slowest): the swept
values, the verdict, the largest error (the objective), whether the search proved its
best design optimal, the supply current, the chosen values, each target's value and the
note saying why a point fails.
"""

from __future__ import annotations

__all__ = ["SWEEP_FORMATS", "SWEEP_SCHEMA_VERSION", "render_sweep", "sweep_csv", "sweep_json",
           "sweep_rows", "sweep_summary", "sweep_text"]

import csv
import io
import json
import math
from typing import Any

from tabulate import tabulate

from synth.sweep import SweepAxis, SweepPoint, SweepResult
from synth.units import format_eng, format_percent

SWEEP_FORMATS = ("table", "csv", "json")

SWEEP_SCHEMA_VERSION = 1


def _finite(value: float | None) -> float | None:
    return value if value is not None and math.isfinite(value) else None


def _refs(result: SweepResult) -> list[str]:
    """Every chosen part's designator over the sweep, in order of first appearance."""
    return list(dict.fromkeys(ref for p in result.points for ref in (p.chosen or {})))


def _labels(result: SweepResult) -> list[str]:
    return list(dict.fromkeys(label for p in result.points for label in (p.targets or {})))


def _swept(axis: SweepAxis, value: float) -> str:
    if axis.unit == "%":
        return format_percent(value, 6)
    if axis.unit == "ppm/C":
        return f"{value * 1e6:.6g} ppm/C"
    if axis.unit == "C":
        return f"{value:.6g} °C"
    return format_eng(value, axis.unit, 6)


def sweep_rows(result: SweepResult) -> list[dict[str, Any]]:
    """One flat row per point (the CSV's columns), numbers in SI units, None for none."""
    refs, labels = _refs(result), _labels(result)
    rows = []
    for point in result.points:
        row: dict[str, Any] = {axis.key: value
                               for axis, value in zip(result.axes, point.values, strict=True)}
        row.update({"mode": point.mode, "verdict": point.verdict,
                    "largest_error": _finite(point.objective), "proven": point.proven,
                    "supply_current": _finite(point.supply_current)})
        row.update({ref: (point.chosen or {}).get(ref) for ref in refs})
        row.update({f"target: {label}": _finite((point.targets or {}).get(label))
                    for label in labels})
        row["note"] = point.note
        rows.append(row)
    return rows


def sweep_csv(result: SweepResult) -> str:
    """The CSV text: a header row, then one row per point (empty cells for none)."""
    rows = sweep_rows(result)
    buffer = io.StringIO()
    columns = list(rows[0]) if rows else [a.key for a in result.axes]
    writer = csv.DictWriter(buffer, fieldnames=columns, lineterminator="\n")
    writer.writeheader()
    for row in rows:
        writer.writerow({key: "" if value is None else repr(value) if isinstance(value, float)
                         else str(value).lower() if isinstance(value, bool) else value
                         for key, value in row.items()})
    return buffer.getvalue()


def _point_json(result: SweepResult, point: SweepPoint) -> dict[str, Any]:
    return {
        "values": {axis.key: value for axis, value in zip(result.axes, point.values,
                                                          strict=True)},
        "mode": point.mode,
        "verdict": point.verdict,
        "largest_error": _finite(point.objective),
        "proven": point.proven,
        "supply_current": _finite(point.supply_current),
        "chosen": dict(point.chosen or {}),
        "targets": {label: _finite(v) for label, v in (point.targets or {}).items()},
        "note": point.note,
    }


def sweep_json(result: SweepResult) -> dict[str, Any]:
    """The JSON document of ``rnsynth sweep --format json`` (see sweep.schema.json)."""
    return {
        "schema_version": SWEEP_SCHEMA_VERSION,
        "file": result.origin,
        "ok": result.ok,
        "axes": [{"key": a.key, "unit": a.unit, "spacing": a.spacing, "values": list(a.values)}
                 for a in result.axes],
        "points": [_point_json(result, p) for p in result.points],
    }


def _cell(value: float | None, unit: str) -> str:
    return "-" if value is None or not math.isfinite(value) else format_eng(value, unit)


def sweep_text(result: SweepResult) -> str:
    """The table of ``rnsynth sweep``: one row per point, then the summary line."""
    refs = _refs(result)
    headers = [*(a.key for a in result.axes), "verdict", "largest error", "proven",
               "supply", *refs, "note"]
    body = []
    for point in result.points:
        error = point.objective
        body.append([
            *(_swept(a, v) for a, v in zip(result.axes, point.values, strict=True)),
            point.verdict,
            "-" if error is None or not math.isfinite(error) else f"{error * 100:.4g}%",
            "-" if point.proven is None else "yes" if point.proven else "no",
            _cell(point.supply_current, "A"),
            *(_cell((point.chosen or {}).get(ref), "Ω") for ref in refs),
            point.note or "",
        ])
    table = tabulate(body, headers=headers, tablefmt="simple", disable_numparse=True)
    return f"{table}\n\n{sweep_summary(result)}"


def sweep_summary(result: SweepResult) -> str:
    """One line: how many points, how many meet, fail or could not be calculated."""
    count = {v: sum(p.verdict == v for p in result.points) for v in ("meets", "fails", "error")}
    text = (f"sweep of {result.origin}: {len(result.points)} point(s), {count['meets']} meet "
            f"every window and limit, {count['fails']} fail")
    if count["error"]:
        text += f", {count['error']} could not be calculated"
    return text


def render_sweep(result: SweepResult, form: str) -> str:
    """The sweep in one of :data:`SWEEP_FORMATS`, as text ending in a newline."""
    if form == "csv":
        return sweep_csv(result)
    if form == "json":
        return json.dumps(_strict(sweep_json(result)), indent=2, ensure_ascii=False,
                          allow_nan=False) + "\n"
    return sweep_text(result) + "\n"


def _strict(value: Any) -> Any:
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {key: _strict(item) for key, item in value.items()}
    if isinstance(value, list):
        return [_strict(item) for item in value]
    return value
