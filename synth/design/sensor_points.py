"""Sensors at operating points: each point's temperature sets every sensor's value, and each
linearity target becomes one point per grid temperature with a target there judged in °C.
"""

from __future__ import annotations

__all__ = ["grid_point_name", "sensor_points"]

from collections.abc import Sequence
from dataclasses import replace

from synth.design.linearity import Linearity
from synth.design.model import OperatingPoint
from synth.design.sensor import Sensor
from synth.design.target import TARGET_UNITS, Target
from synth.errors import DesignError


def grid_point_name(linearities: Sequence[Linearity], index: int, t_c: float) -> str:
    """The name of linearity target ``index``'s grid point at ``t_c``: ``"12.5 °C"``, or
    ``"2: 12.5 °C"`` in a design of several linearity targets.

    Examples
    --------
    >>> grid_point_name([None], 0, 12.5), grid_point_name([None, None], 1, -40.0)
    ('12.5 °C', '2: -40 °C')
    """
    text = f"{t_c:.6g} °C"
    return text if len(linearities) == 1 else f"{index + 1}: {text}"


def _at_temperature(origin: str, point: OperatingPoint, sensors: Sequence[Sensor]
                    ) -> OperatingPoint:
    """The point with every sensor's value at its temperature (unless the point sets it)."""
    if point.temperature_c is None or not sensors:
        return point
    values = dict(point.resistors)
    for sensor in sensors:
        low, high = sensor.model.valid_c
        if not low <= point.temperature_c <= high:
            raise DesignError(f"{origin}, point {point.name!r}: temperature "
                              f"{point.temperature_c:g} °C lies outside sensor {sensor.ref}'s "
                              f"{sensor.kind} model's valid range {low:g} °C..{high:g} °C; "
                              "keep the point inside it")
        values.setdefault(sensor.ref, float(sensor.model.resistance(point.temperature_c)))
    return replace(point, resistors=values)


def sensor_points(origin: str, points: Sequence[OperatingPoint], sensors: Sequence[Sensor],
                  linearities: Sequence[Linearity]
                  ) -> tuple[tuple[OperatingPoint, ...], tuple[Target, ...]]:
    """The design's points with the sensors set, then each linearity target's grid points.

    Parameters
    ----------
    origin : str
        The file, for messages.
    points : sequence of OperatingPoint
        The points the file states (range ends expanded).
    sensors, linearities : sequence
        The design's sensors and linearity targets.

    Returns
    -------
    points : tuple of OperatingPoint
        The file's points (each sensor at the point's temperature), then one
        point per grid temperature of each linearity target, named by
        :func:`grid_point_name`, with that temperature and every sensor's value at it.
    targets : tuple of Target
        One per grid point: the output equals the line's value there, within
        the slope times ``within`` (V), judged in °C (``reading``), at that point only.

    Raises
    ------
    DesignError
        A point's temperature outside a sensor model's valid range.
    """
    out = [_at_temperature(origin, p, sensors) for p in points]
    targets: list[Target] = []
    for index, lin in enumerate(linearities):
        for t_c in lin.grid_c():
            name = grid_point_name(linearities, index, float(t_c))
            out.append(_at_temperature(origin, OperatingPoint(name=name, temperature_c=float(t_c)),
                                       sensors))
            targets.append(Target(
                label=lin.label, kind="voltage", nodes=lin.nodes, ref=None,
                equals=float(lin.line(t_c)), within_abs=abs(lin.slope) * lin.within_c,
                within_rel=None, at_least=None, at_most=None, unit=TARGET_UNITS["voltage"],
                at=(name,), reading=("°C", lin.slope)))
    return tuple(out), tuple(targets)
