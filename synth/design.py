"""Design files: rnsynth's TOML structure, read and validated into frozen records.

A design file has one ``[design]`` table and arrays of tables ``[[source]]``,
``[[resistor]]``, ``[[regulator]]`` and ``[[target]]``.  Every key is listed in
``docs/design-file.md``.  Values are written as engineers write them
(``"4k7"``, ``"13.8 V"``, ``"1%"``) and read by :mod:`synth.units`.

Everything a user can get wrong is caught here or in :mod:`synth.network` with
a one-line :class:`~synth.errors.DesignError` naming the file, the item and the
fix; nothing downstream has to re-check input.
"""

from __future__ import annotations

__all__ = [
    "TARGET_KINDS",
    "Design",
    "Regulator",
    "Resistor",
    "Source",
    "Target",
    "design_from_dict",
    "load_design",
]

import math
import tomllib
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from synth.catalogs import PackageRating, catalog_dir, load_package_table, load_series
from synth.errors import DesignError, nearest_name
from synth.units import (
    parse_fraction,
    parse_quantity,
    parse_resistance,
    parse_tcr,
    parse_temperature,
)

TARGET_KINDS = ("voltage", "current", "ratio", "power", "resistance")
_TARGET_UNIT = {"voltage": "V", "current": "A", "power": "W", "resistance": "Ω", "ratio": ""}

_TOP_KEYS = ("design", "source", "resistor", "regulator", "controlled", "transistor",
             "amplifier", "target")
_DESIGN_KEYS = (
    "title", "ground", "ambient", "margin", "voltage_margin", "temperature",
    "package", "packages", "tolerance", "tcr", "notes",
)
_SOURCE_KEYS = ("ref", "kind", "plus", "minus", "from", "to", "value", "tolerance", "note")
_RESISTOR_KEYS = (
    "ref", "nodes", "value", "choose", "range", "tolerance", "tcr", "package", "combine", "bom",
    "note",
)
_REGULATOR_KEYS = ("ref", "output", "sense", "reference", "setpoint", "tolerance", "note")
_TARGET_KEYS = (*TARGET_KINDS, "name", "equals", "within", "at_least", "at_most", "note")

_DEFAULT_TOLERANCE = "1%"
_DEFAULT_TCR = "100 ppm/C"


@dataclass(frozen=True)
class Source:
    """An independent source.

    Attributes
    ----------
    ref : str
        Reference designator.
    kind : {"voltage", "current"}
        A voltage source holds ``V(plus) - V(minus) = value`` (V); a current
        source drives ``value`` amperes through itself from ``from`` to ``to``,
        that is into node ``to``.
    pos, neg : str
        ``plus``/``minus`` for a voltage source, ``to``/``from`` for a current source.
    value : float
        V or A.
    tolerance : float
        Relative tolerance of the value (fraction).
    """

    ref: str
    kind: str
    pos: str
    neg: str
    value: float
    tolerance: float


@dataclass(frozen=True)
class Resistor:
    """A resistor, fixed (``value``) or free (``choose`` with ``range``).

    Attributes
    ----------
    ref : str
        Reference designator.
    nodes : tuple of str
        Its two nodes; its current is counted from ``nodes[0]`` to ``nodes[1]``.
    value : float or None
        Resistance, ohm (for a free part: the value ``check`` uses, if given).
    choose : str or None
        Series name (``"E96"``) or house stock file for a free part.
    stock_path : Path or None
        The stock file ``choose`` names, resolved.
    range : tuple of float or None
        Allowed values of a free part, ohm (low, high).
    tolerance : float
        Relative tolerance (fraction).
    tcr : float
        Temperature coefficient, fraction per kelvin.
    package : str or None
        Package name in the design's package table, or None (not rated).
    combine : {None, "series", "parallel"}
        Two parts from the same choice fill this position.
    bom : bool
        True when the part goes on the bill of materials; False for resistors
        that model something else (a load, a sensor, an input resistance).
    """

    ref: str
    nodes: tuple[str, str]
    value: float | None
    choose: str | None
    stock_path: Path | None
    range: tuple[float, float] | None
    tolerance: float
    tcr: float
    package: str | None
    combine: str | None
    bom: bool = True

    @property
    def free(self) -> bool:
        """True when the optimiser picks this part's value."""
        return self.choose is not None


