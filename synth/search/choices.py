"""The values each free position may take, and how coarse each value's series is.

A free position's choices come from a series over a range, or from a house
stock list.  A position of several parts (``combine = "series"`` or
``"parallel"``) takes its parts from the same catalogue:

* two parts: every unordered pair of values;
* three to six parts: N - 1 equal parts and one trimming part (every ordered
  pair of a main value and a trim value), the usual way a high-voltage string
  is built;
* ``equal_parts = true``: N equal parts (an equal voltage share, common
  practice for high-voltage strings).

Each part may range over :func:`part_range`; the position's effective value
must lie in the position's ``range``.  Choices are sorted by effective value
so the search can treat every position as an ordered list.
"""

from __future__ import annotations

__all__ = ["Choices", "choices_for", "combination_count", "part_range", "values_of_row"]

import functools
import math
from dataclasses import dataclass

import numpy as np

from synth.catalog.series import series_rank, series_values
from synth.catalog.stock import load_stock, stock_fits
from synth.design.model import Resistor
from synth.design.position import Position
from synth.errors import DesignError

_RANGE_SLACK = 1e-9  # a range end written as "10k" includes 4.7k + 5.3k = 10k exactly


@dataclass(frozen=True)
class Choices:
    """The ordered choices of one free position.

    Attributes
    ----------
    ref : str
        The position's reference designator.
    position : Position
        The position's parts.
    values : numpy.ndarray
        Effective resistance of each choice, ohm, ascending.
    parts : numpy.ndarray
        ``(choices, parts)`` each physical part's value, ohm.
    rank : numpy.ndarray
        Sum of :func:`~synth.catalog.series.series_rank` over the choice's parts.
    label : str
        Where the values come from (``"E96"`` or the stock file name).
    """

    ref: str
    position: Position
    values: np.ndarray
    parts: np.ndarray
    rank: np.ndarray
    label: str

    def __len__(self) -> int:
        return len(self.values)

    @property
    def combine(self) -> str | None:
        """``"series"``/``"parallel"`` for a position of several parts, else None."""
        return None if self.position.count == 1 else self.position.arrangement


def part_range(combine: str, low: float, high: float) -> tuple[float, float]:
    """Values each part of a combined position may take, ohm.

    The design's ``range`` bounds the position's effective value.  In series
    each part is at most the effective value and a trimming part may be down
    to a tenth of the range's low end; in parallel each part is at least the
    effective value and a trimming part may be up to ten times the high end.

    Examples
    --------
    >>> part_range("series", 10e3, 20e3), part_range("parallel", 10e3, 20e3)
    ((1000.0, 20000.0), (10000.0, 200000.0))
    """
    return (low / 10, high) if combine == "series" else (low, high * 10)


@functools.lru_cache(maxsize=256)
def _series_catalogue(name: str, low: float, high: float) -> tuple[np.ndarray, np.ndarray]:
    """A series' (or a union of series') values over a range and each one's series rank
    (read-only; kept, since a design's positions often share a series and range and a run
    designs many networks)."""
    # a union of series (``"E24+E96"``: 1 % parts are sold in both) holds each value once
    values = np.unique(np.concatenate([series_values(part, low, high)
                                       for part in name.split("+")]))
    ranks = series_rank(values)
    values.flags.writeable = False
    ranks.flags.writeable = False
    return values, ranks


