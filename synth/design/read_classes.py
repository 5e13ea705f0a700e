"""Reading part classes in a design file: ``[design] classes`` and ``class_table``, and a
resistor's own ``classes``.

A resistor with classes is free: rnsynth may buy it in any of them (see
:mod:`synth.catalog.part_classes`).  Until a class is chosen (``rnsynth check``) it
stands as the class its ``class`` key names, else its cheapest: that class's values,
tolerance and TCR.
"""

from __future__ import annotations

__all__ = ["ClassedPart", "read_class_settings", "read_part_classes"]

from collections.abc import Mapping
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

from synth.catalog.part_classes import PartClass, load_class_table
from synth.design.fields import ItemReader
from synth.errors import DesignError, name_list, nearest_name
from synth.inputs import present, require_suffix


@dataclass(frozen=True)
class ClassedPart:
    """What a resistor's classes set: its classes and the class it stands as until one is chosen.

    Attributes
    ----------
    classes : tuple of PartClass
        The classes it may be bought in, as the design lists them.
    base : PartClass
        The class it stands as until one is chosen: the one ``class`` names, else the
        cheapest (ties: the first listed).
    """

    classes: tuple[PartClass, ...]
    base: PartClass


def _names(reader: ItemReader, key: str) -> tuple[str, ...]:
    raw = reader.table[key]
    if (not isinstance(raw, list) or not raw
            or not all(isinstance(n, str) and n.strip() for n in raw)):
        reader.fail(f'{key} must be a list of class names such as ["1%", "0.1%"]')
    names = tuple(n.strip() for n in raw)
    for k, name in enumerate(names):
        if name in names[:k]:
            reader.fail(f"{key} names class {name!r} twice; name each class once")
    return names


def read_class_settings(reader: ItemReader, settings: dict[str, Any]) -> None:
    """Put ``[design] classes`` (names) and ``class_table`` (a path as written) in ``settings``."""
    settings["default_classes"] = _names(reader, "classes") if reader.has("classes") else None
    settings["class_table"] = reader.text("class_table") if reader.has("class_table") else None
    settings["class_table_item"] = reader.item


def _table(origin: str, settings: Mapping[str, Any]) -> Mapping[str, PartClass]:
    written = settings.get("class_table")
    if written is None:
        return load_class_table()
    item = settings.get("class_table_item", "[design]")
    require_suffix(written, "class table", f"{origin}, {item}")
    base = Path(origin).parent if not origin.startswith("<") else Path.cwd()
    path = base / written
    if not present(path) or not path.is_file():
        raise DesignError(f"{origin}, {item}: class table {written!r} was not found; "
                          "check the path")
    try:
        return load_class_table(path)
    except DesignError as exc:
        raise DesignError(f"{origin}, {item}: {exc}") from None


def read_part_classes(reader: ItemReader, settings: Mapping[str, Any]) -> ClassedPart | None:
    """A resistor's classes: its own ``classes``, or the design's for a part with a range and
    no ``choose``; None when it has none.

    Raises
    ------
    DesignError
        On an unknown class name (with the nearest), ``choose``, ``tolerance`` or ``tcr``
        beside ``classes``, a part of series classes without a range, or a ``class`` that
        is not one of the part's classes.
    """
    if reader.has("classes"):
        names = _names(reader, "classes")
    elif (settings.get("default_classes") and reader.has("range")
          and not reader.has("choose") and not reader.has("array")):
        names = settings["default_classes"]
    else:
        return None
    for key in ("choose", "tolerance", "tcr"):
        if reader.has(key):
            reader.fail(f"{key} and classes both set the part's "
                        f"{'values' if key == 'choose' else key}; the classes give it, "
                        f"drop {key}")
    table = _table(reader.origin, settings)
    classes = []
    for name in names:
        if name not in table:
            reader.fail(f"class {name!r} is not in the class table{nearest_name(name, table)}; "
                        f"use one of {name_list(table)} or add a row to your table")
        found = table[name]
        # a class that gives no TCR takes the design's
        classes.append(found if found.tcr is not None
                       else replace(found, tcr=settings["default_tcr"]))
    if not reader.has("range") and any(c.stock_path is None for c in classes):
        reader.fail('a part chosen by class needs a range such as range = ["1k", "1M"]')
    if reader.has("class"):  # the class check uses, as value is the value it uses
        named = reader.text("class")
        picked = [c for c in classes if c.name == named]
        if not picked:
            reader.fail(f"class {named!r} is not one of the part's classes "
                        f"({', '.join(c.name for c in classes)}); name one of them")
        return ClassedPart(classes=tuple(classes), base=picked[0])
    base = min(enumerate(classes), key=lambda kc: (kc[1].cost, kc[0]))[1]
    return ClassedPart(classes=tuple(classes), base=base)
