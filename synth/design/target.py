"""A target: what is measured, its goal, window and bounds, and THE rule for its error."""

from __future__ import annotations

__all__ = ["SMALLEST_GOAL", "TARGET_KINDS", "TARGET_UNITS", "Target"]

import math
from dataclasses import dataclass

import numpy as np

TARGET_KINDS = ("voltage", "current", "ratio", "power", "resistance", "loss")
TARGET_UNITS = {"voltage": "V", "current": "A", "power": "W", "resistance": "Ω", "ratio": "",
                "loss": "dB"}

SMALLEST_GOAL = 1e-100
"""Least size of a non-zero goal and of an absolute window, in the target's unit: errors are
measured in units of them, and below this a value of the network (up to 1e200 V or A) would
give an error beyond the float range (70 orders of magnitude below a quectovolt)."""

@dataclass(frozen=True)
class Target:
    """One requirement on the network.

    Attributes
    ----------
    label : str
        Name shown in tables, e.g. ``"voltage at sense"`` or the user's ``name``.
    kind : {"voltage", "current", "ratio", "power", "resistance"}
        What is measured.
    nodes : tuple of str
        ``(a, b)`` for a voltage or resistance, ``(a, b, c, d)`` for a ratio
        ``(V(a) - V(b)) / (V(c) - V(d))``; empty for current and power.
    ref : str or None
        The part a current or power target names.
    equals : float or None
        Goal value (V, A, W, ohm, or a plain ratio).
    within_abs, within_rel : float or None
        Half-width of the hard window around ``equals`` (absolute, or relative).
    at_least, at_most : float or None
        Bounds.
    unit : str
        Unit symbol for display.
    without : tuple of str
        For a resistance: the positions left out (opened) while it is measured,
        so a port's match is the resistance the network presents, not in
        parallel with its own termination.
    at : tuple of str or None
        The operating points it applies at (``at`` in the file); None for
        every point.
    point : str or None
        In a design of operating points: the point this copy of the target
        is measured at (its label ends ``" @ point"``); None otherwise.
    input_refs : tuple of str
        For a ``gain`` or ``offset`` (:mod:`synth.design.transfer`) whose input
        is a current source: its copies at the two points (their currents are
        the input); empty otherwise.
    reading : tuple of (str, float), or None
        For a target judged in another quantity (a linearity grid point, judged
        in °C): that quantity's unit and how much of the target's unit one of
        it is (V per °C, the line's slope).  Its error is then ``(value -
        goal) / per`` in that unit, never relative, and one unit of its
        objective is its half window (an absolute ``within`` is required).

    Notes
    -----
    A ``gain`` or ``offset`` target (:data:`synth.design.transfer.TRANSFER_KINDS`)
    measures ``output = gain × input + offset`` through two operating points:
    ``nodes`` holds the output's node pair at each point, then (for a
    voltage input) the input's node pair at each point.
    """

    label: str
    kind: str
    nodes: tuple[str, ...]
    ref: str | None
    equals: float | None
    within_abs: float | None
    within_rel: float | None
    at_least: float | None
    at_most: float | None
    unit: str
    without: tuple[str, ...] = ()
    at: tuple[str, ...] | None = None
    point: str | None = None
    input_refs: tuple[str, ...] = ()
    reading: tuple[str, float] | None = None

    @property
    def bounds(self) -> tuple[float, float]:
        """The hard window ``(low, high)``: ``within`` and the bounds combined."""
        low, high = -math.inf, math.inf
        if self.equals is not None:
            half = None
            if self.within_abs is not None:
                half = self.within_abs
            elif self.within_rel is not None:
                half = abs(self.equals) * self.within_rel
            if half is not None:
                low, high = self.equals - half, self.equals + half
        if self.at_least is not None:
            low = max(low, self.at_least)
        if self.at_most is not None:
            high = min(high, self.at_most)
        return low, high

    @property
    def relative(self) -> bool:
        """True when the error is relative: the target has a non-zero goal (and no ``reading``)."""
        return self.equals is not None and self.equals != 0 and self.reading is None

    @property
    def scale(self) -> float:
        """What one unit of the ranking objective means for this target.

        ``|equals|`` for a non-zero goal (the objective is then the relative
        error); the half window for a zero goal (a zero goal needs an absolute
        ``within``); for bound-only targets the largest finite bound (or 1),
        used to rank violations.
        """
        if self.relative:
            return abs(self.equals or 0.0)
        if self.within_abs is not None:
            return self.within_abs
        low, high = self.bounds
        finite = [abs(b) for b in (low, high) if math.isfinite(b) and b != 0]
        return max(finite) if finite else 1.0

    def error(self, value: np.ndarray | float) -> np.ndarray:
        """The error of achieved values against the goal: THE rule for every report.

        Relative, ``(value - goal) / |goal|``, for a non-zero goal; absolute,
        ``value - goal`` in the target's unit, for a zero goal (a bridge null
        is judged in µV, not in per cent).  NaN when there is no goal.

        Examples
        --------
        >>> t = Target("out", "voltage", ("out", "gnd"), None, 5.0, None, 0.01, None, None, "V")
        >>> round(float(t.error(5.05)), 12)
        0.01
        """
        value = np.asarray(value, dtype=float)
        if self.equals is None:
            return np.full(value.shape, np.nan)
        if self.reading is not None:
            return (value - self.equals) / self.reading[1]
        if self.equals == 0:
            return value - 0.0
        return (value - self.equals) / abs(self.equals)

    def objective(self, value: np.ndarray | float) -> np.ndarray:
        """``|value - goal| / scale``: this target's term of the ranking objective."""
        value = np.asarray(value, dtype=float)
        if self.equals is None:
            return np.zeros(value.shape)
        return np.abs(value - self.equals) / self.scale
