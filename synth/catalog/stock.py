"""House stock lists: the values (and packages, tolerances, TCRs, quantities) on the shelf.

A list is a CSV with a header row, fields separated by ``,`` or ``;`` (the one the header
holds most often).  Headers are read in any case, with spaces or hyphens as underscores
(``Part Number`` is ``part_number``); columns other than the known ones (a part number, a
location, a price) are kept and passed to the BOM.
"""

from __future__ import annotations

__all__ = ["StockItem", "load_stock", "stock_fits"]

import difflib
import re
from dataclasses import dataclass
from pathlib import Path

from synth.catalog.packages import read_csv_rows
from synth.errors import DesignError
from synth.inputs import require_suffix
from synth.units import parse_fraction, parse_resistance, parse_tcr

_STOCK_COLUMNS = ("value", "package", "tolerance", "tcr", "quantity")
_NUMBER = re.compile(r"^[+]?\d+(?:[.,]\d+)?$")
_SLACK = 1e-12


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
    tcr : float or None
        Temperature coefficient, 1/°C, when given.
    extra : tuple of (str, str)
        The list's other columns (header in lower case) and their values on this row.
    """

    value: float
    package: str | None
    tolerance: float | None
    quantity: int | None
    line: int
    tcr: float | None = None
    extra: tuple[tuple[str, str], ...] = ()


def stock_fits(item: StockItem, tolerance: float, tcr: float) -> bool:
    """Whether a stock row is at least as good as a part needs: its tolerance and its TCR no
    larger than the part's (a row that leaves one out is taken to meet it).

    Examples
    --------
    >>> reel = StockItem(1e3, "0603", 0.01, 100, 2, tcr=25e-6)
    >>> stock_fits(reel, 0.01, 100e-6), stock_fits(reel, 0.01, 10e-6)
    (True, False)
    """
    return ((item.tolerance is None or item.tolerance <= tolerance + _SLACK)
            and (item.tcr is None or item.tcr <= tcr + _SLACK))


def _header(name: str) -> str:
    return re.sub(r"[\s\-]+", "_", name.strip().lower())


def _decimal(text: str) -> str:
    """A decimal comma (``4,7k`` in a ``;``-separated list) read as a point."""
    return text.replace(",", ".")


def _tcr(text: str) -> float:
    """A TCR in ppm/°C; a bare number (``25``) or ``25 ppm`` is read as ppm/°C."""
    plain = _decimal(text).strip()
    bare = plain.removesuffix("ppm").strip()
    if _NUMBER.match(bare):
        return float(bare) / 1e6
    return parse_tcr(plain)


def load_stock(path: Path) -> list[StockItem]:
    """Read a stock CSV: a ``value`` column, optional ``package``, ``tolerance``, ``tcr``,
    ``quantity``, and any other columns (kept in :attr:`StockItem.extra`).

    Raises
    ------
    DesignError
        When the name does not end in ``.csv``; naming the file and line of a malformed
        row, or a column that looks like a misspelt known one.
    """
    require_suffix(path, "stock list")
    items = []
    for number, raw in read_csv_rows(path, delimiters=",;"):
        row = {_header(k): v for k, v in raw.items()}
        if "value" not in row:
            raise DesignError(f"{path}: the header has no 'value' column; name the columns "
                              f"{', '.join(_STOCK_COLUMNS)}")
        for name in row:
            close = difflib.get_close_matches(name, _STOCK_COLUMNS, n=1, cutoff=0.8)
            if name not in _STOCK_COLUMNS and close:
                raise DesignError(f"{path}, line {number}: unknown column {name!r}; did you "
                                  f"mean {close[0]!r}? (other columns are passed to the BOM)")
        try:
            value = parse_resistance(_decimal(row["value"]))
            tolerance = (parse_fraction(_decimal(row["tolerance"])) if row.get("tolerance")
                         else None)
            tcr = _tcr(row["tcr"]) if row.get("tcr") else None
        except DesignError as exc:
            raise DesignError(f"{path}, line {number}: {exc}") from None
        if value <= 0:
            raise DesignError(f"{path}, line {number}: value {row['value']!r} must be positive")
        if tcr is not None and tcr < 0:
            raise DesignError(f"{path}, line {number}: tcr {row['tcr']!r} must not be "
                              "negative; give its size, e.g. 25 ppm/C")
        quantity = None
        if row.get("quantity"):
            try:
                quantity = int(row["quantity"])
            except ValueError:
                raise DesignError(f"{path}, line {number}: quantity {row['quantity']!r} is not "
                                  "a whole number") from None
            if quantity < 0:
                raise DesignError(f"{path}, line {number}: quantity must not be negative")
        extra = tuple((k, v) for k, v in row.items() if k and k not in _STOCK_COLUMNS)
        items.append(StockItem(value=value, package=row.get("package") or None,
                               tolerance=tolerance, quantity=quantity, line=number, tcr=tcr,
                               extra=extra))
    if not items:
        raise DesignError(f"{path}: the stock list has no values; add rows under the header")
    return items
