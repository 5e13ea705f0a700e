"""House stock lists: the values (and packages, tolerances, quantities) on the shelf.
"""

from __future__ import annotations

__all__ = ["StockItem", "load_stock"]

from dataclasses import dataclass
from pathlib import Path

from synth.catalog.packages import read_csv_rows
from synth.errors import DesignError
from synth.units import parse_fraction, parse_resistance

_STOCK_COLUMNS = ("value", "package", "tolerance", "quantity")


@dataclass(frozen=True)
class StockItem:
    """One line of a house stock list.

    Attributes
    ----------
    value : float
        Resistance, ohm.
    package : str or None
        Package name, when the list gives it.
    tolerance : float or None
        Relative tolerance, when given.
    quantity : int or None
        Parts on hand, when given.
    line : int
        Line number in the file.
    """

    value: float
    package: str | None
    tolerance: float | None
    quantity: int | None
    line: int


def load_stock(path: Path) -> list[StockItem]:
    """Read a stock CSV: a ``value`` column, optional ``package``, ``tolerance``, ``quantity``.

    Raises
    ------
    DesignError
        Naming the file and line of a malformed row.
    """
    items = []
    for number, row in read_csv_rows(path):
        if "value" not in row:
            raise DesignError(f"{path}: the header has no 'value' column; name the columns "
                              f"{', '.join(_STOCK_COLUMNS)}")
        unknown = [k for k in row if k and k not in _STOCK_COLUMNS]
        if unknown:
            raise DesignError(f"{path}, line {number}: unknown column {unknown[0]!r}; use "
                              f"{', '.join(_STOCK_COLUMNS)}")
        try:
            value = parse_resistance(row["value"])
            tolerance = parse_fraction(row["tolerance"]) if row.get("tolerance") else None
        except DesignError as exc:
            raise DesignError(f"{path}, line {number}: {exc}") from None
        if value <= 0:
            raise DesignError(f"{path}, line {number}: value {row['value']!r} must be positive")
        quantity = None
        if row.get("quantity"):
            try:
                quantity = int(row["quantity"])
            except ValueError:
                raise DesignError(f"{path}, line {number}: quantity {row['quantity']!r} is not "
                                  "a whole number") from None
            if quantity < 0:
                raise DesignError(f"{path}, line {number}: quantity must not be negative")
        items.append(StockItem(value=value, package=row.get("package") or None,
                               tolerance=tolerance, quantity=quantity, line=number))
    if not items:
        raise DesignError(f"{path}: the stock list has no values; add rows under the header")
    return items
