"""IEC 60063 series tables from ``catalogs/``: values over a range, nearest value, series rank.
"""

from __future__ import annotations

__all__ = [
    "Series", "catalog_dir", "coarsest_series", "load_series", "nearest_value", "series_names",
    "series_rank", "series_values",
]

import functools
import math
import tomllib
from dataclasses import dataclass
from decimal import Decimal

import numpy as np

from synth.catalog.names import catalog_dir
from synth.errors import DesignError, nearest_name
from synth.units import parse_fraction

_RANGE_SLACK = 1e-9  # a range end written as "1k" includes the catalogue value 1000 ohm


@dataclass(frozen=True)
class Series:
    """One IEC 60063 series.

    Attributes
    ----------
    name : str
        ``"E24"`` and so on.
    mantissas : tuple of int
        Significant figures of the values in one decade, as the table lists them.
    digits : int
        How many significant figures each mantissa has (2 or 3).
    tolerance : float
        The tolerance usually paired with the series, as a fraction.
    source : str
        Where the values come from.
    """

    name: str
    mantissas: tuple[int, ...]
    digits: int
    tolerance: float
    source: str

    def decade(self, exponent: int) -> np.ndarray:
        """Values (ohm) of the decade starting at ``10**exponent`` ohm."""
        shift = exponent - self.digits + 1
        return np.array([float(Decimal(m).scaleb(shift)) for m in self.mantissas])


@functools.cache
def _series_table() -> dict[str, Series]:
    path = catalog_dir() / "e_series.toml"
    with path.open("rb") as handle:
        raw = tomllib.load(handle)
    table = {}
    for name, row in raw.items():
        table[name] = Series(
            name=name,
            mantissas=tuple(int(m) for m in row["mantissas"]),
            digits=int(row["digits"]),
            tolerance=parse_fraction(row["tolerance"]),
            source=str(row["source"]),
        )
    return table


def series_names() -> tuple[str, ...]:
    """Names of the bundled series, coarsest first (E3 ... E192)."""
    return tuple(sorted(_series_table(), key=lambda n: len(_series_table()[n].mantissas)))


def load_series(name: str) -> Series:
    """Return the series called ``name`` (``"E96"``; case does not matter).

    Raises
    ------
    DesignError
        When no such series is bundled.
    """
    table = _series_table()
    key = name.strip().upper()
    if key not in table:
        raise DesignError(
            f"unknown series {name!r}{nearest_name(key, table)}; "
            f"choose one of {', '.join(series_names())}"
        )
    return table[key]


def series_values(name: str, low: float, high: float) -> np.ndarray:
    """All values of a series between ``low`` and ``high`` ohm, inclusive, ascending.

    Parameters
    ----------
    name : str
        Series name, e.g. ``"E96"``.
    low, high : float
        Range ends in ohm, ``0 < low <= high``.

    Returns
    -------
    numpy.ndarray
        Values in ohm.

    Examples
    --------
    >>> series_values("E12", 1000, 2000).tolist()
    [1000.0, 1200.0, 1500.0, 1800.0]
    """
    if not (math.isfinite(low) and math.isfinite(high)) or low <= 0 or high < low:
        raise DesignError(
            f"range {low:g}..{high:g} ohm is empty or not positive; give the low end first"
        )
    series = load_series(name)
    first = math.floor(math.log10(low)) - 1
    last = math.floor(math.log10(high)) + 1
    values = np.concatenate([series.decade(e) for e in range(first, last + 1)])
    keep = (values >= low * (1 - _RANGE_SLACK)) & (values <= high * (1 + _RANGE_SLACK))
    return values[keep]


def nearest_value(ohms: float, name: str) -> float:
    """The series value nearest to ``ohms`` on a logarithmic scale.

    Parameters
    ----------
    ohms : float
        Wanted resistance in ohm (> 0).
    name : str
        Series name.

    Returns
    -------
    float
        The nearest catalogue value in ohm; a tie goes to the lower value.

    Examples
    --------
    >>> nearest_value(1563, "E24"), nearest_value(1563, "E96")
    (1600.0, 1580.0)

    Notes
    -----
    Series are geometric, so "nearest" is measured as ``|log(value/ohms)|``:
    the boundary between 1.0 and 1.1 lies at their geometric mean 1.0488.
    """
    if not math.isfinite(ohms) or ohms <= 0:
        raise DesignError(f"{ohms!r} ohm has no nearest catalogue value; give a positive value")
    candidates = series_values(name, ohms / 20, ohms * 20)
    distance = np.abs(np.log(candidates / ohms))
    return float(candidates[int(np.argmin(distance))])


def series_rank(values: np.ndarray) -> np.ndarray:
    """Rank of the coarsest series holding each value: 0 for E3 ... 6 for E192, 7 for none.

    Examples
    --------
    >>> series_rank(np.array([4700.0, 5100.0, 4990.0, 1234.0])).tolist()
    [0, 3, 5, 7]
    """
    values = np.asarray(values, dtype=float)
    ranks = np.full(values.shape, len(series_names()), dtype=int)
    for rank in range(len(series_names()) - 1, -1, -1):
        series = load_series(series_names()[rank])
        scale = 10.0 ** (np.floor(np.log10(values)) - series.digits + 1)
        mantissa = np.round(values / scale)
        hit = np.isin(mantissa, series.mantissas) & np.isclose(mantissa * scale, values,
                                                                rtol=1e-9)
        ranks[hit] = rank
    return ranks


@functools.lru_cache(maxsize=4096)
def coarsest_series(value: float) -> str | None:
    """Name of the coarsest series holding ``value`` (ohm), or None.

    Examples
    --------
    >>> coarsest_series(4700.0), coarsest_series(4990.0), coarsest_series(1234.0)
    ('E3', 'E96', None)
    """
    rank = int(series_rank(np.array([value]))[0])
    names = series_names()
    return names[rank] if rank < len(names) else None
