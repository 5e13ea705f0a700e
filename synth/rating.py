"""Power derating of resistors with ambient temperature.

A resistor may dissipate its rated power up to the rated ambient (usually
70 °C); above that the allowed dissipation falls linearly to zero at the
zero-power temperature (usually 155 °C, the upper category temperature of
thick-film chips).  The design then keeps a margin below that curve.
"""

from __future__ import annotations

__all__ = ["allowed_power", "derating_factor"]

import numpy as np
from numpy.typing import ArrayLike

from synth.catalog.packages import PackageRating


def derating_factor(
    ambient_c: ArrayLike, rated_ambient_c: float = 70.0, zero_power_c: float = 155.0
) -> np.ndarray:
    """Fraction of the rated power allowed at an ambient temperature.

    Parameters
    ----------
    ambient_c : float or array
        Ambient temperature, °C.
    rated_ambient_c : float
        Full rating applies up to here, °C.
    zero_power_c : float
        The allowed power reaches zero here, °C.

    Returns
    -------
    numpy.ndarray
        Between 0 and 1.

    Examples
    --------
    >>> round(float(derating_factor(85.0)), 4), round(float(derating_factor(125.0)), 4)
    (0.8235, 0.3529)

    Notes
    -----
    The linear curve from the rated ambient to the zero-power temperature is
    the usual one in resistor ratings (IEC 60115-1 defines the rated
    dissipation at the rated ambient; the straight line is common practice).
    """
    ambient = np.asarray(ambient_c, dtype=float)
    span = zero_power_c - rated_ambient_c
    return np.clip((zero_power_c - ambient) / span, 0.0, 1.0)


def allowed_power(rating: PackageRating, ambient_c: ArrayLike, margin_frac: float) -> np.ndarray:
    """Dissipation a design allows a part, W: rated power × derating × margin.

    Parameters
    ----------
    rating : PackageRating
        The part's package ratings.
    ambient_c : float or array
        Ambient temperature, °C.
    margin_frac : float
        Share of the derated rating the design permits (0.5 for 50 %).

    Examples
    --------
    >>> from synth.catalog.packages import load_package_table
    >>> float(allowed_power(load_package_table()["0603"], 25.0, 0.5))
    0.05
    """
    factor = derating_factor(ambient_c, rating.rated_ambient_c, rating.zero_power_c)
    return rating.rated_power_w * factor * margin_frac