@dataclass(frozen=True)
class Regulator:
    """An ideal regulating element (the control loop of a regulator or amplifier).

    It drives node ``output`` from ground with whatever voltage makes
    ``V(sense) - V(reference) = setpoint``, delivering any current needed.

    Attributes
    ----------
    ref : str
        Reference designator.
    output, sense, reference : str
        Node names.
    setpoint : float
        Regulated voltage, V (the reference voltage of the regulator).
    tolerance : float
        Relative tolerance of the setpoint (fraction).
    """

    ref: str
    output: str
    sense: str
    reference: str
    setpoint: float
    tolerance: float


@dataclass(frozen=True)
class ControlledSource:
    """A linear controlled source.

    Attributes
    ----------
    ref : str
    kind : {"vcvs", "vccs", "ccvs", "cccs"}
        Voltage- or current-controlled, voltage or current output.
    pos, neg : str
        Output: ``plus``/``minus`` for a voltage output (V(plus) - V(minus) =
        gain × control), ``to``/``from`` for a current output (gain × control
        amperes through it from ``from`` to ``to``).
    control_nodes : tuple of str or None
        ``(a, b)``: the controlling voltage V(a) - V(b).
    control_ref : str or None
        The part whose current controls it (its current in its own sign convention).
    gain : float
        V/V, A/V (S), V/A (ohm) or A/A.
    gain_low, gain_high : float
        The range the gain may take (for spread); both equal ``gain`` when fixed.
    """

    ref: str
    kind: str
    pos: str
    neg: str
    control_nodes: tuple[str, str] | None
    control_ref: str | None
    gain: float
    gain_low: float
    gain_high: float

    @property
    def voltage_output(self) -> bool:
        """True for a voltage output (a voltage-defined branch)."""
        return self.kind in ("vcvs", "ccvs")


@dataclass(frozen=True)
class Transistor:
    """A bipolar transistor in its forward-active region (DC model).

    It is solved as a base-emitter drop (a voltage source ``REF.BE``) and a
    collector current β × base current (a controlled source ``REF.C``); a
    target ``REF active`` keeps the collector-emitter voltage above ``vce_sat``.

    Attributes
    ----------
    ref, polarity : str
        ``polarity`` is ``"npn"`` or ``"pnp"``.
    collector, base, emitter : str
    vbe : float
        Base-emitter drop magnitude, V.
    beta, beta_low, beta_high : float
        Typical, least and greatest current gain.
    vce_sat : float
        Least collector-emitter voltage magnitude still counted as active, V.
    """

    ref: str
    polarity: str
    collector: str
    base: str
    emitter: str
    vbe: float
    beta: float
    beta_low: float
    beta_high: float
    vce_sat: float


