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

__all__ = ["design_from_dict"]

import math
import warnings
from collections.abc import Mapping
from pathlib import Path
from typing import Any

import numpy as np

from synth.catalog.packages import PackageRating, load_package_table
from synth.catalog.series import catalog_dir, load_series
from synth.design.active import read_active_parts
from synth.design.checks import check_references
from synth.design.fields import (
    ItemReader,
    node_pair,
    range_end,
    read_ohms,
    table_array,
    temperature_end,
)
from synth.design.model import (
    MAX_PARTS,
    REQUIREMENTS,
    TARGET_KINDS,
    TARGET_UNITS,
    Design,
    Position,
    Regulator,
    Resistor,
    Source,
    Target,
)
from synth.errors import DesignError, nearest_name
from synth.units import (
    parse_quantity,
    parse_resistance,
    parse_tcr,
    parse_temperature,
)

_TOP_KEYS = ("design", "source", "resistor", "regulator", "controlled", "transistor",
             "amplifier", "target")


_DESIGN_KEYS = (
    "title", "ground", "ambient", "max_power_use", "max_voltage_use", "temperature",
    "package", "packages", "tolerance", "tcr", "require", "min_yield", "notes", "margin",
    "voltage_margin",
)


_RENAMED_DESIGN_KEYS = (("margin", "max_power_use"), ("voltage_margin", "max_voltage_use"))
"""(old, new) ``[design]`` names: the old one is still read, with a deprecation note."""


_SOURCE_KEYS = ("ref", "kind", "plus", "minus", "from", "to", "value", "tolerance", "note")


_RESISTOR_KEYS = (
    "ref", "nodes", "value", "choose", "range", "tolerance", "tcr", "package", "combine", "parts",
    "equal_parts", "bom", "note",
)


_REGULATOR_KEYS = ("ref", "output", "sense", "reference", "setpoint", "tolerance", "note")


_TARGET_KEYS = (*TARGET_KINDS, "name", "equals", "within", "at_least", "at_most", "note")


_DEFAULT_TOLERANCE = "1%"


_DEFAULT_TCR = "100 ppm/C"


def _read_design_table(origin: str, raw: Any) -> dict[str, Any]:
    reader = ItemReader(origin, "[design]", raw if raw is not None else {}, _DESIGN_KEYS)
    settings: dict[str, Any] = {}
    settings["title"] = reader.text("title", "") if reader.has("title") else ""
    settings["ground"] = reader.text("ground", "gnd")
    settings["ambient_c"] = reader.parsed("ambient", parse_temperature, "25 C")
    key_of: dict[str, str] = {}
    notes: list[str] = []
    for old, new in _RENAMED_DESIGN_KEYS:
        if reader.has(old) and reader.has(new):
            reader.fail(f"{old} and {new} are the same setting; keep {new} and delete {old}")
        key_of[new] = old if reader.has(old) else new
        if reader.has(old):
            notes.append(f"{origin}, [design]: {old} is the old name of {new} (same meaning) "
                         f"and will be dropped; rename it to {new}")
    # shares of the derated power rating and of the limiting element voltage a part may use
    settings["margin_frac"] = reader.fraction(key_of["max_power_use"], "50%", strict=True)
    settings["voltage_margin_frac"] = reader.fraction(key_of["max_voltage_use"], "80%",
                                                      strict=True)
    if reader.has("temperature"):
        span = reader.table["temperature"]
        if not (isinstance(span, list) and len(span) == 2):
            reader.fail('temperature must be a pair such as ["-20 C", "60 C"]')
        low, high = (temperature_end(reader, t) for t in span)
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
    settings["require"] = reader.text("require", "nominal")
    if settings["require"] not in REQUIREMENTS:
        reader.fail(f"require {settings['require']!r} is not known"
                    f"{nearest_name(settings['require'], REQUIREMENTS)}; use one of "
                    f"{', '.join(REQUIREMENTS)}")
    settings["min_yield"] = None
    if reader.has("min_yield"):
        if settings["require"] != "yield":
            reader.fail('min_yield applies with require = "yield"; add it or drop min_yield')
        settings["min_yield"] = reader.fraction("min_yield", "0%", strict=True)
    elif settings["require"] == "yield":
        reader.fail('require = "yield" needs min_yield, such as min_yield = "99%"')
    if reader.has("notes") and not isinstance(reader.table["notes"], str):
        reader.fail("notes must be text")
    for note in notes:  # once the table has read cleanly
        warnings.warn(note, DeprecationWarning, stacklevel=3)
    settings["deprecations"] = tuple(notes)
    return settings