def _base_values(resistor: Resistor, origin: str) -> tuple[np.ndarray, np.ndarray, str]:
    """The catalogue values each physical part of the position may take, their series
    ranks, and the catalogue's label."""
    span = resistor.range
    if span is not None and resistor.combine is not None:
        span = part_range(resistor.combine, *span)
    stock_class = _stock_class_values(resistor)
    if stock_class is not None:
        values, label = stock_class, resistor.choose or ""
        if span is not None:
            low, high = span
            values = values[(values >= low * (1 - _RANGE_SLACK))
                            & (values <= high * (1 + _RANGE_SLACK))]
        ranks = series_rank(values)
    elif resistor.stock_path is not None:
        # a row fits when its package (if given) is the part's and its tolerance and TCR are
        # at least as good as the part's
        wanted = (resistor.package or "").casefold()
        values = np.unique([item.value for item in load_stock(resistor.stock_path)
                            if (item.package is None or not wanted
                                or item.package.casefold() == wanted)
                            and stock_fits(item, resistor.tolerance, resistor.tcr)])
        label = resistor.stock_path.name
        if span is not None:
            low, high = span
            values = values[(values >= low * (1 - _RANGE_SLACK))
                            & (values <= high * (1 + _RANGE_SLACK))]
        ranks = series_rank(values)
    else:
        assert resistor.choose is not None and span is not None
        values, ranks = _series_catalogue(resistor.choose, *span)
        label = resistor.choose
    if len(values) == 0:
        raise DesignError(f"{origin}, resistor {resistor.ref}: no {label} value lies in its "
                          "range; widen the range")
    return values, ranks, label


def _stock_class_values(resistor: Resistor) -> np.ndarray | None:
    """The values of the stock-list class the part stands as (its rows' kind only), or None
    for a part of no such class."""
    for part_class in resistor.classes:
        if (part_class.stock_path is not None and part_class.stock_path == resistor.stock_path
                and part_class.tolerance == resistor.tolerance
                and part_class.tcr == resistor.tcr):
            return np.array(part_class.values, dtype=float)
    return None


def _part_sets(values: np.ndarray, position: Position) -> np.ndarray:
    """Index sets ``(sets, count)`` into ``values`` for one position (see the module notes)."""
    n, count = len(values), position.count
    if count == 1 or position.equal_parts:
        return np.repeat(np.arange(n)[:, None], count, axis=1)
    if count == 2:
        i, j = np.triu_indices(n)
        return np.stack([i, j], axis=1)
    main, trim = (g.ravel() for g in np.meshgrid(np.arange(n), np.arange(n), indexing="ij"))
    return np.column_stack([np.repeat(main[:, None], count - 1, axis=1), trim])


def choices_for(resistor: Resistor, origin: str = "<design>") -> Choices:
    """Build the ordered choices of one free position.

    Raises
    ------
    DesignError
        When no catalogue value (or set of part values) reaches the range.

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "1 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "choose": "E3",
    ...                   "range": ["10k", "20k"], "combine": "series"}]})
    >>> c = choices_for(d.resistors[0])
    >>> [float(v) for v in c.values], c.parts[-1].tolist()
    ([11000.0, 12200.0, 14700.0, 20000.0], [10000.0, 10000.0])
    """
    values, ranks, label = _base_values(resistor, origin)
    position = resistor.position
    sets = _part_sets(values, position)
    parts = values[sets]
    effective = position.effective(parts)
    if resistor.range is not None and position.count > 1:
        low, high = resistor.range
        keep = ((effective >= low * (1 - _RANGE_SLACK))
                & (effective <= high * (1 + _RANGE_SLACK)))
        sets, parts, effective = sets[keep], parts[keep], effective[keep]
    if len(effective) == 0:
        raise DesignError(f"{origin}, resistor {resistor.ref}: no set of {position.count} "
                          f"{label} values reaches its range; widen the range")
    order = np.lexsort((*parts.T[::-1], effective))
    return Choices(ref=resistor.ref, position=position, values=effective[order],
                   parts=parts[order], rank=ranks[sets].sum(axis=1)[order], label=label)


def combination_count(choices: list[Choices]) -> int:
    """Number of candidate value sets: the product of the positions' choice counts."""
    return math.prod(len(c) for c in choices)


def values_of_row(choices: list[Choices], row: np.ndarray) -> dict[str, float]:
    """Ohm by physical part reference for one row of choice indices (one per free position)."""
    return {ref: float(value) for p, choice in enumerate(choices)
            for ref, value in zip(choice.position.part_refs, choice.parts[int(row[p])],
                                  strict=True)}
