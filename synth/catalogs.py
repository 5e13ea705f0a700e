"""Catalogues of orderable values and package ratings.

The data live in the ``catalogs/`` folder (installed with the package as
``synth/catalogs``): ``e_series.toml`` holds the IEC 60063 series exactly as
the standard's tables list them, ``packages.csv`` the package ratings.  This
module only reads them; nothing here hard-codes a catalogue value.
"""

from __future__ import annotations

__all__ = [
    "PackageRating",
    "Series",
    "catalog_dir",
    "load_package_table",
    "load_series",
    "nearest_value",
    "read_csv_rows",
    "series_names",
    "series_values",
]

import csv
import functools
import math
import tomllib
from collections.abc import Iterator
from dataclasses import dataclass
from decimal import Decimal
from pathlib import Path

import numpy as np

from synth.errors import DesignError, nearest_name
from synth.units import parse_fraction

_RANGE_SLACK = 1e-9  # a range end written as "1k" includes the catalogue value 1000 ohm


def catalog_dir() -> Path:
    """Return the folder holding the bundled catalogues.

    An installed package carries them in ``synth/catalogs``; a source checkout
    has them in the top-level ``catalogs/`` folder beside ``synth/``.
    """
    here = Path(__file__).resolve().parent
    for candidate in (here / "catalogs", here.parent / "catalogs"):
        if (candidate / "e_series.toml").is_file():
            return candidate
    raise DesignError(
        f"the catalogue folder was not found beside {here}; reinstall rnsynth with pip install ."
    )


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


@dataclass(frozen=True)
class PackageRating:
    """Ratings of one resistor package.

    Attributes
    ----------
    name : str
        The name a design file uses (imperial code for chips, e.g. ``"0603"``).
    mount : str
        ``"chip"`` or ``"through-hole"``.
    imperial, metric : str
        Size names in both systems (empty for through-hole parts).
    rated_power_w : float
        Rated dissipation at the rated ambient, W.
    rated_ambient_c : float
        Ambient up to which the full rating applies, °C (usually 70).
    zero_power_c : float
        Ambient at which the allowed dissipation reaches zero, °C (usually 155).
    limiting_voltage_v : float
        Limiting element voltage, V.
    source : str
        Where the row comes from ("common practice", "from memory", a standard).
    """

    name: str
    mount: str
    imperial: str
    metric: str
    rated_power_w: float
    rated_ambient_c: float
    zero_power_c: float
    limiting_voltage_v: float
    source: str


_PACKAGE_COLUMNS = (
    "name",
    "mount",
    "imperial",
    "metric",
    "rated_power_w",
    "rated_ambient_c",
    "zero_power_c",
    "limiting_voltage_v",
    "source",
)


def read_csv_rows(path: Path) -> Iterator[tuple[int, dict[str, str]]]:
    """Yield ``(line_number, row)`` from a CSV file, skipping ``#`` comment lines.

    Raises
    ------
    DesignError
        When the file cannot be read.
    """
    try:
        text = path.read_text(encoding="utf-8-sig")
    except OSError as exc:
        raise DesignError(f"{path}: cannot be read ({exc.strerror}); check the path") from None
    numbered = [
        (number, line)
        for number, line in enumerate(text.splitlines(), start=1)
        if line.strip() and not line.lstrip().startswith("#")
    ]
    if not numbered:
        raise DesignError(f"{path}: the file has no header row; add one naming the columns")
    reader = csv.DictReader(line for _, line in numbered)
    for (number, _), row in zip(numbered[1:], reader, strict=False):
        yield number, {(k or "").strip(): (v or "").strip() for k, v in row.items()}


def _package_row(path: Path, number: int, row: dict[str, str]) -> PackageRating:
    missing = [c for c in _PACKAGE_COLUMNS if c not in row]
    if missing:
        raise DesignError(f"{path}, line {number}: column {missing[0]!r} is missing; "
                          f"the header must name {', '.join(_PACKAGE_COLUMNS)}")
    numbers = {}
    for column in ("rated_power_w", "rated_ambient_c", "zero_power_c", "limiting_voltage_v"):
        try:
            numbers[column] = float(row[column])
        except ValueError:
            raise DesignError(
                f"{path}, line {number}: {column} {row[column]!r} is not a number; "
                "write a plain number in the column's unit"
            ) from None
        if not math.isfinite(numbers[column]):
            raise DesignError(f"{path}, line {number}: {column} must be finite")
    if numbers["rated_power_w"] <= 0 or numbers["limiting_voltage_v"] <= 0:
        raise DesignError(
            f"{path}, line {number}: rated_power_w and limiting_voltage_v must be positive"
        )
    if numbers["zero_power_c"] <= numbers["rated_ambient_c"]:
        raise DesignError(
            f"{path}, line {number}: zero_power_c must lie above rated_ambient_c"
        )
    if not row["name"]:
        raise DesignError(f"{path}, line {number}: the package name is empty; name it")
    return PackageRating(
        name=row["name"],
        mount=row["mount"],
        imperial=row["imperial"],
        metric=row["metric"],
        source=row["source"],
        **numbers,
    )


@functools.cache
def _cached_package_table(path: Path, _mtime_ns: int) -> dict[str, PackageRating]:
    table: dict[str, PackageRating] = {}
    for number, row in read_csv_rows(path):
        rating = _package_row(path, number, row)
        if rating.name in table:
            raise DesignError(f"{path}, line {number}: package {rating.name!r} is listed twice")
        table[rating.name] = rating
    return table


def load_package_table(path: str | Path | None = None) -> dict[str, PackageRating]:
    """Read a package rating table, keyed by package name.

    Parameters
    ----------
    path : str or Path, optional
        A CSV with the columns of ``catalogs/packages.csv``; the bundled table
        when omitted.

    Returns
    -------
    dict of str to PackageRating
        Chip packages are also reachable by their metric name (``"1608M"``).

    Examples
    --------
    >>> load_package_table()["0603"].rated_power_w
    0.1
    """
    source = Path(path) if path is not None else catalog_dir() / "packages.csv"
    resolved = source.resolve()
    try:
        stamp = resolved.stat().st_mtime_ns
    except OSError:
        raise DesignError(f"{source}: package table not found; check the path") from None
    table = dict(_cached_package_table(resolved, stamp))
    for rating in list(table.values()):
        if rating.metric and rating.metric not in table:
            table[rating.metric] = rating
    return table
