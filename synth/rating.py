"""What a resistor may dissipate and see: derating, allowances and their use.

This module is the only place that turns a package's ratings into a part's
allowance.  A resistor may dissipate its rated power up to the rated ambient
(usually 70 °C); above that the allowed dissipation falls linearly to zero at
the zero-power temperature (usually 155 °C, the upper category temperature of
thick-film chips).  A design then lets a part use only a share of that
(``max_power_use``, 50 % by default) and of its limiting element voltage
(``max_voltage_use``, 80 % by default).

Self-heating
------------
A package with a thermal resistance Rθ (K/W, the package table's
``thermal_resistance_k_per_w``) runs at its own temperature, the ambient plus
P·Rθ.  The element may not pass the zero-power temperature, so the allowed
dissipation is also at most (zero-power temperature − ambient) / Rθ; the
allowance is the lesser of that and the derating line.  The line is drawn for
a part on its rating's standard mounting and already holds that part's own
rise (at rated power and rated ambient its element reaches the zero-power
temperature, Rθ = 85 K / P70 on a 70 → 155 °C line), so the part's own
temperature is not fed into the line again: for the bundled table, whose Rθ
is that slope, the two limits agree; a table with a larger Rθ (a part on less
copper) lowers the allowance, a smaller one does not raise it above the rating.

The temperature rule
--------------------
One physical quantity, one rule: a part's allowance is taken at the hottest
ambient the design states, the larger of ``ambient`` and the top of
``temperature``.  The nominal check, the search, the worst case and the Monte
Carlo yield all use that same allowance.

Limits met exactly
------------------
A value that meets its limit exactly meets it.  Limits are compared with a
relative slack of :data:`LIMIT_SLACK` (1e-9), so float rounding of a design
that lands on its limit (300 kΩ over 100 kΩ from 12 V drawing 30 µA against
"at most 30 µA") does not turn it into a failure.  A window on a quantity is
also compared with a noise floor: :data:`NOISE_FRACTION` (1e-12) of the
network's scale for that quantity (its largest node voltage for a voltage),
so a node that is 0 V exactly but solves to -1e-16 V among 3.3 V sources
meets "at least 0 V" (rounding of a solve is about 1e-16 of its scale).
"""

from __future__ import annotations

__all__ = [
    "LIMIT_SLACK", "NOISE_FRACTION", "Allowance", "allowance", "allowed_power", "allowed_voltage",
    "derated_power", "derating_factor", "exceeds", "falls_short", "hot_spot_binds",
    "temperature_rise", "use_of",
]

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from synth.catalog.packages import PackageRating

LIMIT_SLACK = 1e-9
"""Relative slack of every limit comparison: a value within 1e-9 of its limit meets it."""

NOISE_FRACTION = 1e-12
"""Share of a network's scale below which a difference is float noise of an exact result
(a solve rounds to about 1e-16 of its scale): a window edge is met within it, and a
relative error smaller than it is shown as 0 %."""


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


def temperature_rise(rating: PackageRating | None, power_w: ArrayLike) -> np.ndarray:
    """Rise of a part's own temperature over the ambient, K: ΔT = P·Rθ.

    Parameters
    ----------
    rating : PackageRating or None
        The part's package (None: an unrated part, which is taken not to heat itself).
    power_w : float or array
        The part's dissipation, W.

    Returns
    -------
    numpy.ndarray
        K; zero when the package has no thermal resistance.

    Examples
    --------
    >>> from synth.catalog.packages import load_package_table
    >>> float(temperature_rise(load_package_table()["0603"], 0.05))
    42.5

    Notes
    -----
    Steady-state conduction through a thermal resistance, the thermal analogue of
    Ohm's law (ΔT = P·Rθ, heat-transfer handbooks).
    """
    power = np.abs(np.asarray(power_w, dtype=float))
    theta = rating.thermal_resistance_k_per_w if rating is not None else None
    return power * (theta or 0.0)  # type: ignore[no-any-return]  # numpy types this product as Any


