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

__all__ = ["TIE_TOLERANCE", "RankedCandidates", "SearchOutcome", "search"]

import math
import time
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from synth.candidates import Choices
from synth.design import Design
from synth.evaluate import Evaluation, Evaluator
from synth.spread import WorstCase

TIE_TOLERANCE = 1e-12
"""Objectives closer than this (as fractions) are ties, ordered by the tie-break."""

_LEAF_PER_VERTEX = 4  # enumerate a box outright once it holds at most 4 x 2^k candidates
_LEAF_MIN = 16
_BATCH_BOXES = 1024  # boxes bounded per batched solve (measured best of 512, 1024)
_FRONTIER_CAP = 400_000  # above this many open boxes, the smallest are drained first


@dataclass(frozen=True)
class RankedCandidates:
    """The best candidates found, best first.

    Attributes
    ----------
    indices : numpy.ndarray
        ``(K, positions)`` index of each position's choice.
    objective : numpy.ndarray
        ``(K,)`` the ranking objective (largest relative error over ``equals``
        targets; in relaxed mode the largest relative violation).
    distinct : numpy.ndarray
        ``(K,)`` number of distinct part values among the free parts.
    coarseness : numpy.ndarray
        ``(K,)`` sum of the series ranks of the free parts' values.
    supply : numpy.ndarray
        ``(K,)`` supply current, A.
    """

    indices: np.ndarray
    objective: np.ndarray
    distinct: np.ndarray
    coarseness: np.ndarray
    supply: np.ndarray

    @staticmethod
    def empty(positions: int) -> RankedCandidates:
        return RankedCandidates(np.zeros((0, positions), dtype=np.int64), np.zeros(0),
                                np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.int64),
                                np.zeros(0))

    def merged(self, other: RankedCandidates, top: int) -> RankedCandidates:
        """Both sets ranked together, the best ``top`` kept (ties by the tie-break)."""
        idx = np.concatenate([self.indices, other.indices])
        obj = np.concatenate([self.objective, other.objective])
        dis = np.concatenate([self.distinct, other.distinct])
        coa = np.concatenate([self.coarseness, other.coarseness])
        sup = np.concatenate([self.supply, other.supply])
        if len(obj) == 0:
            return self
        quantised = np.floor(obj / TIE_TOLERANCE)
        keys = [idx[:, c] for c in range(idx.shape[1] - 1, -1, -1)]
        # duplicates only pair a row of self with one of other: the best top + len(self)
        # rows hold the best top distinct ones
        order = np.lexsort((*keys, sup, coa, dis, quantised))[: top + len(self.objective)]
        if idx.shape[1]:
            # the same candidate can arrive twice (a seed, then its box): keep it once
            _, first = np.unique(idx[order], axis=0, return_index=True)
            order = order[np.sort(first)]
        else:
            order = order[:1]
        order = order[:top]
        return RankedCandidates(idx[order], obj[order], dis[order], coa[order], sup[order])


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
    """

    ranked: RankedCandidates
    proven: bool
    evaluated: int
    combinations: int
    elapsed_s: float


class _Problem:
    """A design's targets and limits as arrays, evaluated over candidate blocks."""

    def __init__(self, design: Design, evaluator: Evaluator, choices: list[Choices],
                 relaxed: bool, worst_case: WorstCase | None = None):
        self.design, self.ev, self.choices, self.relaxed = design, evaluator, choices, relaxed
        self.worst_case = worst_case
        self.free = np.array([evaluator.resistor_index[c.ref] for c in choices], dtype=int)
        self.base = np.array([r.value if r.value is not None else 1.0 for r in design.resistors])
        targets = design.targets
        self.goal = np.array([t.equals if t.equals is not None else np.nan for t in targets])
        self.has_goal = ~np.isnan(self.goal)
        self.scale = np.array([
            abs(t.equals) if t.equals not in (None, 0) else (t.within_abs or _bound_scale(t))
            for t in targets
        ])
        self.low = np.array([t.bounds[0] for t in targets])
        self.high = np.array([t.bounds[1] for t in targets])
        self.kind = [t.kind for t in targets]
        node = evaluator.node_index
        self.ratio_den = {k: (node[t.nodes[2]], node[t.nodes[3]])
                          for k, t in enumerate(targets) if t.kind == "ratio"}
        self.power_of = {k: evaluator.resistor_index[t.ref or ""]
                         for k, t in enumerate(targets) if t.kind == "power"}
        self.allowed_p = evaluator.allowed_power
        self.allowed_v = evaluator.allowed_voltage
        self.combine = {int(self.free[p]): c for p, c in enumerate(choices) if c.combine}
        self.n_r = len(design.resistors)

    def resistances(self, indices: np.ndarray) -> np.ndarray:
        """``(M, resistors)`` ohm for ``(M, positions)`` choice indices."""
        r = np.broadcast_to(self.base, (len(indices), self.n_r)).copy()
        for p, choice in enumerate(self.choices):
            r[:, self.free[p]] = choice.values[indices[:, p]]
        return r

    def evaluate(self, r: np.ndarray) -> Evaluation:
        with np.errstate(all="ignore"):
            return self.ev.evaluate(r)

    # ----- exact measures of enumerated candidates -----

    def part_stress(self, indices: np.ndarray, r: np.ndarray, ev: Evaluation
                    ) -> tuple[np.ndarray, np.ndarray]:
        """Largest physical-part power and voltage at each position, ``(M, resistors)``."""
        current = ev.solution.branch_currents[:, : self.n_r]
        power = ev.resistor_power.copy()
        volts = ev.resistor_voltage.copy()
        for p, choice in enumerate(self.choices):
            if choice.combine is None:
                continue
            k = self.free[p]
            a = choice.first[indices[:, p]]
            b = choice.second[indices[:, p]]
            if choice.combine == "series":
                big = np.maximum(a, b)
                power[:, k] = current[:, k] ** 2 * big
                volts[:, k] = np.abs(current[:, k]) * big
            else:
                small = np.minimum(a, b)
                power[:, k] = volts[:, k] ** 2 / small
        return power, volts

    def violations(self, targets: np.ndarray, power: np.ndarray, volts: np.ndarray
                   ) -> np.ndarray:
        """Largest relative violation of any window or limit, ``(M,)``; 0 when all hold."""
        below = (self.low - targets) / self.scale
        above = (targets - self.high) / self.scale
        worst = np.nanmax(np.concatenate([below, above, np.zeros((len(targets), 1))], axis=1),
                          axis=1)
        worst = np.where(np.all(np.isfinite(targets), axis=1), worst, np.inf)
        with np.errstate(all="ignore"):
            over_p = np.where(np.isnan(self.allowed_p), -np.inf, power / self.allowed_p - 1)
            over_v = np.where(np.isnan(self.allowed_v), -np.inf, volts / self.allowed_v - 1)
        if self.n_r:
            worst = np.maximum(worst, np.max(over_p, axis=1))
            worst = np.maximum(worst, np.max(over_v, axis=1))
        return worst

    def errors(self, targets: np.ndarray) -> np.ndarray:
        """Largest relative error over ``equals`` targets, ``(M,)``."""
        if not self.has_goal.any():
            return np.zeros(len(targets))
        err = np.abs(targets[:, self.has_goal] - self.goal[self.has_goal]) / self.scale[
            self.has_goal]
        return np.where(np.all(np.isfinite(err), axis=1), err.max(axis=1), np.inf)

    def score(self, indices: np.ndarray) -> tuple[RankedCandidates, int]:
        """Exact objective of each candidate; infeasible ones dropped unless relaxed."""
        r = self.resistances(indices)
        ev = self.evaluate(r)
        power, volts = self.part_stress(indices, r, ev)
        violation = self.violations(ev.targets, power, volts)
        error = self.errors(ev.targets)
        if self.relaxed:
            objective = np.maximum(violation, 0.0)
            keep = np.isfinite(objective)
        else:
            keep = (violation <= 0) & np.isfinite(error)
            objective = error
            if self.worst_case is not None and keep.any() and self.has_goal.any():
                objective = error.copy()
                low, high = self.worst_case.ranges(r[keep])
                g = self.goal[self.has_goal]
                spread = np.maximum(np.abs(high[:, self.has_goal] - g),
                                    np.abs(low[:, self.has_goal] - g)) / self.scale[self.has_goal]
                objective[keep] = np.where(np.all(np.isfinite(spread), axis=1),
                                           spread.max(axis=1), np.inf)
        values = np.stack([c.first[indices[:, p]] for p, c in enumerate(self.choices)]
                          + [c.second[indices[:, p]] for p, c in enumerate(self.choices)],
                          axis=1)
        ranks = np.zeros(len(indices), dtype=np.int64)
        for p, c in enumerate(self.choices):
            ranks += c.rank[indices[:, p]]
        ranked = RankedCandidates(indices[keep], objective[keep], _distinct(values[keep]),
                                  ranks[keep], ev.supply_current[keep])
        return ranked, len(indices)

    # ----- sound bounds over boxes -----

    def box_bounds(self, lo: np.ndarray, hi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Lower bound of the objective over each box, and whether the box can be feasible.

        ``lo``/``hi`` are ``(B, positions)`` inclusive index bounds.
        """
        n_box, k = lo.shape
        bits = ((np.arange(2 ** k)[:, None] >> np.arange(k)[None, :]) & 1).astype(bool)
        vertex = np.where(bits[None, :, :], hi[:, None, :], lo[:, None, :]).reshape(-1, k)
        r = self.resistances(vertex)
        ev = self.evaluate(r)
        n_v = 2 ** k
        shape = (n_box, n_v)

        def span(values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
            v = values.reshape(*shape, -1)
            return v.min(axis=1), v.max(axis=1)

        t_lo, t_hi = span(ev.targets)
        current = ev.solution.branch_currents[:, : self.n_r]
        i_lo, i_hi = span(current)
        node_v = ev.solution.node_voltages
        ends = self.ev.network.resistor_ends
        across = node_v[:, ends[:, 0]] - node_v[:, ends[:, 1]]
        u_lo, u_hi = span(across)
        valid = np.all(np.isfinite(ev.targets).reshape(*shape, -1), axis=(1, 2))
        valid &= np.all(np.isfinite(current).reshape(*shape, -1), axis=(1, 2))
        det = ev.solution.regulator_determinant
        if det is not None:
            d = det.reshape(shape)
            valid &= np.all(d > 0, axis=1) | np.all(d < 0, axis=1)
        for c, d_ in self.ratio_den.values():
            den = (node_v[:, c] - node_v[:, d_]).reshape(shape)
            valid &= np.all(den > 0, axis=1) | np.all(den < 0, axis=1)
        # resistance span of each resistor over the box
        r_lo = np.broadcast_to(self.base, (n_box, self.n_r)).copy()
        r_hi = r_lo.copy()
        for p, choice in enumerate(self.choices):
            r_lo[:, self.free[p]] = choice.values[lo[:, p]]
            r_hi[:, self.free[p]] = choice.values[hi[:, p]]
        i2_lo = np.where((i_lo <= 0) & (i_hi >= 0), 0.0, np.minimum(i_lo ** 2, i_hi ** 2))
        i2_hi = np.maximum(i_lo ** 2, i_hi ** 2)
        u2_lo = np.where((u_lo <= 0) & (u_hi >= 0), 0.0, np.minimum(u_lo ** 2, u_hi ** 2))
        u2_hi = np.maximum(u_lo ** 2, u_hi ** 2)
        p_lo = np.maximum(i2_lo * r_lo, u2_lo / r_hi)
        p_hi = np.minimum(i2_hi * r_hi, u2_hi / r_lo)
        for k_t, k_r in self.power_of.items():
            t_lo[:, k_t], t_hi[:, k_t] = p_lo[:, k_r], p_hi[:, k_r]
        # a combined position's hotter part takes at least half its power (and voltage
        # in series): the limit applies to each physical part
        part_p_lo, part_u_lo = p_lo.copy(), np.sqrt(u2_lo)
        for k_r, how in self.combine.items():
            part_p_lo[:, k_r] = p_lo[:, k_r] / 2
            if how == "series":
                part_u_lo[:, k_r] = part_u_lo[:, k_r] / 2
        with np.errstate(all="ignore"):
            gap_below = (self.low - t_hi) / self.scale
            gap_above = (t_lo - self.high) / self.scale
            over_p = np.where(np.isnan(self.allowed_p), -np.inf, part_p_lo / self.allowed_p - 1)
            over_v = np.where(np.isnan(self.allowed_v), -np.inf, part_u_lo / self.allowed_v - 1)
        parts = [gap_below, gap_above, np.zeros((n_box, 1))]
        if self.n_r:
            parts += [over_p, over_v]
        violation_lb = np.nanmax(np.concatenate(parts, axis=1), axis=1)
        if self.relaxed:
            bound = np.maximum(violation_lb, 0.0)
            feasible = np.ones(n_box, dtype=bool)
        else:
            feasible = violation_lb <= 0
            if self.has_goal.any():
                g = self.goal[self.has_goal]
                below = (t_lo[:, self.has_goal] - g) / self.scale[self.has_goal]
                above = (g - t_hi[:, self.has_goal]) / self.scale[self.has_goal]
                bound = np.max(np.maximum(np.maximum(below, above), 0.0), axis=1)
            else:
                bound = np.zeros(n_box)
        bound = np.where(valid, bound, 0.0)
        feasible = np.where(valid, feasible, True)
        return bound, feasible


def _bound_scale(target: object) -> float:
    low, high = target.bounds  # type: ignore[attr-defined]
    finite = [abs(b) for b in (low, high) if np.isfinite(b) and b != 0]
    return max(finite) if finite else 1.0


def _distinct(values: np.ndarray) -> np.ndarray:
    """Number of distinct finite values per row."""
    if values.shape[1] == 0:
        return np.zeros(len(values), dtype=np.int64)
    ordered = np.sort(values, axis=1)
    finite = np.isfinite(ordered)
    changes = np.concatenate([finite[:, :1], (np.diff(ordered, axis=1) != 0) & finite[:, 1:]],
                             axis=1)
    return changes.sum(axis=1).astype(np.int64)


def _enumerate(lo: np.ndarray, hi: np.ndarray) -> np.ndarray:
    """Every index vector inside the box ``lo..hi`` (inclusive)."""
    return _enumerate_boxes(lo[None, :], hi[None, :])


def _enumerate_boxes(lo: np.ndarray, hi: np.ndarray) -> np.ndarray:
    """Every index vector inside each of the boxes ``lo[b]..hi[b]``, box after box.

    Vectorised: row ``t`` of the output belongs to box ``b`` at offset ``o``
    and its index along each axis is a mixed-radix digit of ``o``.
    """
    counts = (hi - lo + 1).astype(np.int64)
    volume = np.prod(counts, axis=1)
    box = np.repeat(np.arange(len(lo)), volume)
    offset = np.arange(int(volume.sum()), dtype=np.int64) - np.repeat(
        np.cumsum(volume) - volume, volume)
    # C order: the last axis varies fastest
    strides = np.cumprod(counts[:, ::-1], axis=1)[:, ::-1]
    strides = np.concatenate([strides[:, 1:], np.ones((len(lo), 1), np.int64)], axis=1)
    return lo[box] + (offset[:, None] // strides[box]) % counts[box]


def search(
    design: Design,
    evaluator: Evaluator,
    choices: list[Choices],
    top: int = 10,
    time_limit_s: float | None = None,
    seeds: np.ndarray | None = None,
    relaxed: bool = False,
    progress: Callable[[float], None] | None = None,
    worst_case: WorstCase | None = None,
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
    worst_case : WorstCase, optional
        Rank by the largest worst-case relative error over the tolerance box
        instead of the nominal error.  A candidate's worst-case error is at
        least its nominal error, so the nominal box bounds stay sound.

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
    problem = _Problem(design, evaluator, choices, relaxed, worst_case)
    k = len(choices)
    sizes = np.array([len(c) for c in choices], dtype=np.int64)
    total = math.prod(int(s) for s in sizes)
    ranked = RankedCandidates.empty(k)
    evaluated = 0
    bar = math.inf
    if seeds is not None and len(seeds):
        seeded, n = problem.score(np.asarray(seeds, dtype=np.int64))
        evaluated += n
        ranked = ranked.merged(seeded, top)
        if len(ranked.objective) >= top:
            bar = float(ranked.objective[-1])
    leaf_size = max(_LEAF_MIN, _LEAF_PER_VERTEX * 2 ** k)
    if k == 0 or total <= leaf_size:
        found, n = problem.score(_enumerate(np.zeros(k, np.int64), sizes - 1))
        return SearchOutcome(ranked.merged(found, top), True, n + evaluated, total,
                             time.perf_counter() - start)
    lo = np.zeros((1, k), dtype=np.int64)
    hi = (sizes - 1)[None, :]
    bound, feasible = problem.box_bounds(lo, hi)
    evaluated += 2 ** k
    open_lo, open_hi, open_bound = lo[feasible], hi[feasible], bound[feasible]
    settled = 0 if feasible[0] else total
    proven = True
    while len(open_bound):
        if time_limit_s is not None and time.perf_counter() - start > time_limit_s:
            proven = False
            break
        current_bar = min(bar, float(ranked.objective[-1]) if len(ranked.objective) >= top
                          else math.inf)
        keep = open_bound <= current_bar + TIE_TOLERANCE
        if not keep.all():
            volume = np.prod((open_hi[~keep] - open_lo[~keep] + 1).astype(float), axis=1)
            settled += int(volume.sum())
            open_lo, open_hi, open_bound = open_lo[keep], open_hi[keep], open_bound[keep]
            if not len(open_bound):
                break
        if len(open_bound) > _BATCH_BOXES:
            # half the batch by lowest bound (best first), half by smallest box (depth
            # first): the dive finds good candidates early, which raises the bar; past
            # the frontier cap only the smallest boxes are taken, to drain it
            volume = np.prod((open_hi - open_lo + 1).astype(float), axis=1)
            half = 0 if len(open_bound) > _FRONTIER_CAP else _BATCH_BOXES // 2
            deep = np.argpartition(volume, _BATCH_BOXES - half)[: _BATCH_BOXES - half]
            best = np.argpartition(open_bound, half)[:half] if half else deep[:0]
            pick = np.unique(np.concatenate([best, deep]))
        else:
            pick = np.arange(len(open_bound))
        rest = np.ones(len(open_bound), dtype=bool)
        rest[pick] = False
        b_lo, b_hi = open_lo[pick], open_hi[pick]
        open_lo, open_hi, open_bound = open_lo[rest], open_hi[rest], open_bound[rest]
        counts = b_hi - b_lo + 1
        volume = np.prod(counts.astype(float), axis=1)
        leaf = volume <= leaf_size
        if leaf.any():
            batch = _enumerate_boxes(b_lo[leaf], b_hi[leaf])
            found, n = problem.score(batch)
            evaluated += n
            ranked = ranked.merged(found, top)
            settled += int(volume[leaf].sum())
        if (~leaf).any():
            s_lo, s_hi, s_counts = b_lo[~leaf], b_hi[~leaf], counts[~leaf]
            axis = np.argmax(s_counts, axis=1)
            rows = np.arange(len(axis))
            middle = s_lo[rows, axis] + s_counts[rows, axis] // 2 - 1
            left_hi = s_hi.copy()
            left_hi[rows, axis] = middle
            right_lo = s_lo.copy()
            right_lo[rows, axis] = middle + 1
            c_lo = np.concatenate([s_lo, right_lo])
            c_hi = np.concatenate([left_hi, s_hi])
            c_bound, c_feasible = problem.box_bounds(c_lo, c_hi)
            evaluated += len(c_lo) * 2 ** k
            dropped = ~c_feasible
            if dropped.any():
                settled += int(np.prod((c_hi[dropped] - c_lo[dropped] + 1).astype(float),
                                       axis=1).sum())
            open_lo = np.concatenate([open_lo, c_lo[c_feasible]])
            open_hi = np.concatenate([open_hi, c_hi[c_feasible]])
            open_bound = np.concatenate([open_bound, c_bound[c_feasible]])
        if progress is not None:
            progress(min(settled / total, 1.0))
    if progress is not None and proven:
        progress(1.0)
    return SearchOutcome(ranked, proven, evaluated, total, time.perf_counter() - start)
