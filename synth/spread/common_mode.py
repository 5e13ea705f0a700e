"""Worst case of a design with matched arrays: every vertex of the parts' own deviations, the
arrays' common deviations scanned at each of them.

A matched array's members share one common deviation (:mod:`synth.design.array`): each
member's resistance is affine in it, so a target is not linear-fractional in the common
deviation and its extremes over the common range need not lie at the ends.  The own
deviations of the parts (and the sources) still enter linear-fractionally, one at a time,
so for every value of the common deviations the extremes lie at the vertices of the rest of
the box: the worst case is the extreme, over those vertices, of each target along the
common range.  That range is scanned on Chebyshev–Lobatto points (its ends included).

With one array the scan can show the ends to be the extremes: a target is a ratio of
polynomials of degree at most ``m + 1`` in the common deviation (``m`` the array's member
parts in the network: each makes one entry of the network's matrix affine in it, so a
determinant or a cofactor has at most that degree, and a voltage across a member one more).
When at a vertex the ``m + 3`` or more scanned values agree, within a few noise floors, with
the linear-fractional function through the two ends and the middle (its pole outside the
range), their difference, whose numerator has degree at most ``m + 2``, is that small at more
points than its degree, so it stays within a few noise floors over the whole range (the
points are Chebyshev–Lobatto points, whose interpolation constant is small): the target is
then within noise of a monotone function and its ends give its extremes.  A ratio of one
array's members (a matched divider) is such a case; the worst case is then reported exact
(``method = "vertices, common mode monotone"``).  Otherwise, and with more than one array,
the worst case is the extreme of the scanned values (``"vertices, common mode scanned"``),
values reached inside the box but not monotone to be the extremes.
"""

from __future__ import annotations

__all__ = ["CommonModeScan", "corner_of", "scan_common_mode"]

from dataclasses import dataclass, replace

import numpy as np

from synth.circuit.measure import Evaluation, Evaluator, SourceValues
from synth.design.model import Design
from synth.rating import use_of
from synth.spread.records import PartSpread
from synth.spread.variables import SpreadVariables, box_corners
from synth.spread.worst_case import part_spread

_RATIONAL_KINDS = ("voltage", "current", "ratio")
"""Target kinds whose degree in the common deviation the proof bounds (a power, a loss in dB,
a resistance, a transfer between points and a reading in °C are scanned only)."""

_PROOF_MARGIN = 8.0
"""Noise floors within which a scanned value must meet the linear-fractional fit."""


@dataclass(frozen=True)
class CommonModeScan:
    """Every target at every vertex of the own deviations and every scanned common deviation.

    Attributes
    ----------
    bits : numpy.ndarray
        ``(V, variables)`` booleans: each row's vertex of the own deviations (True: high
        end); the common columns are False (their values are in ``grid``).
    grid : numpy.ndarray
        ``(G, arrays)``: each scanned common deviation, from -1 (its low end) to +1 (its
        high end).
    targets, noise : numpy.ndarray
        ``(G, V, targets)``: each target's value and its noise floor.
    monotone : numpy.ndarray
        ``(targets,)`` True where every vertex's scan proved the target linear-fractional
        in the common deviation (so the ends give the exact worst case).
    parts : list of PartSpread
        Each physical part's largest dissipation and voltage over every solved row (no
        sound bound: ``worst_power_bound`` is infinite).
    """

    bits: np.ndarray
    grid: np.ndarray
    targets: np.ndarray
    noise: np.ndarray
    monotone: np.ndarray
    parts: list[PartSpread]


def _points(count: int) -> np.ndarray:
    """``count`` Chebyshev–Lobatto points from -1 to +1, ends included, in rising order."""
    return -np.cos(np.pi * np.arange(count) / (count - 1))


