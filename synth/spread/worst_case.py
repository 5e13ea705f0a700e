"""Worst case over the tolerance box: every vertex solved, interior dissipation peaks, and the
batched ranges used for ranking.
"""

from __future__ import annotations

__all__ = [
    "EXACT_VARIABLES", "RANKING_VARIABLES", "WorstCase", "part_spread", "thevenin_peak",
    "worst_point_parts",
]

from dataclasses import replace

import numpy as np

from synth.circuit.measure import Evaluation, Evaluator
from synth.design.model import Design
from synth.errors import DesignError
from synth.rating import exceeds, falls_short, use_of
from synth.spread.heating import heats, part_rises
from synth.spread.records import PartSpread
from synth.spread.variables import SpreadVariables, box_corners

EXACT_VARIABLES = 16
"""Up to this many varying quantities every vertex of the tolerance box is solved."""


RANKING_VARIABLES = 10
"""Ranking candidates by worst case solves every vertex per candidate: at most this many
varying quantities (1024 vertices)."""


def thevenin_peak(i_lo: np.ndarray, i_hi: np.ndarray, r_lo: np.ndarray, r_hi: np.ndarray
                  ) -> tuple[np.ndarray, np.ndarray]:
    """Interior dissipation peak of a part between two values of its own resistance.

    The rest of a linear network is a Thevenin source, so the part's current
    is I = V_th / (R_th + R) and 1/I is linear in R: the two ends give V_th and
    R_th.  The part's power peaks at R = R_th with V_th²/(4 R_th) (maximum
    power transfer) when R_th lies between the ends.

    Returns
    -------
    peak : numpy.ndarray
        The interior peak, W (0 where R_th lies outside the span).
    available : numpy.ndarray
        The available power |V_th|·|V_th/R_th|/4 (a bound), W.
    """
    with np.errstate(all="ignore"):
        slope = (1 / i_hi - 1 / i_lo) / (r_hi - r_lo)
        v_th = 1 / slope
        r_th = (1 / i_lo) / slope - r_lo
        inside = (r_th > r_lo) & (r_th < r_hi) & np.isfinite(r_th)
        peak = np.where(inside, v_th ** 2 / (4 * r_th), 0.0)
        available = np.abs(v_th) * np.abs(v_th / r_th) / 4
    return peak, available


