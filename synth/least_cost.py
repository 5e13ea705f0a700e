"""Least cost over part classes: which class to buy each free part in, and what tighter buys.

A design whose free parts name ``classes`` (:mod:`synth.design.read_classes`) leaves two
choices open: each part's class and its value.  :func:`choose_classes` settles both.  It
lists every assignment of classes to parts, cheapest first (the cost of a position is its
class's cost times its parts), and runs the exact value search for each on the design's
basis (``require``: under ``"worst-case"`` the branch and bound of
:func:`synth.search.parallel.search` keeping only value sets that hold over the whole box,
as :func:`synthesize` runs it; otherwise :func:`synthesize` itself), and designs the
chosen assignment in full by :func:`synthesize`.  The first cost level at which an
assignment meets the requirement is the least cost, and among that level's assignments
the one of least error is chosen.  Every cheaper assignment has been searched and found short, so
the least cost is proven when every search was (``require = "worst-case"`` or
``"nominal"``; a yield judged on Monte Carlo samples among each assignment's nominal
best is never called proven).

The trade-off front lists, for each cost level searched, the best design at that cost or
less: one that meets the requirement before one that does not, then the least error (with
``require = "yield"``: the highest yield).  The tighten table says, for each classed part
of the chosen design, what each target's root-sum-square spread becomes when that part
alone moves to its next tighter class.
"""

from __future__ import annotations

__all__ = ["FRONT_S", "ClassChoice", "FrontPoint", "choose_classes",
           "class_assignments",
           "classed_positions", "with_classes"]

import itertools
import math
import time
from collections.abc import Callable
from dataclasses import dataclass, replace

from synth.catalog.part_classes import PartClass
from synth.deadline import Deadline
from synth.design.model import Design, Resistor
from synth.errors import DesignError
from synth.results import SynthesisResult
from synth.search.parallel import search
from synth.search.start import start_search
from synth.spread.records import SpreadSettings
from synth.spread.worst_case import WorstCase
from synth.synthesis import synthesize
from synth.tighten import TightenRow, tighten_rows

FRONT_S = 2.0
"""Seconds the searches above the least cost may take: they add whole cost levels to the
trade-off front (what a dearer assignment buys), cheapest first, and prove nothing more
about the least cost.  The dearest level is searched after them either way."""

_COST_DIGITS = 9
"""Costs equal to this many decimals are one cost level (sums of decimal costs)."""


@dataclass(frozen=True)
class FrontPoint:
    """One cost level of the trade-off front: the best design at this cost or less.

    Attributes
    ----------
    cost : float
        The level's total cost (sum over the classed positions of class cost × parts).
    classes : dict of str to str
        The class of each classed position in the design behind the figures.
    cost_of_design : float
        That design's own total cost (at most ``cost``).
    error : float or None
        Its error: the largest worst-case relative error over the box (``require =
        "worst-case"``), else the largest nominal relative error; None when no value
        set meets even the nominal windows and limits.
    yield_low : float or None
        With ``require = "yield"``: its yield's 95 % lower bound.
    meets : bool
        True when that design meets the requirement.
    assignments : int
        Class assignments at exactly this cost level (all searched).
    """

    cost: float
    classes: dict[str, str]
    cost_of_design: float
    error: float | None
    yield_low: float | None
    meets: bool
    assignments: int


@dataclass(frozen=True)
class ClassChoice:
    """The result of :func:`choose_classes`.

    Attributes
    ----------
    result : SynthesisResult
        The value search of the chosen assignment (or, when none meets the
        requirement, of the best one found), with the candidates asked for.
    classes : dict of str to str or None
        The chosen class of each classed position; None when none meets.
    cost : float or None
        Its total cost; None when none meets.
    proven : bool
        True only when the least cost is proven: every assignment cheaper than
        the chosen one (all of them when none meets) and every one at its level was
        searched to the end, exactly, without a time cut.
    front : tuple of FrontPoint
        The trade-off front, cheapest first: every level up to the least cost, the
        levels above it that :data:`FRONT_S` leaves time for (whole levels), and the
        dearest level (every part in its dearest class).
    tighten : tuple of TightenRow
        For each classed part of the chosen design that has a tighter class.
    assignments : int
        Every assignment of classes to the classed positions.
    searched : int
        The assignments whose values were searched.
    elapsed_s : float
        Seconds the whole choice took.
    require : str
        The basis the requirement was judged on.
    why_not_proven : str
        Empty when proven; else the reason.
    front_complete : bool
        True when the front holds every cost level (no level between the last one
        searched above the least cost and the dearest was left out).
    """

    result: SynthesisResult
    classes: dict[str, str] | None
    cost: float | None
    proven: bool
    front: tuple[FrontPoint, ...]
    tighten: tuple[TightenRow, ...]
    assignments: int
    searched: int
    elapsed_s: float
    require: str
    why_not_proven: str = ""
    front_complete: bool = False


