"""Every candidate of a set of boxes scored outright, in vectorised runs.

A box is a product of index intervals, one per search axis.  Its candidates
are listed box after box in C order (the last axis varying fastest) as
mixed-radix digits of their offset in the box, so that any run of the list is
formed with a few array operations, whatever the number of boxes.  Runs of at
most :data:`synth.search.problem.SOLVE_ROWS` candidates are scored exactly by
:meth:`SearchProblem.score` and merged into the ranking by
:meth:`RankedCandidates.merged`, so the ranking is the same as that of any
other order of the same candidates (the merge is a total order: objective,
tie-break, then choice indices).

A space small enough is enumerated outright (:func:`enumerates`): below some
ten thousand combinations one batched score of every candidate takes less than
the branch and bound's rounds of bounding boxes and splitting them.
"""

from __future__ import annotations

__all__ = ["ENUMERATE_BELOW", "box_rows", "enumerates", "scored"]

import math
from collections.abc import Callable
from typing import Protocol

import numpy as np

from synth.search.problem import SOLVE_ROWS, SearchProblem, SearchStopped
from synth.search.ranking import RankedCandidates

ENUMERATE_BELOW = 20_000
"""A space of fewer combinations than this is scored outright, not bounded.  Measured on
ladders of 2 to 5 free parts, one target or one per tap, on one core: scoring runs at about
1e7 candidates a second after a fixed 0.5 ms, while the branch and bound's proof takes
1.5-4 ms however small the space; the two cross between 15,000 and 30,000 combinations."""


class _Places(Protocol):
    """What maps places along the search axes to choice indices (a chain's sums)."""

    def candidates(self, places: np.ndarray) -> np.ndarray: ...


def enumerates(total: int, axes: int, enumerate_below: int = ENUMERATE_BELOW) -> bool:
    """True when a space of ``total`` combinations over ``axes`` search axes is scored
    outright rather than by branch and bound.

    Below ``max(enumerate_below, 17, 4 * 2**axes + 1)``: a box of at most
    ``4 * 2**axes`` candidates costs more to bound (its ``2**axes`` vertices) and split
    than to score, and a space of no axes is one candidate.

    Examples
    --------
    >>> enumerates(5000, 4), enumerates(10**6, 4), enumerates(60, 4, enumerate_below=0)
    (True, False, True)
    """
    return axes == 0 or total < max(enumerate_below, 17, 4 * 2 ** axes + 1)


def box_rows(lo: np.ndarray, hi: np.ndarray, first: int = 0,
             count: int | None = None) -> np.ndarray:
    """Index vectors inside the boxes ``lo[b]..hi[b]``, box after box: rows ``first`` to
    ``first + count`` of that list (all of it by default).

    Row ``t`` of the list belongs to box ``b`` at offset ``o``, and its index
    along each axis is a mixed-radix digit of ``o`` (C order: the last axis
    varies fastest).

    Examples
    --------
    >>> box_rows(np.array([[0, 0]]), np.array([[1, 2]])).tolist()
    [[0, 0], [0, 1], [0, 2], [1, 0], [1, 1], [1, 2]]
    """
    counts = (hi - lo + 1).astype(np.int64)
    volume = np.prod(counts, axis=1)
    ends = np.cumsum(volume)
    total = int(ends[-1]) if len(ends) else 0
    stop = total if count is None else min(total, first + count)
    rows = np.arange(first, stop, dtype=np.int64)
    if len(lo) == 1:  # one box (a whole space): no search for the box of each row
        offset, box_lo, box_counts = rows[:, None], lo, counts
        strides = _strides(counts)
    else:
        box = np.searchsorted(ends, rows, side="right")
        offset = (rows - (ends - volume)[box])[:, None]
        box_lo, box_counts, strides = lo[box], counts[box], _strides(counts)[box]
    return box_lo + (offset // strides) % box_counts  # type: ignore[no-any-return]  # numpy types this array expression as Any


def _strides(counts: np.ndarray) -> np.ndarray:
    """Each axis's place value in the C-order offset of a box of ``counts``, ``(B, axes)``."""
    strides = np.ones_like(counts)
    if counts.shape[1] > 1:
        strides[:, :-1] = np.cumprod(counts[:, :0:-1], axis=1)[:, ::-1]
    return strides


def scored(problem: SearchProblem, space: _Places | None, lo: np.ndarray, hi: np.ndarray,
           ranked: RankedCandidates, top: int, supply_first: bool,
           stop: Callable[[], bool]) -> tuple[RankedCandidates, int]:
    """Every candidate of the boxes ``lo..hi`` scored and merged into ``ranked``.

    ``lo``/``hi`` are inclusive places along the axes of ``space`` (choice
    indices when ``space`` is None).  Candidates are scored :data:`SOLVE_ROWS`
    at a time, each run told the objective the ``top``-th best holds so far
    (it drops what cannot enter); ``stop`` is asked between runs and
    :class:`SearchStopped` raised when it returns True.

    Returns
    -------
    (RankedCandidates, int)
        The merged ranking and the number of candidates scored.
    """
    total = int(np.prod((hi - lo + 1).astype(np.int64), axis=1).sum())
    evaluated = 0
    for first in range(0, total, SOLVE_ROWS):
        if first and stop():
            raise SearchStopped
        places = box_rows(lo, hi, first, SOLVE_ROWS)
        batch = places if space is None else space.candidates(places)
        found, n = problem.score(batch, worst=float(ranked.objective[-1])
                                 if len(ranked.objective) >= top else math.inf)
        evaluated += n
        ranked = ranked.merged(found, top, supply_first)
    return ranked, evaluated
