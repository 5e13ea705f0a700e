"""Reading ``[[transfer]]`` tables: ``output = gain × input + offset`` between two points.
"""

from __future__ import annotations

__all__ = ["TRANSFER_KEYS", "read_transfer"]

from typing import Any

from synth.design.fields import ItemReader, item_label, node_pair
from synth.design.model import Design
from synth.design.transfer import Transfer
from synth.errors import DesignError
from synth.units import parse_fraction, parse_quantity

TRANSFER_KEYS = ("name", "input", "output", "points", "ends", "within", "gain", "gain_within",
                 "offset", "offset_within", "note")


def _window(reader: ItemReader, key: str, unit: str | None
            ) -> tuple[float | None, float | None]:
    """``(absolute, relative)`` half-width of a window key, either None when absent."""
    if not reader.has(key):
        return None, None
    raw = reader.table[key]
    if isinstance(raw, str) and raw.strip().endswith(("%", "ppm")):
        share = reader.parsed(key, parse_fraction)
        if not share > 0:
            reader.fail(f"{key} must be wider than zero")
        return None, share
    size = reader.parsed(key, _number if unit is None else
                         (lambda t: parse_quantity(t, unit)))
    if not size > 0:
        reader.fail(f"{key} {str(raw)[:40]!r} must be a positive half-width (no sign)")
    return size, None


def _number(raw: Any) -> float:
    if isinstance(raw, bool) or not isinstance(raw, (int, float, str)):
        raise DesignError(f"{raw!r} is not a number; write it such as 0.155")
    try:
        value = float(raw)
    except ValueError:
        raise DesignError(f"{str(raw)[:40]!r} is not a number; write it such as 0.155") from None
    return value


def read_transfer(origin: str, index: int, raw: Any, design: Design) -> Transfer:
    """Read one ``[[transfer]]`` table of a design of operating points.

    The points default to the design's two points when it has exactly two.
    """
    reader = ItemReader(origin, item_label("transfer", index, raw, key="name"), raw,
                        TRANSFER_KEYS)
    name = reader.text("name") if reader.has("name") else f"transfer {index}"
    ground = design.ground
    if not reader.has("input"):
        reader.fail('key \'input\' is missing; name a source (input = "VIN") or a node')
    raw_input = raw["input"]
    single = design.single
    sources = {s.ref for s in single.sources} if single is not None else set()
    if isinstance(raw_input, str) and raw_input.strip() in sources:
        source_input: str | tuple[str, str] = raw_input.strip()
    else:
        source_input = node_pair(reader, "input", ground)
    if not reader.has("output"):
        reader.fail('key \'output\' is missing; name the output node (output = "adc")')
    output = node_pair(reader, "output", ground)
    if reader.has("points"):
        pair = raw["points"]
        if not (isinstance(pair, list) and len(pair) == 2
                and all(isinstance(p, str) and p.strip() for p in pair)):
            reader.fail('points must name two operating points, such as points = ["low", "high"]')
        points = (pair[0].strip(), pair[1].strip())
    elif len(design.points) == 2:
        points = (design.points[0].name, design.points[1].name)
    else:
        reader.fail(f"the design has {len(design.points)} operating points; name the two this "
                    'transfer runs between, such as points = ["low", "high"]')
    ends = None
    if reader.has("ends"):
        pair = raw["ends"]
        if not (isinstance(pair, list) and len(pair) == 2):
            reader.fail('ends must be the output at each point, such as ends = ["0.1 V", "3.2 V"]')
        ends = (reader.parsed("ends", lambda _: parse_quantity(pair[0], "V")),
                reader.parsed("ends", lambda _: parse_quantity(pair[1], "V")))
    elif reader.has("within"):
        reader.fail("within is the window of each end; give ends, or use gain_within and "
                    "offset_within")
    within, within_rel = _window(reader, "within", "V")
    gain = reader.parsed("gain", _number) if reader.has("gain") else None
    if gain is None and reader.has("gain_within"):
        reader.fail("gain_within needs gain; give the gain the window is around")
    gain_within, gain_within_rel = _window(reader, "gain_within", None)
    offset = (reader.parsed("offset", lambda t: parse_quantity(t, "V"))
              if reader.has("offset") else None)
    if offset is None and reader.has("offset_within"):
        reader.fail("offset_within needs offset; give the offset the window is around")
    offset_within, offset_within_rel = _window(reader, "offset_within", "V")
    if ends is not None and 0.0 in ends and within is None:
        reader.fail("an end of 0 V has no relative error; give within with a unit, such as "
                    '"5 mV"')
    if ends is None and gain is None and offset is None:
        reader.fail("give ends (the output at each point), gain or offset")
    if gain == 0 and gain_within is None:
        reader.fail("gain 0 has no relative error; give gain_within as an absolute window")
    if offset == 0 and offset_within is None:
        reader.fail("offset 0 has no relative error; give offset_within with a unit, such as "
                    '"5 mV"')
    return Transfer(name=name, input=source_input, output=output, points=points, ends=ends,
                    ends_within=within, ends_within_rel=within_rel, gain=gain,
                    gain_within=gain_within, gain_within_rel=gain_within_rel, offset=offset,
                    offset_within=offset_within, offset_within_rel=offset_within_rel)
