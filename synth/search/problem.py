"""A design's targets and limits as arrays: exact scores of enumerated candidates and sound bounds
over boxes.
"""

from __future__ import annotations

__all__ = ["SearchProblem", "TargetRanges", "bound_scale", "distinct_values"]

from collections.abc import Callable

import numpy as np

from synth.circuit.measure import Evaluation, Evaluator
from synth.design.model import Design
from synth.search.choices import Choices
from synth.search.ranking import RankedCandidates

TargetRanges = Callable[[np.ndarray], tuple[np.ndarray, np.ndarray]]
"""Given ``(M, resistors)`` ohm, the ``(low, high)`` of every target, ``(M, targets)`` each:
the worst-case ranges a caller ranks by (the spread owns how they are computed)."""


class SearchProblem:
    """A design's targets and limits as arrays, evaluated over candidate blocks."""

    def __init__(self, design: Design, evaluator: Evaluator, choices: list[Choices],
                 relaxed: bool, target_ranges: TargetRanges | None = None):
        self.design, self.ev, self.choices, self.relaxed = design, evaluator, choices, relaxed
        self.target_ranges = target_ranges
        self.free = np.array([evaluator.resistor_index[c.ref] for c in choices], dtype=int)
        self.base = np.array([r.value if r.value is not None else 1.0 for r in design.resistors])
        targets = design.targets
        self.goal = np.array([t.equals if t.equals is not None else np.nan for t in targets])
        self.has_goal = ~np.isnan(self.goal)
        self.scale = np.array([
            abs(t.equals) if t.equals not in (None, 0) else (t.within_abs or bound_scale(t))
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
            if self.target_ranges is not None and keep.any() and self.has_goal.any():
                objective = error.copy()
                low, high = self.target_ranges(r[keep])
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
        ranked = RankedCandidates(indices[keep], objective[keep], distinct_values(values[keep]),
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


def bound_scale(target: object) -> float:
    low, high = target.bounds  # type: ignore[attr-defined]
    finite = [abs(b) for b in (low, high) if np.isfinite(b) and b != 0]
    return max(finite) if finite else 1.0


def distinct_values(values: np.ndarray) -> np.ndarray:
    """Number of distinct finite values per row."""
    if values.shape[1] == 0:
        return np.zeros(len(values), dtype=np.int64)
    ordered = np.sort(values, axis=1)
    finite = np.isfinite(ordered)
    changes = np.concatenate([finite[:, :1], (np.diff(ordered, axis=1) != 0) & finite[:, 1:]],
                             axis=1)
    return changes.sum(axis=1).astype(np.int64)