@dataclass(frozen=True)
class _Tried:
    """One assignment's outcome."""

    cost: float
    classes: tuple[PartClass, ...]
    meets: bool
    error: float | None
    yield_low: float | None
    proven: bool


def classed_positions(design: Design) -> tuple[Resistor, ...]:
    """The physical free positions that name classes, in file order."""
    return tuple(r for r in design.free_resistors if r.classes and r.copy_of is None)


def class_assignments(design: Design) -> list[tuple[float, tuple[PartClass, ...]]]:
    """Every assignment of classes to the classed positions, cheapest first.

    Returns
    -------
    list of (float, tuple of PartClass)
        Total cost (class cost × the position's parts, summed) and the class of each
        position in :func:`classed_positions` order; ties of cost keep the order the parts list
        their classes in (the first listed first).

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "5 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "range": ["1k", "10k"],
    ...                   "classes": ["1%", "0.1%"]},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "range": ["1k", "10k"],
    ...                   "classes": ["1%", "0.1%"]}]})
    >>> [(cost, [c.name for c in kinds]) for cost, kinds in class_assignments(d)]
    [(3.0, ['1%', '1%']), (9.5, ['1%', '0.1%']), (9.5, ['0.1%', '1%']), (16.0, ['0.1%', '0.1%'])]
    """
    parts = classed_positions(design)
    rows = []
    for picks in itertools.product(*(range(len(r.classes)) for r in parts)):
        kinds = tuple(r.classes[k] for r, k in zip(parts, picks, strict=True))
        cost = round(sum(c.cost * r.position.count for r, c in zip(parts, kinds, strict=True)),
                     _COST_DIGITS)
        rows.append((cost, picks, kinds))
    rows.sort(key=lambda row: (row[0], row[1]))
    return [(cost, kinds) for cost, _, kinds in rows]


def with_classes(design: Design, parts: tuple[Resistor, ...],
                  kinds: tuple[PartClass, ...]) -> Design:
    """The design with each classed position (and its operating points' copies) in its class."""
    chosen = {r.ref: c for r, c in zip(parts, kinds, strict=True)}

    def placed(resistor: Resistor) -> Resistor:
        kind = chosen.get(resistor.copy_of or resistor.ref)
        if kind is None:
            return resistor
        tcr = kind.tcr if kind.tcr is not None else resistor.tcr
        if not resistor.free:  # a later operating point's copy: the same part, its value followed
            return replace(resistor, tolerance=kind.tolerance, tcr=tcr)
        return replace(resistor, choose=kind.choose, stock_path=kind.stock_path,
                       tolerance=kind.tolerance, tcr=tcr)

    single = design.single
    return replace(design, resistors=tuple(placed(r) for r in design.resistors),
                   single=None if single is None else replace(
                       single, resistors=tuple(placed(r) for r in single.resistors)))


def _box_search(variant: Design, robust: bool, deadline: Deadline, jobs: int
                ) -> tuple[float | None, bool]:
    """The least worst-case objective over the box of the variant's value sets, and the proof.

    ``robust``: only value sets whose every window, bound and limit holds over the whole box
    (``require = "worst-case"``), else those that hold at nominal values.  None when no
    value set qualifies.  The exact branch and bound of :func:`synth.search.parallel.search`
    with the worst case's callables, as :func:`synthesize` runs it, without the re-check,
    the nearest designs and the limit-cost search that follow there (the chosen
    assignment's final :func:`synthesize` does those).
    """
    start = start_search(variant, deadline)
    worst = WorstCase(variant, start.evaluator)
    outcome = search(variant, start.evaluator, start.choices, top=1,
                     time_limit_s=deadline.budget(0.7), seeds=start.seeds,
                     target_ranges=worst.ranges, robust=worst.holds if robust else None,
                     jobs=jobs)
    found = outcome.ranked.objective
    return (float(found[0]) if len(found) else None), outcome.proven


