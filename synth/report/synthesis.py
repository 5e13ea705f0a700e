"""Text tables and JSON records of synthesis results (``rnsynth design`` and quick commands)."""

from __future__ import annotations

__all__ = ["design_json", "design_text"]

from typing import Any

from tabulate import tabulate

from synth.report.check import part_json, problem_json, target_json
from synth.report.numbers import json_number
from synth.report.spread import spread_json, spread_text
from synth.results import Candidate, SynthesisResult
from synth.units import format_eng

_UNIT_DIGITS = 5


def _target_cell(t: Any) -> str:
    value = format_eng(t.value, t.unit, _UNIT_DIGITS) if t.unit else f"{t.value:.6g}"
    if t.goal is not None and t.goal != 0 and t.error is not None:
        value += f" ({t.error * 100:+.3g}%)"
    if not t.met:
        value += " OUT"
    return value


def _row(candidate: Candidate, refs: list[str]) -> list[str]:
    cells = [str(candidate.rank)]
    for ref in refs:
        value = candidate.values.get(ref)
        cells.append("-" if value is None else
                     f"{format_eng(value, 'Ω', 4)} {candidate.series.get(ref, '')}".strip())
    cells += [_target_cell(t) for t in candidate.targets]
    hot = candidate.hottest
    cells.append("-" if hot is None or hot.utilization is None
                 else f"{hot.ref} {hot.utilization * 100:.3g}%")
    cells.append(format_eng(candidate.supply_current, "A"))
    if candidate.spread is not None:
        s = candidate.spread
        cells += [f"{candidate.objective * 100:.3g}%", f"{s.worst_error * 100:.3g}%",
                  f"{s.rss_error * 100:.3g}%",
                  "-" if s.yield_fraction is None else f"{s.yield_fraction * 100:.4g}%"]
    return cells


def design_text(result: SynthesisResult) -> str:
    """The report ``rnsynth design`` prints: search summary, ideal values, ranked table."""
    design = result.design
    where = "built from" if design.origin.startswith("rnsynth ") else "file"
    lines = [design.title or "(untitled design)", f"{where}: {design.origin}"]
    state = "proven optimal" if result.proven_optimal else "NOT proven optimal (time limit)"
    lines.append(f"search: {result.combinations:,} combinations, {result.evaluated:,} "
                 f"solved, {result.elapsed_s:.2f} s, {state}")
    if result.ideal:
        ideal = ", ".join(f"{ref} = {format_eng(v, 'Ω', 6)}" for ref, v in result.ideal.items())
        lines.append(f"ideal values: {ideal}")
    lines.append("")
    if not result.candidates:
        lines.append("no candidate could be evaluated")
        return "\n".join(lines)
    refs = list(result.candidates[0].values)
    headers = ["rank", *refs, *[t.label for t in design.targets], "hottest", "supply"]
    if result.candidates[0].spread is not None:
        headers += ["nominal error", "worst-case error", "RSS", "yield"]
        phrase = {"nominal": "nominal error", "yield": "Monte Carlo yield",
                  "worst-case": "worst-case error over the tolerance box"}[result.rank_by]
        lines.append(f"ranked by {phrase}")
    lines.append(tabulate([_row(c, refs) for c in result.candidates], headers=headers,
                          disable_numparse=True))
    lines.append("")
    best = result.candidates[0]
    if result.feasible:
        lines.append("result: the best design meets every target window and limit")
    else:
        head = ("NO standard values meet every window and limit" if result.proven_optimal
                else "no design meeting every window and limit was found within the time "
                     "limit (give the search more time)")
        tail = f"; the nearest designs are shown. Binding: {result.binding}" if (
            result.binding) else ""
        lines.append(f"result: {head}{tail}")
        lines.extend(f"  best design: {p}" for p in best.problems)
    hot = best.hottest
    if hot is not None and hot.utilization is not None:
        lines.append(f"hottest part of the best design: {hot.ref} at "
                     f"{format_eng(hot.power, 'W')}, {hot.utilization * 100:.3g}% of its "
                     f"allowed {format_eng(hot.allowed_power or 0.0, 'W')}")
    if best.spread is not None:
        lines.append("")
        lines.append("spread of the best design:")
        lines.append(spread_text(best.spread, [t.unit for t in best.targets]))
    lines.extend(best.check.cautions)
    return "\n".join(lines)


def _candidate_json(candidate: Candidate) -> dict[str, Any]:
    return {
        "rank": candidate.rank,
        "values": dict(candidate.values),
        "positions": dict(candidate.positions),
        "series": dict(candidate.series),
        "objective": json_number(candidate.objective),
        "feasible": candidate.feasible,
        "supply_current": json_number(candidate.supply_current),
        "targets": [target_json(t) for t in candidate.targets],
        "parts": [part_json(p) for p in candidate.parts],
        "problems": [str(p) for p in candidate.problems],
        "problem_details": [problem_json(p) for p in candidate.problems],
        **({"spread": spread_json(candidate.spread)} if candidate.spread is not None else {}),
    }


def design_json(result: SynthesisResult) -> dict[str, Any]:
    """The JSON document ``rnsynth design --json`` prints."""
    best = result.candidates[0] if result.candidates else None
    return {
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
        "candidates": [_candidate_json(c) for c in result.candidates],
        "cautions": list(best.check.cautions) if best else [],
    }
