"""The package table: each package's rated dissipation, rated ambient, zero-power temperature,
limiting element voltage and (optionally) thermal resistance.
"""

from __future__ import annotations

__all__ = ["PackageRating", "load_package_table", "read_csv_rows"]

import csv
import functools
import math
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

from synth.catalog.series import catalog_dir
from synth.errors import DesignError
from synth.inputs import read_input_text, require_suffix


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
    technology : str
        The resistive element (``"thick film"``, ``"thin film"``, ``"metal film"``,
        ``"wirewound"``); empty when the table has no ``technology`` column.
    thermal_resistance_k_per_w : float or None
        Rise of the part's own (hot-spot) temperature per watt it dissipates, K/W; None when
        the table has no ``thermal_resistance_k_per_w`` column or the row leaves it empty
        (the part is then taken not to heat itself).
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
    technology: str = ""
    thermal_resistance_k_per_w: float | None = None


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

_THERMAL_COLUMN = "thermal_resistance_k_per_w"
"""The optional column of each package's thermal resistance, K/W."""


def read_csv_rows(path: Path, delimiters: str = ",") -> Iterator[tuple[int, dict[str, str]]]:
    """Yield ``(line_number, row)`` from a CSV file, skipping ``#`` comment lines.

    With several ``delimiters`` (``",;"``), the one the header row holds most often separates
    the fields.

    Raises
    ------
    DesignError
        When the file cannot be read.
    """
    text = read_input_text(path, "CSV file")
    numbered = [
        (number, line)
        for number, line in enumerate(text.splitlines(), start=1)
        if line.strip() and not line.lstrip().startswith("#")
    ]
    if not numbered:
        raise DesignError(f"{path}: the file has no header row; add one naming the columns")
    delimiter = max(delimiters, key=numbered[0][1].count)
    reader = csv.DictReader((line for _, line in numbered), delimiter=delimiter)
    rows = iter(reader)
    for number, _ in numbered[1:]:
        try:
            row = next(rows)
        except StopIteration:
            return
        except csv.Error as exc:  # a field over the csv module's limit, a NUL byte ...
            raise DesignError(f"{path}, line {number}: not a CSV row the reader accepts "
                              f"({exc}); check that the file is a plain CSV list") from None
        if None in row:  # csv puts the fields beyond the header under the key None
            raise DesignError(f"{path}, line {number}: the row has more fields than the header "
                              f"({len(reader.fieldnames or [])} columns); remove the extra "
                              "fields or name their columns in the header")
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
        thermal_resistance_k_per_w=_thermal_resistance(path, number, row),
        name=row["name"],
        mount=row["mount"],
        imperial=row["imperial"],
        metric=row["metric"],
        source=row["source"],
        technology=row.get("technology", ""),
        **numbers,
    )


def _thermal_resistance(path: Path, number: int, row: dict[str, str]) -> float | None:
    """The row's ``thermal_resistance_k_per_w``, K/W: None when the column is absent or empty."""
    text = row.get(_THERMAL_COLUMN, "")
    if not text:
        return None
    try:
        value = float(text)
    except ValueError:
        raise DesignError(
            f"{path}, line {number}: {_THERMAL_COLUMN} {text!r} is not a number; write the "
            "rise in K per W as a plain number, or leave the cell empty for no self-heating"
        ) from None
    if not math.isfinite(value) or value < 0:
        raise DesignError(
            f"{path}, line {number}: {_THERMAL_COLUMN} {text!r} must be a finite number of "
            "K/W, zero or more; write the part's temperature rise per watt"
        )
    return value


@functools.cache
def _cached_package_table(path: Path, _mtime_ns: int) -> dict[str, PackageRating]:
    table: dict[str, PackageRating] = {}
    for number, row in read_csv_rows(path):
        rating = _package_row(path, number, row)
        if rating.name in table:
            raise DesignError(f"{path}, line {number}: package {rating.name!r} is listed twice")
        table[rating.name] = rating
    if not table:
        raise DesignError(f"{path}: the package table has no rows; add one row per package "
                          f"under a header naming {', '.join(_PACKAGE_COLUMNS)}")
    return table


def load_package_table(path: str | Path | None = None) -> dict[str, PackageRating]:
    """Read a package rating table, keyed by package name.

    Parameters
    ----------
    path : str or Path, optional
        A CSV file (its name ending in ``.csv``) with the columns of
        ``catalogs/packages.csv``; the bundled table when omitted.

    Returns
    -------
    dict of str to PackageRating
        Chip packages are also reachable by their metric name (``"1608M"``).

    Examples
    --------
    >>> load_package_table()["0603"].rated_power_w
    0.1
    """
    if path is not None:
        require_suffix(path, "package table")
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
