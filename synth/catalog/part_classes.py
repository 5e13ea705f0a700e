"""Part classes: the tolerance classes a free resistor may be bought in, and what each costs.

A class is a set of values (one IEC 60063 series, or a union of series written ``E24+E96``:
1 % parts are sold in both), a tolerance, a TCR and a relative cost per part.  The bundled
``catalogs/part_classes.csv`` holds demo costs invented for the examples.  A design may name
its own table (same columns: ``name, series, tolerance, tcr, cost``, an optional ``source``)
or a house stock list with a ``price`` column: then each distinct tolerance and TCR of the
list is a class holding that kind's rows, and costs the dearest of them.
"""

from __future__ import annotations

__all__ = ["PartClass", "class_series", "load_class_table", "tighter_class"]

import functools
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path

from synth.catalog.names import catalog_dir, series_names
from synth.catalog.packages import read_csv_rows
from synth.catalog.stock import load_stock
from synth.errors import DesignError, nearest_name
from synth.inputs import require_suffix
from synth.units import parse_fraction, parse_tcr

_CLASS_COLUMNS = ("name", "series", "tolerance", "tcr", "cost", "source")


@dataclass(frozen=True)
class PartClass:
    """One class a free part may be bought in.

    Attributes
    ----------
    name : str
        How a design file names it (``"1%"``).
    series : tuple of str
        The series whose values it is sold in (their union); empty for a class
        drawn from a stock list.
    tolerance : float
        Relative tolerance, fraction.
    tcr : float or None
        Temperature coefficient, fraction per kelvin; None when the table gives none
        (the design's ``tcr`` then applies).
    cost : float
        Relative cost of one part (the table's unit; the bundled table's are invented).
    source : str
        Where the row comes from.
    stock_path : Path or None
        For a class drawn from a stock list: the list.
    values : tuple of float
        For a class drawn from a stock list: the values of its rows (those of its
        tolerance and TCR), ohm, ascending; empty for a class of series.
    """

    name: str
    series: tuple[str, ...]
    tolerance: float
    tcr: float | None
    cost: float
    source: str = ""
    stock_path: Path | None = None
    values: tuple[float, ...] = ()

    @property
    def choose(self) -> str:
        """What a part of this class is chosen from: ``"E24+E96"`` or the stock file's name."""
        return self.stock_path.name if self.stock_path is not None else "+".join(self.series)


def class_series(text: str) -> tuple[str, ...]:
    """The series names of a ``series`` cell (``"E24+E96"``), upper case, in order.

    Raises
    ------
    DesignError
        When a name is not a bundled series.

    Examples
    --------
    >>> class_series("e24 + E96")
    ('E24', 'E96')
    """
    names = tuple(part.strip().upper() for part in text.split("+"))
    for name in names:
        if name not in series_names():
            raise DesignError(f"series {name!r} is not known{nearest_name(name, series_names())};"
                              f" use {', '.join(series_names())} or a union such as E24+E96")
    return names


