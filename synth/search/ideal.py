"""Ideal continuous values of the free parts, before any catalogue is applied.

The ideal values minimise the relative errors of the ``equals`` targets
(least squares) with every free part inside its range, and push bound
targets back inside their bounds.  They show the user what the network
wants; the discrete search then finds the best orderable values.
"""

from __future__ import annotations

__all__ = ["bounded_least_squares", "ideal_values"]

from collections.abc import Callable

import numpy as np

from synth.circuit.measure import Evaluator
from synth.design.model import Design

_EXTRA_STARTS = 6
"""Seeded random starts tried besides the middle of the box (stopping once one fits exactly)."""


def bounded_least_squares(fun: Callable[[np.ndarray], np.ndarray],
                          jac: Callable[[np.ndarray], np.ndarray], x0: np.ndarray,
                          lo: np.ndarray, hi: np.ndarray, max_iter: int = 500
                          ) -> tuple[np.ndarray, float]:
    """Minimise ``|fun(x)|²/2`` over the box ``lo <= x <= hi``; returns ``(x, cost)``.

    Levenberg–Marquardt steps (Marquardt's scaling of the normal equations) on
    the variables that are free to move: a variable at a bound whose gradient
    pushes it outward is held there, and every step is projected into the box.

    Examples
    --------
    >>> x, cost = bounded_least_squares(lambda x: np.array([x[0] - 2.0, x[1] + 1.0]),
    ...                                 lambda x: np.eye(2), np.zeros(2), np.array([0, 0]),
    ...                                 np.array([5.0, 5.0]))
    >>> [round(float(v), 9) for v in x], round(cost, 9)
    ([2.0, 0.0], 0.5)

    Notes
    -----
    K. Levenberg, Q. Appl. Math. 2 (1944) 164; D. W. Marquardt, J. SIAM 11 (1963) 431.
    It replaces a general optimiser library here because the ideal values are a
    small, smooth problem and the command line should start quickly.
    """
    x = np.clip(np.asarray(x0, dtype=float), lo, hi)
    f = fun(x)
    with np.errstate(over="ignore", invalid="ignore"):
        cost = 0.5 * float(f @ f)
    if not np.isfinite(cost):
        return x, np.inf  # residuals beyond the float range: nothing to descend on
    damping = 1e-3
    for _ in range(max_iter):
        if cost < 1e-30:
            break
        jmat = jac(x)
        gradient = jmat.T @ f
        held = ((x <= lo) & (gradient > 0)) | ((x >= hi) & (gradient < 0))
        free = ~held
        if not free.any() or float(np.max(np.abs(gradient[free]))) < 1e-15:
            break
        normal = jmat[:, free].T @ jmat[:, free]
        scale = np.diag(normal).copy()
        scale[scale <= 0] = 1.0
        improved = False
        while damping < 1e12:
            step = np.zeros_like(x)
            try:
                step[free] = np.linalg.solve(normal + damping * np.diag(scale),
                                             -gradient[free])
            except np.linalg.LinAlgError:
                damping *= 10
                continue
            trial = np.clip(x + step, lo, hi)
            f_trial = fun(trial)
            with np.errstate(over="ignore", invalid="ignore"):
                cost_trial = 0.5 * float(f_trial @ f_trial)
            if cost_trial < cost:
                moved = float(np.max(np.abs(trial - x)))
                gain = cost - cost_trial
                x, f, cost = trial, f_trial, cost_trial
                damping = max(damping / 3, 1e-12)
                improved = True
                if gain <= 1e-15 * max(cost, 1e-300) or moved < 1e-13:
                    return x, cost
                break
            damping *= 4
        if not improved:
            break
    return x, cost


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
    Solved by :func:`bounded_least_squares` (Levenberg–Marquardt with the
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

    norm = [1.0]  # residuals are divided by their size at the middle of the box

    def raw_residuals(points: np.ndarray) -> np.ndarray:
        r = np.tile(base, (len(points), 1))
        r[:, index] = np.exp(points)
        with np.errstate(all="ignore"):
            return _residuals(design, ev.evaluate(r).targets)

    def residuals(points: np.ndarray) -> np.ndarray:
        with np.errstate(all="ignore"):
            res = raw_residuals(points) / norm[0]
        return np.nan_to_num(res, nan=1e6, posinf=1e6, neginf=-1e6)

    def residual(logs: np.ndarray) -> np.ndarray:
        return residuals(logs[None, :])[0]  # type: ignore[no-any-return]  # numpy types this array expression as Any

    def jacobian(logs: np.ndarray) -> np.ndarray:
        # forward differences, all perturbed points in one batched solve
        step = 1e-7
        points = np.vstack([logs, logs + step * np.eye(len(logs))])
        values = residuals(points)
        return (values[1:] - values[0]).T / step  # type: ignore[no-any-return]  # numpy types this array expression as Any

    middle = (lo + hi) / 2
    first = raw_residuals(middle[None, :])[0]
    if first.size == 0:
        return {}
    # a goal far below what the network gives (1e-90 V from 10 V), or a source far beyond
    # it, makes residuals whose squares overflow; one common factor leaves the best fit
    # where it is
    sizes = np.abs(first[np.isfinite(first)])
    norm[0] = min(max(1.0, float(sizes.max())), 1e300) if sizes.size else 1.0
    # several starts: a network with a negative conductance (a controlled source) can
    # have a local minimum at the edge of the box far from a near-zero-error point
    rng = np.random.default_rng(0)
    starts = [middle, *(lo + (hi - lo) * rng.random(len(lo)) for _ in range(_EXTRA_STARTS))]
    best_x, best_cost = middle, np.inf
    for start in starts:
        x, cost = bounded_least_squares(residual, jacobian, start, lo, hi)
        if cost < best_cost * (1 - 1e-9):
            best_x, best_cost = x, cost
        if best_cost < 1e-24:
            break
    if not np.all(np.isfinite(best_x)):
        best_x = middle  # no fit at all: the middle of each range, as the search starts
    return {r.ref: float(np.exp(v)) for r, v in zip(free, best_x, strict=True)}
