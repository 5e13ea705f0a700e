"""Text and JSON of a choice of part classes: the least cost, the trade-off front, the tighten
table (``rnsynth design`` of a design whose parts name ``classes``)."""

from __future__ import annotations

__all__ = ["classes_json", "classes_text"]

from typing import Any

from tabulate import tabulate

from synth.least_cost import ClassChoice, FrontPoint
from synth.report.numbers import json_number
from synth.tighten import TightenRow


def _cost(value: float) -> str:
    return f"{value:.4g}"


def _figure(point: FrontPoint, require: str) -> str:
    if require == "yield":
        return "n/a" if point.yield_low is None else f"{point.yield_low * 100:.4g} %"
    return "no design" if point.error is None else f"±{point.error * 100:.3g} %"


def _classes(classes: dict[str, str]) -> str:
    return ", ".join(f"{ref} {name}" for ref, name in classes.items())


def _spread(value: float, nominal: float) -> str:
    return f"±{value / abs(nominal) * 100:.3g} %" if nominal else f"±{value:.3g}"


def _tighten_row(row: TightenRow) -> list[str]:
    return [row.ref, f"{row.from_class} -> {row.to_class}", f"+{_cost(row.added_cost)}",
            row.target, f"{row.share * 100:.3g} %", _spread(row.rss_now, row.nominal),
            _spread(row.rss_after, row.nominal)]


def classes_text(choice: ClassChoice) -> str:
    """The class section of the report: verdict, front and tighten table."""
    require = choice.require
    basis = {"worst-case": "over the tolerance box", "nominal": "at nominal values",
             "yield": "in yield"}[require]
    if choice.classes is not None and choice.cost is not None:
        state = "proven least cost" if choice.proven else "least cost found, NOT proven"
        lines = [f"classes: {_classes(choice.classes)}, cost {_cost(choice.cost)} "
                 f"({state}; requirement {basis})"]
    else:
        state = "proven" if choice.proven else "NOT proven"
        lines = [f"classes: no class assignment meets the requirement {basis} ({state})"]
    if choice.why_not_proven:
        lines.append(f"  not proven: {choice.why_not_proven}")
    lines.append(f"  {choice.searched:,} of {choice.assignments:,} class assignments "
                 f"searched, {choice.elapsed_s:.2f} s")
    figure = {"worst-case": "best worst-case error", "nominal": "best nominal error",
              "yield": "best yield (95 % lower bound)"}[require]
    lines.append("")
    lines.append(f"trade-off front (the best design at each cost or less; {figure}):")
    rows = [[_cost(p.cost), _figure(p, require), "yes" if p.meets else "no",
             _classes(p.classes), str(p.assignments)] for p in choice.front]
    lines.append(tabulate(rows, headers=["cost", figure.removeprefix("best "), "meets",
                                         "classes", "assignments"], disable_numparse=True))
    if not choice.front_complete and len(choice.front) > 1:
        lines.append(f"  the cost levels between {_cost(choice.front[-2].cost)} and "
                     f"{_cost(choice.front[-1].cost)} were not searched (the front's time "
                     "ran out); each level shown is exact")
    if choice.tighten:
        lines.append("")
        lines.append("which part to tighten (RSS of each target if that part alone moves to "
                     "its next tighter class):")
        lines.append(tabulate([_tighten_row(r) for r in choice.tighten],
                              headers=["part", "class", "cost", "target", "share now",
                                       "RSS now", "RSS after"], disable_numparse=True))
    return "\n".join(lines)


def classes_json(choice: ClassChoice) -> dict[str, Any]:
    """The ``classes`` member of ``rnsynth design --json`` (see docs/output.md)."""
    return {
        "require": choice.require,
        "chosen": choice.classes,
        "cost": json_number(choice.cost),
        "proven": choice.proven,
        "why_not_proven": choice.why_not_proven,
        "assignments": choice.assignments,
        "searched": choice.searched,
        "elapsed_s": choice.elapsed_s,
        "front_complete": choice.front_complete,
        "front": [{"cost": p.cost, "classes": dict(p.classes),
                   "cost_of_design": p.cost_of_design, "error": json_number(p.error),
                   "yield_low": json_number(p.yield_low), "meets": p.meets,
                   "assignments": p.assignments} for p in choice.front],
        "tighten": [{"ref": r.ref, "from_class": r.from_class, "to_class": r.to_class,
                     "added_cost": r.added_cost, "target": r.target,
                     "share": r.share, "rss_now": r.rss_now, "rss_after": r.rss_after,
                     "nominal": r.nominal} for r in choice.tighten],
    }
