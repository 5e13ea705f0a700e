"""The exact binomial (Clopper–Pearson) interval of a yield.
"""

from __future__ import annotations

__all__ = ["YIELD_CONFIDENCE", "yield_interval"]

import math

YIELD_CONFIDENCE = 0.95
"""Confidence level of the yield interval."""


def yield_interval(passed: int, samples: int, confidence: float = YIELD_CONFIDENCE
                   ) -> tuple[float, float]:
    """Clopper–Pearson interval of a yield from ``passed`` of ``samples``, fractions.

    Examples
    --------
    >>> low, high = yield_interval(50, 100)
    >>> round(low, 4), round(high, 4)
    (0.3983, 0.6017)

    Notes
    -----
    The exact binomial interval (Clopper & Pearson, Biometrika 26, 1934): its
    ends are quantiles of beta distributions, B(α/2; k, n-k+1) and
    B(1-α/2; k+1, n-k), found here by bisection on the regularized incomplete
    beta function (its continued fraction, evaluated by Lentz's method).  The
    tests check it against scipy.stats.beta.
    """
    alpha = 1 - confidence
    low = 0.0 if passed == 0 else _beta_quantile(alpha / 2, passed, samples - passed + 1)
    high = (1.0 if passed == samples
            else _beta_quantile(1 - alpha / 2, passed + 1, samples - passed))
    return low, high


def _beta_quantile(q: float, a: float, b: float) -> float:
    """x with I_x(a, b) = q, by bisection (I is increasing in x)."""
    low, high = 0.0, 1.0
    for _ in range(200):
        middle = 0.5 * (low + high)
        if _incomplete_beta(middle, a, b) < q:
            low = middle
        else:
            high = middle
        if high - low < 1e-15 * max(middle, 1e-300):
            break
    return 0.5 * (low + high)


def _incomplete_beta(x: float, a: float, b: float) -> float:
    """The regularized incomplete beta function I_x(a, b)."""
    if x <= 0.0:
        return 0.0
    if x >= 1.0:
        return 1.0
    log_front = (math.lgamma(a + b) - math.lgamma(a) - math.lgamma(b)
                 + a * math.log(x) + b * math.log1p(-x))
    if x < (a + 1) / (a + b + 2):
        return math.exp(log_front) * _beta_fraction(x, a, b) / a
    return 1.0 - math.exp(log_front) * _beta_fraction(1 - x, b, a) / b


def _beta_fraction(x: float, a: float, b: float) -> float:
    """The continued fraction of the incomplete beta function (modified Lentz)."""
    tiny = 1e-300
    c, d = 1.0, 1.0 - (a + b) * x / (a + 1)
    d = 1.0 / (d if abs(d) > tiny else tiny)
    value = d
    for m in range(1, 10_000):
        for numerator in (m * (b - m) * x / ((a + 2 * m - 1) * (a + 2 * m)),
                          -(a + m) * (a + b + m) * x / ((a + 2 * m) * (a + 2 * m + 1))):
            d = 1.0 + numerator * d
            d = 1.0 / (d if abs(d) > tiny else tiny)
            c = 1.0 + numerator / c
            c = c if abs(c) > tiny else tiny
            value *= c * d
        if abs(c * d - 1.0) < 1e-15:
            break
    return value