@dataclass(frozen=True)
class Target:
    """One requirement on the network.

    Attributes
    ----------
    label : str
        Name shown in tables, e.g. ``"V(sense)"`` or the user's ``name``.
    kind : {"voltage", "current", "ratio", "power", "resistance"}
        What is measured.
    nodes : tuple of str
        ``(a, b)`` for a voltage or resistance, ``(a, b, c, d)`` for a ratio
        ``(V(a) - V(b)) / (V(c) - V(d))``; empty for current and power.
    ref : str or None
        The part a current or power target names.
    equals : float or None
        Goal value (V, A, W, ohm, or a plain ratio).
    within_abs, within_rel : float or None
        Half-width of the hard window around ``equals`` (absolute, or relative).
    at_least, at_most : float or None
        Bounds.
    unit : str
        Unit symbol for display.
    """

    label: str
    kind: str
    nodes: tuple[str, ...]
    ref: str | None
    equals: float | None
    within_abs: float | None
    within_rel: float | None
    at_least: float | None
    at_most: float | None
    unit: str

    @property
    def bounds(self) -> tuple[float, float]:
        """The hard window ``(low, high)``: ``within`` and the bounds combined."""
        low, high = -math.inf, math.inf
        if self.equals is not None:
            half = None
            if self.within_abs is not None:
                half = self.within_abs
            elif self.within_rel is not None:
                half = abs(self.equals) * self.within_rel
            if half is not None:
                low, high = self.equals - half, self.equals + half
        if self.at_least is not None:
            low = max(low, self.at_least)
        if self.at_most is not None:
            high = min(high, self.at_most)
        return low, high


@dataclass(frozen=True)
class Design:
    """A whole design, validated.

    Attributes
    ----------
    origin : str
        The file it came from (or a description for designs built in memory).
    title : str
        Free text.
    ground : str
        The reference node (0 V).
    ambient_c : float
        Ambient temperature for derating, °C.
    margin_frac : float
        Share of the derated power rating a part may use (0.5 = 50 %).
    voltage_margin_frac : float
        Share of the limiting element voltage a part may see (0.8 = 80 %).
    temperature_c : tuple of float
        Operating temperature range (low, high), °C, for TCR spread.
    packages : dict of str to PackageRating
        The package table in force.
    sources, resistors, regulators, targets : tuple
        The parts and requirements, in file order.
    """

    origin: str
    title: str
    ground: str
    ambient_c: float
    margin_frac: float
    voltage_margin_frac: float
    temperature_c: tuple[float, float]
    sources: tuple[Source, ...]
    resistors: tuple[Resistor, ...]
    regulators: tuple[Regulator, ...]
    targets: tuple[Target, ...]
    packages: Mapping[str, PackageRating] = field(repr=False)
    controlled: tuple[ControlledSource, ...] = ()
    transistors: tuple[Transistor, ...] = ()

    @property
    def free_resistors(self) -> tuple[Resistor, ...]:
        """The resistors whose value the optimiser picks."""
        return tuple(r for r in self.resistors if r.free)

    @property
    def node_names(self) -> tuple[str, ...]:
        """Every node the parts touch, ground first, then in order of appearance."""
        names = [self.ground]
        for s in self.sources:
            names += [s.neg, s.pos]
        for r in self.resistors:
            names += list(r.nodes)
        for g in self.regulators:
            names += [g.output, g.sense, g.reference]
        for c in self.controlled:
            names += [c.neg, c.pos, *(c.control_nodes or ())]
        return tuple(dict.fromkeys(names))

    def rating(self, resistor: Resistor) -> PackageRating | None:
        """The package rating of a resistor, or None when it names no package."""
        return self.packages[resistor.package] if resistor.package else None


class _Reader:
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

    def fail(self, problem: str) -> None:
        raise DesignError(f"{self.origin}, {self.item}: {problem}")

    def has(self, key: str) -> bool:
        return key in self.table

    def text(self, key: str, default: str | None = None) -> str:
        if key not in self.table:
            if default is None:
                self.fail(f"key {key!r} is missing; add {key} = \"...\"")
            return default  # type: ignore[return-value]
        value = self.table[key]
        if not isinstance(value, str) or not value.strip():
            self.fail(f"{key} must be a non-empty text in quotes, not {value!r}")
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


def _ohms(raw: Any) -> float:
    return parse_resistance(raw)


def _node_pair(reader: _Reader, key: str, ground: str) -> tuple[str, str]:
    raw = reader.table[key]
    if isinstance(raw, str) and raw.strip():
        return raw.strip(), ground
    if (
        isinstance(raw, list)
        and len(raw) == 2
        and all(isinstance(n, str) and n.strip() for n in raw)
    ):
        return raw[0].strip(), raw[1].strip()
    reader.fail(f"{key} must be a node name or a pair of node names such as [\"out\", \"gnd\"]")
    raise AssertionError("unreachable")


