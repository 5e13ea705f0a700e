"""Worst case over the tolerance box: every vertex solved, interior dissipation peaks, and the
batched ranges used for ranking.
"""

from __future__ import annotations

__all__ = ["EXACT_VARIABLES", "RANKING_VARIABLES", "WorstCase", "part_spread"]

import numpy as np

from synth.circuit.measure import Evaluator
from synth.design.model import Design
from synth.errors import DesignError
from synth.rating import allowed_power
from synth.spread.records import PartSpread
from synth.spread.variables import SpreadVariables, box_corners

EXACT_VARIABLES = 16
"""Up to this many varying quantities every vertex of the tolerance box is solved."""


RANKING_VARIABLES = 10
"""Ranking candidates by worst case solves every vertex per candidate: at most this many
varying quantities (1024 vertices)."""


class WorstCase:
    """Exact worst-case target ranges of many candidates at once (for ranking).

    Parameters
    ----------
    design : Design
    evaluator : Evaluator

    Raises
    ------
    DesignError
        When more than :data:`RANKING_VARIABLES` quantities vary.
    """

    def __init__(self, design: Design, evaluator: Evaluator):
        self.design, self.ev = design, evaluator
        self.var = SpreadVariables(design, evaluator)
        if len(self.var) > RANKING_VARIABLES:
            raise DesignError(
                f"{design.origin}: {len(self.var)} quantities have a tolerance or TCR; ranking "
                f"by worst case supports at most {RANKING_VARIABLES}; rank by nominal error "
                "or give fixed parts zero tolerance"
            )
        bits = box_corners(len(self.var))
        self.factors = np.where(bits, self.var.high[None, :], self.var.low[None, :])

    def ranges(self, r: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """``(low, high)`` of every target over each candidate's tolerance box, ``(M, T)``."""
        n_v = len(self.factors)
        m = len(r)
        low = np.empty((m, len(self.design.targets)))
        high = np.empty_like(low)
        block = max(1, (1 << 17) // n_v)
        src = self.ev.nominal_sources
        for start in range(0, m, block):
            rows = r[start:start + block]
            count = len(rows)
            r_all = np.repeat(rows, n_v, axis=0)
            tiled = np.tile(self.factors, (count, 1))
            r_all, sources = self.var.apply(tiled, np.zeros(r.shape[1]), src, base=r_all)
            with np.errstate(all="ignore"):
                values = self.ev.evaluate(r_all, sources).targets.reshape(count, n_v, -1)
            low[start:start + count] = values.min(axis=1)
            high[start:start + count] = values.max(axis=1)
        return low, high


def part_spread(design: Design, ev: Evaluator, var: SpreadVariables, r0: np.ndarray,
                 bits: np.ndarray | None, vertices: object, nominal: object,
                 r_v: np.ndarray) -> list[PartSpread]:
    hot_c = max(design.temperature_c[1], design.ambient_c)
    current = vertices.solution.branch_currents[:, : len(r0)]  # type: ignore[attr-defined]
    volts = vertices.resistor_voltage  # type: ignore[attr-defined]
    out = []
    column_of = {k: c for c, (group, k) in enumerate(var.kind) if group == "resistor"}
    for k, resistor in enumerate(design.resistors):
        power = current[:, k] ** 2 * r_v[:, k]
        worst = float(np.max(power))
        # without every vertex solved there is no sound bound to give
        bound = worst if bits is not None else np.inf
        if bits is not None and k in column_of and len(power) > 1:
            c = column_of[k]
            lo_rows = np.flatnonzero(~bits[:, c])
            hi_rows = lo_rows + (1 << c)
            r_lo, r_hi = r_v[lo_rows, k], r_v[hi_rows, k]
            i_lo, i_hi = current[lo_rows, k], current[hi_rows, k]
            with np.errstate(all="ignore"):
                # I = V_th / (R_th + R): 1/I is linear in R
                slope = (1 / i_hi - 1 / i_lo) / (r_hi - r_lo)
                v_th = 1 / slope
                r_th = (1 / i_lo) / slope - r_lo
                inside = (r_th > r_lo) & (r_th < r_hi) & np.isfinite(r_th)
                peak = np.where(inside, v_th ** 2 / (4 * r_th), 0.0)
                available = np.abs(v_th) * np.abs(v_th / r_th) / 4
            worst = max(worst, float(np.nanmax(peak)) if peak.size else worst)
            # two sound bounds: the available power V_oc I_sc / 4 with both at their box
            # extremes, and (I monotone in R) the largest I² at either end times R at its
            # high end; the tighter one is given
            by_available = (float(np.nanmax(np.abs(v_th)) * np.nanmax(np.abs(v_th / r_th)) / 4)
                            if np.all(np.isfinite(available)) else np.inf)
            by_current = float(np.max(np.maximum(i_lo ** 2, i_hi ** 2) * r_hi))
            bound = max(worst, min(by_available, by_current))
        rating = design.rating(resistor)
        allowed_hot = (None if rating is None
                       else float(allowed_power(rating, hot_c, design.margin_frac)))
        out.append(PartSpread(
            ref=resistor.ref,
            nominal_power=float(nominal.resistor_power[0, k]),  # type: ignore[attr-defined]
            worst_power=worst, worst_power_bound=bound, allowed_power_hot=allowed_hot,
            utilization=None if not allowed_hot else worst / allowed_hot,
            worst_voltage=float(np.max(volts[:, k])),
        ))
    return out
