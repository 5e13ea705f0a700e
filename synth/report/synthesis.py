"""Text tables and JSON records of synthesis results (``rnsynth design`` and quick commands)."""

from __future__ import annotations

__all__ = ["design_json", "design_text"]

from typing import Any

from tabulate import tabulate

from synth.design.model import Design
from synth.design.points import COPY_MARK
from synth.report.check import part_json, problem_json, target_json
from synth.report.linearity import linearity_json, linearity_text
from synth.report.numbers import json_number
from synth.report.points import points_json, points_lines
from synth.report.spread import spread_json, spread_text
from synth.report.verdict import error_text, verdict_text
from synth.results import Candidate, SynthesisResult, TargetReport
from synth.units import format_eng

_UNIT_DIGITS = 5


def _target_cell(t: TargetReport) -> str:
    value = format_eng(t.value, t.unit, _UNIT_DIGITS) if t.unit else f"{t.value:.6g}"
    if t.goal is not None and t.goal != 0 and t.error is not None:
        value += f" ({error_text(t)})"
    if not t.met:
        value += " OUT"
    elif t.status == "goal missed":
        value += " MISSED"
    return value


def _columns(design: Design) -> list[tuple[str, list[int]]]:
    """The ranked table's target columns: one per target, except that the grid points of a
    linearity target (judged in °C) share one column, headed by its label."""
    columns: list[tuple[str, list[int]]] = []
    grouped: dict[str, list[int]] = {}
    for k, t in enumerate(design.targets):
        if t.reading is None:
            columns.append((t.label, [k]))
            continue
        base = t.label.rsplit(f" {COPY_MARK} ", 1)[0]
        if base not in grouped:
            grouped[base] = []
            columns.append((f"{base} (largest on grid)", grouped[base]))
        grouped[base].append(k)
    return columns


def _group_cell(targets: list[TargetReport]) -> str:
    if len(targets) == 1 and targets[0].error_unit is None:
        return _target_cell(targets[0])
    worst = max(targets, key=lambda t: abs(t.error or 0.0))
    where = worst.label.rsplit(f" {COPY_MARK} ", 1)[-1]
    cell = f"{error_text(worst)} at {where}"
    return cell + (" OUT" if not all(t.met for t in targets) else "")


def _worst_term(candidate: Candidate) -> TargetReport | None:
    """The goal target whose error sets the candidate's objective."""
    goals = [t for t in candidate.targets if t.goal is not None and t.error is not None]
    if not goals:
        return None

    def term(t: TargetReport) -> float:
        half = max(abs(t.high - (t.goal or 0.0)), 1e-300)
        scale = half if t.error_unit else abs(t.goal or 0.0) or half
        return abs(t.value - (t.goal or 0.0)) / scale

    return max(goals, key=term)


def _error_cells(candidate: Candidate) -> list[str]:
    """Nominal, worst-case and RSS error of the target that sets the objective, in its terms."""
    worst = _worst_term(candidate)
    s = candidate.spread
    if worst is None or s is None:
        return ["-", "-", "-"]
    spread = next(x for x in s.targets if x.label == worst.label)
    goal = worst.goal or 0.0
    if worst.relative:
        wc = max(abs(spread.worst_low - goal), abs(spread.worst_high - goal)) / abs(goal)
        return [error_text(worst), f"{wc * 100:.3g}%", f"{spread.rss * 100:.3g}%"]
    target = next((t for t in candidate.check.design.targets if t.label == worst.label), None)
    if target is not None and target.reading is not None:  # judged in °C: V over the slope
        unit, per = target.reading
        wc = max(abs(spread.worst_low - goal), abs(spread.worst_high - goal)) / abs(per)
        return [error_text(worst), f"{wc:.3g} {unit}", f"{spread.rss_abs / abs(per):.3g} {unit}"]
    wc = max(abs(spread.worst_low - goal), abs(spread.worst_high - goal))
    return [error_text(worst), format_eng(wc, worst.unit, 4), format_eng(spread.rss_abs,
                                                                         worst.unit, 4)]


def _row(candidate: Candidate, refs: list[str],
         columns: list[tuple[str, list[int]]], supply: bool = True) -> list[str]:
    cells = [str(candidate.rank)]
    for ref in refs:
        value = candidate.values.get(ref)
        cells.append("-" if value is None else
                     f"{format_eng(value, 'Ω', 4)} {candidate.series.get(ref, '')}".strip())
    cells += [_group_cell([candidate.targets[k] for k in ks]) for _, ks in columns]
    hot = candidate.hottest
    cells.append("-" if hot is None or hot.utilization is None
                 else f"{hot.ref} {hot.utilization * 100:.3g}%")
    if supply:  # a design without a voltage source or regulator has no supply current
        cells.append(format_eng(candidate.supply_current, "A"))
    if candidate.spread is not None:
        s = candidate.spread
        cells += [*_error_cells(candidate),
                  "-" if s.yield_fraction is None else f"{s.yield_fraction * 100:.4g}%"]
    return cells


