"""A quick local search from the ideal values: a feasible incumbent for the exact search.

The ideal continuous values (:mod:`synth.search.ideal`) are rounded to the
catalogue value nearest each (in ratio), and a coordinate descent then moves
one or two positions at a time by a few catalogue steps, or every position by
the same steps (one of them nudged by one more), while that
lowers ``(largest violation, objective)`` lexicographically: first every
window and limit is brought inside, then the error is lowered.  Each round
solves all the moves of the current point in one batched solve.

It proves nothing: it hands the branch and bound every point it visited as
seeds, so the search holds a good, usually feasible, incumbent before it
bounds its first box, and a time-limited run on many free parts still
returns its best candidates.

References
----------
Coordinate descent on a lattice, e.g. J. Nocedal & S. J. Wright, *Numerical
Optimization* (2006), §9.3 (coordinate search), and the rounding of a
continuous relaxation as a first incumbent of branch and bound (common
practice in integer programming).
"""

from __future__ import annotations

__all__ = ["local_seeds", "rounded"]

import math
import time

import numpy as np

from synth.search.choices import Choices
from synth.search.problem import SOLVE_ROWS, SearchProblem

_STEPS = (-3, -2, -1, 1, 2, 3)
"""Catalogue steps one position moves by in a round."""

_PAIR_REACH = ((10, 3), (24, 1))
"""Two positions move at once by up to this many steps each (every combination), for up
to this many positions: far enough to follow a ratio between two catalogue decades."""

_SHIFT_REACH = 24
"""Steps every position shifts by at once, up and down (a decade of E24)."""

_MAX_ROUNDS = 200
"""Most descent rounds (each one batched solve)."""


def rounded(choices: list[Choices], ideal: dict[str, float]) -> np.ndarray:
    """``(positions,)`` index of the catalogue value nearest (in ratio) each ideal value.

    A position without an ideal value takes its middle choice.

    Examples
    --------
    >>> from synth.search.choices import choices_for
    >>> from synth.design.reader import design_from_dict
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "12 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E12",
    ...                   "range": ["1k", "10k"]},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
    ...     "target": [{"voltage": "out", "equals": "4 V"}]})
    >>> c = [choices_for(d.resistors[0], d.origin)]
    >>> float(c[0].values[rounded(c, {"R1": 4600.0})[0]])
    4700.0
    """
    out = np.empty(len(choices), dtype=np.int64)
    for p, choice in enumerate(choices):
        wanted = ideal.get(choice.ref)
        if wanted is None or not math.isfinite(wanted) or wanted <= 0:
            out[p] = len(choice) // 2
            continue
        with np.errstate(divide="ignore"):
            distance = np.abs(np.log(choice.values / wanted))
        out[p] = int(np.argmin(distance))
    return out


def _moves(point: np.ndarray, sizes: np.ndarray) -> np.ndarray:
    """Every point one or two positions away by the steps of a round, inside the space.

    In a fixed order (ties between moves go to the first): each single step, then each
    pair of steps over every pair of positions, then each common shift; formed with
    array operations, not row by row.
    """
    k = len(point)
    eye = np.eye(k, dtype=np.int64)
    steps = np.array(_STEPS, dtype=np.int64)
    rows = [(point + steps[:, None, None] * eye[None, :, :]).reshape(-1, k)]
    reach = next((r for most, r in _PAIR_REACH if k <= most), 0)
    if k > 1 and reach:
        a, b = np.triu_indices(k, 1)
        pair = np.array([s for s in range(-reach, reach + 1) if s], dtype=np.int64)
        # (da, db, pair of positions): da on position a, db on position b
        moved = np.broadcast_to(point, (len(pair), len(pair), len(a), k)).copy()
        moved[:, :, np.arange(len(a)), a] += pair[:, None, None]
        moved[:, :, np.arange(len(a)), b] += pair[None, :, None]
        rows.append(moved.reshape(-1, k))
    # every position shifted by the same steps (about a common scale factor, which a
    # network of ratios leaves free), each shift with one position nudged by one step
    nudges = np.concatenate([np.zeros((1, k), np.int64), eye, -eye])
    shifts = np.array([s for s in range(-_SHIFT_REACH, _SHIFT_REACH + 1) if s], dtype=np.int64)
    rows.append((point + shifts[:, None, None] + nudges[None, :, :]).reshape(-1, k))
    moves = np.concatenate(rows)
    inside = np.all((moves >= 0) & (moves < sizes), axis=1)
    return moves[inside]


def _keys(problem: SearchProblem, indices: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """``(largest relative violation, objective)`` of each row, in solves of at most SOLVE_ROWS."""
    violation = np.empty(len(indices))
    error = np.empty(len(indices))
    for first in range(0, len(indices), SOLVE_ROWS):
        block = indices[first:first + SOLVE_ROWS]
        ev = problem.evaluate(problem.resistances(block), problem.part_values(block))
        violation[first:first + SOLVE_ROWS] = problem.violations(
            ev.targets, ev.part_power, ev.part_voltage, ev.target_noise)
        error[first:first + SOLVE_ROWS] = problem.errors(ev.targets)
    return violation, np.where(np.isfinite(error), error, np.inf)


def local_seeds(problem: SearchProblem, ideal: dict[str, float],
                time_limit_s: float | None = None) -> np.ndarray:
    """Every point a coordinate descent from the rounded ideal values visits, ``(S, positions)``.

    Parameters
    ----------
    problem : SearchProblem
        The design's problem (its windows and limits, and its objective).
    ideal : dict of str to float
        Ideal value of each free position, ohm (see :func:`rounded`).
    time_limit_s : float, optional
        Stop after this many seconds (the first round always runs).

    Returns
    -------
    numpy.ndarray
        Choice indices: the descent's last point (its best) first, then the
        path to it and the last round's moves.

    Notes
    -----
    Each round moves to the best of the current point's moves when it is
    strictly better by ``(violation, objective)``; the descent ends at a point
    no single move improves, after :data:`_MAX_ROUNDS` rounds, or at the time
    limit.
    """
    start = time.perf_counter()
    choices = problem.choices
    sizes = np.array([len(c) for c in choices], dtype=np.int64)
    point = rounded(choices, ideal)
    if not len(point):
        return point[None, :]
    violation, error = _keys(problem, point[None, :])
    best = (float(violation[0]), float(error[0]))
    path = [point]
    moves = np.zeros((0, len(point)), np.int64)
    for round_ in range(_MAX_ROUNDS):
        if round_ and time_limit_s is not None and time.perf_counter() - start > time_limit_s:
            break
        moves = _moves(point, sizes)
        if not len(moves):
            break
        violation, error = _keys(problem, moves)
        at = int(np.lexsort((error, violation))[0])
        if (float(violation[at]), float(error[at])) >= best:
            break
        point, best = moves[at], (float(violation[at]), float(error[at]))
        path.append(point)
    # the last point, the path to it and the last point's moves (its neighbours, often the
    # next best): a few hundred rows however long the descent ran
    return np.concatenate([point[None, :], np.array(path[::-1]), moves])
