"""The error-against-supply-current front of a design's whole feasible set.

Each point of the front is a design no other feasible design beats on both
counts: none has a smaller largest goal error at no more supply current.
The front is found by the epsilon-constraint method: the exact search runs
with a supply-current budget, its best design (ties going to the lower supply
current) is a point of the front, and the next run's budget lies just below
that point's supply current, until no feasible design fits the budget.
Because every run is the exact branch and bound of :mod:`synth.search`, each
point found by a run that finished is a true point of the front, and a
front whose last run finished empty is the whole front.

References
----------
Y. Y. Haimes, L. S. Lasdon and D. A. Wismer, "On a bicriterion formulation of
the problems of integrated system identification and system optimization",
IEEE Trans. Systems, Man and Cybernetics SMC-1(3), 1971 (the epsilon-constraint
method); K. Miettinen, *Nonlinear Multiobjective Optimization*, Kluwer, 1999,
sec. 3.2.
"""

from __future__ import annotations

__all__ = ["SUPPLY_STEP", "ErrorFront", "FrontPoint", "error_front"]

import time
from dataclasses import dataclass

from synth.circuit.measure import Evaluator
from synth.design.model import REQUIREMENTS, Design
from synth.errors import DesignError
from synth.search.branch_and_bound import search
from synth.search.choices import choices_for, values_of_row
from synth.spread.worst_case import WorstCase

SUPPLY_STEP = 1e-9
"""Relative step of the budget below the last point's supply current: supply currents closer
than this count as equal (the slack of every limit, :data:`synth.rating.LIMIT_SLACK`)."""


@dataclass(frozen=True)
class FrontPoint:
    """One point of the front.

    Attributes
    ----------
    supply_current : float
        A, at nominal values.
    objective : float
        The largest goal error (as :attr:`synth.results.Candidate.objective`).
    values : dict of str to float
        Ohm by physical part reference (free parts only).
    proven : bool
        The search under this point's budget finished: no feasible design
        within the budget has a smaller objective, and none with the same
        objective draws less supply current.
    """

    supply_current: float
    objective: float
    values: dict[str, float]
    proven: bool


@dataclass(frozen=True)
class ErrorFront:
    """The error-against-supply-current front of a design.

    Attributes
    ----------
    points : tuple of FrontPoint
        Highest supply current (smallest error) first.
    complete : bool
        True when the last run proved that no feasible design fits below
        the last point's supply current, and every point is proven: the
        points are then the whole front.
    runs : int
        Exact searches run (one per point, and one that found nothing).
    elapsed_s : float
        Wall time of all runs, s.
    stopped : str or None
        Why the front was cut short (the point limit or the time limit), or None.
    require : str
        The basis feasibility was judged on (``"nominal"`` or ``"worst-case"``).
    """

    points: tuple[FrontPoint, ...]
    complete: bool
    runs: int
    elapsed_s: float
    stopped: str | None
    require: str


def error_front(design: Design, *, max_points: int = 30, time_limit_s: float | None = 30.0,
                require: str | None = None) -> ErrorFront:
    """The front of largest goal error against supply current over every feasible design.

    Parameters
    ----------
    design : Design
        A design with at least one free part.
    max_points : int
        The most points computed (each is one exact search).
    time_limit_s : float or None
        Wall time for all runs together, s (None: no limit).  A run cut short
        gives an unproven point; the front is then marked incomplete.
    require : {"nominal", "worst-case", "yield"}, optional
        Feasibility basis (the design's by default).  ``"yield"`` is judged at
        nominal values: a yield is known only for the few designs analysed.

    Returns
    -------
    ErrorFront

    Raises
    ------
    DesignError
        When the design has no free part or ``max_points`` is below 1.

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "12 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
    ...                   "range": ["1k", "100k"]},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "choose": "E24",
    ...                   "range": ["1k", "100k"]}],
    ...     "target": [{"voltage": "out", "equals": "4 V", "within": "10%"}]})
    >>> front = error_front(d)
    >>> best = front.points[0]  # an exact 2:1 ratio at the least supply current
    >>> front.complete, best.objective, best.values, round(best.supply_current * 1e6, 1)
    (True, 0.0, {'R1': 36000.0, 'R2': 18000.0}, 222.2)

    Notes
    -----
    The epsilon-constraint method (Haimes, Lasdon and Wismer 1971): minimise
    the error subject to supply current <= budget, the budget lowered below
    each solution's supply current in turn.  Ties in the error go to the
    lower supply current, so each proven point is non-dominated.
    """
    if not design.free_resistors:
        raise DesignError(f"{design.origin}: no resistor has choose = ...; the front needs "
                          "free parts")
    if max_points < 1:
        raise DesignError(f"max_points {max_points} must be at least 1")
    basis = require or design.require
    if basis not in REQUIREMENTS:
        raise DesignError(f"require {basis!r} is not known; use one of {', '.join(REQUIREMENTS)}")
    basis = "worst-case" if basis == "worst-case" else "nominal"
    start = time.perf_counter()
    evaluator = Evaluator(design)
    choices = [choices_for(r, design.origin) for r in design.free_resistors]
    robust = WorstCase(design, evaluator).holds if basis == "worst-case" else None
    points: list[FrontPoint] = []
    budget: float | None = None
    complete, stopped, runs = False, None, 0
    while True:
        left = None if time_limit_s is None else time_limit_s - (time.perf_counter() - start)
        if len(points) >= max_points:
            stopped = f"point limit {max_points}"
            break
        if left is not None and left <= 0:
            stopped = f"time limit {time_limit_s:g} s"
            break
        outcome = search(design, evaluator, choices, top=1, time_limit_s=left, robust=robust,
                         max_supply_a=budget, supply_first=True)
        runs += 1
        if not len(outcome.ranked.objective):
            complete = outcome.proven
            stopped = None if outcome.proven else f"time limit {time_limit_s:g} s"
            break
        row = outcome.ranked.indices[0]
        values = values_of_row(choices, row)
        supply = float(outcome.ranked.supply[0])
        points.append(FrontPoint(supply, float(outcome.ranked.objective[0]), values,
                                 outcome.proven))
        if supply <= 0:
            complete = outcome.proven
            break
        budget = supply * (1 - SUPPLY_STEP)
    kept = _non_dominated(points)
    return ErrorFront(points=kept, complete=complete and all(p.proven for p in kept),
                      runs=runs, elapsed_s=time.perf_counter() - start, stopped=stopped,
                      require=basis)


def _non_dominated(points: list[FrontPoint]) -> tuple[FrontPoint, ...]:
    """The points no other point beats on both counts (a run cut short may give others)."""
    return tuple(p for p in points if not any(
        q is not p and q.supply_current <= p.supply_current and q.objective <= p.objective
        and (q.supply_current < p.supply_current or q.objective < p.objective)
        for q in points))