def _read_design_table(origin: str, raw: Any) -> dict[str, Any]:
    reader = _Reader(origin, "[design]", raw if raw is not None else {}, _DESIGN_KEYS)
    settings: dict[str, Any] = {}
    settings["title"] = reader.text("title", "") if reader.has("title") else ""
    settings["ground"] = reader.text("ground", "gnd")
    settings["ambient_c"] = reader.parsed("ambient", parse_temperature, "25 C")
    settings["margin_frac"] = reader.fraction("margin", "50%", strict=True)
    settings["voltage_margin_frac"] = reader.fraction("voltage_margin", "80%", strict=True)
    if reader.has("temperature"):
        span = reader.table["temperature"]
        if not (isinstance(span, list) and len(span) == 2):
            reader.fail('temperature must be a pair such as ["-20 C", "60 C"]')
        low, high = (_temperature_end(reader, t) for t in span)
        if high < low:
            reader.fail(f"temperature range {span[0]!r}..{span[1]!r} is empty; "
                        "give the low end first")
        settings["temperature_c"] = (low, high)
    else:
        settings["temperature_c"] = (settings["ambient_c"], settings["ambient_c"])
    settings["default_package"] = reader.text("package") if reader.has("package") else None
    settings["packages_path"] = reader.text("packages") if reader.has("packages") else None
    settings["default_tolerance"] = reader.fraction("tolerance", _DEFAULT_TOLERANCE, upper=0.99)
    settings["default_tcr"] = reader.parsed("tcr", parse_tcr, _DEFAULT_TCR)
    if reader.has("notes") and not isinstance(reader.table["notes"], str):
        reader.fail("notes must be text")
    return settings


def _temperature_end(reader: _Reader, raw: Any) -> float:
    """Read one end of a temperature range, phrasing errors for the item."""
    try:
        return parse_temperature(raw)
    except DesignError as exc:
        reader.fail(f"temperature: {exc}")
    raise AssertionError("unreachable")


def _read_source(origin: str, index: int, raw: Any) -> Source:
    label = f"source #{index}"
    if isinstance(raw, Mapping) and isinstance(raw.get("ref"), str):
        label = f"source {raw['ref']}"
    reader = _Reader(origin, label, raw, _SOURCE_KEYS)
    ref = reader.text("ref")
    kind = reader.text("kind")
    if kind == "voltage":
        for wrong in ("from", "to"):
            if reader.has(wrong):
                reader.fail(f"a voltage source takes plus and minus, not {wrong!r}")
        pos, neg = reader.text("plus"), reader.text("minus")
        value = reader.parsed("value", lambda t: parse_quantity(t, "V"))
    elif kind == "current":
        for wrong in ("plus", "minus"):
            if reader.has(wrong):
                reader.fail(f"a current source takes from and to, not {wrong!r}")
        pos, neg = reader.text("to"), reader.text("from")
        value = reader.parsed("value", lambda t: parse_quantity(t, "A"))
    else:
        reader.fail(f"kind {kind!r} is not known{nearest_name(kind, ('voltage', 'current'))}; "
                    "use \"voltage\" or \"current\"")
    if pos == neg:
        reader.fail(f"both terminals are on node {pos!r}; connect it between two nodes")
    tolerance = reader.fraction("tolerance", "0%", upper=0.99)
    return Source(ref=ref, kind=kind, pos=pos, neg=neg, value=value, tolerance=tolerance)


def _resolve_stock(origin: str, reader: _Reader, choose: str) -> Path:
    base = Path(origin).parent if origin and not origin.startswith("<") else Path.cwd()
    for candidate in (base / choose, Path(choose), catalog_dir() / choose):
        if candidate.is_file():
            return candidate.resolve()
    reader.fail(f"stock file {choose!r} was not found beside the design file or in catalogs/; "
                "check the path")
    raise AssertionError("unreachable")


