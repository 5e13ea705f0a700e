"""Keys of a sweep: one value of a design file's tables named ``TABLE.ITEM.FIELD``.

``rnsynth sweep --over KEY=...`` names the value it steps by a key:
``source.VBAT.value``, ``resistor.RLOAD.value``, ``target.2.equals`` (an item by its
designator, a target's name or label, or its 1-based position) or ``design.ambient``.
:func:`place_of` finds where a key points in the tables as ``tomllib`` reads them
(refusing a key that names nothing, in one line that names the key), and
:func:`edit_tables` gives a copy of the tables with values set at such places.
Nothing here reads values or runs a design: that is :mod:`synth.sweep`'s job.
"""

from __future__ import annotations

__all__ = ["ARRAYS", "TABLES", "edit_tables", "place_of"]

import copy
from collections.abc import Mapping, Sequence
from typing import Any

from synth.design.model import Design
from synth.errors import DesignError, excerpt, nearest_name

ARRAYS = {"source": "ref", "resistor": "ref", "regulator": "ref", "controlled": "ref",
          "transistor": "ref", "amplifier": "ref", "target": "name", "point": "name"}
"""The design file's arrays of tables, and the key that names an item of each."""

TABLES = ("design", *ARRAYS)
"""The tables a key may start with."""


def _item(tables: Mapping[str, Any], design: Design, key: str, table: str, name: str
          ) -> tuple[int, str]:
    """The position of the item ``name`` of ``table`` in the file, and how messages name it."""
    items = tables.get(table)
    if not isinstance(items, list) or not items:
        raise DesignError(f"--over {key}: the design has no [[{table}]]; name one of "
                          f"{', '.join(t for t in ARRAYS if tables.get(t))}")
    naming = ARRAYS[table]
    names = [str(item.get(naming, "")) if isinstance(item, Mapping) else "" for item in items]
    if name in names:
        return names.index(name), f"{table} {name}"
    if table == "target" and len(design.targets) == len(items):
        # (with operating points the design's targets are per point, not per table)
        labels = [t.label for t in design.targets]
        if name in labels:
            return labels.index(name), f"target {name}"
        names = [n or label for n, label in zip(names, labels, strict=False)]
    digits = name.removeprefix("#")
    if digits.isdigit() and 1 <= int(digits) <= len(items):
        return int(digits) - 1, f"{table} #{int(digits)}"
    raise DesignError(f"--over {key}: the design has no {table} {excerpt(name, quoted=True)}"
                      f"{nearest_name(name, [n for n in names if n])}; name it by its "
                      f"{naming} or its position (1 to {len(items)})")


def place_of(tables: Mapping[str, Any], design: Design, key: str) -> tuple[str, int | None, str]:
    """Where ``key`` points: (table, item position or None for [design], field).

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> tables = {"source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                       "value": "12 V"}],
    ...           "resistor": [{"ref": "R1", "nodes": ["in", "gnd"], "value": "1k"}]}
    >>> design = design_from_dict(tables)
    >>> place_of(tables, design, "source.V1.value"), place_of(tables, design, "design.ambient")
    (('source', 0, 'value'), ('design', None, 'ambient'))
    >>> edit_tables(tables, [("source", 0, "value")], ["15 V"])["source"][0]["value"]
    '15 V'
    """
    table, _, rest = key.partition(".")
    if table not in TABLES:
        raise DesignError(f"--over {key}: {excerpt(table, quoted=True)} is not a table of a "
                          f"design file{nearest_name(table, TABLES)}; start the key with one "
                          f"of {', '.join(TABLES)}")
    if table == "design":
        if not rest or "." in rest:
            raise DesignError(f"--over {key}: write design.FIELD, e.g. design.ambient")
        return table, None, rest
    name, dot, field = rest.rpartition(".")
    if not dot or not name or not field:
        raise DesignError(f"--over {key}: write {table}.ITEM.FIELD, e.g. "
                          f"{table}.{'1' if table == 'target' else 'R1'}.value")
    index, _ = _item(tables, design, key, table, name)
    value = tables[table][index].get(field)
    if isinstance(value, (list, dict)):
        raise DesignError(f"--over {key}: {field} holds a list or table, not one value; "
                          "sweep a key that holds one value")
    return table, index, field


def edit_tables(tables: Mapping[str, Any], places: Sequence[tuple[str, int | None, str]],
                values: Sequence[str | float]) -> dict[str, Any]:
    """A copy of ``tables`` with each place ``(table, item, field)`` set to its value."""
    edited = copy.deepcopy(dict(tables))
    for (table, index, field), value in zip(places, values, strict=True):
        if index is None:
            section = edited.setdefault(table, {})
            if not isinstance(section, dict):
                raise DesignError(f"--over {table}.{field}: [design] is not a table; "
                                  "write it as [design]")
            section[field] = value
        else:
            edited[table][index][field] = value
    return edited
