"""A design's targets and limits as arrays: exact scores of enumerated candidates and sound bounds
over boxes.
"""

from __future__ import annotations

__all__ = ["SOLVE_ROWS", "RobustCheck", "SearchProblem", "SearchStopped", "TargetRanges",
           "distinct_values"]

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from synth.circuit.measure import Evaluation, Evaluator
from synth.circuit.mesh import DEFAULT_CHUNK
from synth.design.model import Design
from synth.rating import exceeds, falls_short
from synth.search.choices import Choices
from synth.search.ranking import TIE_TOLERANCE, RankedCandidates

TargetRanges = Callable[[np.ndarray, np.ndarray], tuple[np.ndarray, np.ndarray]]
"""Given positions ``(M, resistors)`` and parts ``(M, parts)`` ohm, the ``(low, high)`` of every
target, ``(M, targets)`` each: the worst-case ranges a caller ranks by (the spread owns how they
are computed)."""

RobustCheck = Callable[[np.ndarray, np.ndarray], np.ndarray]
"""Given positions ``(M, resistors)`` and parts ``(M, parts)`` ohm of nominally feasible
candidates, True where every window and limit also holds on the basis the design requires
(for example over the whole tolerance box)."""


_FAR_OVER = 1e12
"""Largest share over an allowance the nearest-design ranking counts (a part allowed 0 W)."""


SOLVE_ROWS = DEFAULT_CHUNK
"""Most candidate rows (box vertices or enumerated candidates) solved at once: the loop
solve's own block, so that a run is one block of the solver; the search's memory stays
bounded whatever the number of free positions."""


class SearchStopped(Exception):
    """Raised inside a bounding or scoring run when its ``stop`` asks (the time is up)."""


@dataclass(frozen=True)
class _Spans:
    """Extremes over the vertices of each box: per box, per target, branch or resistor.

    The current and voltage spans of the resistors (``i_lo`` ... ``u_hi``) are None
    when the problem needs no stress bound (no power target and no rated part).
    """

    t_lo: np.ndarray
    t_hi: np.ndarray
    noise: np.ndarray
    i_lo: np.ndarray | None
    i_hi: np.ndarray | None
    u_lo: np.ndarray | None
    u_hi: np.ndarray | None
    valid: np.ndarray
    positive: np.ndarray | None
    negative: np.ndarray | None
    least: np.ndarray | None

    def joined(self, other: _Spans) -> _Spans:
        """The extremes over the vertices of both runs (of the same boxes)."""
        def both(a: np.ndarray | None, b: np.ndarray | None, how: Callable[..., np.ndarray]
                 ) -> np.ndarray | None:
            return None if a is None or b is None else how(a, b)

        return _Spans(np.minimum(self.t_lo, other.t_lo), np.maximum(self.t_hi, other.t_hi),
                      np.maximum(self.noise, other.noise),
                      both(self.i_lo, other.i_lo, np.minimum),
                      both(self.i_hi, other.i_hi, np.maximum),
                      both(self.u_lo, other.u_lo, np.minimum),
                      both(self.u_hi, other.u_hi, np.maximum),
                      self.valid & other.valid,
                      both(self.positive, other.positive, np.logical_and),
                      both(self.negative, other.negative, np.logical_and),
                      both(self.least, other.least, np.minimum))