def _read_resistor(origin: str, index: int, raw: Any, settings: dict[str, Any],
                   packages: Mapping[str, PackageRating]) -> Resistor:
    label = f"resistor #{index}"
    if isinstance(raw, Mapping) and isinstance(raw.get("ref"), str):
        label = f"resistor {raw['ref']}"
    reader = _Reader(origin, label, raw, _RESISTOR_KEYS)
    ref = reader.text("ref")
    nodes = raw.get("nodes")
    if not (isinstance(nodes, list) and len(nodes) == 2
            and all(isinstance(n, str) and n.strip() for n in nodes)):
        reader.fail('nodes must be a pair of node names such as ["in", "out"]')
    a, b = nodes[0].strip(), nodes[1].strip()
    if a == b:
        reader.fail(f"both ends are on node {a!r}; connect it between two nodes")
    value = reader.positive("value", _ohms) if reader.has("value") else None
    choose = reader.text("choose") if reader.has("choose") else None
    stock_path: Path | None = None
    span: tuple[float, float] | None = None
    series_tolerance: float | None = None
    if choose is None:
        if value is None:
            reader.fail('give a value (value = "10k") or let rnsynth choose one (choose = "E96")')
        for key in ("range", "combine"):
            if reader.has(key):
                reader.fail(f"{key} applies only to a part rnsynth chooses; add choose = \"E96\"")
    else:
        if choose.lower().endswith(".csv"):
            stock_path = _resolve_stock(origin, reader, choose)
        else:
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
            low, high = (_range_end(reader, "range", e) for e in ends)
            if low <= 0 or high <= 0:
                reader.fail(f"range {ends[0]!r}..{ends[1]!r} must be positive")
            if high < low:
                reader.fail(f"range {ends[0]}..{ends[1]} is empty; give the low end first")
            span = (low, high)
        elif stock_path is None:
            reader.fail('a part chosen from a series needs a range such as range = ["1k", "1M"]')
        combine = raw.get("combine")
        if combine is not None and combine not in ("series", "parallel"):
            reader.fail(f"combine {combine!r} is not known; use \"series\" or \"parallel\"")
    if reader.has("tolerance"):
        tolerance = reader.fraction("tolerance", "0%", upper=0.99)
    elif series_tolerance is not None:
        tolerance = series_tolerance
    else:
        tolerance = settings["default_tolerance"]
    tcr = reader.parsed("tcr", parse_tcr) if reader.has("tcr") else settings["default_tcr"]
    package = reader.text("package") if reader.has("package") else settings["default_package"]
    if package is not None and package not in packages:
        hint = nearest_name(package, packages)
        reader.fail(f"package {package!r} is not in the package table{hint}; "
                    f"use one of {', '.join(sorted(packages))} or add a row to your table")
    bom = raw.get("bom", True)
    if not isinstance(bom, bool):
        reader.fail(f"bom must be true or false, not {bom!r}")
    return Resistor(
        ref=ref, nodes=(a, b), value=value, choose=choose, stock_path=stock_path, range=span,
        tolerance=tolerance, tcr=tcr, package=package,
        combine=raw.get("combine") if choose is not None else None, bom=bom,
    )


def _range_end(reader: _Reader, key: str, raw: Any) -> float:
    """Read one resistance inside a list, phrasing errors for the item."""
    try:
        return parse_resistance(raw)
    except DesignError as exc:
        reader.fail(f"{key}: {exc}")
    raise AssertionError("unreachable")


