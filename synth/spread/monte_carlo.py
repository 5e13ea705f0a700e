"""Seeded Monte Carlo of tolerances, TCR and ambient, with yield.
"""

from __future__ import annotations

__all__ = [
    "LEAST_SAMPLES", "YIELD_CONFIDENCE", "block_size", "monte_carlo", "sample_count",
    "yield_interval",
]

import math

import numpy as np

from synth.circuit.measure import Evaluator, SourceValues
from synth.circuit.sparse import SPARSE_ABOVE
from synth.design.model import Design
from synth.rating import exceeds
from synth.spread.records import SpreadSettings, TargetSpread
from synth.spread.variables import REFERENCE_C, SpreadVariables, inside_windows

YIELD_CONFIDENCE = 0.95
"""Confidence level of the yield interval."""

_MC_BLOCK = 1 << 15
"""Samples drawn and solved per block: arrays stay in cache; the random stream is drawn
block by block in a fixed order, so a seed gives the same samples every time."""

LEAST_SAMPLES = 1000
"""Fewest samples a cut leaves (the yield interval is then about ±3 % wide at most)."""

_MC_ENTRIES = 1 << 22
"""Samples per block times the columns of a sample's results (branches and parts): a large
network takes smaller blocks (at least 256 samples) so that memory stays bounded (32 MiB
per result array)."""


def sample_count(ev: Evaluator, settings: SpreadSettings) -> int:
    """Samples the Monte Carlo runs: all asked for, or on a network of more than
    :data:`synth.circuit.sparse.SPARSE_ABOVE` resistors at most
    ``sample_budget // resistors`` (at least :data:`LEAST_SAMPLES`)."""
    n_r = len(ev.network.resistor_refs)
    if n_r > SPARSE_ABOVE:
        return min(settings.samples, max(settings.sample_budget // n_r, LEAST_SAMPLES))
    return settings.samples


def block_size(ev: Evaluator) -> int:
    """Samples per block for this network (see :data:`_MC_ENTRIES`)."""
    columns = len(ev.network.branch_refs) + len(ev.part_refs)
    return min(_MC_BLOCK, max(256, _MC_ENTRIES // max(columns, 1)))


def monte_carlo(design: Design, ev: Evaluator, var: SpreadVariables, parts0: np.ndarray,
                src: SourceValues, settings: SpreadSettings, targets: list[TargetSpread]
                ) -> tuple[list[TargetSpread], float]:
    """Seeded Monte Carlo: each target's samples and the yield.

    Each physical part draws its own tolerance deviation and temperature
    coefficient; the ambient is drawn once per sample over the design's
    temperature range.  Yield is the share of samples in which every target
    lies in its window and every physical part stays within its allowance
    (taken at the design's hottest ambient, as everywhere; see
    :mod:`synth.rating`).
    """
    rng = np.random.default_rng(settings.seed)
    total, n = settings.samples, len(var)
    low_c, high_c = design.temperature_c
    tcr = var.tcr
    gain_columns = [c for c, (group, _) in enumerate(var.kind) if group == "gain"]
    n_t = len(design.targets)
    kept = np.empty((total, n_t)) if settings.keep_samples else None
    stats = _Running(n_t)
    inside_count = np.zeros(n_t, dtype=np.int64)
    passed = 0

    def draw(m: int, width: np.ndarray) -> np.ndarray:
        if settings.distribution == "normal":
            out = rng.standard_normal((m, len(width)))
            out *= width / 3
        else:
            out = rng.random((m, len(width)))
            out *= 2 * width
            out -= width
        return out

    block = block_size(ev)
    for start in range(0, total, block):
        m = min(block, total - start)
        rows = slice(start, start + m)
        temperature = (rng.uniform(low_c, high_c, m) if high_c > low_c
                       else np.full(m, low_c))
        factors = draw(m, var.tolerance)
        factors += 1.0
        for column in gain_columns:  # a gain range (a transistor's beta): uniform within it
            factors[:, column] = rng.uniform(var.low[column], var.high[column], m)
        if n:
            # each part's temperature coefficient lies within its ±TCR (a normal spread
            # reads the TCR limit as 3σ, like a tolerance)
            drift = draw(m, tcr)
            drift *= (temperature - REFERENCE_C)[:, None]
            drift += 1.0
            factors *= drift
        r, p, s = var.apply(factors, parts0, src)
        result = ev.evaluate(r, s, part_values=p)
        if kept is not None:
            kept[rows] = result.targets
        stats.add(result.targets)
        inside = inside_windows(design, result.targets, result.target_noise)
        inside_count += inside.sum(axis=0)
        good = inside.all(axis=1)
        good &= ~np.any(exceeds(result.part_power, ev.allowed_power)
                        | exceeds(result.part_voltage, ev.allowed_voltage), axis=1)
        passed += int(good.sum())
    updated = []
    for j, t in enumerate(targets):
        updated.append(TargetSpread(
            **{**t.__dict__, "mc_mean": float(stats.mean[j]), "mc_std": float(stats.std[j]),
               "mc_values": None if kept is None else kept[:, j],
               "mc_min": float(stats.low[j]), "mc_max": float(stats.high[j]),
               "inside": float(inside_count[j] / total)}))
    return updated, passed / total


class _Running:
    """Count, mean, variance and extremes per column, merged block by block.

    Chan, Golub and LeVeque's pairwise update of the mean and the sum of squared
    deviations, so that memory stays bounded and large offsets do not cancel.
    """

    def __init__(self, columns: int):
        self.count = 0
        self.mean = np.zeros(columns)
        self.m2 = np.zeros(columns)
        self.low = np.full(columns, np.inf)
        self.high = np.full(columns, -np.inf)

    def add(self, block: np.ndarray) -> None:
        m = len(block)
        if m == 0:
            return
        with np.errstate(invalid="ignore"):
            block_mean = block.mean(axis=0)
            block_m2 = ((block - block_mean) ** 2).sum(axis=0)
            total = self.count + m
            delta = block_mean - self.mean
            self.mean = self.mean + delta * (m / total)
            self.m2 = self.m2 + block_m2 + delta ** 2 * (self.count * m / total)
        self.count = total
        self.low = np.fmin(self.low, block.min(axis=0))
        self.high = np.fmax(self.high, block.max(axis=0))

    @property
    def std(self) -> np.ndarray:
        """Population standard deviation (as numpy.std)."""
        return np.sqrt(self.m2 / max(self.count, 1))


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
