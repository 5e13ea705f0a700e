"""The verdict line and each target's status, in words (no computation here).

The verdict always says on which basis it holds (nominal values, the whole
tolerance box, or a Monte Carlo yield) and shows the yield beside it when the
spread was analysed.  It never says a design "meets" its targets when a goal
was traded away for a limit: each target carries a status
(:attr:`synth.results.TargetReport.status`).
"""

from __future__ import annotations

__all__ = [
    "basis_text", "check_verdict_text", "error_text", "status_text", "verdict_text",
]

from dataclasses import replace

from synth.report.numbers import NOISE_FRACTION
from synth.results import Candidate, CheckResult, SynthesisResult, TargetReport
from synth.units import format_eng


def error_text(target: TargetReport) -> str:
    """A goal's error: per cent for a non-zero goal, the target's unit for a zero goal."""
    if target.error is None:
        return "-"
    if target.error_unit:
        return f"{target.error:+.3g} {target.error_unit}"
    if target.relative:
        if abs(target.error) < NOISE_FRACTION:
            return "0%"  # float noise of an exact result is not data
        if target.kind in ("gain", "offset") and target.goal is not None:
            # a transfer's gain and offset errors in their own units as well
            return (f"{target.error * 100:+.3g}%, "
                    f"{_signed(format_eng(target.value - target.goal, target.unit, 4))}")
        return f"{target.error * 100:+.3g}%"
    return format_eng(target.error, target.unit, 4) if target.unit else f"{target.error:+.4g}"


def _signed(text: str) -> str:
    return text if text.startswith(("-", "+")) else f"+{text}"


def basis_text(result: SynthesisResult) -> str:
    """On which basis the windows and limits were required to hold."""
    if result.require == "worst-case":
        return "over the whole tolerance box (worst case)"
    if result.require == "yield" and result.min_yield is not None:
        return (f"with a Monte Carlo yield of at least {result.min_yield * 100:g} % "
                "(95 % lower confidence bound)")
    return "at nominal values"


def _yield_text(candidate: Candidate | CheckResult) -> str:
    spread = candidate.spread
    if spread is None or spread.yield_fraction is None:
        return ""
    text = f"; Monte Carlo yield {spread.yield_fraction * 100:.4g} %"
    if spread.yield_interval is not None:
        low, high = spread.yield_interval
        text += f" (95 % interval {low * 100:.4g} .. {high * 100:.4g} %)"
    return text


def status_text(target: TargetReport) -> str:
    """One target's status in words."""
    if target.status == "goal missed":
        missed = error_text(target)
        free = ""
        if target.unlimited_error is not None:
            unlimited = replace(target, error=target.unlimited_error)
            free = f"; without that limit the standard values reach {error_text(unlimited)}"
        return f"goal missed by {missed} because a limit binds ({target.binding}){free}"
    if target.status == "soft goal":
        return f"soft goal, {error_text(target)} (as near as the standard values allow)"
    if target.status == "out of window":
        return "OUT of its window"
    if target.status == "out of band":
        return "met at nominal values, out of its window on the required basis"
    return "met"


def verdict_text(result: SynthesisResult) -> list[str]:
    """The verdict lines of a synthesis report."""
    best = result.candidates[0] if result.candidates else None
    if best is None:
        return ["result: no candidate could be evaluated"]
    if result.feasible:
        missed = [t for t in best.targets if t.status == "goal missed"]
        if missed:
            head = (f"result: the best design meets every window and limit {basis_text(result)}"
                    f", but {len(missed)} goal(s) are missed because a limit binds")
        else:
            head = (f"result: the best design meets every window and limit "
                    f"{basis_text(result)}")
        lines = [head + _yield_text(best)]
    else:
        proven = result.proven_optimal
        head = (f"NO standard values meet every window and limit {basis_text(result)}" if proven
                else "the search's designs meet every window and limit with each matched "
                     "array's common deviation at its two ends only; with it scanned inside "
                     "its range none of those shown does"
                if result.common_mode_rejected
                else "no design meeting every window and limit was found within the time "
                     "limit (give the search more time)")
        tail = f"; the nearest designs are shown. Binding: {result.binding}" if (
            result.binding) else ""
        lines = [f"result: {head}{tail}{_yield_text(best)}"]
        lines.extend(f"  best design: {p}" for p in best.problems)
    if result.design.arrays and "worst-case" in (result.require, result.rank_by):
        lines.append("note: the search judged each matched array's common deviation at its "
                     "two ends only; the designs shown were judged again with it scanned "
                     "(see their spread)")
    lines.append("targets of the best design:")
    lines.extend(f"  {t.label}: {status_text(t)}" for t in best.targets)
    return lines


def check_verdict_text(result: CheckResult) -> str:
    """The verdict of a checked design (without the ``result:`` prefix), on the design's basis.

    Every problem is named when it fails; the Monte Carlo yield is shown when it was
    estimated.
    """
    basis = {"worst-case": "over the whole tolerance box (worst case)",
             "yield": "with the required Monte Carlo yield"}.get(result.design.require,
                                                                  "at nominal values")
    verdict = ("all targets met, all parts within their allowance " + basis if result.ok
               else "FAILS: " + "; ".join(map(str, result.problems)))
    if result.ok and result.design.require == "worst-case":
        verdict += _scanned_text(result)
    return verdict + _yield_text(result)


def _scanned_text(result: CheckResult) -> str:
    """Which worst cases were scanned along a matched array's common deviation, not proven."""
    spread = result.spread
    scanned = [] if spread is None else [t.label for t in spread.targets
                                         if t.method == "vertices, common mode scanned"]
    if not scanned:
        return ""
    return (f" (not proven for {', '.join(scanned)}: a matched array's common deviation was "
            "scanned, not bounded)")