def _read_regulator(origin: str, index: int, raw: Any) -> Regulator:
    label = f"regulator #{index}"
    if isinstance(raw, Mapping) and isinstance(raw.get("ref"), str):
        label = f"regulator {raw['ref']}"
    reader = _Reader(origin, label, raw, _REGULATOR_KEYS)
    ref = reader.text("ref")
    output, sense, reference = reader.text("output"), reader.text("sense"), reader.text("reference")
    if sense == reference:
        reader.fail(f"sense and reference are both {sense!r}; the setpoint needs two nodes")
    setpoint = reader.parsed("setpoint", lambda t: parse_quantity(t, "V"))
    tolerance = reader.fraction("tolerance", "0%", upper=0.99)
    return Regulator(ref=ref, output=output, sense=sense, reference=reference,
                     setpoint=setpoint, tolerance=tolerance)


def _target_quantity(reader: _Reader, kind: str, key: str) -> float:
    unit = _TARGET_UNIT[kind]
    if kind == "resistance":
        return reader.parsed(key, parse_resistance)
    if kind == "ratio":
        return reader.parsed(key, _parse_ratio)
    return reader.parsed(key, lambda t: parse_quantity(t, unit))


def _parse_ratio(raw: Any) -> float:
    if isinstance(raw, (int, float)) and not isinstance(raw, bool) and math.isfinite(raw):
        return float(raw)
    if isinstance(raw, str):
        try:
            value = float(raw)
        except ValueError:
            pass
        else:
            if math.isfinite(value):
                return value
    raise DesignError(f"{raw!r} is not a ratio; write a plain number such as 0.25")


def _read_target(origin: str, index: int, raw: Any, ground: str) -> Target:
    label = f"target #{index}"
    if isinstance(raw, Mapping) and isinstance(raw.get("name"), str):
        label = f"target {raw['name']!r}"
    reader = _Reader(origin, label, raw, _TARGET_KEYS)
    kinds = [k for k in TARGET_KINDS if reader.has(k)]
    if len(kinds) != 1:
        reader.fail(f"name exactly one of {', '.join(TARGET_KINDS)} (found {len(kinds)})")
    kind = kinds[0]
    nodes: tuple[str, ...] = ()
    ref: str | None = None
    if kind in ("voltage", "resistance"):
        nodes = _node_pair(reader, kind, ground)
        if nodes[0] == nodes[1]:
            reader.fail(f"{kind} between {nodes[0]!r} and itself is always zero; name two nodes")
        shown = f"V({nodes[0]})" if nodes[1] == ground else f"V({nodes[0]},{nodes[1]})"
        default_label = shown if kind == "voltage" else f"R({nodes[0]},{nodes[1]})"
    elif kind == "ratio":
        pair = raw["ratio"]
        if not (isinstance(pair, list) and len(pair) == 2):
            reader.fail('ratio must be two voltages such as [["out", "gnd"], ["in", "gnd"]]')
        sub = [_node_pair(_Reader(origin, label, {"ratio": p}, ("ratio",)), "ratio", ground)
               for p in pair]
        nodes = sub[0] + sub[1]
        if sub[1][0] == sub[1][1]:
            reader.fail("the ratio's denominator is a voltage between a node and itself")
        default_label = f"V({nodes[0]})/V({nodes[2]})"
    else:
        ref = reader.text(kind)
        default_label = f"I({ref})" if kind == "current" else f"P({ref})"
    equals = _target_quantity(reader, kind, "equals") if reader.has("equals") else None
    at_least = _target_quantity(reader, kind, "at_least") if reader.has("at_least") else None
    at_most = _target_quantity(reader, kind, "at_most") if reader.has("at_most") else None
    within_abs = within_rel = None
    if reader.has("within"):
        if equals is None:
            reader.fail("within needs equals; give the goal the window is around")
        text = raw["within"]
        if isinstance(text, str) and text.strip().endswith(("%", "ppm")):
            within_rel = reader.fraction("within", "0%", upper=10.0, strict=True)
        else:
            within_abs = abs(_target_quantity(reader, kind, "within"))
            if within_abs == 0:
                reader.fail("within must be wider than zero")
    if equals is None and at_least is None and at_most is None:
        reader.fail("give equals (with an optional within), at_least or at_most")
    if equals is not None and (at_least is not None or at_most is not None):
        reader.fail("use equals (with within) or at_least/at_most, not both")
    if at_least is not None and at_most is not None and at_most < at_least:
        reader.fail(f"at_least {raw['at_least']!r} lies above at_most {raw['at_most']!r}; "
                    "swap them")
    if equals is not None and equals == 0 and within_abs is None:
        reader.fail("equals 0 has no relative error; give within as an absolute window")
    name = reader.text("name") if reader.has("name") else default_label
    return Target(label=name, kind=kind, nodes=nodes, ref=ref, equals=equals,
                  within_abs=within_abs, within_rel=within_rel, at_least=at_least,
                  at_most=at_most, unit=_TARGET_UNIT[kind])


