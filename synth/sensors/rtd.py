"""Platinum resistance thermometers: IEC 60751's Callendar–Van Dusen relation, its inverse and
the standard's tolerance classes.
"""

from __future__ import annotations

__all__ = ["PlatinumRtd"]

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike

from synth.sensors.tables import RtdClass, rtd_classes, rtd_coefficients

_NEWTON_STEPS = 8  # from the quadratic's root (within 0.3 °C) to 1e-12 °C


@dataclass(frozen=True)
class PlatinumRtd:
    """A platinum RTD of IEC 60751.

    Parameters
    ----------
    r0 : float
        Resistance at 0 °C, ohm (100 for a Pt100, 1000 for a Pt1000).
    tolerance_class : str
        ``"AA"``, ``"A"``, ``"B"`` or ``"C"``; the default is the catalogue's (``"B"``).

    Notes
    -----
    ``R(t) = R0 (1 + A t + B t²)`` for t >= 0 °C and ``R0 (1 + A t + B t² +
    C (t - 100) t³)`` below, with the standard's A, B, C (IEC 60751, kept in
    ``catalogs/sensors.toml``), valid from -200 to 850 °C.  A class's
    tolerance is ``±(fixed + per_degree·|t|)`` °C; as a resistance it is that
    times the slope.  The inverse is the quadratic's root above 0 °C and a few
    Newton steps from it below.

    Examples
    --------
    >>> pt100 = PlatinumRtd(100.0)
    >>> round(float(pt100.resistance(100.0)), 4), round(float(pt100.temperature(138.5055)), 6)
    (138.5055, 100.0)
    >>> float(pt100.tolerance_c(100.0))  # class B: 0.3 + 0.005 × 100
    0.8
    """

    r0: float = 100.0
    tolerance_class: str = field(default_factory=lambda: rtd_coefficients().default_class)
    kind: str = field(default="rtd", init=False)

    def __post_init__(self) -> None:
        if not self.r0 > 0:
            raise ValueError(f"r0 must be positive, not {self.r0!r}")
        if self.tolerance_class not in rtd_classes():
            raise ValueError(f"tolerance class {self.tolerance_class!r} is not one of "
                             f"{', '.join(rtd_classes())}")

    @property
    def valid_c(self) -> tuple[float, float]:
        """-200 °C to 850 °C (the standard's range)."""
        return rtd_coefficients().valid_c

    @property
    def tolerance(self) -> RtdClass:
        """The tolerance class's record."""
        return rtd_classes()[self.tolerance_class]

    def resistance(self, t_c: ArrayLike) -> np.ndarray:
        """R(t), ohm."""
        k = rtd_coefficients()
        t = np.asarray(t_c, dtype=float)
        below = np.where(t < 0, k.c * (t - 100.0) * t ** 3, 0.0)
        return np.asarray(self.r0 * (1.0 + k.a * t + k.b * t * t + below))

    def slope(self, t_c: ArrayLike) -> np.ndarray:
        """dR/dt, ohm/°C."""
        k = rtd_coefficients()
        t = np.asarray(t_c, dtype=float)
        below = np.where(t < 0, k.c * (4.0 * t ** 3 - 300.0 * t * t), 0.0)
        return np.asarray(self.r0 * (k.a + 2.0 * k.b * t + below))

    def temperature(self, r_ohm: ArrayLike) -> np.ndarray:
        """The temperature of resistance ``r_ohm``, °C (the inverse of :meth:`resistance`)."""
        k = rtd_coefficients()
        r = np.asarray(r_ohm, dtype=float)
        ratio = np.atleast_1d(r / self.r0)
        # the root of 1 + A t + B t² = ratio nearest 0 °C (B < 0: the smaller one)
        disc = np.maximum(k.a * k.a - 4.0 * k.b * (1.0 - ratio), 0.0)
        t = (-k.a + np.sqrt(disc)) / (2.0 * k.b)
        cold = ratio < 1.0
        if np.any(cold):
            target, tc = ratio[cold] * self.r0, t[cold]
            for _ in range(_NEWTON_STEPS):
                tc = tc - (self.resistance(tc) - target) / self.slope(tc)
            t[cold] = tc
        return t.reshape(r.shape)

    def tolerance_c(self, t_c: ArrayLike) -> np.ndarray:
        """The class's half-width, °C: ``fixed + per_degree·|t|``."""
        cls = self.tolerance
        return np.asarray(cls.fixed_c + cls.per_degree * np.abs(np.asarray(t_c, dtype=float)))

    def tolerance_frac(self, t_c: ArrayLike) -> np.ndarray:
        """The class's half-width as a fraction of R(t)."""
        return np.asarray(self.tolerance_c(t_c) * np.abs(self.slope(t_c)) / self.resistance(t_c))
