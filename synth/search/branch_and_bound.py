"""Exact discrete search for the best standard values: branch and bound over boxes.

The search space is the product of every free position's ordered choices.
A *box* is a product of index intervals.  Every node voltage, branch current,
ratio and seen resistance of a linear network is linear-fractional in each
single resistance (Bode's bilinear theorem), so as long as its denominator
keeps one sign it is monotone in each resistance and its extremes over a box
lie at the box's vertices.  The vertices are solved in one batch; their
extremes bound every target exactly, and part dissipation (not monotone) is
bounded soundly from the current and voltage bounds.  A box whose best
possible objective is worse than the K-th best candidate found so far, or
that certainly breaks a window or a limit, is dropped; the others are split
until small enough to enumerate.  Dropped boxes hold no better candidate, so
when the frontier empties the result equals that of an exhaustive search.

References
----------
H. W. Bode, *Network Analysis and Feedback Amplifier Design* (1945): the
bilinear dependence of network functions on one element; R. D. Middlebrook,
"Null double injection and the extra element theorem", IEEE Trans. Educ.
32(3), 1989; Rayleigh's monotonicity law for seen resistance (Doyle & Snell,
*Random Walks and Electric Networks*, 1984).
"""

from __future__ import annotations

__all__ = ["SearchOutcome", "search"]

import math
import time
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from synth.circuit.measure import Evaluator
from synth.design.model import Design
from synth.search.chains import SearchSpace
from synth.search.choices import Choices
from synth.search.enumerate import ENUMERATE_BELOW, enumerates, scored
from synth.search.problem import RobustCheck, SearchProblem, SearchStopped, TargetRanges
from synth.search.ranking import TIE_TOLERANCE, RankedCandidates

_LEAF_PER_VERTEX = 4  # enumerate a box outright once it holds at most 4 x 2^k candidates


_LEAF_MIN = 16


_BATCH_BOXES = 1024  # boxes bounded per batched solve (measured best of 512, 1024)


_FRONTIER_CAP = 400_000  # above this many open boxes, the smallest are drained first


@dataclass(frozen=True)
class SearchOutcome:
    """What :func:`search` found.

    Attributes
    ----------
    ranked : RankedCandidates
        Best first.
    proven : bool
        True when the search finished: no unexplored box can hold a better
        candidate than those returned.
    evaluated : int
        Candidate value sets solved (box vertices and enumerated candidates).
    combinations : int
        Size of the whole search space.
    elapsed_s : float
        Wall time, s.
    settled : float
        Share of the search space settled (1 when proven).
    stopped : str or None
        Why an unproven search stopped: ``"time limit"``, or ``"memory"`` (the
        open boxes reached :data:`_OPEN_BYTES`); None when it finished.
    """

    ranked: RankedCandidates
    proven: bool
    evaluated: int
    combinations: int
    elapsed_s: float
    settled: float = 1.0
    stopped: str | None = None


_FEW_OPEN = 1024
"""While at most this many boxes over 2^k (for k axes) are open, every axis of a box is halved
at once (up to 2^k children): the first rounds, where one axis per split would take k rounds
to halve a box, then take one (measured in benchmarks/search_speed.py)."""


def _split(lo: np.ndarray, hi: np.ndarray, every_axis: bool) -> tuple[np.ndarray, np.ndarray]:
    """The children of the boxes ``lo..hi``: each box halved along its longest axis, or
    along every axis of more than one index at once.  The children of a box are disjoint
    and cover it."""
    counts = hi - lo + 1
    middle = lo + counts // 2 - 1  # the last index of each lower half
    if not every_axis:
        axis = np.argmax(counts, axis=1)
        rows = np.arange(len(axis))
        left_hi = hi.copy()
        left_hi[rows, axis] = middle[rows, axis]
        right_lo = lo.copy()
        right_lo[rows, axis] = middle[rows, axis] + 1
        return np.concatenate([lo, right_lo]), np.concatenate([left_hi, hi])
    k = lo.shape[1]
    upper = ((np.arange(2 ** k)[:, None] >> np.arange(k)[None, :]) & 1).astype(bool)
    halved = counts > 1
    # a child takes the upper half only along axes that are halved
    real = ~np.any(upper[None, :, :] & ~halved[:, None, :], axis=2)
    c_lo = np.where(upper[None], middle[:, None, :] + 1, lo[:, None, :])
    c_hi = np.where(upper[None] | ~halved[:, None, :], hi[:, None, :], middle[:, None, :])
    return c_lo[real], c_hi[real]