class SearchProblem:
    """A design's targets and limits as arrays, evaluated over candidate blocks.

    Feasibility uses the same comparisons as ``check``
    (:func:`synth.rating.exceeds` with its slack): a candidate that meets a
    window or a limit exactly is feasible, and a box is dropped only when
    its bounds break a window or limit beyond that slack.
    """

    def __init__(self, design: Design, evaluator: Evaluator, choices: list[Choices],
                 relaxed: bool, target_ranges: TargetRanges | None = None,
                 robust: RobustCheck | None = None, part_limits: bool = True,
                 max_supply_a: float | None = None):
        self.max_supply_a = max_supply_a
        self.supply_columns = evaluator.supply_columns
        self.design, self.ev, self.choices, self.relaxed = design, evaluator, choices, relaxed
        self.target_ranges = target_ranges
        self.robust = robust
        self.part_limits = part_limits
        self.free = np.array([evaluator.resistor_index[c.ref] for c in choices], dtype=int)
        self.base = np.array([r.value if r.value is not None else 1.0 for r in design.resistors])
        self.base_parts = evaluator.part_values(self.base[None, :])[0]
        self.free_columns = [evaluator.part_columns[int(k)] for k in self.free]
        targets = design.targets
        self.goal = np.array([t.equals if t.equals is not None else np.nan for t in targets])
        self.has_goal = ~np.isnan(self.goal)
        self.scale = np.array([t.scale for t in targets])
        self.low = np.array([t.bounds[0] for t in targets])
        self.high = np.array([t.bounds[1] for t in targets])
        self.kind = [t.kind for t in targets]
        node = evaluator.node_index
        self.ratio_den = {k: (node[t.nodes[2]], node[t.nodes[3]])
                          for k, t in enumerate(targets) if t.kind in ("ratio", "loss")}
        # a gain or offset between points whose fixed parts differ (a sensor) is a sum of
        # two linear-fractional terms over different denominators: not vertex-bounded
        settings = {p.name: dict(p.resistors) for p in design.points}
        self.unbounded = np.array(
            [k for k, t in enumerate(targets) if t.kind in ("gain", "offset")
             and t.at is not None and settings.get(t.at[0]) != settings.get(t.at[-1])],
            dtype=int)
        # a gain with a voltage of the network as input is a ratio of two differences
        self.gain_den = {k: tuple(node[n] for n in t.nodes[4:8])
                         for k, t in enumerate(targets)
                         if t.kind in ("gain", "offset") and len(t.nodes) == 8}
        self.power_of = {k: evaluator.resistor_index[t.ref or ""]
                         for k, t in enumerate(targets) if t.kind == "power"}
        # without part limits (to find what a limit costs) every part is unrated here
        self.allowed_p = (evaluator.allowed_power if part_limits
                          else np.full_like(evaluator.allowed_power, np.nan))
        self.allowed_v = (evaluator.allowed_voltage if part_limits
                          else np.full_like(evaluator.allowed_voltage, np.nan))
        first = np.array([cols.start for cols in evaluator.part_columns], dtype=int)
        # every part of a position shares its package, so one allowance per position
        self.position_allowed_p = self.allowed_p[first] if len(first) else np.zeros(0)
        self.position_allowed_v = self.allowed_v[first] if len(first) else np.zeros(0)
        rated = np.isfinite(self.position_allowed_p) | np.isfinite(self.position_allowed_v)
        self.stressed = bool(self.power_of) or bool(rated.any())
        """True when the box bounds need each resistor's current and voltage spans: a power
        target, or a part with a power or voltage allowance (most designs need neither, and
        these spans are half the cost of a bound)."""
        self.count = np.array([r.position.count for r in design.resistors], dtype=float)
        self.series = np.array([r.position.arrangement != "parallel" for r in design.resistors])
        self.n_r = len(design.resistors)

    def resistances(self, indices: np.ndarray) -> np.ndarray:
        """``(M, resistors)`` ohm for ``(M, positions)`` choice indices.

        Column-major (each resistor's values contiguous), the layout the block
        measurement reads without a transposing copy.
        """
        r = np.empty((self.n_r, len(indices))).T
        r[...] = self.base
        for p, choice in enumerate(self.choices):
            r[:, self.free[p]] = choice.values[indices[:, p]]
        return self.ev.follow(r) if len(self.ev.copies) else r

    def part_values(self, indices: np.ndarray) -> np.ndarray:
        """``(M, parts)`` ohm of every physical part for ``(M, positions)`` choice indices."""
        parts = np.broadcast_to(self.base_parts, (len(indices), len(self.base_parts))).copy()
        for p, choice in enumerate(self.choices):
            parts[:, self.free_columns[p]] = choice.parts[indices[:, p]]
        return self.ev.follow_parts(parts) if len(self.ev.copies) else parts

    def evaluate(self, r: np.ndarray, part_values: np.ndarray | None = None, *,
                 parts: bool = True) -> Evaluation:
        # each result is reduced before the next block is asked for: its arrays are reused
        with np.errstate(all="ignore"):
            return self.ev.evaluate(r, part_values=part_values, parts=parts, reuse=True)

    # ----- exact measures of enumerated candidates -----

    def feasible(self, targets: np.ndarray, power: np.ndarray, volts: np.ndarray,
                 noise: np.ndarray | float = 0.0) -> np.ndarray:
        """``(M,)`` True where every window and every part's limits hold (with the slack).

        ``noise`` is each target value's noise floor (:attr:`Evaluation.target_noise`).
        """
        ok: np.ndarray = np.all(np.isfinite(targets), axis=1)
        ok &= ~np.any(falls_short(targets, self.low, noise)
                      | exceeds(targets, self.high, noise), axis=1)
        if power.shape[1]:
            ok &= ~np.any(exceeds(power, self.allowed_p) | exceeds(volts, self.allowed_v), axis=1)
        return ok

    def violations(self, targets: np.ndarray, power: np.ndarray, volts: np.ndarray,
                   noise: np.ndarray | float = 0.0) -> np.ndarray:
        """Largest relative violation of any window or limit, ``(M,)``; 0 when all hold.

        Windows count in units of the target's scale, limits as the share
        over the allowance: the measure that orders the nearest designs.
        """
        with np.errstate(all="ignore"):
            below = (self.low - targets) / self.scale
            above = (targets - self.high) / self.scale
            worst = np.nanmax(np.concatenate([below, above, np.zeros((len(targets), 1))],
                                             axis=1), axis=1)
            worst = np.where(np.all(np.isfinite(targets), axis=1), worst, np.inf)
            over_p = np.where(np.isnan(self.allowed_p), -np.inf, power / self.allowed_p - 1)
            over_v = np.where(np.isnan(self.allowed_v), -np.inf, volts / self.allowed_v - 1)
        # a part allowed nothing (an ambient past its zero-power temperature) is far over,
        # not infinitely: the nearest designs are still ranked and the limit named
        over_p = np.minimum(over_p, _FAR_OVER)
        over_v = np.minimum(over_v, _FAR_OVER)
        if power.shape[1]:
            worst = np.maximum(worst, np.max(over_p, axis=1))
            worst = np.maximum(worst, np.max(over_v, axis=1))
        return np.where(self.feasible(targets, power, volts, noise), 0.0,
                        np.maximum(worst, 0.0))

    def errors(self, targets: np.ndarray) -> np.ndarray:
        """Largest ``|value - goal| / scale`` over ``equals`` targets, ``(M,)``."""
        if not self.has_goal.any():
            return np.zeros(len(targets))
        err = np.abs(targets[:, self.has_goal] - self.goal[self.has_goal]) / self.scale[
            self.has_goal]
        return np.where(np.all(np.isfinite(err), axis=1), err.max(axis=1), np.inf)

    def score(self, indices: np.ndarray, worst: float = np.inf
              ) -> tuple[RankedCandidates, int]:
        """Exact objective of each candidate; infeasible ones dropped unless relaxed.

        ``worst`` is the objective of the last of the best candidates kept so
        far: candidates in a later tie class (:data:`TIE_TOLERANCE`) cannot
        enter them and are dropped before the tie-break keys are computed.
        """
        r = self.resistances(indices)
        parts = self.part_values(indices)
        ev = self.evaluate(r, parts)
        error = self.errors(ev.targets)
        if self.relaxed:
            objective = self.violations(ev.targets, ev.part_power, ev.part_voltage,
                                        ev.target_noise)
            keep = np.isfinite(objective)
        else:
            keep = (self.feasible(ev.targets, ev.part_power, ev.part_voltage, ev.target_noise)
                    & np.isfinite(error))
            if self.max_supply_a is not None:
                keep &= ev.supply_current <= self.max_supply_a
            if self.robust is not None and keep.any():
                keep[keep] = self.robust(r[keep], parts[keep])
            objective = error
            if self.target_ranges is not None and keep.any() and self.has_goal.any():
                objective = error.copy()
                low, high = self.target_ranges(r[keep], parts[keep])
                g = self.goal[self.has_goal]
                spread = np.maximum(np.abs(high[:, self.has_goal] - g),
                                    np.abs(low[:, self.has_goal] - g)) / self.scale[self.has_goal]
                objective[keep] = np.where(np.all(np.isfinite(spread), axis=1),
                                           spread.max(axis=1), np.inf)
        if np.isfinite(worst):
            keep &= np.floor(objective / TIE_TOLERANCE) <= np.floor(worst / TIE_TOLERANCE)
        kept = indices[keep]
        parts = parts[keep]
        free_parts = (np.concatenate([parts[:, cols] for cols in self.free_columns], axis=1)
                      if self.free_columns else np.zeros((len(kept), 0)))
        ranks = np.zeros(len(kept), dtype=np.int64)
        for p, c in enumerate(self.choices):
            ranks += c.rank[kept[:, p]]
        ranked = RankedCandidates(kept, objective[keep], distinct_values(free_parts), ranks,
                                  ev.supply_current[keep])
        return ranked, len(indices)

    # ----- sound bounds over boxes -----

    def box_bounds(self, lo: np.ndarray, hi: np.ndarray,
                   stop: Callable[[], bool] | None = None) -> tuple[np.ndarray, np.ndarray]:
        """Lower bound of the objective over each box, and whether the box can be feasible.

        ``lo``/``hi`` are ``(B, positions)`` inclusive index bounds.  The
        vertices are solved at most :data:`SOLVE_ROWS` at a time (boxes in
        groups, or one box's vertices in runs), so memory stays bounded
        whatever the number of positions; ``stop`` is asked between solves and
        :class:`SearchStopped` raised when it returns True.
        """
        n_box, k = lo.shape
        per = max(1, SOLVE_ROWS >> k)  # boxes per solve
        if n_box > per:
            bounds, feasible = [], []
            for first in range(0, n_box, per):
                if first and stop is not None and stop():
                    raise SearchStopped
                b, f = self.box_bounds(lo[first:first + per], hi[first:first + per], stop)
                bounds.append(b)
                feasible.append(f)
            return np.concatenate(bounds), np.concatenate(feasible)
        spans = self._vertex_spans(lo, hi, stop)
        return self._bounds_from(lo, hi, spans)

    def _vertex_spans(self, lo: np.ndarray, hi: np.ndarray, stop: Callable[[], bool] | None
                      ) -> _Spans:
        """The extremes over each box's vertices, solved in runs of at most SOLVE_ROWS."""
        n_box, k = lo.shape
        n_v = 2 ** k
        run = max(1, min(n_v, SOLVE_ROWS // max(n_box, 1)))
        # each free position's value at the low and the high end of every box
        ends = [(choice.values[lo[:, p]], choice.values[hi[:, p]])
                for p, choice in enumerate(self.choices)]
        spans: _Spans | None = None
        for v0 in range(0, n_v, run):
            if v0 and stop is not None and stop():
                raise SearchStopped
            v = np.arange(v0, min(v0 + run, n_v), dtype=np.int64)
            part = self._spans_of(self._vertex_resistances(ends, v), (len(v), n_box))
            spans = part if spans is None else spans.joined(part)
        assert spans is not None
        return spans

    def _vertex_resistances(self, ends: list[tuple[np.ndarray, np.ndarray]], v: np.ndarray
                            ) -> np.ndarray:
        """``(vertices x boxes, resistors)`` ohm of the vertices numbered ``v`` of every box,
        vertex-major (vertex after vertex, every box in each: the extremes over the vertices
        are then element-wise over contiguous runs of boxes); bit ``p`` of a vertex's number
        puts position ``p`` at its box's high end.  Column-major, as :meth:`resistances`."""
        n_box = len(ends[0][0]) if ends else 1
        r = np.empty((self.n_r, len(v), n_box))
        r[...] = self.base[:, None, None]
        for p, (low, high) in enumerate(ends):
            upper = ((v >> p) & 1).astype(bool)
            r[self.free[p]] = np.where(upper[:, None], high[None, :], low[None, :])
        flat = r.reshape(self.n_r, -1).T
        return self.ev.follow(flat) if len(self.ev.copies) else flat

    def _spans_of(self, r: np.ndarray, shape: tuple[int, int]) -> _Spans:
        """Extremes over ``shape[0]`` vertices of each of ``shape[1]`` boxes, from their
        resistances ``r`` (rows vertex-major)."""
        n_v, n_box = shape
        ev = self.evaluate(r, parts=False)  # the bounds use positions only

        def by_vertex(values: np.ndarray) -> np.ndarray:
            """``(N, columns)`` as ``(columns, vertices, boxes)`` (a view of an entity-first
            result)."""
            return values.T.reshape(-1, n_v, n_box)

        def span(values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
            v = by_vertex(values)
            return v.min(axis=1).T, v.max(axis=1).T

        t_lo, t_hi = span(ev.targets)
        if len(self.unbounded):
            t_lo[:, self.unbounded], t_hi[:, self.unbounded] = -np.inf, np.inf
        noise = by_vertex(ev.target_noise).max(axis=1).T  # the largest floor of any vertex
        valid = np.all(np.isfinite(t_lo) & np.isfinite(t_hi), axis=1)
        node_v = ev.solution.node_voltages
        i_lo = i_hi = u_lo = u_hi = None
        if self.stressed:
            i_lo, i_hi = span(ev.solution.branch_currents[:, : self.n_r])
            ends = self.ev.network.resistor_ends
            u_lo, u_hi = span((node_v.T[ends[:, 0]] - node_v.T[ends[:, 1]]).T)
            valid &= np.all(np.isfinite(i_lo) & np.isfinite(i_hi), axis=1)
        signs = []  # each quantity that must keep one sign over a box's vertices
        det = ev.solution.regulator_determinant
        if det is not None:
            signs.append(det.reshape(shape))
        for c, d_ in self.ratio_den.values():
            signs.append((node_v[:, c] - node_v[:, d_]).reshape(shape))
        for a_, b_, c, d_ in self.gain_den.values():
            signs.append((node_v[:, c] - node_v[:, d_] - node_v[:, a_]
                          + node_v[:, b_]).reshape(shape))
        positive = np.stack([np.all(d > 0, axis=0) for d in signs], axis=1) if signs else None
        negative = np.stack([np.all(d < 0, axis=0) for d in signs], axis=1) if signs else None
        least = None
        if self.max_supply_a is not None and not self.relaxed:
            delivered = ev.solution.branch_currents[:, self.supply_columns]
            least = by_vertex(delivered).min(axis=1).T
        return _Spans(t_lo, t_hi, noise, i_lo, i_hi, u_lo, u_hi, valid, positive, negative,
                      least)

    def _stress_bounds(self, lo: np.ndarray, hi: np.ndarray, spans: _Spans, t_lo: np.ndarray,
                       t_hi: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Each box's least share over every part's power and voltage allowance
        (``(B, resistors)`` each) and whether some part must break one; the power
        targets' spans are written into ``t_lo``/``t_hi``."""
        assert spans.i_lo is not None and spans.i_hi is not None
        assert spans.u_lo is not None and spans.u_hi is not None
        i_lo, i_hi, u_lo, u_hi = spans.i_lo, spans.i_hi, spans.u_lo, spans.u_hi
        n_box = len(lo)
        # resistance span of each resistor over the box
        r_lo = np.broadcast_to(self.base, (n_box, self.n_r)).copy()
        r_hi = r_lo.copy()
        for p, choice in enumerate(self.choices):
            r_lo[:, self.free[p]] = choice.values[lo[:, p]]
            r_hi[:, self.free[p]] = choice.values[hi[:, p]]
        if len(self.ev.copies):  # each operating point's copy spans its leader's values
            r_lo, r_hi = self.ev.follow(r_lo), self.ev.follow(r_hi)
        i2_lo = np.where((i_lo <= 0) & (i_hi >= 0), 0.0, np.minimum(i_lo ** 2, i_hi ** 2))
        i2_hi = np.maximum(i_lo ** 2, i_hi ** 2)
        u2_lo = np.where((u_lo <= 0) & (u_hi >= 0), 0.0, np.minimum(u_lo ** 2, u_hi ** 2))
        u2_hi = np.maximum(u_lo ** 2, u_hi ** 2)
        p_lo = np.maximum(i2_lo * r_lo, u2_lo / r_hi)
        p_hi = np.minimum(i2_hi * r_hi, u2_hi / r_lo)
        for k_t, k_r in self.power_of.items():
            t_lo[:, k_t], t_hi[:, k_t] = p_lo[:, k_r], p_hi[:, k_r]
        # the hottest part of a position of N parts takes at least 1/N of its power, and
        # in series at least 1/N of its voltage: the limits apply to each physical part
        part_p_lo = p_lo / self.count
        part_u_lo = np.sqrt(u2_lo) / np.where(self.series, self.count, 1.0)
        with np.errstate(all="ignore"):
            over_p = np.where(np.isnan(self.position_allowed_p), -np.inf,
                              part_p_lo / self.position_allowed_p - 1)
            over_v = np.where(np.isnan(self.position_allowed_v), -np.inf,
                              part_u_lo / self.position_allowed_v - 1)
        broken = np.any(exceeds(part_p_lo, self.position_allowed_p)
                        | exceeds(part_u_lo, self.position_allowed_v), axis=1)
        return over_p, over_v, broken

    def _bounds_from(self, lo: np.ndarray, hi: np.ndarray, spans: _Spans
                     ) -> tuple[np.ndarray, np.ndarray]:
        """The objective bound and feasibility of each box from its vertex extremes."""
        n_box = len(lo)
        t_lo, t_hi, noise = spans.t_lo.copy(), spans.t_hi.copy(), spans.noise
        valid = spans.valid.copy()
        if spans.positive is not None and spans.negative is not None:
            valid &= np.all(spans.positive | spans.negative, axis=1)
        stress = (self._stress_bounds(lo, hi, spans, t_lo, t_hi) if self.stressed and self.n_r
                  else None)
        with np.errstate(all="ignore"):
            gap_below = (self.low - t_hi) / self.scale
            gap_above = (t_lo - self.high) / self.scale
        broken = np.any(exceeds(t_lo, self.high, noise) | falls_short(t_hi, self.low, noise),
                        axis=1)
        parts = [gap_below, gap_above, np.zeros((n_box, 1))]
        if stress is not None:
            over_p, over_v, over = stress
            broken |= over
            parts += [over_p, over_v]
        if spans.least is not None and self.max_supply_a is not None:
            # each delivering branch's current is monotone in every resistance, so its
            # least value over the box lies at a vertex: the sum of those is a lower bound
            each = np.clip(spans.least, 0.0, None)
            groups = self.ev.supply_groups  # operating points: the largest point's supply
            least = (np.max([each[:, cols].sum(axis=1) for cols in groups], axis=0)
                     if groups else each.sum(axis=1))
            broken |= least > self.max_supply_a
        violation_lb = np.nanmax(np.concatenate(parts, axis=1), axis=1)
        if self.relaxed:
            bound = np.where(broken, np.maximum(violation_lb, 0.0), 0.0)
            feasible = np.ones(n_box, dtype=bool)
        else:
            feasible = ~broken
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


def distinct_values(values: np.ndarray) -> np.ndarray:
    """Number of distinct finite values per row."""
    if values.shape[1] == 0:
        return np.zeros(len(values), dtype=np.int64)
    ordered = np.sort(values, axis=1)
    finite = np.isfinite(ordered)
    changes = np.concatenate([finite[:, :1], (np.diff(ordered, axis=1) != 0) & finite[:, 1:]],
                             axis=1)
    return changes.sum(axis=1).astype(np.int64)  # type: ignore[no-any-return]  # numpy types this array expression as Any

