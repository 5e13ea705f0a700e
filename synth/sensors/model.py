"""What every sensor model offers: resistance against temperature, its inverse, its slope and
its tolerance, in resistance and in °C.
"""

from __future__ import annotations

__all__ = ["KELVIN_OFFSET", "SensorModel", "outside_valid"]

from typing import Protocol

import numpy as np
from numpy.typing import ArrayLike

KELVIN_OFFSET = 273.15
"""0 °C in kelvin."""


class SensorModel(Protocol):
    """A temperature sensor read as a resistance.

    Every function takes and returns numpy arrays (scalars broadcast): ``t_c``
    in °C, resistances in ohm.
    """

    @property
    def kind(self) -> str:
        """``"rtd"`` or ``"ntc"``."""
        ...

    @property
    def valid_c(self) -> tuple[float, float]:
        """The temperatures the model covers, °C (low, high)."""
        ...

    def resistance(self, t_c: ArrayLike) -> np.ndarray:
        """Nominal resistance at ``t_c``, ohm."""
        ...

    def temperature(self, r_ohm: ArrayLike) -> np.ndarray:
        """The temperature at which the nominal sensor has resistance ``r_ohm``, °C."""
        ...

    def slope(self, t_c: ArrayLike) -> np.ndarray:
        """dR/dt at ``t_c``, ohm/°C."""
        ...

    def tolerance_frac(self, t_c: ArrayLike) -> np.ndarray:
        """Half-width of the resistance's spread at ``t_c``, a fraction of the nominal."""
        ...

    def tolerance_c(self, t_c: ArrayLike) -> np.ndarray:
        """The same half-width read as temperature, °C."""
        ...


def outside_valid(model: SensorModel, t_c: ArrayLike) -> np.ndarray:
    """True where ``t_c`` lies outside the model's valid range (its ends included as valid).

    Examples
    --------
    >>> from synth.sensors.rtd import PlatinumRtd
    >>> outside_valid(PlatinumRtd(), [-200.0, 0.0, 850.0, 851.0]).tolist()
    [False, False, False, True]
    """
    t = np.asarray(t_c, dtype=float)
    low, high = model.valid_c
    return ~((t >= low) & (t <= high))
