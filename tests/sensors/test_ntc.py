"""NTC thermistors: the B-value model, Steinhart–Hart, the inverse, the spread."""

from __future__ import annotations

import math

import numpy as np
import pytest

from synth.sensors.ntc import BetaThermistor, SteinhartHartThermistor

T25 = 298.15


def test_beta_value_read_back_from_two_temperatures():
    # B = ln(R1/R2) / (1/T1 - 1/T2), the definition of the B value [CP-ntc-beta]
    ntc = BetaThermistor(10e3, 3950.0)
    r0, r85 = float(ntc.resistance(0.0)), float(ntc.resistance(85.0))
    assert math.log(r0 / r85) / (1 / 273.15 - 1 / 358.15) == pytest.approx(3950.0)
    assert float(ntc.resistance(25.0)) == pytest.approx(10e3)


def test_beta_model_value():
    # R(T) = R25·exp(B(1/T - 1/T25)) at 0 °C [CP-ntc-beta]
    ntc = BetaThermistor(10e3, 3950.0)
    assert float(ntc.resistance(0.0)) == pytest.approx(10e3 * math.exp(3950 * (1 / 273.15
                                                                              - 1 / T25)))


def test_beta_inverse_and_slope():
    ntc = BetaThermistor(4.7e3, 3435.0)
    t = np.linspace(-55.0, 150.0, 30)
    assert np.allclose(ntc.temperature(ntc.resistance(t)), t, atol=1e-9)
    h = 1e-4
    numeric = (ntc.resistance(t + h) - ntc.resistance(t - h)) / (2 * h)
    assert np.allclose(ntc.slope(t), numeric, rtol=1e-7)


def test_steinhart_hart_with_no_cubic_term_is_the_beta_model():
    # 1/T = 1/T25 + ln(R/R25)/B is Steinhart–Hart with a = 1/T25 - ln(R25)/B, b = 1/B,
    # c = 0 [HB-steinhart-hart] [CP-ntc-beta]
    beta, r25 = 3950.0, 10e3
    sh = SteinhartHartThermistor(1 / T25 - math.log(r25) / beta, 1 / beta, 0.0)
    model = BetaThermistor(r25, beta)
    t = np.linspace(-40.0, 125.0, 12)
    assert np.allclose(sh.resistance(t), model.resistance(t), rtol=1e-12)
    assert np.allclose(sh.slope(t), model.slope(t), rtol=1e-9)


def test_steinhart_hart_round_trip_and_slope():
    # coefficients commonly quoted for a 10 kΩ thermistor [MEM-steinhart-hart-10k]
    sh = SteinhartHartThermistor(1.129148e-3, 2.34125e-4, 8.76741e-8, tolerance=0.01)
    assert float(sh.resistance(25.0)) == pytest.approx(10e3, rel=2e-3)
    t = np.linspace(-55.0, 150.0, 25)
    r = sh.resistance(t)
    assert np.allclose(sh.temperature(r), t, atol=1e-9)  # [HB-steinhart-hart]
    assert np.all(np.diff(r) < 0)
    h = 1e-4
    numeric = (sh.resistance(t + h) - sh.resistance(t - h)) / (2 * h)
    assert np.allclose(sh.slope(t), numeric, rtol=1e-7)
    assert np.allclose(sh.tolerance_frac(t), 0.01)


def test_tolerance_in_degrees_moves_the_reading_by_that_much():
    ntc = BetaThermistor(10e3, 3950.0, tolerance=0.02, beta_tolerance=0.01)
    t = np.array([-40.0, 25.0, 100.0])
    frac = ntc.tolerance_frac(t)
    assert float(frac[1]) == pytest.approx(0.02)  # B's spread vanishes at the reference
    assert float(frac[0]) > 0.02 and float(frac[2]) > 0.02
    low = ntc.resistance(t) * (1 - frac)  # a lower resistance reads hotter, by more
    assert np.allclose(ntc.temperature(low) - t, ntc.tolerance_c(t), rtol=1e-12)
    # to first order: frac over the relative slope B/T² [CP-ntc-beta]
    assert np.allclose(ntc.tolerance_c(t), frac * (t + 273.15) ** 2 / 3950.0, rtol=0.04)
    sh = SteinhartHartThermistor(1.129148e-3, 2.34125e-4, 8.76741e-8, tolerance=0.01)
    low = sh.resistance(t) * 0.99
    assert np.allclose(sh.temperature(low) - t, sh.tolerance_c(t), rtol=1e-12)


def test_series_resistor_puts_the_divider_inflection_at_tm():
    # Rs = R_Tm·(B - 2Tm)/(B + 2Tm) zeroes d²V/dT² of R_s/(R_s + R(T)) at Tm
    # [MEM-ntc-inflection]
    ntc = BetaThermistor(10e3, 3950.0)
    tm = 40.0
    rs = float(ntc.resistance(tm)) * (3950 - 2 * (tm + 273.15)) / (3950 + 2 * (tm + 273.15))
    h = 0.01
    v = [rs / (rs + float(ntc.resistance(tm + k * h))) for k in (-1, 0, 1)]
    curvature = (v[0] - 2 * v[1] + v[2]) / h ** 2
    slope = (v[2] - v[0]) / (2 * h)
    assert abs(curvature) < 1e-6 * abs(slope)
    v_off = [2 * rs / (2 * rs + float(ntc.resistance(tm + k * h))) for k in (-1, 0, 1)]
    assert abs(v_off[0] - 2 * v_off[1] + v_off[2]) / h ** 2 > 1e-3 * abs(slope)


def test_bad_parameters():
    with pytest.raises(ValueError, match="positive"):
        BetaThermistor(10e3, 0.0)
    with pytest.raises(ValueError, match="b > 0 and c >= 0"):
        SteinhartHartThermistor(1e-3, 2e-4, -1e-7)
