"""Streaming Monte Carlo accumulators: counts, mean, variance, extremes and fixed histograms.

A :class:`SampleTally` takes the samples block by block and keeps only a few numbers per
target, so its memory does not grow with the sample count; two tallies merge into the tally of
their samples taken together, which lets a run be split into shards and merged in shard order.
"""

from __future__ import annotations

__all__ = ["HISTOGRAM_BINS", "SampleTally", "histogram_range"]

import math

import numpy as np

HISTOGRAM_BINS = 256
"""Equal bins of each target's Monte Carlo histogram, over a range fixed before sampling."""

_RANGE_PAD = 0.02
"""Share of the worst-case span added below and above it to make a histogram's range."""


def histogram_range(nominal: float, worst_low: float, worst_high: float
                    ) -> tuple[float, float] | None:
    """The range of a target's histogram: its worst-case span, 2 % wider at each end.

    Fixed before sampling (from the worst case), so that every shard bins alike.  A span of
    zero takes a relative width of 1e-9 (1e-300 around zero); None when nothing is finite.

    Examples
    --------
    >>> low, high = histogram_range(5.0, 4.95, 5.05)
    >>> round(low, 12), round(high, 12)
    (4.948, 5.052)
    """
    ends = [v for v in (nominal, worst_low, worst_high) if math.isfinite(v)]
    if not ends:
        return None
    low, high = min(ends), max(ends)
    pad = (high - low) * _RANGE_PAD
    if not pad > 0:
        pad = max(abs(low), abs(high)) * 1e-9 or 1e-300
    low, high = low - pad, high + pad
    if not (math.isfinite(low) and math.isfinite(high) and high > low):
        return None
    return low, high


class SampleTally:
    """Count, mean, variance, extremes, histogram and pass counts of Monte Carlo samples.

    Parameters
    ----------
    ranges : sequence of (float, float) or None
        Each target's histogram range (None: no histogram for that target).
    bins : int
        Equal bins per histogram.
    keep : int
        How many of the first samples given (by :meth:`add` or :meth:`merge`, in order)
        are kept; their buffer is taken at the first one kept.

    Notes
    -----
    Within a block the mean and the sum of squared deviations are taken in two passes;
    blocks and tallies are combined by the pairwise update of Chan, Golub and LeVeque
    ("Algorithms for computing the sample variance", The American Statistician 37, 1983):
    ``M2 = M2_a + M2_b + δ² n_a n_b / n`` with δ the difference of the means, which does not
    cancel for values far from zero.  Histogram bins follow ``numpy.histogram``: half-open
    ``[edge_k, edge_k+1)`` except the last, which includes its right edge.
    """

    def __init__(self, ranges: list[tuple[float, float] | None], bins: int = HISTOGRAM_BINS,
                 keep: int = 0):
        columns = len(ranges)
        self.ranges = list(ranges)
        self.bins = bins
        self.keep = keep
        self.count = 0
        self.mean = np.zeros(columns)
        self.m2 = np.zeros(columns)
        self.low = np.full(columns, np.inf)
        self.high = np.full(columns, -np.inf)
        self.histogram = np.zeros((columns, bins), dtype=np.int64)
        self.below = np.zeros(columns, dtype=np.int64)
        self.above = np.zeros(columns, dtype=np.int64)
        self.undefined = np.zeros(columns, dtype=np.int64)
        self.inside = np.zeros(columns, dtype=np.int64)
        self.passed = 0
        self._kept = np.empty((0, columns))
        self._kept_rows = 0
        self._binned = [c for c, r in enumerate(ranges) if r is not None]
        self._edges = [np.linspace(r[0], r[1], bins + 1) for r in ranges if r is not None]

    def add(self, values: np.ndarray, inside: np.ndarray, good: np.ndarray) -> None:
        """Take a block of samples.

        Parameters
        ----------
        values : numpy.ndarray
            ``(M, targets)`` sample values.
        inside : numpy.ndarray
            ``(M, targets)`` booleans: the sample inside the target's window.
        good : numpy.ndarray
            ``(M,)`` booleans: the sample meets every window and limit.
        """
        m = len(values)
        if m == 0:
            return
        with np.errstate(invalid="ignore"):
            block_mean = values.mean(axis=0)
            block_m2 = ((values - block_mean) ** 2).sum(axis=0)
        self._combine(m, block_mean, block_m2)
        self.low = np.fmin(self.low, values.min(axis=0))
        self.high = np.fmax(self.high, values.max(axis=0))
        self._bin(values)
        self.inside += inside.sum(axis=0)
        self.passed += int(np.count_nonzero(good))
        self._keep(values)

    def merge(self, other: SampleTally) -> None:
        """Add another tally's samples (taken after this one's: kept rows follow in order)."""
        if other.count == 0:
            return
        self._combine(other.count, other.mean, other.m2)
        self.low = np.fmin(self.low, other.low)
        self.high = np.fmax(self.high, other.high)
        self.histogram += other.histogram
        self.below += other.below
        self.above += other.above
        self.undefined += other.undefined
        self.inside += other.inside
        self.passed += other.passed
        self._keep(other.kept)

    @property
    def kept(self) -> np.ndarray:
        """``(rows, targets)``: the kept samples, in the order they were given."""
        return self._kept[:self._kept_rows]

    @property
    def std(self) -> np.ndarray:
        """Population standard deviation (as numpy.std)."""
        return np.sqrt(self.m2 / max(self.count, 1))

    def _keep(self, block: np.ndarray) -> None:
        room = min(self.keep - self._kept_rows, len(block))
        if room <= 0:
            return
        if len(self._kept) < self.keep:
            self._kept = np.empty((self.keep, block.shape[1]))
        self._kept[self._kept_rows:self._kept_rows + room] = block[:room]
        self._kept_rows += room

    def _combine(self, m: int, mean: np.ndarray, m2: np.ndarray) -> None:
        total = self.count + m
        with np.errstate(invalid="ignore"):
            delta = mean - self.mean
            self.mean = self.mean + delta * (m / total)
            self.m2 = self.m2 + m2 + delta ** 2 * (self.count * m / total)
        self.count = total

    def _bin(self, values: np.ndarray) -> None:
        """Histogram counts of a block, as numpy.histogram(values, bins, range) counts them."""
        self.undefined += len(values) - np.isfinite(values).sum(axis=0)
        for column, edges in zip(self._binned, self._edges, strict=True):
            x = np.ascontiguousarray(values[:, column])
            first, last = edges[0], edges[-1]
            self.below[column] += int(np.count_nonzero(x < first))
            self.above[column] += int(np.count_nonzero(x > last))
            x = x[(x >= first) & (x <= last)]  # NaN falls out here
            at = ((x - first) * (self.bins / (last - first))).astype(np.intp)
            np.clip(at, 0, self.bins - 1, out=at)
            # the scaled index may be one off at an edge: compare with the edges themselves
            at -= x < edges[at]
            at += (x >= edges[at + 1]) & (at != self.bins - 1)
            self.histogram[column] += np.bincount(at, minlength=self.bins)
