"""The yield interval (synth.spread.monte_carlo), against scipy's beta quantiles."""

from __future__ import annotations

import pytest
from scipy.stats import beta, binomtest

from synth.spread.monte_carlo import yield_interval


@pytest.mark.parametrize(("passed", "samples"), [
    (50, 100), (0, 10), (10, 10), (7, 20), (1999, 2000), (1, 100_000), (32_760, 100_000),
    (99_990, 100_000),
])
def test_clopper_pearson_interval_matches_the_beta_quantiles(passed, samples):
    # Clopper-Pearson: the ends are beta quantiles [HB-clopper-pearson], here from
    # scipy.stats.beta, a reference written apart from rnsynth [LIB-scipy-binomtest]
    low, high = yield_interval(passed, samples)
    want_low = 0.0 if passed == 0 else beta.ppf(0.025, passed, samples - passed + 1)
    want_high = 1.0 if passed == samples else beta.ppf(0.975, passed + 1, samples - passed)
    assert low == pytest.approx(want_low, rel=1e-8, abs=1e-15)
    assert high == pytest.approx(want_high, rel=1e-8, abs=1e-15)


def test_interval_is_the_exact_binomial_one():
    # the same interval as scipy's exact binomial test [LIB-scipy-binomtest]
    ci = binomtest(37, 50).proportion_ci(confidence_level=0.95, method="exact")
    low, high = yield_interval(37, 50)
    assert (low, high) == pytest.approx((ci.low, ci.high), rel=1e-9)
