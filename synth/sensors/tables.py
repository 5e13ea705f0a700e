"""The sensor data of ``catalogs/sensors.toml``: IEC 60751 coefficients and classes, NTC defaults.
"""

from __future__ import annotations

__all__ = ["NtcDefaults", "RtdClass", "RtdCoefficients", "ntc_defaults", "rtd_classes",
           "rtd_coefficients"]

import functools
import tomllib
from dataclasses import dataclass
from typing import Any

from synth.catalog.series import catalog_dir


@dataclass(frozen=True)
class RtdCoefficients:
    """The Callendar–Van Dusen coefficients of IEC 60751 and the range they cover.

    Attributes
    ----------
    a, b, c : float
        1/°C, 1/°C², 1/°C⁴ (``c`` applies below 0 °C only).
    valid_c : tuple of float
        The temperatures the relation covers, °C.
    r0_usual : tuple of float
        The usual resistances at 0 °C, ohm (Pt100, Pt1000).
    default_class : str
        The tolerance class of an RTD that names none.
    source : str
    """

    a: float
    b: float
    c: float
    valid_c: tuple[float, float]
    r0_usual: tuple[float, ...]
    default_class: str
    source: str


@dataclass(frozen=True)
class RtdClass:
    """One tolerance class of IEC 60751: a half-width of ``fixed_c + per_degree·|t|`` °C."""

    name: str
    fixed_c: float
    per_degree: float


@dataclass(frozen=True)
class NtcDefaults:
    """Defaults of the thermistor models: the reference temperature and the valid range, °C."""

    reference_c: float
    valid_c: tuple[float, float]
    source: str


@functools.cache
def _table() -> dict[str, Any]:
    with (catalog_dir() / "sensors.toml").open("rb") as handle:
        return tomllib.load(handle)


def rtd_coefficients() -> RtdCoefficients:
    """The IEC 60751 coefficients from the catalogue.

    Examples
    --------
    >>> rtd_coefficients().a
    0.0039083
    """
    raw = _table()["rtd"]
    low, high = raw["valid_c"]
    return RtdCoefficients(a=float(raw["a"]), b=float(raw["b"]), c=float(raw["c"]),
                           valid_c=(float(low), float(high)),
                           r0_usual=tuple(float(r) for r in raw["r0_usual"]),
                           default_class=str(raw["default_class"]), source=str(raw["source"]))


def rtd_classes() -> dict[str, RtdClass]:
    """The tolerance classes by name, tightest first (AA, A, B, C).

    Examples
    --------
    >>> list(rtd_classes())
    ['AA', 'A', 'B', 'C']
    """
    raw = _table()["rtd"]["class"]
    return {name: RtdClass(name=name, fixed_c=float(row["fixed_c"]),
                           per_degree=float(row["per_degree"])) for name, row in raw.items()}


def ntc_defaults() -> NtcDefaults:
    """The thermistor defaults from the catalogue.

    Examples
    --------
    >>> ntc_defaults().reference_c
    25.0
    """
    raw = _table()["ntc"]
    low, high = raw["valid_c"]
    return NtcDefaults(reference_c=float(raw["reference_c"]), valid_c=(float(low), float(high)),
                       source=str(raw["source"]))
