"""The values each free part may take, and how coarse each value's series is.

A free part's choices come from a series over a range, or from a house stock
list.  A position with ``combine = "series"`` or ``"parallel"`` holds two
parts from the same choice; its choices are the effective values of every
unordered pair.  Choices are sorted by effective value so the search can
treat every position as an ordered list.
"""

from __future__ import annotations

__all__ = ["Choices", "choices_for", "combination_count", "part_range"]

import math
from dataclasses import dataclass

import numpy as np

from synth.catalog.series import series_rank, series_values
from synth.catalog.stock import load_stock
from synth.design.model import Resistor
from synth.errors import DesignError


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