def _array(origin: str, data: Mapping[str, Any], key: str) -> list[Any]:
    raw = data.get(key, [])
    if not isinstance(raw, list):
        raise DesignError(f"{origin}: {key} must be an array of tables; write each as [[{key}]]")
    return raw


def design_from_dict(data: Mapping[str, Any], origin: str = "<design>") -> Design:
    """Validate a parsed design (the dict ``tomllib`` gives) into a :class:`Design`.

    Parameters
    ----------
    data : mapping
        Tables as in a design file.
    origin : str
        Named in error messages: the file path, or a description.

    Raises
    ------
    DesignError
        On any malformed, unknown or inconsistent item.

    Examples
    --------
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "10 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k"},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}]})
    >>> [r.value for r in d.resistors]
    [10000.0, 10000.0]
    """
    for key in data:
        if key not in _TOP_KEYS:
            raise DesignError(f"{origin}: unknown table {key!r}{nearest_name(key, _TOP_KEYS)} "
                              f"(allowed: {', '.join(_TOP_KEYS)})")
    settings = _read_design_table(origin, data.get("design"))
    if settings["packages_path"]:
        base = Path(origin).parent if not origin.startswith("<") else Path.cwd()
        path = base / settings["packages_path"]
        if not path.is_file():
            raise DesignError(f"{origin}, [design]: package table {settings['packages_path']!r} "
                              "was not found; check the path")
        packages = load_package_table(path)
    else:
        packages = load_package_table()
    if settings["default_package"] and settings["default_package"] not in packages:
        name = settings["default_package"]
        raise DesignError(f"{origin}, [design]: package {name!r} is not in the package "
                          f"table{nearest_name(name, packages)}; use one of "
                          f"{', '.join(sorted(packages))}")
    sources = tuple(_read_source(origin, i, s)
                    for i, s in enumerate(_array(origin, data, "source"), 1))
    resistors = tuple(_read_resistor(origin, i, r, settings, packages)
                      for i, r in enumerate(_array(origin, data, "resistor"), 1))
    regulators = tuple(_read_regulator(origin, i, g)
                       for i, g in enumerate(_array(origin, data, "regulator"), 1))
    targets = tuple(_read_target(origin, i, t, settings["ground"])
                    for i, t in enumerate(_array(origin, data, "target"), 1))
    from synth.active import read_active_parts  # here: synth.active builds on this module

    active = read_active_parts(origin, data, settings["ground"])
    sources += active.sources
    regulators += active.regulators
    targets += active.targets
    design = Design(
        origin=origin, title=settings["title"], ground=settings["ground"],
        ambient_c=settings["ambient_c"], margin_frac=settings["margin_frac"],
        voltage_margin_frac=settings["voltage_margin_frac"],
        temperature_c=settings["temperature_c"], packages=packages,
        sources=sources, resistors=resistors, regulators=regulators, targets=targets,
        controlled=active.controlled, transistors=active.transistors,
    )
    _check_references(design)
    return design


