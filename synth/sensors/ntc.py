"""NTC thermistors: the B-value model and the Steinhart–Hart equation, their inverses and the
spread of R25 and of B.
"""

from __future__ import annotations

__all__ = ["BetaThermistor", "SteinhartHartThermistor"]

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from synth.sensors.model import KELVIN_OFFSET
from synth.sensors.tables import ntc_defaults


def _kelvin(t_c: ArrayLike) -> np.ndarray:
    return np.asarray(t_c, dtype=float) + KELVIN_OFFSET


def _misreading(model: BetaThermistor | SteinhartHartThermistor, t_c: ArrayLike) -> np.ndarray:
    """The larger of |temperature(R(t)·(1 ± frac)) - t|, °C."""
    t = np.asarray(t_c, dtype=float)
    r, frac = model.resistance(t), model.tolerance_frac(t)
    low = np.abs(model.temperature(r * np.maximum(1.0 - frac, 1e-300)) - t)
    return np.asarray(np.maximum(low, np.abs(model.temperature(r * (1.0 + frac)) - t)))


def _default_range() -> tuple[float, float]:
    return ntc_defaults().valid_c


@dataclass(frozen=True)
class BetaThermistor:
    """An NTC thermistor of the B-value model.

    Parameters
    ----------
    r25 : float
        Resistance at the reference temperature, ohm.
    beta : float
        B value, K.
    tolerance : float
        Half-width of R25's spread, fraction.
    beta_tolerance : float
        Half-width of B's spread, fraction.
    valid_c : tuple of float
        The range the model is used over, °C (default -55..150 °C, ``catalogs/sensors.toml``).
    reference_c : float
        The reference temperature, °C (25).

    Notes
    -----
    ``R(T) = R25·exp(B (1/T - 1/T25))``, T in kelvin; the inverse is
    ``1/T = 1/T25 + ln(R/R25)/B``.  The spread of R25 is the same fraction at
    every temperature; a spread of B by ``dB/B`` moves ``ln R`` by
    ``B (1/T - 1/T25)·dB/B``, none at the reference.

    Examples
    --------
    >>> ntc = BetaThermistor(10e3, 3950.0, tolerance=0.01)
    >>> float(ntc.resistance(25.0)), round(float(ntc.temperature(10e3)), 9)
    (10000.0, 25.0)
    """

    r25: float
    beta: float
    tolerance: float = 0.0
    beta_tolerance: float = 0.0
    valid_c: tuple[float, float] = field(default_factory=_default_range)
    reference_c: float = field(default_factory=lambda: ntc_defaults().reference_c)
    kind: str = field(default="ntc", init=False)

    def __post_init__(self) -> None:
        if not (self.r25 > 0 and self.beta > 0):
            raise ValueError("r25 and beta must be positive")

    def _exponent(self, t_c: ArrayLike) -> np.ndarray:
        return np.asarray(self.beta * (1.0 / _kelvin(t_c) - 1.0 / _kelvin(self.reference_c)))

    def resistance(self, t_c: ArrayLike) -> np.ndarray:
        """R(T), ohm."""
        return np.asarray(self.r25 * np.exp(self._exponent(t_c)))

    def slope(self, t_c: ArrayLike) -> np.ndarray:
        """dR/dt = -B·R/T², ohm/°C."""
        return np.asarray(-self.beta * self.resistance(t_c) / _kelvin(t_c) ** 2)

    def temperature(self, r_ohm: ArrayLike) -> np.ndarray:
        """The temperature of resistance ``r_ohm``, °C."""
        inverse = (1.0 / _kelvin(self.reference_c)
                   + np.log(np.asarray(r_ohm, dtype=float) / self.r25) / self.beta)
        return np.asarray(1.0 / inverse - KELVIN_OFFSET)

    def tolerance_frac(self, t_c: ArrayLike) -> np.ndarray:
        """Half-width of R(t)'s spread, fraction: R25's and B's, added as worst case."""
        by_beta = np.expm1(np.abs(self._exponent(t_c)) * self.beta_tolerance)
        return np.asarray((1.0 + self.tolerance) * (1.0 + by_beta) - 1.0)

    def tolerance_c(self, t_c: ArrayLike) -> np.ndarray:
        """The same half-width as temperature, °C: the larger misreading of R(t)·(1 ± frac)."""
        return _misreading(self, t_c)


@dataclass(frozen=True)
class SteinhartHartThermistor:
    """An NTC thermistor given by Steinhart–Hart coefficients.

    Parameters
    ----------
    a, b, c : float
        ``1/T = a + b·ln R + c·(ln R)³``, T in kelvin, R in ohm (``b > 0``,
        ``c >= 0``, so T falls as R rises).
    tolerance : float
        Half-width of the resistance's spread, the same fraction at every temperature.
    valid_c : tuple of float
        The range the coefficients are used over, °C (default -55..150 °C).

    Notes
    -----
    The resistance at T is the one real root of the cubic ``c L³ + b L + (a -
    1/T) = 0`` in ``L = ln R``, by Cardano's formula (``c > 0``; ``c = 0`` is
    linear in L).

    Examples
    --------
    >>> sh = SteinhartHartThermistor(1.129148e-3, 2.34125e-4, 8.76741e-8)
    >>> round(float(sh.temperature(sh.resistance(25.0))), 9)
    25.0
    """

    a: float
    b: float
    c: float
    tolerance: float = 0.0
    valid_c: tuple[float, float] = field(default_factory=_default_range)
    kind: str = field(default="ntc", init=False)

    def __post_init__(self) -> None:
        if not (self.b > 0 and self.c >= 0):
            raise ValueError("Steinhart–Hart needs b > 0 and c >= 0")

    def temperature(self, r_ohm: ArrayLike) -> np.ndarray:
        """The temperature of resistance ``r_ohm``, °C."""
        log_r = np.log(np.asarray(r_ohm, dtype=float))
        return np.asarray(1.0 / (self.a + self.b * log_r + self.c * log_r ** 3) - KELVIN_OFFSET)

    def resistance(self, t_c: ArrayLike) -> np.ndarray:
        """R(T), ohm."""
        q = self.a - 1.0 / _kelvin(t_c)
        if self.c == 0:
            return np.asarray(np.exp(-q / self.b))
        p, q = self.b / self.c, q / self.c
        root = np.sqrt((p / 3.0) ** 3 + (q / 2.0) ** 2)
        return np.asarray(np.exp(np.cbrt(root - q / 2.0) - np.cbrt(root + q / 2.0)))

    def slope(self, t_c: ArrayLike) -> np.ndarray:
        """dR/dt = -R / (T² (b + 3c·ln²R)), ohm/°C."""
        r = self.resistance(t_c)
        log_r = np.log(r)
        return np.asarray(-r / (_kelvin(t_c) ** 2 * (self.b + 3.0 * self.c * log_r ** 2)))

    def tolerance_frac(self, t_c: ArrayLike) -> np.ndarray:
        """Half-width of R(t)'s spread, fraction (the same at every temperature)."""
        return np.full(np.shape(t_c), self.tolerance)

    def tolerance_c(self, t_c: ArrayLike) -> np.ndarray:
        """The same half-width as temperature, °C: the larger misreading of R(t)·(1 ± frac)."""
        return _misreading(self, t_c)