def _try(design: Design, parts: tuple[Resistor, ...], cost: float,
         kinds: tuple[PartClass, ...], require: str, min_yield: float | None,
         deadline: Deadline, jobs: int) -> _Tried:
    """Search one assignment's values on the basis, and (when short) its best error."""
    variant = with_classes(design, parts, kinds)
    if require == "worst-case":
        error, proven = _box_search(variant, True, deadline, jobs)
        if error is not None:
            return _Tried(cost, kinds, True, error, None, proven)
        # short over the box: the least worst-case error of the nominally feasible designs
        nearest, also = _box_search(variant, False, deadline, jobs)
        return _Tried(cost, kinds, False, nearest, None, proven and also)
    found = synthesize(variant, top=1, require=require, min_yield=min_yield,
                       deadline=deadline, jobs=jobs)
    proven = found.proven_optimal
    best = found.candidates[0] if found.candidates else None
    if found.feasible and best is not None:
        return _Tried(cost, kinds, True, best.objective, best.yield_low, proven)
    if require == "yield":  # the nearest by yield, with its yield
        return _Tried(cost, kinds, False, None if best is None else best.objective,
                      None if best is None else best.yield_low, proven)
    return _Tried(cost, kinds, False, None, None, proven)


def _key(tried: _Tried, require: str) -> tuple[float, ...]:
    """Better first: meeting, then the higher yield (by yield), then the lower error, cost."""
    error = math.inf if tried.error is None else tried.error
    by_yield = -(tried.yield_low or 0.0) if require == "yield" else 0.0
    return (0.0 if tried.meets else 1.0, by_yield, error, tried.cost)


def _front(parts: tuple[Resistor, ...], tried: list[_Tried], require: str
           ) -> tuple[FrontPoint, ...]:
    """The best design at each cost level or below, cheapest level first."""
    points = []
    best: _Tried | None = None
    for cost, group in itertools.groupby(tried, key=lambda t: t.cost):
        level = list(group)
        here = min(level, key=lambda t: _key(t, require))
        if best is None or _key(here, require) < _key(best, require):
            best = here
        points.append(FrontPoint(
            cost=cost, classes={r.ref: c.name for r, c in zip(parts, best.classes, strict=True)},
            cost_of_design=best.cost, error=best.error, yield_low=best.yield_low,
            meets=best.meets, assignments=len(level)))
    return tuple(points)


