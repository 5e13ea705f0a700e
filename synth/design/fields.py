"""Reading one item of a design file: typed keys, one-line errors naming the file and item.
"""

from __future__ import annotations

__all__ = [
    "ItemReader", "fail_item", "item_label", "node_pair", "option_names", "range_end",
    "read_ohms", "table_array", "temperature_end",
]

from collections.abc import Callable, Iterator, Mapping, Sequence
from contextlib import contextmanager
from contextvars import ContextVar
from typing import Any, NoReturn

from synth.errors import DesignError, excerpt, nearest_name
from synth.units import parse_fraction, parse_resistance, parse_temperature

_OPTION_NAMES: ContextVar[Mapping[tuple[str, str], str] | None] = ContextVar("option_names",
                                                                           default=None)


@contextmanager
def option_names(names: Mapping[tuple[str, str], str]) -> Iterator[None]:
    """While reading, refuse the key ``key`` of item ``item`` under the option it came from.

    ``names`` maps ``(item, key)`` (``("resistor RLOAD", "value")``) to the
    command-line option that wrote it (``"--load"``): a design built from a
    quick command's options is then refused in the user's words.
    """
    token = _OPTION_NAMES.set(names)
    try:
        yield
    finally:
        _OPTION_NAMES.reset(token)


def fail_item(origin: str, item: str, problem: str) -> NoReturn:
    """Raise the one-line refusal of ``item``: ``"origin, item: problem"``, or, when the
    problem is about a key a command-line option gave, ``"--option ..."``."""
    for (named, key), option in (_OPTION_NAMES.get() or {}).items():
        if named == item and (problem == key or problem.startswith((f"{key} ", f"{key}:"))):
            raise DesignError(f"{option}{problem[len(key):]}")
    raise DesignError(f"{origin}, {item}: {problem}")


_FREE_TEXT = ("title", "note", "notes")
"""Keys whose text is free (shown as written); every other text key is a name."""


class ItemReader:
    """Reads one item of a design file and phrases errors about it."""

    def __init__(self, origin: str, item: str, table: Mapping[str, Any], allowed: Sequence[str]):
        self.origin, self.item, self.table = origin, item, table
        if not isinstance(table, Mapping):
            self.fail(f"is {type(table).__name__}, not a table; write it as [{item.split()[0]}]")
        for key in table:
            if key not in allowed:
                self.fail(
                    f"unknown key {key!r}{nearest_name(key, allowed)} "
                    f"(allowed: {', '.join(allowed)})"
                )

    def fail(self, problem: str) -> NoReturn:
        fail_item(self.origin, self.item, problem)

    def node_pair(self) -> tuple[str, str]:
        """``nodes``: two distinct printable node names, stripped (a two-terminal part)."""
        nodes = self.table.get("nodes")
        if not (isinstance(nodes, list) and len(nodes) == 2
                and all(isinstance(n, str) and n.strip() and n.strip().isprintable()
                        for n in nodes)):
            self.fail('nodes must be a pair of node names such as ["in", "out"]')
        a, b = nodes[0].strip(), nodes[1].strip()
        if a == b:
            self.fail(f"both ends are on node {a!r}; connect it between two nodes")
        return a, b

    def has(self, key: str) -> bool:
        return key in self.table

    def text(self, key: str, default: str | None = None) -> str:
        if key not in self.table:
            if default is None:
                self.fail(f"key {key!r} is missing; add {key} = \"...\"")
            return default
        value = self.table[key]
        if not isinstance(value, str) or not value.strip():
            self.fail(f"{key} must be a non-empty text in quotes, not {excerpt(repr(value))}")
        if key not in _FREE_TEXT and not value.strip().isprintable():
            # a newline or tab in a designator, node or name would split report rows
            self.fail(f"{key} {excerpt(value.strip())} holds a control character (a newline, "
                      "tab, ...); write it on one line in printable characters")
        return value.strip()

    def parsed(self, key: str, parse: Callable[[Any], float], default: Any = None) -> float:
        raw = self.table.get(key, default)
        if raw is None:
            self.fail(f"key {key!r} is missing; add it")
        try:
            return parse(raw)
        except DesignError as exc:
            self.fail(f"{key}: {exc}")
        raise AssertionError("unreachable")

    def fraction(
        self, key: str, default: str, *, upper: float = 1.0, strict: bool = False
    ) -> float:
        value = self.parsed(key, parse_fraction, default)
        if value < 0 or value > upper or (strict and value == 0):
            low = "above 0 %" if strict else "0 %"
            self.fail(f"{key} {self.table.get(key, default)!r} must lie between {low} and "
                      f"{upper * 100:g} %")
        return value

    def positive(self, key: str, parse: Callable[[Any], float], default: Any = None) -> float:
        value = self.parsed(key, parse, default)
        if value <= 0:
            self.fail(f"{key} {self.table.get(key, default)!r} must be positive")
        return value


def read_ohms(raw: Any) -> float:
    return parse_resistance(raw)


def node_pair(reader: ItemReader, key: str, ground: str) -> tuple[str, str]:
    raw = reader.table[key]
    if isinstance(raw, str) and raw.strip() and raw.strip().isprintable():
        return raw.strip(), ground
    if (
        isinstance(raw, list)
        and len(raw) == 2
        and all(isinstance(n, str) and n.strip() and n.strip().isprintable() for n in raw)
    ):
        return raw[0].strip(), raw[1].strip()
    reader.fail(f"{key} must be a node name or a pair of node names such as [\"out\", \"gnd\"]")
    raise AssertionError("unreachable")


def temperature_end(reader: ItemReader, raw: Any) -> float:
    """Read one end of a temperature range, phrasing errors for the item."""
    try:
        return parse_temperature(raw)
    except DesignError as exc:
        reader.fail(f"temperature: {exc}")
    raise AssertionError("unreachable")


def range_end(reader: ItemReader, key: str, raw: Any) -> float:
    """Read one resistance inside a list, phrasing errors for the item."""
    try:
        return parse_resistance(raw)
    except DesignError as exc:
        reader.fail(f"{key}: {exc}")
    raise AssertionError("unreachable")


def table_array(origin: str, data: Mapping[str, Any], key: str) -> list[Any]:
    raw = data.get(key, [])
    if not isinstance(raw, list):
        raise DesignError(f"{origin}: {key} must be an array of tables; write each as [[{key}]]")
    return raw


def item_label(kind: str, index: int, raw: Any, key: str = "ref") -> str:
    """How errors name one table: ``"resistor R3"`` by its designator, else ``"resistor #3"``.

    Examples
    --------
    >>> item_label("resistor", 3, {"ref": "R3"}), item_label("target", 2, {}, key="name")
    ('resistor R3', 'target #2')
    """
    if isinstance(raw, Mapping) and isinstance(raw.get(key), str):
        name = raw[key]
        if key != "name" and name.isprintable() and len(name) <= 40:
            return f"{kind} {name}"
        shown = repr(name)  # quoted: a newline or control character stays on the line
        return f"{kind} {shown if len(shown) <= 42 else shown[:38] + '...' + shown[0]}"
    return f"{kind} #{index}"
