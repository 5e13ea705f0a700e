"""The values each free part may take, and how coarse each value's series is.

A free part's choices come from a series over a range, or from a house stock
list.  A position with ``combine = "series"`` or ``"parallel"`` holds two
parts from the same choice; its choices are the effective values of every
unordered pair.  Choices are sorted by effective value so the search can
treat every position as an ordered list.
"""

from __future__ import annotations

__all__ = ["Choices", "StockItem", "choices_for", "coarsest_series", "load_stock", "part_range",
           "series_rank"]

import functools
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from synth.catalogs import load_series, read_csv_rows, series_names, series_values
from synth.design import Resistor
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


@dataclass(frozen=True)
class Choices:
    """The ordered choices of one free position.

    Attributes
    ----------
    ref : str
        The position's reference designator.
    values : numpy.ndarray
        Effective resistance of each choice, ohm, ascending.
    first, second : numpy.ndarray
        The two parts' values for a combined position (``second`` is NaN for
        a single part).
    combine : str or None
        ``"series"``, ``"parallel"`` or None.
    rank : numpy.ndarray
        Sum of :func:`series_rank` over the choice's parts.
    label : str
        Where the values come from (``"E96"`` or the stock file name).
    """

    ref: str
    values: np.ndarray
    first: np.ndarray
    second: np.ndarray
    combine: str | None
    rank: np.ndarray
    label: str

    def __len__(self) -> int:
        return len(self.values)


def part_range(combine: str, low: float, high: float) -> tuple[float, float]:
    """Values each part of a combined position may take, ohm.

    The design's ``range`` bounds the position's effective value.  In series
    each part is at most the effective value and a trimming part may be down
    to a tenth of the range's low end; in parallel each part is at least the
    effective value and a trimming part may be up to ten times the high end.
    """
    return (low / 10, high) if combine == "series" else (low, high * 10)


def _base_values(resistor: Resistor, origin: str) -> tuple[np.ndarray, str]:
    if resistor.stock_path is not None:
        values = np.unique([item.value for item in load_stock(resistor.stock_path)])
        label = resistor.stock_path.name
        if resistor.range is not None:
            low, high = resistor.range
            values = values[(values >= low * (1 - 1e-9)) & (values <= high * (1 + 1e-9))]
    else:
        assert resistor.choose is not None and resistor.range is not None
        low, high = resistor.range
        if resistor.combine is not None:
            low, high = part_range(resistor.combine, low, high)
        values = series_values(resistor.choose, low, high)
        label = resistor.choose
    if len(values) == 0:
        raise DesignError(f"{origin}, resistor {resistor.ref}: no {label} value lies in its "
                          "range; widen the range")
    return values, label


def choices_for(resistor: Resistor, origin: str = "<design>") -> Choices:
    """Build the ordered choices of one free resistor.

    Raises
    ------
    DesignError
        When no catalogue value lies in the part's range.
    """
    values, label = _base_values(resistor, origin)
    ranks = series_rank(values)
    if resistor.combine is None:
        return Choices(ref=resistor.ref, values=values, first=values,
                       second=np.full(len(values), np.nan), combine=None, rank=ranks,
                       label=label)
    i, j = np.triu_indices(len(values))
    a, b = values[i], values[j]
    effective = a + b if resistor.combine == "series" else a * b / (a + b)
    if resistor.range is not None:
        low, high = resistor.range
        keep = (effective >= low * (1 - 1e-9)) & (effective <= high * (1 + 1e-9))
        a, b, effective = a[keep], b[keep], effective[keep]
        i, j = i[keep], j[keep]
    if len(effective) == 0:
        raise DesignError(f"{origin}, resistor {resistor.ref}: no pair of {label} values "
                          "reaches its range; widen the range")
    order = np.lexsort((b, a, effective))
    return Choices(ref=resistor.ref, values=effective[order], first=a[order], second=b[order],
                   combine=resistor.combine, rank=(ranks[i] + ranks[j])[order], label=label)


def combination_count(choices: list[Choices]) -> int:
    """Number of candidate value sets: the product of the positions' choice counts."""
    return math.prod(len(c) for c in choices)