def derated_power(rating: PackageRating, ambient_c: ArrayLike) -> np.ndarray:
    """What a part of ``rating`` may dissipate at ``ambient_c``, W, before any use limit.

    The rated power times the derating line's factor, and with a thermal
    resistance Rθ at most the power that takes the part's own temperature to
    the zero-power temperature, (zero_power_c − ambient_c) / Rθ (see the
    module notes).

    Examples
    --------
    >>> from dataclasses import replace
    >>> from synth.catalog.packages import load_package_table
    >>> chip = load_package_table()["0603"]                   # 850 K/W, the line's slope
    >>> round(float(derated_power(chip, 85.0)), 5)
    0.08235
    >>> hot = replace(chip, thermal_resistance_k_per_w=1000.0)  # on less copper
    >>> round(float(derated_power(hot, 85.0)), 5)                # (155 - 85) / 1000
    0.07
    """
    line = rating.rated_power_w * derating_factor(ambient_c, rating.rated_ambient_c,
                                                  rating.zero_power_c)
    theta = rating.thermal_resistance_k_per_w
    if not theta:
        return line
    ambient = np.asarray(ambient_c, dtype=float)
    hot_spot = np.clip((rating.zero_power_c - ambient) / theta, 0.0, None)
    return np.minimum(line, hot_spot)


def hot_spot_binds(rating: PackageRating, ambient_c: float) -> bool:
    """True when the part's own temperature, not the derating line, sets its allowance at
    ``ambient_c``: its thermal resistance is larger than the line's slope there.

    Examples
    --------
    >>> from dataclasses import replace
    >>> from synth.catalog.packages import load_package_table
    >>> chip = load_package_table()["0603"]
    >>> hot = replace(chip, thermal_resistance_k_per_w=1e3)
    >>> hot_spot_binds(chip, 85.0), hot_spot_binds(hot, 85.0)
    (False, True)
    """
    theta = rating.thermal_resistance_k_per_w
    if not theta:
        return False
    line = float(rating.rated_power_w * derating_factor(ambient_c, rating.rated_ambient_c,
                                                        rating.zero_power_c))
    return float(derated_power(rating, ambient_c)) < line * (1 - LIMIT_SLACK)


def allowed_power(rating: PackageRating, ambient_c: ArrayLike, max_use: float) -> np.ndarray:
    """Dissipation a design allows a part, W: derated power × use limit.

    Parameters
    ----------
    rating : PackageRating
        The part's package ratings.
    ambient_c : float or array
        Ambient temperature, °C.
    max_use : float
        Share of the derated rating the design permits (0.5 for 50 %).

    Examples
    --------
    >>> from synth.catalog.packages import load_package_table
    >>> float(allowed_power(load_package_table()["0603"], 25.0, 0.5))
    0.05
    """
    return derated_power(rating, ambient_c) * max_use


def allowed_voltage(rating: PackageRating, max_use: float) -> float:
    """Voltage a design allows across a part, V: limiting element voltage × use limit.

    Examples
    --------
    >>> from synth.catalog.packages import load_package_table
    >>> allowed_voltage(load_package_table()["0603"], 0.8)
    40.0
    """
    return rating.limiting_voltage_v * max_use


@dataclass(frozen=True)
class Allowance:
    """One part's allowance at the design's hottest ambient.

    Attributes
    ----------
    package : str
        Package name.
    ambient_c : float
        The temperature the allowance holds at, °C.
    rated_power_w : float
        The package's rated dissipation at its rated ambient, W.
    derated_power_w : float
        The rated power derated to ``ambient_c`` (the part's own limit), W.
    power_w : float
        What the design lets it dissipate: derated power × ``max_power_use``, W.
    limiting_voltage_v : float
        The package's limiting element voltage, V.
    voltage_v : float
        What the design lets it see: limiting voltage × ``max_voltage_use``, V.
    max_power_use, max_voltage_use : float
        The design's use limits (fractions).
    """

    package: str
    ambient_c: float
    rated_power_w: float
    derated_power_w: float
    power_w: float
    limiting_voltage_v: float
    voltage_v: float
    max_power_use: float
    max_voltage_use: float