def choose_classes(
    design: Design,
    *,
    top: int = 10,
    time_limit_s: float | None = None,
    spread: SpreadSettings | None = None,
    rank_by: str = "nominal",
    require: str | None = None,
    min_yield: float | None = None,
    deadline: Deadline | None = None,
    jobs: int = 1,
    progress: Callable[[float], None] | None = None,
    front_s: float | None = None,
) -> ClassChoice:
    """Choose each classed part's class at least total cost, and the values on it.

    Parameters
    ----------
    design : Design
        A design with at least one free part naming ``classes``.
    top, spread, jobs : optional
        As for :func:`synth.synthesize`, for the chosen assignment's final search.
    time_limit_s : float, optional
        Seconds the whole choice may take; an assignment left unsearched makes the
        result unproven (said in ``why_not_proven``).
    rank_by : str
        How the chosen assignment's candidates are ordered; with ``require =
        "worst-case"`` a ``"nominal"`` ranking becomes ``"worst-case"`` (ties by
        worst-case error).
    require : {"nominal", "worst-case", "yield"}, optional
        The basis the requirement holds on (the design's by default).
    min_yield : float, optional
        With ``require = "yield"`` (the design's by default).
    deadline : Deadline, optional
        A running deadline (a command's).
    progress : callable, optional
        Called with the share of the assignments searched (0..1).
    front_s : float, optional
        Seconds the levels above the least cost may take, for the front
        (:data:`FRONT_S` by default; 0: none but the dearest).

    Returns
    -------
    ClassChoice

    Raises
    ------
    DesignError
        When no free part names classes.

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> d = design_from_dict({
    ...     "design": {"require": "worst-case"},
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "10 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "range": ["1k", "100k"],
    ...                   "classes": ["5%", "1%", "0.1%"]},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k",
    ...                   "tolerance": "0.1%"}],
    ...     "target": [{"voltage": "out", "equals": "5 V", "within": "2%"}]})
    >>> choice = choose_classes(d)
    >>> choice.classes, choice.cost, choice.proven
    ({'R1': '1%'}, 1.5, True)

    Notes
    -----
    Exact by enumeration: assignments are searched in order of cost and the
    search stops after the first level at which one meets the requirement, so
    every cheaper assignment is known to fall short.  Each assignment's search
    is the exact branch and bound of :mod:`synth.search` (under ``"worst-case"``
    it keeps only value sets that hold at every vertex of the tolerance box).
    """
    began = time.perf_counter()
    front_s = FRONT_S if front_s is None else front_s
    parts = classed_positions(design)
    if not parts:
        raise DesignError(f"{design.origin}: no free part names classes; add classes = "
                          '["1%", "0.1%"] to a part, or use rnsynth design as it is')
    require = require or design.require
    if require == "yield" and (min_yield if min_yield is not None else design.min_yield) is None:
        raise DesignError(f"{design.origin}: require = \"yield\" needs min_yield, such as 99%")
    min_yield = design.min_yield if min_yield is None else min_yield
    deadline = deadline or Deadline(time_limit_s)
    listed = class_assignments(design)
    dearest = listed[-1][0]
    tried: list[_Tried] = []
    why = ""
    least: float | None = None
    front_began: float | None = None  # when the levels above the least cost began
    front_complete = True
    level_start = 0  # where the level being searched begins in ``tried``
    for k, (cost, kinds) in enumerate(listed):
        if least is not None and cost > least:
            # above the least cost the searches only extend the front, for FRONT_S at most;
            # a level left half-searched is not shown (each point shown is exact)
            front_began = time.perf_counter() if front_began is None else front_began
            new_level = cost != tried[-1].cost
            if deadline.expired() or time.perf_counter() - front_began >= front_s:
                if not new_level:
                    del tried[level_start:]
                front_complete = False
                break
            if new_level:
                level_start = len(tried)
        elif deadline.expired():
            why = (f"the time limit passed with {k:,} of the {len(listed):,} class "
                   "assignments searched")
            deadline.cut("class search", why, asked=len(listed), done=k)
            front_complete = False
            break
        tried.append(_try(design, parts, cost, kinds, require, min_yield, deadline, jobs))
        if progress is not None:
            progress((k + 1) / len(listed))
        if tried[-1].meets and least is None:
            least = cost
    if tried and tried[-1].cost < dearest and not why and not deadline.expired():
        # the front's last point: every part in its dearest class, what the most buys
        top_kinds = listed[-1][1]
        tried.append(_try(design, parts, dearest, top_kinds, require, min_yield, deadline, jobs))
    # a front-only search cut short is no exact point of the front
    searched = len(tried)
    shown = [t for t in tried if least is None or t.cost <= least or t.proven]
    front_complete = front_complete and len(shown) == len(tried)
    tried = shown
    needed = [t for t in tried if least is None or t.cost <= least]
    if not why and any(not t.proven for t in needed):
        why = "a value search was cut short or did not finish"
    if not why and require == "yield":
        why = ("a yield is judged on Monte Carlo samples among each assignment's nominal best, "
               "not over every value set")
    meeting = [t for t in tried if t.meets and t.cost == least]
    chosen = min(meeting, key=lambda t: _key(t, require)) if meeting else (
        min(tried, key=lambda t: _key(t, require)) if tried else None)
    kinds = chosen.classes if chosen is not None else listed[0][1]
    final_rank = "worst-case" if require == "worst-case" and rank_by == "nominal" else rank_by
    settings = spread or (SpreadSettings(samples=0) if require != "yield" else None)
    result = synthesize(with_classes(design, parts, kinds), top=top, spread=settings,
                        rank_by=final_rank, require=require, min_yield=min_yield,
                        deadline=deadline, jobs=jobs)
    by_ref = dict(zip((r.ref for r in parts), kinds, strict=True))
    best = result.candidates[0] if result.candidates else None
    rows = (tighten_rows(classed_positions(design), by_ref, best.spread)
            if best is not None and best.spread is not None else ())
    return ClassChoice(
        result=result, classes={r: c.name for r, c in by_ref.items()} if meeting else None,
        cost=least if meeting else None, proven=not why and result.proven_optimal,
        front=_front(parts, tried, require), tighten=rows, assignments=len(listed),
        searched=searched, elapsed_s=time.perf_counter() - began, require=require,
        front_complete=front_complete,
        why_not_proven=why or ("" if result.proven_optimal else
                               "the chosen assignment's final search did not finish"))