def _read_source(origin: str, index: int, raw: Any) -> Source:
    label = f"source #{index}"
    if isinstance(raw, Mapping) and isinstance(raw.get("ref"), str):
        label = f"source {raw['ref']}"
    reader = ItemReader(origin, label, raw, _SOURCE_KEYS)
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
    tolerance, tolerance_abs = 0.0, None
    raw_tol = raw.get("tolerance")
    if isinstance(raw_tol, str) and not raw_tol.strip().endswith(("%", "ppm")):
        # an absolute tolerance in the source's unit (a leakage of ±10 µA around 0 A)
        unit = "V" if kind == "voltage" else "A"
        tolerance_abs = abs(reader.parsed("tolerance", lambda x: parse_quantity(x, unit)))
        if tolerance_abs == 0:
            tolerance_abs = None
    else:
        tolerance = reader.fraction("tolerance", "0%", upper=0.99)
    return Source(ref=ref, kind=kind, pos=pos, neg=neg, value=value, tolerance=tolerance,
                  tolerance_abs=tolerance_abs)


def _resolve_stock(origin: str, reader: ItemReader, choose: str) -> Path:
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
    reader = ItemReader(origin, label, raw, _RESISTOR_KEYS)
    ref = reader.text("ref")
    nodes = raw.get("nodes")
    if not (isinstance(nodes, list) and len(nodes) == 2
            and all(isinstance(n, str) and n.strip() for n in nodes)):
        reader.fail('nodes must be a pair of node names such as ["in", "out"]')
    a, b = nodes[0].strip(), nodes[1].strip()
    if a == b:
        reader.fail(f"both ends are on node {a!r}; connect it between two nodes")
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
    if choose is None:
        if value is None and part_values is None:
            reader.fail('give a value (value = "10k") or let rnsynth choose one (choose = "E96")')
        if reader.has("range"):
            reader.fail("range applies only to a part rnsynth chooses; add choose = \"E96\"")
        if reader.has("combine") and part_values is None:
            reader.fail('a fixed position of several parts lists each part\'s value, such as '
                        'value = ["442k", "432k"]; or add choose = "E96"')
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
    if reader.has("tolerance"):
        tolerance = reader.fraction("tolerance", "0%", upper=0.99)
    elif series_tolerance is not None:
        tolerance = series_tolerance
    else:
        tolerance = settings["default_tolerance"]
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
                    f"use one of {', '.join(sorted(packages))} or add a row to your table")
    return Resistor(
        ref=ref, nodes=(a, b), value=value, choose=choose, stock_path=stock_path, range=span,
        tolerance=tolerance, tcr=tcr, package=package, position=position, bom=bom,
    )


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


def _read_regulator(origin: str, index: int, raw: Any) -> Regulator:
    label = f"regulator #{index}"
    if isinstance(raw, Mapping) and isinstance(raw.get("ref"), str):
        label = f"regulator {raw['ref']}"
    reader = ItemReader(origin, label, raw, _REGULATOR_KEYS)
    ref = reader.text("ref")
    output, sense, reference = reader.text("output"), reader.text("sense"), reader.text("reference")
    if sense == reference:
        reader.fail(f"sense and reference are both {sense!r}; the setpoint needs two nodes")
    setpoint = reader.parsed("setpoint", lambda t: parse_quantity(t, "V"))
    tolerance = reader.fraction("tolerance", "0%", upper=0.99)
    return Regulator(ref=ref, output=output, sense=sense, reference=reference,
                     setpoint=setpoint, tolerance=tolerance)


def _target_quantity(reader: ItemReader, kind: str, key: str) -> float:
    unit = TARGET_UNITS[kind]
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
    elif kind == "ratio":
        pair = raw["ratio"]
        if not (isinstance(pair, list) and len(pair) == 2):
            reader.fail('ratio must be two voltages such as [["out", "gnd"], ["in", "gnd"]]')
        sub = [node_pair(ItemReader(origin, label, {"ratio": p}, ("ratio",)), "ratio", ground)
               for p in pair]
        nodes = sub[0] + sub[1]
        if sub[1][0] == sub[1][1]:
            reader.fail("the ratio's denominator is a voltage between a node and itself")
        top, bottom = (a if b == ground else f"({a} - {b})" for a, b in sub)
        default_label = f"ratio of {top} to {bottom}"
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
        if kind != "ratio" and _bare_number(text):
            unit = TARGET_UNITS[kind]
            reader.fail(f"within {text!r} has no unit; write it with its unit or as a share of "
                        f"the goal, such as within = \"10 m{unit}\" or \"1%\"")
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
                  at_most=at_most, unit=TARGET_UNITS[kind])


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
                    for i, s in enumerate(table_array(origin, data, "source"), 1))
    resistors = tuple(_read_resistor(origin, i, r, settings, packages)
                      for i, r in enumerate(table_array(origin, data, "resistor"), 1))
    regulators = tuple(_read_regulator(origin, i, g)
                       for i, g in enumerate(table_array(origin, data, "regulator"), 1))
    targets = tuple(_read_target(origin, i, t, settings["ground"])
                    for i, t in enumerate(table_array(origin, data, "target"), 1))
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
        require=settings["require"], min_yield=settings["min_yield"],
        deprecations=settings["deprecations"],
    )
    check_references(design)
    return design