def allowance(rating: PackageRating, *, ambient_c: float, max_power_use: float,
              max_voltage_use: float) -> Allowance:
    """The allowance of a part of ``rating`` at ``ambient_c`` under the design's use limits.

    Examples
    --------
    >>> from synth.catalog.packages import load_package_table
    >>> a = allowance(load_package_table()["0603"], ambient_c=25.0, max_power_use=0.5,
    ...               max_voltage_use=0.8)
    >>> a.power_w, a.voltage_v
    (0.05, 40.0)
    """
    derated = float(derated_power(rating, ambient_c))
    return Allowance(
        package=rating.name, ambient_c=float(ambient_c), rated_power_w=rating.rated_power_w,
        derated_power_w=derated, power_w=derated * max_power_use,
        limiting_voltage_v=rating.limiting_voltage_v,
        voltage_v=allowed_voltage(rating, max_voltage_use),
        max_power_use=max_power_use, max_voltage_use=max_voltage_use,
    )


def use_of(value: ArrayLike, allowed: ArrayLike) -> np.ndarray:
    """Share of an allowance used, ``value / allowed`` (inf where nothing is allowed).

    Examples
    --------
    >>> use_of([0.025, 0.0], [0.05, 0.0]).tolist()
    [0.5, 0.0]
    """
    value = np.asarray(value, dtype=float)
    allowed = np.asarray(allowed, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        share = value / allowed
    return np.where(allowed > 0, share, np.where(value > 0, np.inf, 0.0))


def _slack(limit: np.ndarray, noise: ArrayLike) -> np.ndarray:
    """The larger of the relative slack of ``limit`` and the absolute ``noise`` floor."""
    # NaN and +inf floors count zero; -inf (as nan_to_num's most negative float) is below
    # any slack, so it changes nothing
    floor = np.asarray(noise, dtype=float)
    with np.errstate(invalid="ignore"):
        return np.maximum(LIMIT_SLACK * np.abs(limit),  # type: ignore[no-any-return]  # numpy types this array expression as Any
                          np.where(floor < np.inf, floor, 0.0) if floor.ndim
                          else (float(floor) if floor < np.inf else 0.0))


def exceeds(value: ArrayLike, limit: ArrayLike, noise: ArrayLike = 0.0) -> np.ndarray:
    """True where ``value`` lies above an upper ``limit`` by more than its slack.

    The slack is :data:`LIMIT_SLACK` of the limit, or the absolute ``noise``
    floor (the quantity's rounding, :data:`NOISE_FRACTION` of its network's
    scale) where that is larger.  NaN limits (unrated parts, open windows)
    are never exceeded.

    Examples
    --------
    >>> exceeds([3.0000000000000004e-05, 3.1e-05], 3e-05).tolist()
    [False, True]
    >>> exceeds([1e-16, 1e-3], 0.0, noise=3.3e-12).tolist()
    [False, True]
    """
    value = np.asarray(value, dtype=float)
    limit = np.asarray(limit, dtype=float)
    with np.errstate(invalid="ignore"):
        return value > limit + _slack(limit, noise)  # type: ignore[no-any-return]  # numpy types this array expression as Any


def falls_short(value: ArrayLike, limit: ArrayLike, noise: ArrayLike = 0.0) -> np.ndarray:
    """True where ``value`` lies below a lower ``limit`` by more than its slack.

    The slack is that of :func:`exceeds`.

    Examples
    --------
    >>> falls_short([2.9999999999999996, 2.9], 3.0).tolist()
    [False, True]
    >>> falls_short([-1.1e-16, -1e-3], 0.0, noise=3.3e-12).tolist()
    [False, True]
    """
    value = np.asarray(value, dtype=float)
    limit = np.asarray(limit, dtype=float)
    with np.errstate(invalid="ignore"):
        return value < limit - _slack(limit, noise)  # type: ignore[no-any-return]  # numpy types this array expression as Any