def scan_common_mode(design: Design, ev: Evaluator, var: SpreadVariables, parts0: np.ndarray,
                     src: SourceValues, nominal: Evaluation) -> CommonModeScan:
    """Solve every vertex of the own deviations at every scanned common deviation.

    Parameters
    ----------
    design : Design
    ev : Evaluator
    var : SpreadVariables
        The common columns (kind ``"array"``) come last.
    parts0 : numpy.ndarray
        ``(parts,)`` nominal ohm of every physical part.
    src : SourceValues
        Nominal source values.
    nominal : Evaluation
        The nominal solve (for the parts' nominal figures).

    Returns
    -------
    CommonModeScan
    """
    commons = [c for c, (group, _) in enumerate(var.kind) if group == "array"]
    n = len(var)
    own = n - len(commons)
    members = {c: sum(1 for col in var.common_of.values() if col == c) for c in commons}
    if len(commons) == 1:
        count = members[commons[0]] + 3  # enough points to prove a linear-fractional target
        count += 1 - count % 2  # odd: the middle is a point
        axes = [_points(max(count, 9))]
    else:
        axes = [_points(5 if len(commons) <= 2 else 3) for _ in commons]
    grid = np.array(np.meshgrid(*axes, indexing="ij")).reshape(len(commons), -1).T
    corners = box_corners(own)
    bits = np.zeros((len(corners), n), dtype=bool)
    bits[:, :own] = corners
    base = np.where(bits, var.high[None, :], var.low[None, :])
    values, noises = [], []
    parts: list[PartSpread] | None = None
    for point in grid:
        factors = base.copy()
        for c, t in zip(commons, point, strict=True):
            factors[:, c] = var.low[c] + (t + 1) / 2 * (var.high[c] - var.low[c])
        r_v, p_v, s_v = var.apply(factors, parts0, src)
        solved = ev.evaluate(r_v, s_v, part_values=p_v)
        values.append(solved.targets)
        noises.append(solved.target_noise)
        found = part_spread(design, ev, var, bits, solved, nominal, p_v)
        parts = found if parts is None else [_larger(a, b) for a, b in zip(parts, found,
                                                                           strict=True)]
    targets, noise = np.array(values), np.array(noises)
    rational = np.array([t.kind in _RATIONAL_KINDS for t in design.targets], dtype=bool)
    monotone = (_linear_fractional(axes[0], targets, noise) & rational if len(commons) == 1
              else np.zeros(targets.shape[2], dtype=bool))
    unbounded = [replace(p, worst_power_bound=np.inf) for p in parts or []]
    return CommonModeScan(bits=bits, grid=grid, targets=targets, noise=noise, monotone=monotone,
                          parts=unbounded)


def _larger(a: PartSpread, b: PartSpread) -> PartSpread:
    """One part's figures at two scanned common deviations: the larger stress of each."""
    worst = max(a.worst_power, b.worst_power)
    return replace(a, worst_power=worst, worst_power_bound=max(a.worst_power_bound,
                                                               b.worst_power_bound),
                   worst_voltage=max(a.worst_voltage, b.worst_voltage),
                   utilization=None if a.allowed_power_hot is None
                   else float(use_of(worst, a.allowed_power_hot)))


def _linear_fractional(x: np.ndarray, values: np.ndarray, noise: np.ndarray) -> np.ndarray:
    """``(targets,)`` True where, at every vertex, the values along ``x`` are those of the
    linear-fractional function through the two ends and the middle (pole outside).

    ``values`` and ``noise`` are ``(points, vertices, targets)``; a target flat within its
    noise floor along the scan counts as monotone too.
    """
    middle = len(x) // 2
    w = x[-1] - x[middle]
    y0, ym, y1 = values[0], values[middle], values[-1]
    tol = _PROOF_MARGIN * np.maximum(noise.max(axis=0), np.finfo(float).tiny)
    flat = np.all(np.abs(values - ym[None]) <= tol[None], axis=0)
    d0, d1 = y0 - ym, y1 - ym
    with np.errstate(all="ignore"):
        # h(u) = ym + s·u / (1 + q·u), u = x - x[middle], through the ends (u = -w, +w)
        q = -(d0 + d1) / (w * (d1 - d0))
        s = d1 * (1 + q * w) / w
        u = (x - x[middle])[:, None, None]
        fit = ym[None] + s[None] * u / (1 + q[None] * u)
        pole_outside = np.abs(q) * w < 1
        agree = np.all(np.abs(values - fit) <= tol[None], axis=0) & pole_outside
    ok = np.where(np.isfinite(values).all(axis=0), flat | agree, False)
    return np.asarray(ok.all(axis=0), dtype=bool)


def corner_of(scan: CommonModeScan, names: tuple[str, ...], row: int, point: int
              ) -> dict[str, str]:
    """Which end of each varying quantity gives a row of the scan: ``"+"``/``"-"`` for an own
    deviation and a common one at its end, else the common deviation's place in its range
    (``"+0.71"``: 71 % of its half-width above nominal)."""
    out = {}
    own = scan.bits.shape[1] - scan.grid.shape[1]
    for i, name in enumerate(names):
        if i < own:
            out[name] = "+" if scan.bits[row, i] else "-"
            continue
        t = float(scan.grid[point, i - own])
        out[name] = "+" if t >= 1 - 1e-12 else "-" if t <= -1 + 1e-12 else f"{t:+.2f}"
    return out
