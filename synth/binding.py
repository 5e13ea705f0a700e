"""What a limit costs: naming the limit that binds, in the trade's words.

When a design misses a goal (or cannot meet a window), the useful answer is
which limit is in the way and by how much.  :func:`limit_text` phrases one
part's broken allowance ("R1 would see 44.67 V; 0603 allows 40 V at 80 %
use; a larger package or a series string fixes it"); :func:`nearest_text`
names what the nearest design breaks most.
"""

from __future__ import annotations

__all__ = ["limit_text", "nearest_text"]

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


def nearest_text(candidate: Candidate) -> str:
    """The problem the nearest design breaks most, in words.

    Windows count by their gap over the goal (or the window edge), limits by
    their share over the allowance: the same measure that orders the nearest
    designs (see docs/design-file.md, "Nearest designs").
    """
    worst, text = -math.inf, "a target or limit"
    for problem in candidate.problems:
        if problem.kind == "window":
            target = next(t for t in candidate.targets if t.label == problem.subject)
            scale = abs(target.goal) if target.goal else max(abs(problem.limit), 1e-300)
            gap = abs(problem.value - problem.limit) / scale
            described = f"target {problem.subject!r} ({problem})"
        else:
            gap = problem.value / problem.limit - 1 if problem.limit > 0 else math.inf
            described = limit_text(candidate.check.design, problem)
        if gap > worst:
            worst, text = gap, described
    return text