_OPEN_BYTES = 256 << 20
"""Most memory the open boxes may hold, bytes: past it the search stops, unproven (no open
box is ever dropped unexplored)."""


def search(
    design: Design,
    evaluator: Evaluator,
    choices: list[Choices],
    top: int = 10,
    time_limit_s: float | None = None,
    seeds: np.ndarray | None = None,
    relaxed: bool = False,
    progress: Callable[[float], None] | None = None,
    target_ranges: TargetRanges | None = None,
    robust: RobustCheck | None = None,
    part_limits: bool = True,
    max_supply_a: float | None = None,
    supply_first: bool = False,
    chains: bool = True,
    bar: float = math.inf,
    shared_bar: Callable[[np.ndarray], float] | None = None,
    enumerate_below: int = ENUMERATE_BELOW,
) -> SearchOutcome:
    """Find the ``top`` best candidates by branch and bound.

    Parameters
    ----------
    design : Design
    evaluator : Evaluator
    choices : list of Choices
        One per free position, in the design's order of free parts.
    top : int
        How many distinct candidates to return.
    time_limit_s : float, optional
        Stop after this many seconds with the best found so far (unproven).
    seeds : numpy.ndarray, optional
        ``(S, positions)`` candidate indices tried first to set the bar early
        (e.g. the catalogue neighbours of the ideal values).
    relaxed : bool
        Rank by the largest relative violation of windows and limits instead
        of the nominal error, admitting infeasible candidates: used to show
        the nearest designs when none meets everything.
    progress : callable, optional
        Called with the share of the search space settled (0..1).
    target_ranges : callable, optional
        Rank by the largest worst-case relative error over the ranges it gives
        (the tolerance box, computed by the spread)
        instead of the nominal error.  A candidate's worst-case error is at
        least its nominal error, so the nominal box bounds stay sound.
    robust : callable, optional
        Keeps only the nominally feasible candidates for which it returns True
        (every window and limit over the tolerance box): a subset of the
        nominally feasible ones, so the nominal box bounds stay sound.
    part_limits : bool
        False drops every part's power and voltage limit (windows stay): used
        to find what a limit costs a goal.
    max_supply_a : float, optional
        Keep only candidates whose supply current is at most this, A (a
        budget; boxes whose least supply current lies above it are dropped).
    supply_first : bool
        Break a tie in the objective by the lower supply current first (see
        :meth:`RankedCandidates.merged`).
    chains : bool
        Bound each series chain of free positions by its sum
        (:mod:`synth.search.chains`); False bounds every position apart.  The
        result is the same either way; chains make under-determined designs
        fast.
    bar : float
        An objective known to be reached by ``top`` candidates elsewhere (another
        slice of the space): boxes that cannot reach it are dropped from the start,
        so candidates beyond it may be missing from the result.
    shared_bar : callable, optional
        Called every round with this search's best objectives so far (ascending);
        returns such an objective known across every slice of the space at that time.
    enumerate_below : int
        A space of fewer combinations is scored outright instead
        (:func:`synth.search.enumerate.enumerates`); the result is the same either way.

    Returns
    -------
    SearchOutcome

    Notes
    -----
    Ranking: the objective, then (ties within :data:`TIE_TOLERANCE`) fewer
    distinct values, then coarser series (lower sum of series ranks, E3 = 0 …
    E192 = 6, stock values in no series 7), then lower supply current, then
    lower choice indices, position by position.
    """
    start = time.perf_counter()
    problem = SearchProblem(design, evaluator, choices, relaxed, target_ranges, robust,
                            part_limits, max_supply_a)
    k = len(choices)
    sizes = np.array([len(c) for c in choices], dtype=np.int64)
    total = math.prod(int(s) for s in sizes)
    ranked = RankedCandidates.empty(k)
    evaluated = 0
    if seeds is not None and len(seeds):
        # each seed once: the ranking's merge expects distinct rows within each side
        seeds = np.asarray(seeds, dtype=np.int64)
        _, first = np.unique(seeds, axis=0, return_index=True)
        seeded, n = problem.score(seeds[np.sort(first)])
        evaluated += n
        ranked = ranked.merged(seeded, top, supply_first)
        if len(ranked.objective) >= top:
            bar = min(bar, float(ranked.objective[-1]))

    def stop() -> bool:
        return time_limit_s is not None and time.perf_counter() - start > time_limit_s

    def outcome(proven: bool, settled: float, stopped: str | None = None) -> SearchOutcome:
        return SearchOutcome(ranked, proven, evaluated, total, time.perf_counter() - start,
                             1.0 if proven else min(settled / total, 1.0), stopped)

    if enumerates(total, k, enumerate_below):
        whole = np.zeros((1, k), np.int64), (sizes - 1)[None, :]
        try:
            ranked, n = scored(problem, None, *whole, ranked, top, supply_first, stop)
        except SearchStopped:
            return outcome(False, 0, "time limit")
        evaluated += n
        if progress is not None:
            progress(1.0)
        return outcome(True, total)
    # boxes span the space's axes (a chain of positions is one axis of sums)
    space = SearchSpace(problem, chains)
    bounds = space.bounds
    k = len(space.sizes)
    leaf_size = max(_LEAF_MIN, _LEAF_PER_VERTEX * 2 ** k)
    most_open = max(_OPEN_BYTES // ((2 * k + 1) * 8), 4 * _BATCH_BOXES)
    lo = np.zeros((1, k), dtype=np.int64)
    hi = (space.sizes - 1)[None, :]
    try:
        bound, feasible = bounds.box_bounds(lo, hi, stop)
    except SearchStopped:
        return outcome(False, 0, "time limit")
    evaluated += 2 ** k
    open_lo, open_hi, open_bound = lo[feasible], hi[feasible], bound[feasible]
    settled = 0 if feasible[0] else total
    proven = True
    stopped: str | None = None
    rounds = 0
    while len(open_bound):
        # the first round always runs: a limit already spent still gives some candidates
        if rounds and stop():
            proven, stopped = False, "time limit"
            break
        if len(open_bound) > most_open:
            # never drop an open box unexplored: stop, unproven, with the store full
            proven, stopped = False, "memory"
            break
        rounds += 1
        current_bar = min(bar, float(ranked.objective[-1]) if len(ranked.objective) >= top
                          else math.inf)
        if shared_bar is not None:
            current_bar = min(current_bar, shared_bar(ranked.objective))
        keep = open_bound <= current_bar + TIE_TOLERANCE
        if not keep.all():
            volume = space.volume(open_lo[~keep], open_hi[~keep])
            settled += int(volume.sum())
            open_lo, open_hi, open_bound = open_lo[keep], open_hi[keep], open_bound[keep]
            if not len(open_bound):
                break
        if len(open_bound) > _BATCH_BOXES:
            # half the batch by lowest bound (best first), half by smallest box (depth
            # first): the dive finds good candidates early, which raises the bar; past
            # the frontier cap only the smallest boxes are taken, to drain it
            volume = space.volume(open_lo, open_hi)
            half = 0 if len(open_bound) > _FRONTIER_CAP else _BATCH_BOXES // 2
            deep = np.argpartition(volume, _BATCH_BOXES - half)[: _BATCH_BOXES - half]
            best = np.argpartition(open_bound, half)[:half] if half else deep[:0]
            pick = np.unique(np.concatenate([best, deep]))
        else:
            pick = np.arange(len(open_bound))
        rest = np.ones(len(open_bound), dtype=bool)
        rest[pick] = False
        b_lo, b_hi = open_lo[pick], open_hi[pick]
        counts = b_hi - b_lo + 1
        volume = space.volume(b_lo, b_hi)
        # a box of one sum per chain cannot be split further, however many candidates
        leaf = (volume <= leaf_size) | np.all(counts == 1, axis=1)
        try:
            if leaf.any():
                ranked, n = scored(problem, space, *space.places(b_lo[leaf], b_hi[leaf]),
                                    ranked, top, supply_first, stop)
                evaluated += n
            if (~leaf).any():
                c_lo, c_hi = _split(b_lo[~leaf], b_hi[~leaf],
                                    every_axis=len(open_bound) <= _FEW_OPEN >> k)
                c_bound, c_feasible = bounds.box_bounds(c_lo, c_hi, stop)
                evaluated += len(c_lo) * 2 ** k
        except SearchStopped:
            # the batch's boxes stay unsettled (the candidates scored so far are kept)
            proven, stopped = False, "time limit"
            break
        open_lo, open_hi, open_bound = open_lo[rest], open_hi[rest], open_bound[rest]
        if leaf.any():
            settled += int(volume[leaf].sum())
        if (~leaf).any():
            dropped = ~c_feasible
            if dropped.any():
                settled += int(space.volume(c_lo[dropped], c_hi[dropped]).sum())
            open_lo = np.concatenate([open_lo, c_lo[c_feasible]])
            open_hi = np.concatenate([open_hi, c_hi[c_feasible]])
            open_bound = np.concatenate([open_bound, c_bound[c_feasible]])
        if progress is not None:
            progress(min(settled / total, 1.0))
    if progress is not None and proven:
        progress(1.0)
    return outcome(proven, settled, stopped)
