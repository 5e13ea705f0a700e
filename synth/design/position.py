"""A resistor position and its physical parts: the one place a position is divided.

A resistor entry of a design file is a *position*: one physical part, or
N >= 2 parts in series or in parallel between the same two nodes.  The network
sees the position's effective resistance; every physical part's current,
voltage and dissipation comes from :meth:`Position.split`.
"""

from __future__ import annotations

__all__ = ["MAX_PARTS", "PART_SUFFIXES", "PartShares", "Position"]

from dataclasses import dataclass

import numpy as np

MAX_PARTS = 6
"""Most physical parts one position may hold (series strings of 3-6 parts carry high voltage)."""
PART_SUFFIXES = "ABCDEF"
"""Designator suffixes of a position's parts: R1 of three parts is R1A, R1B, R1C."""


@dataclass(frozen=True)
class PartShares:
    """How a position's current, voltage and dissipation divide among its parts.

    Every array is ``(M, parts)``: candidate axis first, then the position's
    parts in designator order.

    Attributes
    ----------
    current : numpy.ndarray
        A through each part, in the position's sign convention.
    voltage : numpy.ndarray
        V across each part (absolute).
    power : numpy.ndarray
        W dissipated in each part.
    """

    current: np.ndarray
    voltage: np.ndarray
    power: np.ndarray


@dataclass(frozen=True)
class Position:
    """A resistor position: one part, or N >= 2 parts in series or in parallel.

    Attributes
    ----------
    ref : str
        The position's designator (``"R1"``).
    arrangement : {"single", "series", "parallel"}
        How its parts are joined.
    count : int
        Number of physical parts (1 for a single part).
    equal_parts : bool
        Every part takes the same value (a string with an equal voltage share).
    part_values : tuple of float or None
        Each part's resistance, ohm, when the file gives them (a fixed
        position, or the values ``check`` uses).

    Examples
    --------
    >>> p = Position("R1", "series", 2)
    >>> p.part_refs
    ('R1A', 'R1B')
    >>> float(p.effective(np.array([[442e3, 432e3]]))[0])
    874000.0
    >>> s = p.split(np.array([[442e3, 432e3]]), np.array([400 / 874e3]))
    >>> [round(float(v), 2) for v in s.voltage[0]]
    [202.29, 197.71]
    """

    ref: str
    arrangement: str = "single"
    count: int = 1
    equal_parts: bool = False
    part_values: tuple[float, ...] | None = None

    @property
    def part_refs(self) -> tuple[str, ...]:
        """Designators of the physical parts: ``("R1",)`` or ``("R1A", "R1B", ...)``."""
        if self.count == 1:
            return (self.ref,)
        return tuple(self.ref + PART_SUFFIXES[k] for k in range(self.count))

    def effective(self, part_values: np.ndarray) -> np.ndarray:
        """Effective resistance of ``(M, count)`` part values, ohm, ``(M,)``."""
        values = np.asarray(part_values, dtype=float)
        if self.arrangement == "parallel":
            return 1.0 / np.sum(1.0 / values, axis=1)  # type: ignore[no-any-return]  # numpy types this array expression as Any
        return np.sum(values, axis=1)  # type: ignore[no-any-return]  # numpy types this array expression as Any

    def equal_split(self, effective: np.ndarray) -> np.ndarray:
        """Part values ``(M, count)`` of equal parts giving ``effective`` ohm."""
        effective = np.asarray(effective, dtype=float)
        each = (effective / self.count if self.arrangement == "series"
                else effective * self.count)
        return np.repeat(each[:, None], self.count, axis=1)

    def split(self, part_values: np.ndarray, current: np.ndarray) -> PartShares:
        """Each part's current, voltage and dissipation from the position's current.

        Parameters
        ----------
        part_values : numpy.ndarray
            ``(M, count)`` ohm.
        current : numpy.ndarray
            ``(M,)`` A through the position (its sign kept).

        Notes
        -----
        Series parts carry the position's current, each seeing I·R_k; parallel
        parts share the position's voltage V = I·R_eff, each carrying V/R_k
        (Ohm's and Kirchhoff's laws).
        """
        values = np.asarray(part_values, dtype=float)
        current = np.asarray(current, dtype=float)
        if self.arrangement == "parallel":
            across = current * self.effective(values)
            part_current = across[:, None] / values
            part_voltage = np.repeat(np.abs(across)[:, None], self.count, axis=1)
        else:
            part_current = np.repeat(current[:, None], self.count, axis=1)
            part_voltage = np.abs(current)[:, None] * values
        return PartShares(current=part_current, voltage=part_voltage,
                          power=part_current * part_current * values)