def _check_references(design: Design) -> None:
    origin = design.origin
    if not design.resistors:
        raise DesignError(f"{origin}: the design has no resistors; add [[resistor]] tables")
    seen: dict[str, str] = {}
    parts = ([("source", s.ref) for s in design.sources]
             + [("resistor", r.ref) for r in design.resistors]
             + [("regulator", g.ref) for g in design.regulators]
             + [("controlled source", c.ref) for c in design.controlled])
    for kind, ref in parts:
        if ref in seen:
            raise DesignError(f"{origin}, {kind} {ref}: reference designator {ref!r} is already "
                              f"used by a {seen[ref]}; give each part its own")
        seen[ref] = kind
    nodes = design.node_names
    touched = {n for s in design.sources for n in (s.pos, s.neg)}
    touched |= {n for r in design.resistors for n in r.nodes}
    touched |= {n for c in design.controlled for n in (c.pos, c.neg)}
    if design.ground not in touched:
        raise DesignError(f"{origin}, [design]: ground node {design.ground!r} touches no part"
                          f"{nearest_name(design.ground, touched)}; connect a part to it or "
                          "set ground to your reference node")
    resistor_refs = {r.ref for r in design.resistors}
    source_refs = ({s.ref for s in design.sources} | {g.ref for g in design.regulators}
                   | {c.ref for c in design.controlled})
    current_defined = {c.ref for c in design.controlled if not c.voltage_output}
    for c in design.controlled:
        item = f"{origin}, controlled source {c.ref}"
        for node in c.control_nodes or ():
            if node not in nodes:
                raise DesignError(f"{item}: control node {node!r} is not in the circuit"
                                  f"{nearest_name(node, nodes)}; name a node a part touches")
        if c.control_ref is not None:
            if c.control_ref in current_defined:
                raise DesignError(f"{item}: it is controlled by the current of {c.control_ref!r},"
                                  " another controlled current source; control it by a "
                                  "resistor's or a voltage-defined part's current")
            known = resistor_refs | source_refs
            if c.control_ref not in known:
                raise DesignError(f"{item}: control part {c.control_ref!r} is not in the "
                                  f"circuit{nearest_name(c.control_ref, known)}; name a "
                                  "resistor or a source")
    for target in design.targets:
        item = f"{origin}, target {target.label!r}"
        for node in target.nodes:
            if node not in nodes:
                raise DesignError(f"{item}: node {node!r} is not in the circuit"
                                  f"{nearest_name(node, nodes)}; name a node a part touches")
        if target.kind == "current" and target.ref not in resistor_refs | source_refs:
            raise DesignError(f"{item}: no part {target.ref!r}"
                              f"{nearest_name(target.ref or '', resistor_refs | source_refs)}; "
                              "name a resistor or a source")
        if target.kind == "power" and target.ref not in resistor_refs:
            raise DesignError(f"{item}: no resistor {target.ref!r}"
                              f"{nearest_name(target.ref or '', resistor_refs)}; name a resistor")


def load_design(path: str | Path) -> Design:
    """Read and validate a design file.

    Parameters
    ----------
    path : str or Path
        A TOML design file.

    Returns
    -------
    Design

    Raises
    ------
    DesignError
        When the file is missing, is not TOML, or breaks a rule of the structure.
    """
    origin = str(path)
    try:
        with open(path, "rb") as handle:
            data = tomllib.load(handle)
    except FileNotFoundError:
        raise DesignError(f"{origin}: no such file; check the path") from None
    except IsADirectoryError:
        raise DesignError(f"{origin}: is a folder; name a design file") from None
    except OSError as exc:
        raise DesignError(f"{origin}: cannot be read ({exc.strerror})") from None
    except tomllib.TOMLDecodeError as exc:
        raise DesignError(f"{origin}: not valid TOML ({exc}); fix the syntax there") from None
    except UnicodeDecodeError:
        raise DesignError(f"{origin}: not UTF-8 text; save it as UTF-8") from None
    return design_from_dict(data, origin)
