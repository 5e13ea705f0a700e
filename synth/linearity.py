"""How closely a design's output follows its linearity targets' lines, in °C, on the stated grid
and refined near the largest deviation.
"""

from __future__ import annotations

__all__ = ["REFINE_POINTS", "REFINE_ROUNDS", "LinearityCheck", "check_linearity",
           "linearity_volts"]

from dataclasses import dataclass

import numpy as np

from synth.circuit.measure import Evaluator
from synth.design.linearity import Linearity
from synth.design.model import Design
from synth.rating import LIMIT_SLACK

REFINE_ROUNDS = 3
"""Rounds of refinement around the largest deviation."""

REFINE_POINTS = 16
"""Temperatures solved per round, evenly spaced between the worst point's neighbours."""


@dataclass(frozen=True)
class LinearityCheck:
    """A linearity target's errors for one set of values.

    Attributes
    ----------
    label, sensor : str
    within_c : float
        Largest error allowed, °C.
    grid_c, grid_error_c : numpy.ndarray
        The grid's temperatures and the error at each, °C.
    refined_c, refined_error_c : numpy.ndarray
        The temperatures added near the largest deviation and their errors, °C.
    worst_c, worst_error_c : float
        Where the largest error lies over the grid and the refinement, and its signed size, °C.
    grid_worst_error_c : float
        The largest error on the grid alone (what a search over the grid minimises), °C.
    """

    label: str
    sensor: str
    within_c: float
    grid_c: np.ndarray
    grid_error_c: np.ndarray
    refined_c: np.ndarray
    refined_error_c: np.ndarray
    worst_c: float
    worst_error_c: float
    grid_worst_error_c: float

    @property
    def met(self) -> bool:
        """True when the largest error, refinement included, is within the allowed error."""
        return abs(self.worst_error_c) <= self.within_c * (1 + LIMIT_SLACK)

    @property
    def curve(self) -> tuple[np.ndarray, np.ndarray]:
        """Every temperature solved, sorted, and its error (°C, °C): for plotting."""
        t = np.concatenate([self.grid_c, self.refined_c])
        e = np.concatenate([self.grid_error_c, self.refined_error_c])
        order = np.argsort(t, kind="stable")
        return t[order], e[order]


def linearity_volts(design: Design, evaluator: Evaluator, linearity: Linearity,
                    positions: np.ndarray, t_c: np.ndarray) -> np.ndarray:
    """The output ``V(a) - V(b)`` at each temperature, V, for one set of position values.

    Parameters
    ----------
    positions : numpy.ndarray
        ``(resistors,)`` effective ohm, the design's resistor order (the
        sensor's column is replaced by its model's value at each temperature).
    t_c : numpy.ndarray
        ``(K,)`` temperatures, °C.
    """
    sensor = next(s for s in design.sensors if s.ref == linearity.sensor)
    rows = np.tile(np.asarray(positions, dtype=float), (len(t_c), 1))
    rows[:, evaluator.resistor_index[sensor.ref]] = sensor.model.resistance(t_c)
    nodes = evaluator.evaluate(rows, parts=False).solution.node_voltages
    a, b = (evaluator.node_index[n] for n in linearity.nodes)
    return np.asarray(nodes[:, a] - nodes[:, b])


def check_linearity(design: Design, linearity: Linearity, positions: np.ndarray,
                    evaluator: Evaluator | None = None, *, rounds: int = REFINE_ROUNDS,
                    points: int = REFINE_POINTS) -> LinearityCheck:
    """Check a linearity target on its grid, then refine near the largest deviation.

    Parameters
    ----------
    design : Design
        A design with operating points is judged on its single network
        (``design.single``), the sensor at each temperature.
    linearity : Linearity
        One of ``design.linearities``.
    positions : numpy.ndarray
        ``(resistors,)`` effective ohm of every position of the single network.
    evaluator : Evaluator, optional
        Bound to the single network (built when not given).
    rounds, points : int
        Refinement: ``rounds`` times, ``points`` temperatures evenly between the
        current worst temperature's neighbours.

    Returns
    -------
    LinearityCheck

    Notes
    -----
    The grid is what the search judges; the refinement looks between grid
    points, where the error of a smooth curve peaks, so the reported largest
    error is never smaller than the grid's.
    """
    design = design.single or design
    ev = evaluator or Evaluator(design)
    grid = linearity.grid_c()
    grid_error = linearity.error_c(grid, linearity_volts(design, ev, linearity, positions, grid))
    ts, es = [grid], [grid_error]
    worst = int(np.argmax(np.abs(grid_error)))
    low = grid[max(worst - 1, 0)]
    high = grid[min(worst + 1, len(grid) - 1)]
    for _ in range(rounds):
        fine = np.linspace(low, high, points + 2)[1:-1]
        error = linearity.error_c(fine, linearity_volts(design, ev, linearity, positions, fine))
        ts.append(fine)
        es.append(error)
        k = int(np.argmax(np.abs(error)))
        step = (high - low) / (points + 1)
        low, high = max(fine[k] - step, low), min(fine[k] + step, high)
    all_t, all_e = np.concatenate(ts), np.concatenate(es)
    at = int(np.argmax(np.abs(all_e)))
    return LinearityCheck(
        label=linearity.label, sensor=linearity.sensor, within_c=linearity.within_c,
        grid_c=grid, grid_error_c=grid_error, refined_c=np.concatenate(ts[1:]),
        refined_error_c=np.concatenate(es[1:]), worst_c=float(all_t[at]),
        worst_error_c=float(all_e[at]),
        grid_worst_error_c=float(grid_error[int(np.argmax(np.abs(grid_error)))]))