def design_text(result: SynthesisResult) -> str:
    """The report ``rnsynth design`` prints: search summary, ideal values, ranked table."""
    design = result.design
    where = "built from" if design.origin.startswith("rnsynth ") else "file"
    lines = [design.title or "(untitled design)", f"{where}: {design.origin}",
             *points_lines(design)]
    state = ("proven optimal" if result.proven_optimal else "NOT proven optimal (time limit)"
             if result.time_limit_s is not None else "NOT proven optimal (search cut short)")
    lines.append(f"search: {result.combinations:,} combinations, {result.evaluated:,} "
                 f"solved, {result.elapsed_s:.2f} s, {state}")
    if result.cuts:
        lines.append("cut short:" if result.time_limit_s is None else
                     f"cut to fit the time limit of {result.time_limit_s:g} s:")
        lines.extend(f"  {cut}" for cut in result.cuts)
    if result.ideal:
        ideal = ", ".join(f"{ref} = {format_eng(v, 'Ω', 6)}" for ref, v in result.ideal.items())
        lines.append(f"ideal values: {ideal}")
    lines.append("")
    if not result.candidates:
        lines.append("no candidate could be evaluated")
        return "\n".join(lines)
    refs = list(result.candidates[0].values)
    columns = _columns(design)
    supply = design.has_supply
    headers = ["rank", *refs, *[label for label, _ in columns], "hottest",
               *(["supply"] if supply else [])]
    if result.candidates[0].spread is not None:
        headers += ["nominal error", "worst-case error", "RSS", "yield"]
        phrase = {"nominal": "nominal error", "yield": "Monte Carlo yield",
                  "worst-case": "worst-case error over the tolerance box"}[result.rank_by]
        lines.append(f"ranked by {phrase}")
    lines.append(tabulate([_row(c, refs, columns, supply) for c in result.candidates],
                          headers=headers, disable_numparse=True))
    lines.append("")
    best = result.candidates[0]
    lines.extend(verdict_text(result))
    if result.considered > len(result.candidates) and (result.rank_by == "yield"
                                                       or result.require == "yield"):
        lines.append(f"yield was estimated for the nominal best {result.considered} "
                     "candidates and ranks them all")
    hot = best.hottest
    if hot is not None and hot.utilization is not None:
        lines.append(f"hottest part of the best design: {hot.ref} at "
                     f"{format_eng(hot.power, 'W')}, {hot.utilization * 100:.3g}% of its "
                     f"allowed {format_eng(hot.allowed_power or 0.0, 'W')}")
    if best.check.linearity:
        lines.append("")
        lines.append(linearity_text(best.check.design.linearities, best.check.linearity))
    if best.spread is not None:
        lines.append("")
        lines.append("spread of the best design:")
        lines.append(spread_text(best.spread, [t.unit for t in best.targets]))
    lines.extend(best.check.cautions)
    return "\n".join(lines)


def _candidate_json(candidate: Candidate) -> dict[str, Any]:
    supplied = candidate.check.design.has_supply
    return {
        "rank": candidate.rank,
        "values": dict(candidate.values),
        "positions": dict(candidate.positions),
        "series": dict(candidate.series),
        "objective": json_number(candidate.objective),
        "feasible": candidate.feasible,
        "supply_current": json_number(candidate.supply_current) if supplied else None,
        "targets": [target_json(t) for t in candidate.targets],
        "parts": [part_json(p) for p in candidate.parts],
        "problems": [str(p) for p in candidate.problems],
        "problem_details": [problem_json(p) for p in candidate.problems],
        **({"spread": spread_json(candidate.spread)} if candidate.spread is not None else {}),
        **({"linearity": [linearity_json(lin, c) for lin, c in
                          zip(candidate.check.design.linearities, candidate.check.linearity,
                              strict=True)]} if candidate.check.linearity else {}),
    }


DESIGN_SCHEMA_VERSION = 1  # see synth/schemas/design.schema.json


def design_json(result: SynthesisResult) -> dict[str, Any]:
    """The JSON document ``rnsynth design --json`` prints."""
    best = result.candidates[0] if result.candidates else None
    return {
        "schema_version": DESIGN_SCHEMA_VERSION,
        "file": result.design.origin,
        "title": result.design.title,
        "proven_optimal": result.proven_optimal,
        "feasible": result.feasible,
        "binding": result.binding,
        "ideal": dict(result.ideal),
        "combinations": result.combinations,
        "evaluated": result.evaluated,
        "elapsed_s": result.elapsed_s,
        "rank_by": result.rank_by,
        "require": result.require,
        "min_yield": json_number(result.min_yield),
        "considered": result.considered,
        "unlimited_objective": json_number(result.unlimited_objective),
        "binding_limits": [problem_json(p) for p in result.binding_limits],
        "time_limit_s": json_number(result.time_limit_s),
        "cuts": [{"stage": c.stage, "note": c.note, "asked": c.asked, "done": c.done}
                 for c in result.cuts],
        "verdict": verdict_text(result)[0].removeprefix("result: "),
        "candidates": [_candidate_json(c) for c in result.candidates],
        "cautions": list(best.check.cautions) if best else [],
        **({"points": points_json(result.design)} if result.design.points else {}),
    }