class WorstCase:
    """Exact worst case of many candidates at once: target ranges and part stress.

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
        self.heats = heats(design, evaluator)
        """True when some part heats itself: each candidate's box then follows its own
        parts' rises at its nominal operating point (:mod:`synth.spread.heating`)."""
        self.var = SpreadVariables(design, evaluator, per_candidate=self.heats)
        if len(self.var) > RANKING_VARIABLES:
            raise DesignError(
                f"{design.origin}: {len(self.var)} quantities have a tolerance or TCR; a worst "
                f"case for every candidate supports at most {RANKING_VARIABLES}; rank and "
                "require by nominal values, or give fixed parts zero tolerance"
            )
        self.bits = box_corners(len(self.var))
        self.factors = np.where(self.bits, self.var.high[None, :], self.var.low[None, :])
        self._noise = np.zeros((0, len(design.targets)))  # of the last stress, per target

    def stress(self, positions: np.ndarray, parts: np.ndarray
               ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """Worst case of each candidate over its tolerance box.

        Parameters
        ----------
        positions : numpy.ndarray
            ``(M, resistors)`` nominal effective ohm (solved once for the parts'
            self-heating rises when some part heats itself).
        parts : numpy.ndarray
            ``(M, parts)`` nominal ohm of every physical part.

        Returns
        -------
        low, high : numpy.ndarray
            ``(M, targets)`` extremes of every target (vertex extremes: exact
            for the linear-fractional targets; a power target also takes its
            part's interior peak).
        power, voltage : numpy.ndarray
            ``(M, parts)`` largest dissipation (vertices and interior peaks)
            and voltage of every physical part.
        """
        n_v = len(self.factors)
        m = len(positions)
        n_t, n_p = len(self.design.targets), parts.shape[1]
        low, high = np.empty((m, n_t)), np.empty((m, n_t))
        power, voltage = np.empty((m, n_p)), np.empty((m, n_p))
        noise = np.empty((m, n_t))
        block = max(1, (1 << 17) // n_v)
        src = self.ev.nominal_sources
        columns = self.var.column_of_part()
        for start in range(0, m, block):
            rows = parts[start:start + block]
            count = len(rows)
            tiled = (self._heated_factors(positions[start:start + block], rows) if self.heats
                     else np.tile(self.factors, (count, 1)))
            r_all, p_all, sources = self.var.apply(tiled, rows[0], src,
                                                   base=np.repeat(rows, n_v, axis=0))
            with np.errstate(all="ignore"):
                ev = self.ev.evaluate(r_all, sources, part_values=p_all)
            values = ev.targets.reshape(count, n_v, -1)
            low[start:start + count] = values.min(axis=1)
            high[start:start + count] = values.max(axis=1)
            noise[start:start + count] = ev.target_noise.reshape(count, n_v, -1).max(axis=1)
            p = ev.part_power.reshape(count, n_v, -1)
            worst = p.max(axis=1)
            current = ev.part_current.reshape(count, n_v, -1)
            ohms = p_all.reshape(count, n_v, -1)
            for col, c in columns.items():
                lo_rows = np.flatnonzero(~self.bits[:, c])
                hi_rows = lo_rows + (1 << c)
                peak, _ = thevenin_peak(current[:, lo_rows, col], current[:, hi_rows, col],
                                        ohms[:, lo_rows, col], ohms[:, hi_rows, col])
                worst[:, col] = np.maximum(worst[:, col], np.nanmax(peak, axis=1))
            power[start:start + count] = worst
            voltage[start:start + count] = ev.part_voltage.reshape(count, n_v, -1).max(axis=1)
            for k_t, target in enumerate(self.design.targets):
                if target.kind == "power":
                    k = self.ev.resistor_index[target.ref or ""]
                    cols = self.ev.part_columns[k]
                    if cols.stop - cols.start == 1:
                        high[start:start + count, k_t] = np.maximum(
                            high[start:start + count, k_t], worst[:, cols.start])
        self._noise = noise
        return low, high, power, voltage

    def _heated_factors(self, positions: np.ndarray, parts: np.ndarray) -> np.ndarray:
        """``(M·vertices, variables)`` every candidate's vertices of its self-heated box."""
        with np.errstate(all="ignore"):
            nominal = self.ev.evaluate(positions, part_values=parts)
        rises = np.nan_to_num(part_rises(self.design, self.ev, nominal.part_power))
        low, high = self.var.heated_box(rises)
        factors = np.where(self.bits[None, :, :], high[:, None, :], low[:, None, :])
        return factors.reshape(-1, factors.shape[-1])

    def holds(self, positions: np.ndarray, parts: np.ndarray) -> np.ndarray:
        """``(M,)`` True where every window and part limit holds over the whole box.

        Targets at their vertex extremes (exact for linear-fractional targets;
        a power target with its interior peak), each physical part at its
        largest dissipation (vertices and interior peaks) and voltage; the
        comparisons are those of :mod:`synth.rating`, slack included.
        """
        low, high, power, voltage = self.stress(positions, parts)
        noise = self._noise  # the largest noise floor of each target over each box
        ok: np.ndarray = np.all(np.isfinite(low) & np.isfinite(high), axis=1)
        for j, target in enumerate(self.design.targets):
            w_low, w_high = target.bounds
            ok &= (~falls_short(low[:, j], w_low, noise[:, j])
                   & ~exceeds(high[:, j], w_high, noise[:, j]))
        ok &= ~np.any(exceeds(power, self.ev.allowed_power)
                      | exceeds(voltage, self.ev.allowed_voltage), axis=1)
        return ok

    def ranges(self, positions: np.ndarray, parts: np.ndarray
               ) -> tuple[np.ndarray, np.ndarray]:
        """``(low, high)`` of every target over each candidate's tolerance box, ``(M, T)``."""
        low, high, _, _ = self.stress(positions, parts)
        return low, high


def part_spread(design: Design, ev: Evaluator, var: SpreadVariables,
                bits: np.ndarray | None, vertices: Evaluation, nominal: Evaluation,
                parts_v: np.ndarray) -> list[PartSpread]:
    """Worst-case stress of every physical part from the solved vertices.

    ``bits`` are the vertices' corners when every vertex was solved (else None:
    then no sound bound can be given); ``parts_v`` the ``(vertices, parts)`` ohm.
    """
    current = vertices.part_current
    volts = vertices.part_voltage
    out = []
    column_of = var.column_of_part()
    owner = ev.part_resistor()
    physical = {r.ref: r.part_refs for r in design.resistors if r.copy_of is None}
    for col, ref in enumerate(design.part_refs):
        resistor = design.resistors[int(owner[col])]
        if resistor.copy_of is not None:  # an operating point's copy: the physical part's name
            ref = physical[resistor.copy_of][resistor.part_refs.index(ref)]
        power = vertices.part_power[:, col]
        worst = float(np.max(power))
        bound = worst if bits is not None else np.inf
        if bits is not None and col in column_of and len(power) > 1:
            c = column_of[col]
            lo_rows = np.flatnonzero(~bits[:, c])
            hi_rows = lo_rows + (1 << c)
            r_lo, r_hi = parts_v[lo_rows, col], parts_v[hi_rows, col]
            i_lo, i_hi = current[lo_rows, col], current[hi_rows, col]
            peak, available = thevenin_peak(i_lo, i_hi, r_lo, r_hi)
            worst = max(worst, float(np.nanmax(peak)) if peak.size else worst)
            # two sound bounds: the available power V_oc I_sc / 4 with both at their box
            # extremes, and (I monotone in R) the largest I² at either end times R at its
            # high end; the tighter one is given
            with np.errstate(all="ignore"):
                slope = (1 / i_hi - 1 / i_lo) / (r_hi - r_lo)
                v_th = 1 / slope
                r_th = (1 / i_lo) / slope - r_lo
                by_available = (float(np.nanmax(np.abs(v_th)) * np.nanmax(np.abs(v_th / r_th))
                                      / 4) if np.all(np.isfinite(available)) else np.inf)
            by_current = float(np.max(np.maximum(i_lo ** 2, i_hi ** 2) * r_hi))
            bound = max(worst, min(by_available, by_current))
        allowance = design.allowance(resistor)
        allowed = None if allowance is None else allowance.power_w
        out.append(PartSpread(
            ref=ref,
            nominal_power=float(nominal.part_power[0, col]),
            worst_power=worst, worst_power_bound=bound, allowed_power_hot=allowed,
            utilization=None if allowed is None else float(use_of(worst, allowed)),
            worst_voltage=float(np.max(volts[:, col])),
            allowed_voltage=None if allowance is None else allowance.voltage_v,
            point=resistor.point,
        ))
    return out


def worst_point_parts(spreads: list[PartSpread]) -> list[PartSpread]:
    """Each physical part once: its figures at the point of its largest worst-case
    dissipation, its worst voltage the largest over every point."""
    kept: dict[str, PartSpread] = {}
    highest_v: dict[str, float] = {}
    for s in spreads:
        highest_v[s.ref] = max(highest_v.get(s.ref, -np.inf), s.worst_voltage)
        if s.ref not in kept or s.worst_power_bound > kept[s.ref].worst_power_bound:
            kept[s.ref] = s
    return [replace(s, worst_voltage=highest_v[ref]) for ref, s in kept.items()]
