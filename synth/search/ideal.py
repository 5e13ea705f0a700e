"""Ideal continuous values of the free parts, before any catalogue is applied.

The ideal values minimise the relative errors of the ``equals`` targets
(least squares) with every free part inside its range, and push bound
targets back inside their bounds.  They show the user what the network
wants; the discrete search then finds the best orderable values.
"""

from __future__ import annotations

__all__ = ["ideal_values"]

import numpy as np
from scipy.optimize import least_squares

from synth.circuit.measure import Evaluator
from synth.design.model import Design

_EXTRA_STARTS = 6
"""Seeded random starts tried besides the middle of the box (stopping once one fits exactly)."""


def _residuals(design: Design, targets: np.ndarray) -> np.ndarray:
    out = []
    for k, target in enumerate(design.targets):
        value = targets[:, k]
        low, high = target.bounds
        if target.equals is not None:
            out.append((value - target.equals) / target.scale)
        else:
            scale = max(abs(b) for b in (low, high) if np.isfinite(b))
            scale = scale or 1.0
            out.append(np.maximum(low - value, 0.0) / scale if np.isfinite(low)
                       else np.zeros_like(value))
            out.append(np.maximum(value - high, 0.0) / scale if np.isfinite(high)
                       else np.zeros_like(value))
    return np.array(out).T if out else np.zeros((len(targets), 0))


def ideal_values(design: Design, evaluator: Evaluator | None = None) -> dict[str, float]:
    """Continuous values of the free parts that best meet the targets, ohm by reference.

    Parameters
    ----------
    design : Design
        A design with free parts.
    evaluator : Evaluator, optional
        Reused when given.

    Returns
    -------
    dict of str to float
        Empty when the design has no free parts or no targets.

    Notes
    -----
    Solved by :func:`scipy.optimize.least_squares` (trust-region reflective,
    bounds on the logarithm of each free value) from the geometric middle of
    each range and from :data:`_EXTRA_STARTS` seeded random points, keeping the
    best fit (a controlled source can give the network a negative conductance,
    and a single start can stall at the edge of the box); the residuals are
    the goal errors by :attr:`synth.design.model.Target.scale` and the relative
    violations of the bounds.  With more free parts than targets many sets are
    ideal; this returns the one nearest the first start that reaches it.
    """
    free = design.free_resistors
    if not free or not design.targets:
        return {}
    ev = evaluator or Evaluator(design)
    index = [ev.resistor_index[r.ref] for r in free]
    base = np.array([r.value if r.value is not None else np.nan for r in design.resistors])
    lows, highs = [], []
    for r in free:
        low, high = r.range if r.range is not None else (1e-3, 1e12)
        lows.append(np.log(low))
        highs.append(np.log(high))
    lo, hi = np.array(lows), np.array(highs)
    flat = hi - lo < 1e-12
    hi = np.where(flat, lo + 1e-9, hi)

    def residuals(points: np.ndarray) -> np.ndarray:
        r = np.tile(base, (len(points), 1))
        r[:, index] = np.exp(points)
        with np.errstate(all="ignore"):
            res = _residuals(design, ev.evaluate(r).targets)
        return np.nan_to_num(res, nan=1e6, posinf=1e6, neginf=-1e6)  # type: ignore[no-any-return]  # numpy types this array expression as Any

    def residual(logs: np.ndarray) -> np.ndarray:
        return residuals(logs[None, :])[0]  # type: ignore[no-any-return]  # numpy types this array expression as Any

    def jacobian(logs: np.ndarray) -> np.ndarray:
        # forward differences, all perturbed points in one batched solve
        step = 1e-7
        points = np.vstack([logs, logs + step * np.eye(len(logs))])
        values = residuals(points)
        return (values[1:] - values[0]).T / step  # type: ignore[no-any-return]  # numpy types this array expression as Any

    middle = (lo + hi) / 2
    if residual(middle).size == 0:
        return {}
    # several starts: a network with a negative conductance (a controlled source) can
    # have a local minimum at the edge of the box far from a near-zero-error point
    rng = np.random.default_rng(0)
    starts = [middle, *(lo + (hi - lo) * rng.random(len(lo)) for _ in range(_EXTRA_STARTS))]
    best_x, best_cost = middle, np.inf
    for start in starts:
        fit = least_squares(residual, start, jac=jacobian, bounds=(lo, hi), method="trf",
                            xtol=1e-14, ftol=1e-14, gtol=1e-14, max_nfev=2000)
        if fit.cost < best_cost * (1 - 1e-9):
            best_x, best_cost = fit.x, float(fit.cost)
        if best_cost < 1e-24:
            break
    return {r.ref: float(np.exp(v)) for r, v in zip(free, best_x, strict=True)}
