"""Derating: the linear curve from the rated ambient to the zero-power temperature."""

from __future__ import annotations

import numpy as np
import pytest

from synth.catalog.packages import load_package_table
from synth.rating import allowed_power, derating_factor


@pytest.mark.parametrize(("ambient", "factor"), [
    # linear 70 -> 155 °C curve, common practice [CP-derating]; check points [CALC-derating]
    (25, 1.0), (70, 1.0), (85, 0.8235), (100, 0.6471), (125, 0.3529), (155, 0.0), (170, 0.0),
])
def test_linear_derating_points(ambient, factor):
    assert float(derating_factor(ambient)) == pytest.approx(factor, abs=5e-5)


def test_other_knees_and_vectorised():
    assert float(derating_factor(97.5, 70, 125)) == pytest.approx(0.5)
    np.testing.assert_allclose(derating_factor([0, 112.5, 200]), [1.0, 0.5, 0.0])


def test_allowed_power_includes_margin():
    rating = load_package_table()["0805"]
    # 1/8 W x 82.35 % at 85 °C x 50 % margin
    assert float(allowed_power(rating, 85.0, 0.5)) == pytest.approx(0.125 * 70 / 85 * 0.5)