def _number(path: Path, line: int, column: str, text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise DesignError(f"{path}, line {line}: {column} {text!r} is not a number; write a "
                          "plain number such as 1.5") from None
    if not math.isfinite(value):
        raise DesignError(f"{path}, line {line}: {column} {text!r} must be finite")
    if value < 0:
        raise DesignError(f"{path}, line {line}: {column} {text!r} is negative; a cost or "
                          "price is zero or more")
    return value


def _class_row(path: Path, line: int, row: dict[str, str]) -> PartClass:
    for column in _CLASS_COLUMNS[:-1]:
        if column not in row:
            raise DesignError(f"{path}, line {line}: column {column!r} is missing; the header "
                              f"must name {', '.join(_CLASS_COLUMNS[:-1])} (and may add source)")
    name = row["name"]
    if not name:
        raise DesignError(f"{path}, line {line}: the class name is empty; name it")
    if not row["tolerance"]:
        raise DesignError(f"{path}, line {line}: class {name!r} has no tolerance; give one "
                          "such as 1%")
    try:
        series = class_series(row["series"])
        tolerance = parse_fraction(row["tolerance"])
        tcr = abs(parse_tcr(row["tcr"])) if row["tcr"] else None
    except DesignError as exc:
        raise DesignError(f"{path}, line {line}, class {name!r}: {exc}") from None
    if not 0 < tolerance < 1:
        raise DesignError(f"{path}, line {line}: class {name!r} tolerance {row['tolerance']!r} "
                          "must lie between 0 % and 100 %")
    return PartClass(name=name, series=series, tolerance=tolerance, tcr=tcr,
                     cost=_number(path, line, "cost", row["cost"]),
                     source=row.get("source", ""))


def _stock_classes(path: Path) -> dict[str, PartClass]:
    """Classes of a stock list with a ``price`` column: one per distinct tolerance and TCR."""
    items = load_stock(path)
    prices: list[float] = []
    for item in items:
        extra = dict(item.extra)
        if "price" not in extra or not extra["price"]:
            raise DesignError(f"{path}, line {item.line}: a stock list used as a class table "
                              "needs a price on every row; add a price column")
        if item.tolerance is None:
            raise DesignError(f"{path}, line {item.line}: a class without a tolerance; give "
                              "the row's tolerance, such as 1%")
        prices.append(_number(path, item.line, "price", extra["price"].replace(",", ".")))
    kinds = sorted({(item.tolerance or 0.0, item.tcr) for item in items},
                   key=lambda k: (-k[0], -(k[1] if k[1] is not None else math.inf)))
    by_tolerance: dict[float, int] = {}
    for tolerance, _ in kinds:
        by_tolerance[tolerance] = by_tolerance.get(tolerance, 0) + 1
    table = {}
    for tolerance, tcr in kinds:
        name = f"{tolerance * 100:g}%"
        if by_tolerance[tolerance] > 1:
            name += f" {tcr * 1e6:g}ppm" if tcr is not None else " any tcr"
        rows = [(item.value, price) for item, price in zip(items, prices, strict=True)
                if (item.tolerance, item.tcr) == (tolerance, tcr)]
        # the list may price one value of a kind dearer than another: the class costs the
        # dearest, so a least cost over classes never undercounts
        table[name] = PartClass(name=name, series=(), tolerance=tolerance, tcr=tcr,
                                cost=max(price for _, price in rows),
                                source=f"stock list {path.name}", stock_path=path,
                                values=tuple(sorted({value for value, _ in rows})))
    return table


def load_class_table(path: Path | None = None) -> Mapping[str, PartClass]:
    """Read a class table: the bundled one (demo costs), a table of one's own, or a stock list.

    Parameters
    ----------
    path : Path, optional
        A CSV with columns ``name, series, tolerance, tcr, cost`` (and ``source``), or a
        stock list (a ``value`` column) with a ``price`` column; None for the bundled
        ``catalogs/part_classes.csv``.

    Returns
    -------
    mapping of str to PartClass
        By class name, in the table's order.

    Raises
    ------
    DesignError
        On a malformed row, a class without a tolerance, a negative cost or price,
        an unknown series or a name given twice.

    Examples
    --------
    >>> table = load_class_table()
    >>> table["1%"].series, table["1%"].tolerance
    (('E24', 'E96'), 0.01)
    """
    return _read_table(path) if path is not None else _bundled()


@functools.cache
def _bundled() -> Mapping[str, PartClass]:
    return _read_table(catalog_dir() / "part_classes.csv")


def _read_table(where: Path) -> Mapping[str, PartClass]:
    require_suffix(where, "class table")
    rows = list(read_csv_rows(where, delimiters=",;"))
    if rows and "value" in {k.strip().lower() for k in rows[0][1]}:
        return _stock_classes(where)
    table: dict[str, PartClass] = {}
    for line, row in rows:
        part_class = _class_row(where, line, {k.strip().lower(): v for k, v in row.items()})
        if part_class.name in table:
            raise DesignError(f"{where}, line {line}: class {part_class.name!r} is given "
                              "twice; keep one row per class")
        table[part_class.name] = part_class
    if not table:
        raise DesignError(f"{where}: the class table has no classes; add rows under the header")
    return table


def tighter_class(current: PartClass, allowed: Sequence[PartClass]) -> PartClass | None:
    """The next tighter class of ``allowed``: the loosest tolerance below ``current``'s.

    Ties of tolerance go to the cheaper class, then the one listed first; None when
    ``current`` is the tightest allowed.

    Examples
    --------
    >>> t = load_class_table()
    >>> tighter_class(t["1%"], [t["5%"], t["1%"], t["0.1%"]]).name
    '0.1%'
    >>> tighter_class(t["0.1%"], [t["1%"], t["0.1%"]]) is None
    True
    """
    tighter = [c for c in allowed if c.tolerance < current.tolerance]
    if not tighter:
        return None
    return min(enumerate(tighter), key=lambda kc: (-kc[1].tolerance, kc[1].cost, kc[0]))[1]
