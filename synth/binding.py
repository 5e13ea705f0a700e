"""What a limit costs: naming the limit that binds, in the trade's words.

When a design misses a goal (or cannot meet a window), the useful answer is
which limit is in the way and by how much.  :func:`limit_text` phrases one
part's broken allowance ("R1 would see 44.67 V; 0603 allows 40 V at 80 %
use; a larger package or a series string fixes it"); :func:`nearest_text`
names what the nearest design breaks most.
"""

from __future__ import annotations

__all__ = ["distance", "limit_text", "nearest_text", "problem_gap"]

import math

from synth.design.model import Design
from synth.results import Candidate, Problem
from synth.units import format_eng


def limit_text(design: Design, problem: Problem) -> str:
    """One part's broken allowance, with the package, the use limit and the usual fixes."""
    found = design.position_of(problem.subject)
    resistor = design.resistors[found[0]] if found else None
    allowance = design.allowance(resistor) if resistor else None
    value = format_eng(problem.value, problem.unit)
    limit = format_eng(problem.limit, problem.unit)
    if allowance is None:
        return f"{problem.subject}: {problem}"
    if problem.kind == "voltage":
        return (f"{problem.subject} would see {value}; {allowance.package} allows {limit} at "
                f"{allowance.max_voltage_use * 100:g} % use of its "
                f"{format_eng(allowance.limiting_voltage_v, 'V')} limiting voltage; a larger "
                "package or a series string fixes it")
    return (f"{problem.subject} would dissipate {value}; {allowance.package} allows {limit} "
            f"({allowance.max_power_use * 100:g} % of {format_eng(allowance.rated_power_w, 'W')}"
            f" derated to {allowance.ambient_c:g} °C); a larger package or a parallel pair "
            "fixes it")


def problem_gap(candidate: Candidate, problem: Problem) -> float:
    """How far one problem lies from feasibility (the measure of "nearest").

    A window by its gap beyond the edge, in units of the goal (or of the edge when
    the goal is zero or absent); a part limit by its share over the allowance (a
    part allowed nothing is infinitely over); a yield by its shortfall's share of
    ``min_yield``.  See docs/design-file.md, "Nearest designs".
    """
    if problem.kind == "window":
        target = next((t for t in candidate.targets if t.label == problem.subject), None)
        goal = target.goal if target is not None else None
        scale = abs(goal) if goal else max(abs(problem.limit), 1e-300)
        return abs(problem.value - problem.limit) / scale
    if problem.limit <= 0:
        return math.inf
    if problem.kind == "yield":
        return (problem.limit - problem.value) / problem.limit
    return problem.value / problem.limit - 1


def distance(candidate: Candidate) -> float:
    """A candidate's distance from feasibility: its largest :func:`problem_gap` (0 if none)."""
    return max((problem_gap(candidate, p) for p in candidate.problems), default=0.0)


def nearest_text(candidate: Candidate) -> str:
    """The problem the nearest design breaks most, in words (by :func:`problem_gap`)."""
    worst, text = -math.inf, "a target or limit"
    for problem in candidate.problems:
        gap = problem_gap(candidate, problem)
        if gap > worst:
            worst, text = gap, (f"target {problem.subject!r} ({problem})"
                                if problem.kind == "window"
                                else str(problem) if problem.kind == "linearity"
                                else limit_text(candidate.check.design, problem))
    return text
