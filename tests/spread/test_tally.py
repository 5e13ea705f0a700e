"""Streaming Monte Carlo accumulators (synth.spread.tally) against numpy on the same samples.

Mean and σ against numpy.mean / numpy.std [LIB-numpy-mean-std]; merged tallies against one
pass by the pairwise update of Chan, Golub and LeVeque [HB-chan-variance]; histogram counts
against numpy.histogram [LIB-numpy-histogram].
"""

from __future__ import annotations

import numpy as np
import pytest

from synth.spread.tally import SampleTally, histogram_range


def _tally_of(values: np.ndarray, ranges, block: int, keep: int = 0) -> SampleTally:
    tally = SampleTally(ranges, bins=16, keep=keep)
    inside = values > MIDDLES
    for start in range(0, len(values), block):
        rows = slice(start, start + block)
        tally.add(values[rows], inside[rows], inside[rows].all(axis=1))
    return tally


def _samples(n: int = 5000, seed: int = 4) -> np.ndarray:
    rng = np.random.default_rng(seed)
    return np.column_stack([rng.normal(5.0, 0.1, n), rng.uniform(-3.0, -1.4, n),
                            1e3 + rng.normal(0.0, 1e-3, n)])


RANGES = [(4.7, 5.3), (-3.0, -1.4), (1e3 - 0.005, 1e3 + 0.005)]
MIDDLES = np.array([5.0, -2.2, 1e3])  # a sample is "inside" above these


@pytest.mark.parametrize("block", [1, 7, 1000, 5000])
def test_streamed_mean_and_std_are_those_of_numpy(block):
    # the same samples block by block [LIB-numpy-mean-std]; the third column sits at 1e3
    # with a spread of 1e-3: the naive mean of squares loses it [HB-chan-variance]
    values = _samples()
    naive = np.sqrt(np.mean(values[:, 2] ** 2) - np.mean(values[:, 2]) ** 2)
    assert abs(naive / values[:, 2].std() - 1) > 1e-7
    tally = _tally_of(values, RANGES, block)
    assert tally.count == len(values)
    np.testing.assert_allclose(tally.mean, values.mean(axis=0), rtol=1e-12)
    np.testing.assert_allclose(tally.std, values.std(axis=0), rtol=1e-7)
    np.testing.assert_array_equal(tally.low, values.min(axis=0))
    np.testing.assert_array_equal(tally.high, values.max(axis=0))
    inside = values > MIDDLES
    np.testing.assert_array_equal(tally.inside, inside.sum(axis=0))
    assert tally.passed == int(inside.all(axis=1).sum())


def test_merged_tallies_equal_one_pass():
    # Chan et al.'s pairwise merge of per-part tallies gives the one-pass figures
    # [HB-chan-variance]; counts add exactly
    values = _samples(6000)
    whole = _tally_of(values, RANGES, 6000, keep=2500)
    merged = SampleTally(RANGES, bins=16, keep=2500)
    for start in range(0, 6000, 1700):
        keep = max(0, min(2500 - start, 1700))  # this part's share of the first 2,500
        part = _tally_of(values[start:start + 1700], RANGES, 500, keep=keep)
        merged.merge(part)
    assert merged.count == whole.count
    np.testing.assert_allclose(merged.mean, whole.mean, rtol=1e-13)
    np.testing.assert_allclose(merged.m2, whole.m2, rtol=1e-9)
    np.testing.assert_array_equal(merged.histogram, whole.histogram)
    np.testing.assert_array_equal(merged.inside, whole.inside)
    assert merged.passed == whole.passed
    np.testing.assert_array_equal(merged.kept, values[:2500])
    np.testing.assert_array_equal(whole.kept, values[:2500])


def test_histogram_counts_are_those_of_numpy_edges_included():
    # equal bins, half-open but the last [LIB-numpy-histogram]: values placed exactly on
    # every edge and just below it (over -3.0 .. -1.4 the scaled index of some of them is
    # one off either way), and outside the range, as well as random ones
    values = _samples()
    values[:17, 0] = np.linspace(4.7, 5.3, 17)
    values[:17, 1] = np.linspace(-3.0, -1.4, 17)
    values[17:34, 1] = np.nextafter(values[:17, 1], -np.inf)  # just below each edge
    values[34:51, 0] = np.nextafter(values[:17, 0], -np.inf)
    values[17:19, 0] = (4.0, 6.0)  # below and above
    values[19, 0] = np.nan
    tally = _tally_of(values, RANGES, 333)
    for column, (low, high) in enumerate(RANGES):
        finite = values[np.isfinite(values[:, column]), column]
        want, _ = np.histogram(finite, bins=16, range=(low, high))
        np.testing.assert_array_equal(tally.histogram[column], want)
        assert tally.below[column] == int((finite < low).sum())
        assert tally.above[column] == int((finite > high).sum())
    assert tally.undefined.tolist() == [1, 0, 0]


def test_a_target_without_a_range_has_no_histogram():
    values = _samples(100)
    tally = _tally_of(values, [RANGES[0], None, RANGES[2]], 40)
    assert tally.histogram[1].sum() == 0 and tally.histogram[0].sum() == 100
    assert tally.mean[1] == pytest.approx(values[:, 1].mean())


def test_histogram_range_spans_the_worst_case():
    low, high = histogram_range(5.0, 4.95, 5.05)
    assert (low, high) == pytest.approx((4.948, 5.052), rel=1e-12)
    assert histogram_range(0.0, 0.0, 0.0) == (-1e-300, 1e-300)
    low, high = histogram_range(2.0, 2.0, 2.0)
    assert low < 2.0 < high and high - low == pytest.approx(4e-9)
    assert histogram_range(float("nan"), float("nan"), float("inf")) is None
    assert histogram_range(1.0, float("nan"), 3.0) == pytest.approx((0.96, 3.04))
