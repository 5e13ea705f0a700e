"""Linearity targets: an output that must follow a straight line over a temperature range,
within an error in °C, checked on a stated grid.
"""

from __future__ import annotations

__all__ = ["DEFAULT_GRID", "LINEARITY_KEYS", "Linearity", "read_linearity"]

import math
import re
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from synth.design.fields import ItemReader, item_label, node_pair, temperature_end
from synth.design.sensor import Sensor
from synth.errors import DesignError, nearest_name
from synth.sensors.model import outside_valid
from synth.units import parse_quantity

LINEARITY_KEYS = ("name", "sensor", "voltage", "line", "within", "grid", "note")

DEFAULT_GRID = 21
"""Grid points of a linearity target that names none (every 5 % of its range)."""

MAX_GRID = 1000
"""Most grid points a linearity target may take (each is a solve of the whole network)."""


@dataclass(frozen=True)
class Linearity:
    """The output ``V(a) - V(b)`` must follow the line through two (temperature, voltage) points.

    Attributes
    ----------
    label : str
        Name in reports.
    sensor : str
        The sensor whose temperature the line is over.
    nodes : tuple of str
        ``(a, b)``: the output voltage ``V(a) - V(b)``.
    low_c, high_c : float
        The temperature range, °C (low < high).
    low_v, high_v : float
        The output the line gives at each end, V.
    within_c : float
        Largest error allowed, °C.
    grid : int
        Points of the check's grid, both ends included, evenly spaced.

    Notes
    -----
    The error at temperature t is the temperature the output reads on the
    line minus t: ``(V(t) - line(t)) / slope``, slope in V/°C.
    """

    label: str
    sensor: str
    nodes: tuple[str, str]
    low_c: float
    high_c: float
    low_v: float
    high_v: float
    within_c: float
    grid: int

    @property
    def slope(self) -> float:
        """V/°C of the line."""
        return (self.high_v - self.low_v) / (self.high_c - self.low_c)

    def line(self, t_c: ArrayLike) -> np.ndarray:
        """The line's output at ``t_c``, V."""
        return np.asarray(self.low_v + self.slope * (np.asarray(t_c, dtype=float) - self.low_c))

    def error_c(self, t_c: ArrayLike, volts: ArrayLike) -> np.ndarray:
        """The error in °C of an output ``volts`` at ``t_c``: read-back temperature minus t_c.

        Examples
        --------
        >>> lin = Linearity("out", "RT1", ("out", "gnd"), 0.0, 100.0, 0.5, 2.5, 0.5, 11)
        >>> round(float(lin.error_c(50.0, 1.51)), 12)  # 10 mV high at 20 mV/°C
        0.5
        """
        return np.asarray((np.asarray(volts, dtype=float) - self.line(t_c)) / self.slope)

    def grid_c(self) -> np.ndarray:
        """The grid's temperatures, °C, both ends included."""
        return np.linspace(self.low_c, self.high_c, self.grid)


def _point(reader: ItemReader, raw: Any) -> tuple[float, float]:
    if not (isinstance(raw, list) and len(raw) == 2):
        reader.fail('line must be two (temperature, voltage) pairs such as '
                    '[["0 C", "0.5 V"], ["100 C", "2.5 V"]]')
    t_c = temperature_end(reader, raw[0])
    try:
        volts = parse_quantity(raw[1], "V")
    except DesignError as exc:
        reader.fail(f"line: {exc}")
    return t_c, volts


_DIFFERENCE = re.compile(r"(?P<num>[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?)\s*(°\s*C|degC|C|K)")


def _within_c(reader: ItemReader) -> float:
    """A temperature difference, °C (a kelvin is the same size)."""
    raw = reader.table.get("within")
    if raw is None:
        reader.fail('key \'within\' is missing; add the largest error in °C, such as '
                    'within = "0.5 C"')
    match = _DIFFERENCE.fullmatch(raw.strip()) if isinstance(raw, str) else None
    value = float(match["num"]) if match else math.nan
    if not (math.isfinite(value) and value > 0):
        reader.fail(f"within {raw!r} must be a positive temperature difference such as "
                    '"0.5 C"')
    return value


def read_linearity(origin: str, index: int, raw: Any, ground: str,
                   sensors: dict[str, Sensor]) -> Linearity:
    """Read one ``[[linearity]]`` table against the design's sensors.

    Raises
    ------
    DesignError
        On a missing or unknown sensor, a reversed or empty temperature range,
        a range outside the sensor model's, a grid below two points, a line
        with no slope, or a malformed value.
    """
    reader = ItemReader(origin, item_label("linearity", index, raw, key="name"), raw,
                        LINEARITY_KEYS)
    sensor = reader.text("sensor")
    if sensor not in sensors:
        reader.fail(f"sensor {sensor!r} is not a [[sensor]] of the design"
                    f"{nearest_name(sensor, sensors)}; name one")
    if not reader.has("voltage"):
        reader.fail('key \'voltage\' is missing; name the output, such as voltage = "out"')
    nodes = node_pair(reader, "voltage", ground)
    line = reader.table.get("line")
    if not (isinstance(line, list) and len(line) == 2):
        reader.fail('line must be two (temperature, voltage) pairs such as '
                    '[["0 C", "0.5 V"], ["100 C", "2.5 V"]]')
    (low_c, low_v), (high_c, high_v) = _point(reader, line[0]), _point(reader, line[1])
    if not high_c > low_c:
        reader.fail(f"temperature range {low_c:g} °C..{high_c:g} °C is "
                    f"{'empty' if high_c == low_c else 'reversed'}; give the colder end first")
    if high_v == low_v:
        reader.fail("the line's two voltages are equal; give a line with a slope")
    model = sensors[sensor].model
    if outside_valid(model, [low_c, high_c]).any():
        lo, hi = model.valid_c
        reader.fail(f"temperature range {low_c:g} °C..{high_c:g} °C leaves the {model.kind} "
                    f"model's valid range {lo:g} °C..{hi:g} °C; keep the line inside it")
    grid = raw.get("grid", DEFAULT_GRID)
    if isinstance(grid, bool) or not isinstance(grid, int) or not 2 <= grid <= MAX_GRID:
        reader.fail(f"grid {grid!r} must be a whole number of points from 2 (the two ends) "
                    f"to {MAX_GRID}")
    label = reader.text("name") if reader.has("name") else f"{nodes[0]} against {sensor}"
    return Linearity(label=label, sensor=sensor, nodes=nodes, low_c=low_c, high_c=high_c,
                     low_v=low_v, high_v=high_v, within_c=_within_c(reader), grid=grid)
