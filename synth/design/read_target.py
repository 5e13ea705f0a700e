"""Reading one ``[[target]]`` table: the quantity, its goal, window and bounds.
"""

from __future__ import annotations

__all__ = ["read_target"]

import math
from typing import Any

from synth.design.fields import (
    ItemReader,
    item_label,
    node_pair,
)
from synth.design.target import SMALLEST_GOAL, TARGET_KINDS, TARGET_UNITS, Target
from synth.errors import DesignError
from synth.units import (
    parse_decibels,
    parse_quantity,
    parse_resistance,
)

_TARGET_KEYS = (*TARGET_KINDS, "name", "equals", "within", "at_least", "at_most", "without",
                "note", "at")


def _bare_number(raw: Any) -> bool:
    """True for a number written without a unit (``1``, ``0.5`` or ``"1"``)."""
    if isinstance(raw, bool):
        return False
    if isinstance(raw, (int, float)):
        return True
    if isinstance(raw, str):
        try:
            float(raw.strip())
        except ValueError:
            return False
        return True
    return False


def _target_quantity(reader: ItemReader, kind: str, key: str) -> float:
    unit = TARGET_UNITS[kind]
    if kind == "resistance":
        return reader.parsed(key, parse_resistance)
    if kind == "ratio":
        return reader.parsed(key, _parse_ratio)
    if kind == "loss":
        return reader.parsed(key, parse_decibels)
    return reader.parsed(key, lambda t: parse_quantity(t, unit))


def _parse_ratio(raw: Any) -> float:
    if isinstance(raw, (int, float)) and not isinstance(raw, bool):
        try:
            value = float(raw)
        except OverflowError:  # an integer beyond the float range
            value = math.inf
        if math.isfinite(value):
            return value
    if isinstance(raw, str):
        try:
            value = float(raw)
        except ValueError:
            pass
        else:
            if math.isfinite(value):
                return value
    raise DesignError(f"{str(raw)[:40]!r} is not a ratio; write a plain number such as 0.25")


def read_target(origin: str, index: int, raw: Any, ground: str) -> Target:
    label = item_label("target", index, raw, key="name")
    reader = ItemReader(origin, label, raw, _TARGET_KEYS)
    kinds = [k for k in TARGET_KINDS if reader.has(k)]
    if len(kinds) != 1:
        reader.fail(f"name exactly one of {', '.join(TARGET_KINDS)} (found {len(kinds)})")
    kind = kinds[0]
    nodes: tuple[str, ...] = ()
    ref: str | None = None
    if kind in ("voltage", "resistance"):
        nodes = node_pair(reader, kind, ground)
        if nodes[0] == nodes[1]:
            reader.fail(f"{kind} between {nodes[0]!r} and itself is always zero; name two nodes")
        if kind == "resistance":
            default_label = f"resistance from {nodes[0]} to {nodes[1]}"
        elif nodes[1] == ground:
            default_label = f"voltage at {nodes[0]}"
        else:
            default_label = f"voltage from {nodes[0]} to {nodes[1]}"
    elif kind in ("ratio", "loss"):
        pair = raw[kind]
        if not (isinstance(pair, list) and len(pair) == 2):
            reader.fail(f'{kind} must be two voltages such as [["out", "gnd"], ["in", "gnd"]]')
        sub = [node_pair(ItemReader(origin, label, {kind: p}, (kind,)), kind, ground)
               for p in pair]
        nodes = sub[0] + sub[1]
        if sub[1][0] == sub[1][1]:
            reader.fail(f"the {kind}'s reference voltage is between a node and itself")
        top, bottom = (a if b == ground else f"({a} - {b})" for a, b in sub)
        default_label = (f"ratio of {top} to {bottom}" if kind == "ratio"
                         else f"loss from {bottom} to {top}")
    else:
        ref = reader.text(kind)
        default_label = f"{kind} in {ref}"
    equals = _target_quantity(reader, kind, "equals") if reader.has("equals") else None
    at_least = _target_quantity(reader, kind, "at_least") if reader.has("at_least") else None
    at_most = _target_quantity(reader, kind, "at_most") if reader.has("at_most") else None
    within_abs = within_rel = None
    if reader.has("within"):
        if equals is None:
            reader.fail("within needs equals; give the goal the window is around")
        text = raw["within"]
        if kind not in ("ratio", "loss") and _bare_number(text):
            unit = TARGET_UNITS[kind]
            reader.fail(f"within {text!r} has no unit; write it with its unit or as a share of "
                        f"the goal, such as within = \"10 m{unit}\" or \"1%\"")
        if isinstance(text, str) and text.strip().endswith(("%", "ppm")):
            within_rel = reader.fraction("within", "0%", upper=10.0, strict=True)
        else:
            within_abs = _target_quantity(reader, kind, "within")
            if within_abs < 0:
                reader.fail(f"within {str(text)[:40]!r} is negative; a window is a half-width "
                            f"on each side of the goal, write it without a sign")
            if within_abs == 0:
                reader.fail("within must be wider than zero")
    for key, size in (("equals", equals), ("within", within_abs)):
        if size is not None and size != 0 and abs(size) < SMALLEST_GOAL:
            shown = str(raw[key])
            reader.fail(f"{key} {shown[:40]!r} is too small to measure errors against (a "
                        f"non-zero goal or window is at least {SMALLEST_GOAL:g} in its unit); "
                        f"give it in its unit, or use equals = 0 with an absolute within")
    if equals is None and at_least is None and at_most is None:
        reader.fail("give equals (with an optional within), at_least or at_most")
    if equals is not None and (at_least is not None or at_most is not None):
        reader.fail("use equals (with within) or at_least/at_most, not both")
    if at_least is not None and at_most is not None and at_most < at_least:
        reader.fail(f"at_least {raw['at_least']!r} lies above at_most {raw['at_most']!r}; "
                    "swap them")
    if equals is not None and equals == 0 and within_abs is None:
        reader.fail("equals 0 has no relative error; give within as an absolute window")
    without: tuple[str, ...] = ()
    if reader.has("without"):
        if kind != "resistance":
            reader.fail("without applies to a resistance target; drop it here")
        names = raw["without"]
        if isinstance(names, str):
            names = [names]
        if not (isinstance(names, list) and names
                and all(isinstance(n, str) and n.strip() for n in names)):
            reader.fail('without must name resistors, such as without = ["RS"]')
        without = tuple(n.strip() for n in names)
    at: tuple[str, ...] | None = None
    if reader.has("at"):
        points = raw["at"]
        if isinstance(points, str):
            points = [points]
        if not (isinstance(points, list) and points
                and all(isinstance(p, str) and p.strip() for p in points)):
            reader.fail('at must name operating points, such as at = "cold" or '
                        'at = ["cold", "hot"]')
        at = tuple(dict.fromkeys(p.strip() for p in points))
    name = reader.text("name") if reader.has("name") else default_label
    return Target(label=name, kind=kind, nodes=nodes, ref=ref, equals=equals,
                  within_abs=within_abs, within_rel=within_rel, at_least=at_least,
                  at_most=at_most, unit=TARGET_UNITS[kind], without=without, at=at)
