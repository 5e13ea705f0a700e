"""Reading one ``[[resistor]]`` table into a resistor position and its parts.
"""

from __future__ import annotations

__all__ = ["read_resistor"]

from collections.abc import Mapping
from pathlib import Path
from typing import Any

import numpy as np

from synth.catalog.packages import PackageRating
from synth.catalog.series import catalog_dir, load_series
from synth.design.fields import (
    ItemReader,
    item_label,
    range_end,
    read_ohms,
)
from synth.design.model import Resistor
from synth.design.position import MAX_PARTS, Position
from synth.design.read_classes import read_part_classes
from synth.errors import DesignError, name_list, nearest_name
from synth.inputs import present
from synth.units import (
    parse_tcr,
)

_RESISTOR_KEYS = (
    "ref", "nodes", "value", "choose", "range", "tolerance", "tcr", "package", "combine", "parts",
    "equal_parts", "bom", "note", "classes", "array", "class",
)


def _resolve_stock(origin: str, reader: ItemReader, choose: str) -> Path:
    base = Path(origin).parent if origin and not origin.startswith("<") else Path.cwd()
    for candidate in (base / choose, Path(choose), catalog_dir() / choose):
        if present(candidate) and candidate.is_file():
            return candidate.resolve()
    reader.fail(f"stock file {choose!r} was not found beside the design file or in catalogs/; "
                "check the path")
    raise AssertionError("unreachable")


def read_resistor(origin: str, index: int, raw: Any, settings: dict[str, Any],
                   packages: Mapping[str, PackageRating]) -> Resistor:
    reader = ItemReader(origin, item_label("resistor", index, raw), raw, _RESISTOR_KEYS)
    ref = reader.text("ref")
    a, b = reader.node_pair()
    part_values: tuple[float, ...] | None = None
    raw_value = raw.get("value")
    if isinstance(raw_value, list):
        if not raw.get("combine"):
            reader.fail('value is a list of part values only for a position of several parts; '
                        'add combine = "series" or "parallel", or give one value')
        part_values = tuple(_part_value(reader, v) for v in raw_value)
        value = None
    else:
        value = reader.positive("value", read_ohms) if reader.has("value") else None
    choose = reader.text("choose") if reader.has("choose") else None
    stock_path: Path | None = None
    span: tuple[float, float] | None = None
    series_tolerance: float | None = None
    classed = read_part_classes(reader, settings)
    if classed is not None:  # free: it stands as its cheapest class until one is chosen
        choose, stock_path = classed.base.choose, classed.base.stock_path
    if choose is None:
        if value is None and part_values is None:
            reader.fail('give a value (value = "10k") or let rnsynth choose one (choose = "E96")')
        if reader.has("range"):
            reader.fail("range applies only to a part rnsynth chooses; add choose = \"E96\"")
        if reader.has("combine") and part_values is None:
            reader.fail('a fixed position of several parts lists each part\'s value, such as '
                        'value = ["442k", "432k"]; or add choose = "E96"')
    else:
        if classed is None and choose.lower().endswith(".csv"):
            stock_path = _resolve_stock(origin, reader, choose)
        elif classed is None:
            try:
                series = load_series(choose)
            except DesignError as exc:
                reader.fail(f"choose: {exc}, or name a stock file ending in .csv")
            choose = series.name
            series_tolerance = series.tolerance
        if reader.has("range"):
            ends = raw["range"]
            if not (isinstance(ends, list) and len(ends) == 2):
                reader.fail('range must be a pair such as ["1k", "100k"]')
            low, high = (range_end(reader, "range", e) for e in ends)
            if low <= 0 or high <= 0:
                reader.fail(f"range {ends[0]!r}..{ends[1]!r} must be positive")
            if high < low:
                reader.fail(f"range {ends[0]}..{ends[1]} is empty; give the low end first")
            span = (low, high)
        elif stock_path is None:
            reader.fail('a part chosen from a series needs a range such as range = ["1k", "1M"]')
    position = _read_position(reader, raw, ref, part_values)
    if part_values is not None:
        value = float(position.effective(np.array([part_values]))[0])
    if classed is not None:
        tolerance = classed.base.tolerance
    elif reader.has("tolerance"):
        tolerance = reader.fraction("tolerance", "0%", upper=0.99)
    elif series_tolerance is not None:
        tolerance = series_tolerance
    else:
        tolerance = settings["default_tolerance"]
    if classed is not None and classed.base.tcr is not None:
        tcr = classed.base.tcr
    else:
        tcr = reader.parsed("tcr", parse_tcr) if reader.has("tcr") else settings["default_tcr"]
    bom = raw.get("bom", True)
    if not isinstance(bom, bool):
        reader.fail(f"bom must be true or false, not {bom!r}")
    # a part left off the BOM models something else (a load, a sensor, a termination): the
    # design's default package does not rate it, only a package given on the part itself
    default_package = settings["default_package"] if bom else None
    package = reader.text("package") if reader.has("package") else default_package
    if package is not None and package not in packages:
        hint = nearest_name(package, packages)
        reader.fail(f"package {package!r} is not in the package table{hint}; "
                    f"use one of {name_list(sorted(packages))} or add a row to your table")
    # a matched array's member: the array sets tolerance, TCR and package (synth.design.array)
    array = reader.text("array") if reader.has("array") else None
    return Resistor(
        ref=ref, nodes=(a, b), value=value, choose=choose, stock_path=stock_path, range=span,
        tolerance=tolerance, tcr=tcr, package=package, position=position, bom=bom,
        classes=classed.classes if classed is not None else (),
        array=array,
    )


def _part_value(reader: ItemReader, raw: Any) -> float:
    value = range_end(reader, "value", raw)
    if value <= 0:
        reader.fail(f"value {raw!r} must be positive")
    return value


def _read_position(reader: ItemReader, raw: Mapping[str, Any], ref: str,
                   part_values: tuple[float, ...] | None) -> Position:
    """The position's parts: ``combine``, ``parts`` and ``equal_parts``."""
    combine = raw.get("combine")
    if combine is None:
        for key in ("parts", "equal_parts"):
            if key in raw:
                reader.fail(f'{key} applies to a position of several parts; add combine = '
                            '"series" or "parallel"')
        return Position(ref)
    if combine not in ("series", "parallel"):
        reader.fail(f"combine {combine!r} is not known; use \"series\" or \"parallel\"")
    count = raw.get("parts", len(part_values) if part_values is not None else 2)
    if isinstance(count, bool) or not isinstance(count, int) or not 2 <= count <= MAX_PARTS:
        reader.fail(f"parts {count!r} must be a whole number from 2 to {MAX_PARTS}")
    if part_values is not None and len(part_values) != count:
        reader.fail(f"value lists {len(part_values)} part values but parts is {count}; "
                    "give one value per part")
    equal = raw.get("equal_parts", False)
    if not isinstance(equal, bool):
        reader.fail(f"equal_parts must be true or false, not {equal!r}")
    if equal and part_values is not None and len(set(part_values)) > 1:
        reader.fail("equal_parts = true but the part values differ; give equal values")
    return Position(ref, arrangement=combine, count=count, equal_parts=equal,
                    part_values=part_values)
