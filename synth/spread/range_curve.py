"""A target's value across a source's range: nominal, window band and worst-case envelope.

A design whose points are the two ends of a source's range (:mod:`synth.design.points`)
is judged at the ends, which is exact; this sweeps the source between them so a
picture can show the transfer curve.  At each swept value the network is solved at
nominal values and at every vertex of the tolerance box (each physical part one
deviation at every point, its TCR over its own temperature with its self-heating rise at
the design's nominal values), so the envelope is exact at every swept value; with more
than :data:`ENVELOPE_VARIABLES` varying quantities, or with a matched array (whose common
deviation the vertices do not bound), no envelope is given.
"""

from __future__ import annotations

__all__ = ["ENVELOPE_VARIABLES", "RangeCurve", "range_curves"]

import math
from dataclasses import dataclass, replace

import numpy as np

from synth.circuit.measure import Evaluator
from synth.design.model import Design
from synth.design.points import COPY_MARK, point_label
from synth.spread.heating import part_rises
from synth.spread.variables import SpreadVariables, box_corners

ENVELOPE_VARIABLES = 10
"""Most varying quantities for which the worst-case envelope is swept (2**10 vertices)."""


@dataclass(frozen=True)
class RangeCurve:
    """One target across one source's range.

    Attributes
    ----------
    label : str
        The target's label without its point.
    source : str
        The ranged source's designator; ``input_unit`` its unit (V or A).
    unit : str
        The target's unit.
    inputs : numpy.ndarray
        The swept source values, low end to high end.
    nominal, worst_low, worst_high : numpy.ndarray
        The target at nominal values and its least and largest over the
        tolerance box at each swept value (NaN without an envelope).
    low, high : numpy.ndarray
        The window at each swept value, straight between the ends' windows
        (``-inf``/``inf`` where open).
    exact : bool
        True when every vertex of the tolerance box was solved (an envelope is given);
        False with more than :data:`ENVELOPE_VARIABLES` varying quantities or a matched
        array.
    """

    label: str
    source: str
    input_unit: str
    unit: str
    inputs: np.ndarray
    nominal: np.ndarray
    worst_low: np.ndarray
    worst_high: np.ndarray
    low: np.ndarray
    high: np.ndarray
    exact: bool


def _range_pairs(design: Design) -> list[tuple[str, str, str]]:
    """``(source, low point, high point)`` for each pair of a single source's range ends."""
    pairs = []
    by_name = {p.name: p for p in design.points}
    for point in design.points:
        if len(point.range_ends) != 1 or not point.name.endswith(" low"):
            continue
        ref = point.range_ends[0]
        partner = point.name.removesuffix(" low") + " high"
        if partner in by_name and by_name[partner].range_ends == point.range_ends:
            pairs.append((ref, point.name, partner))
    return pairs


def range_curves(design: Design, positions: dict[str, float], values: dict[str, float],
                 samples: int = 41) -> tuple[RangeCurve, ...]:
    """Each target measured at both ends of a source's range, swept across it.

    Parameters
    ----------
    design : Design
        A design of operating points.
    positions, values : dict of str to float
        The checked design's position and part values, ohm
        (``CheckResult.positions`` and ``CheckResult.values``).
    samples : int
        Swept values from the low end to the high end, both included.

    Returns
    -------
    tuple of RangeCurve
        Empty without a source range.
    """
    pairs = _range_pairs(design)
    if not pairs:
        return ()
    ev = Evaluator(design)
    r0 = ev.follow(np.array([positions.get(r.ref, r.value if r.value is not None else np.nan)
                             for r in design.resistors]))
    parts0 = ev.part_values(r0)[0]
    for c, ref in enumerate(design.part_refs):
        parts0[c] = values.get(ref, parts0[c])
    parts0 = ev.follow_parts(parts0)[0]
    # the parts' self-heating rises at the design's nominal values, held over the sweep (first
    # order, as in the spread: synth.spread.heating)
    at_nominal = ev.evaluate(np.atleast_2d(r0), part_values=parts0[None, :])
    var = SpreadVariables(design, ev, rise_c=part_rises(design, ev, at_nominal.part_power[0]))
    # a matched array's common deviation is not linear-fractional in general: its ends
    # alone give no exact envelope (synth.spread.common_mode), so none is drawn
    exact = len(var) <= ENVELOPE_VARIABLES and not var.common_of
    bits = box_corners(len(var)) if exact else np.zeros((0, len(var)), dtype=bool)
    corners = np.where(bits, var.high[None, :], var.low[None, :])
    labels = {t.label: k for k, t in enumerate(design.targets)}
    curves = []
    for ref, low_point, high_point in pairs:
        kind, column = _column(design, ref, low_point)
        ends = [next(p for p in design.points if p.name == name).sources[ref]
                for name in (low_point, high_point)]
        inputs = np.linspace(ends[0], ends[1], samples)
        for target in design.targets:
            if target.point != low_point:
                continue
            base = target.label.removesuffix(f" {COPY_MARK} {low_point}")
            other = labels.get(point_label(base, high_point))
            if other is None:
                continue
            k = labels[target.label]
            nominal, worst_low, worst_high = _sweep(ev, var, corners, r0, parts0, kind,
                                                    column, inputs, k)
            (lo_a, hi_a), (lo_b, hi_b) = target.bounds, design.targets[other].bounds
            share = (inputs - ends[0]) / (ends[1] - ends[0])
            curves.append(RangeCurve(
                label=base, source=ref,
                input_unit="V" if kind == "voltage" else "A", unit=target.unit,
                inputs=inputs, nominal=nominal, worst_low=worst_low, worst_high=worst_high,
                low=_between(lo_a, lo_b, share), high=_between(hi_a, hi_b, share),
                exact=exact))
    return tuple(curves)


def _between(a: float, b: float, share: np.ndarray) -> np.ndarray:
    if not (math.isfinite(a) and math.isfinite(b)):
        return np.full(share.shape, a if a == b or not math.isfinite(a) else b)
    return a + (b - a) * share


def _column(design: Design, ref: str, point: str) -> tuple[str, int]:
    """The source group and column of source ``ref``'s copy at ``point``."""
    kind = next(s.kind for s in design.sources if s.copy_of == ref)
    same = [s for s in design.sources if s.kind == kind]
    return kind, next(k for k, s in enumerate(same) if s.copy_of == ref and s.point == point)


def _sweep(ev: Evaluator, var: SpreadVariables, corners: np.ndarray, r0: np.ndarray,
           parts0: np.ndarray, kind: str, column: int, inputs: np.ndarray, k: int
           ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    nominal, worst_low, worst_high = (np.empty(len(inputs)) for _ in range(3))
    base = ev.nominal_sources
    for i, x in enumerate(inputs):
        voltages, currents = base.voltages.copy(), base.currents.copy()
        (voltages if kind == "voltage" else currents)[column] = x
        src = replace(base, voltages=voltages, currents=currents)
        with np.errstate(all="ignore"):
            nominal[i] = ev.evaluate(r0, src, part_values=parts0[None, :],
                                     parts=False).targets[0, k]
            if len(corners):
                r_v, p_v, s_v = var.apply(corners, parts0, src)
                column_v = ev.evaluate(r_v, s_v, part_values=p_v, parts=False).targets[:, k]
                worst_low[i], worst_high[i] = np.min(column_v), np.max(column_v)
            else:
                worst_low[i] = worst_high[i] = np.nan
    return nominal, worst_low, worst_high
