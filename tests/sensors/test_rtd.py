"""Platinum RTDs of IEC 60751: the Callendar–Van Dusen values, the inverse, the classes."""

from __future__ import annotations

import numpy as np
import pytest

from synth.sensors.model import outside_valid
from synth.sensors.rtd import PlatinumRtd

# Pt100 from the standard's equation and coefficients [IEC60751-CVD]
PT100 = [(0.0, 100.0), (100.0, 138.5055), (-100.0, 60.2558), (200.0, 175.856)]


@pytest.mark.parametrize(("t_c", "ohm"), PT100)
def test_pt100_values(t_c, ohm):
    assert float(PlatinumRtd(100.0).resistance(t_c)) == pytest.approx(ohm, abs=5e-5)


@pytest.mark.parametrize(("t_c", "ohm"), PT100)
def test_pt1000_is_ten_pt100(t_c, ohm):
    # the coefficients hold for every R0 [IEC60751-CVD]
    assert float(PlatinumRtd(1000.0).resistance(t_c)) == pytest.approx(10 * ohm, abs=5e-4)


@pytest.mark.parametrize(("t_c", "ohm"), PT100)
def test_inverse_of_the_standard_values(t_c, ohm):
    # the tabulated resistance read back as its temperature [IEC60751-CVD]
    assert float(PlatinumRtd(100.0).temperature(ohm)) == pytest.approx(t_c, abs=2e-4)


def _bisect_temperature(rtd: PlatinumRtd, ohm: float) -> float:
    """An independent inverse: bisection on the forward relation (R rises with t)."""
    low, high = -200.0, 850.0
    for _ in range(80):
        mid = (low + high) / 2
        low, high = (mid, high) if float(rtd.resistance(mid)) < ohm else (low, mid)
    return (low + high) / 2


@pytest.mark.parametrize("r0", [100.0, 1000.0, 500.0])
def test_inverse_against_bisection(r0):
    # [IEC60751-CVD] relation, inverse checked by bisection [CALC-exhaustive]
    rtd = PlatinumRtd(r0)
    t = np.linspace(-200.0, 850.0, 43)
    got = rtd.temperature(rtd.resistance(t))
    want = [_bisect_temperature(rtd, float(r)) for r in rtd.resistance(t)]
    assert np.allclose(got, want, atol=1e-9)
    assert float(rtd.temperature(float(rtd.resistance(-150.0)))) == pytest.approx(-150.0)


def test_slope_against_a_difference_quotient():
    rtd = PlatinumRtd(100.0)
    t = np.array([-190.0, -50.0, -0.5, 0.5, 300.0, 840.0])
    h = 1e-4
    numeric = (rtd.resistance(t + h) - rtd.resistance(t - h)) / (2 * h)
    assert np.allclose(rtd.slope(t), numeric, rtol=1e-8)


# class half-widths in °C at 0 and 100 °C [MEM-IEC60751-classes]
CLASSES = [("AA", 0.1, 0.27), ("A", 0.15, 0.35), ("B", 0.3, 0.8), ("C", 0.6, 1.6)]


@pytest.mark.parametrize(("name", "at_0", "at_100"), CLASSES)
def test_tolerance_classes(name, at_0, at_100):
    rtd = PlatinumRtd(100.0, name)
    assert float(rtd.tolerance_c(0.0)) == pytest.approx(at_0)
    assert float(rtd.tolerance_c(100.0)) == pytest.approx(at_100)
    assert float(rtd.tolerance_c(-100.0)) == pytest.approx(at_100)


def test_tolerance_as_resistance_moves_the_reading_by_the_class():
    # R·(1 ± frac) read back through the inverse lands the class's °C away [MEM-IEC60751-classes]
    rtd = PlatinumRtd(100.0, "A")
    t = np.array([-150.0, 0.0, 200.0, 600.0])
    high = rtd.resistance(t) * (1 + rtd.tolerance_frac(t))
    assert np.allclose(rtd.temperature(high) - t, rtd.tolerance_c(t), rtol=2e-3)


def test_default_class_and_bad_parameters():
    assert PlatinumRtd().tolerance_class == "B"
    with pytest.raises(ValueError, match="r0 must be positive"):
        PlatinumRtd(0.0)
    with pytest.raises(ValueError, match="tolerance class 'D'"):
        PlatinumRtd(100.0, "D")


def test_valid_range():
    # IEC 60751 covers -200 to 850 °C [IEC60751-CVD]
    rtd = PlatinumRtd()
    assert rtd.valid_c == (-200.0, 850.0)
    assert outside_valid(rtd, [-200.1, 850.1]).all()
    assert not outside_valid(rtd, [-200.0, 850.0]).any()
