"""Reading ``[[point]]`` tables and source ranges into operating points.

A ``[[point]]`` names an operating point: the values its sources take
(``sources = {VIN = "-10 V"}``, or a range ``{VBAT = ["3.0 V", "4.2 V"]}``), the
fixed resistors whose value differs there (``resistors = {RT1 = "1.2k"}``) and
its temperature.  A ``range`` on a ``[[source]]`` makes every point run over
that range.  A range becomes its two ends (several ranges: every corner of
their box), named ``"VBAT low"`` and ``"VBAT high"`` (``"cold, VBAT low"`` for
a named point): node voltages and currents are affine in each source's value,
so their extremes over the range lie at its ends.
"""

from __future__ import annotations

__all__ = ["POINT_KEYS", "read_points", "source_range"]

from collections.abc import Mapping
from typing import Any

from synth.design.fields import ItemReader, item_label, table_array, temperature_end
from synth.design.model import OperatingPoint, Source
from synth.design.points import range_points
from synth.errors import DesignError, name_list, nearest_name
from synth.units import parse_quantity, parse_resistance

POINT_KEYS = ("name", "sources", "resistors", "temperature", "note")


def _unit(source: Source) -> str:
    return "V" if source.kind == "voltage" else "A"


def source_range(reader: ItemReader, key: str, raw: Any, unit: str) -> tuple[float, float]:
    """Read a ``[low, high]`` pair of source values (V or A), refusing a reversed range."""
    if not (isinstance(raw, list) and len(raw) == 2):
        reader.fail(f'{key} must be a pair such as ["3.0 {unit}", "4.2 {unit}"]')
    ends = []
    for end in raw:
        try:
            ends.append(parse_quantity(end, unit))
        except DesignError as exc:
            reader.fail(f"{key}: {exc}")
    low, high = ends
    if not high > low:
        reader.fail(f"range {raw[0]!r}..{raw[1]!r} is empty or reversed; give the low end "
                    "first and a high end above it")
    return low, high


def _read_point(origin: str, index: int, raw: Any, sources: Mapping[str, Source]
                ) -> tuple[OperatingPoint, dict[str, tuple[float, float]]]:
    reader = ItemReader(origin, item_label("point", index, raw, key="name"), raw, POINT_KEYS)
    name = reader.text("name")
    values: dict[str, float] = {}
    ranges: dict[str, tuple[float, float]] = {}
    given = raw.get("sources", {})
    if not isinstance(given, Mapping):
        reader.fail('sources must be a table such as sources = {VIN = "5 V"}')
    for ref, value in given.items():
        source = sources.get(ref)
        if source is None:
            reader.fail(f"sources names {ref!r}, not a source of the design"
                        f"{nearest_name(ref, sources)}; name one of "
                        f"{name_list(sorted(sources))}")
        key = f"sources.{ref}"
        if isinstance(value, list):
            ranges[ref] = source_range(reader, key, value, _unit(source))
        else:
            values[ref] = _quantity(reader, key, value, _unit(source))
    resistors: dict[str, float] = {}
    set_values = raw.get("resistors", {})
    if not isinstance(set_values, Mapping):
        reader.fail('resistors must be a table such as resistors = {RT1 = "1.2k"}')
    for ref, value in set_values.items():
        try:
            resistors[ref] = parse_resistance(value)
        except DesignError as exc:
            reader.fail(f"resistors.{ref}: {exc}")
    temperature = None
    if reader.has("temperature"):
        temperature = temperature_end(reader, raw["temperature"])  # refuses below 0 K
    return OperatingPoint(name=name, sources=values, temperature_c=temperature,
                          resistors=resistors), ranges


def _quantity(reader: ItemReader, key: str, value: Any, unit: str) -> float:
    try:
        return parse_quantity(value, unit)
    except DesignError as exc:
        reader.fail(f"{key}: {exc}")
    raise AssertionError("unreachable")


def read_points(origin: str, data: Mapping[str, Any], sources: tuple[Source, ...],
                ranges: Mapping[str, tuple[float, float]]
                ) -> tuple[tuple[OperatingPoint, ...], dict[str, str]]:
    """The operating points of a design file, each range expanded into its ends.

    Parameters
    ----------
    origin : str
        The file, for messages.
    data : mapping
        The parsed file (its ``point`` array is read).
    sources : tuple of Source
        The design's sources.
    ranges : mapping of str to (float, float)
        The ranges ``[[source]]`` tables give, V or A.

    Returns
    -------
    points : tuple of OperatingPoint
        Empty when the file has neither points nor ranges.
    base_names : dict of str to str
        The named point each end of a range came from (for targets ``at`` it).
    """
    by_ref = {s.ref: s for s in sources}
    raw_points = table_array(origin, data, "point")
    if not raw_points and not ranges:
        return (), {}
    named = [_read_point(origin, i, raw, by_ref) for i, raw in enumerate(raw_points, 1)]
    seen: set[str] = set()
    for point, _ in named:
        if point.name in seen:
            raise DesignError(f"{origin}, point {point.name!r}: another point has the same "
                              "name; give each point its own name")
        seen.add(point.name)
    if not named:
        return range_points([], ranges), {}
    points: list[OperatingPoint] = []
    base_names: dict[str, str] = {}
    for point, own in named:
        spans = {**{ref: span for ref, span in ranges.items() if ref not in point.sources},
                 **own}
        ends = range_points([point], spans) if spans else (point,)
        for end in ends:
            if end.name != point.name:
                base_names[end.name] = point.name
        points.extend(ends)
    return tuple(points), base_names
