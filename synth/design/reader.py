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

import warnings
from collections.abc import Mapping
from dataclasses import replace
from pathlib import Path
from typing import Any

from synth.catalog.packages import load_package_table
from synth.design.active import read_active_parts
from synth.design.array import attach_arrays, read_array
from synth.design.checks import check_references
from synth.design.fields import (
    ItemReader,
    fail_item,
    item_label,
    option_names,
    table_array,
    temperature_end,
)
from synth.design.linearity import read_linearity
from synth.design.model import REQUIREMENTS, Design, Regulator, Source
from synth.design.points import expand_points
from synth.design.read_classes import read_class_settings
from synth.design.read_point import read_points, source_range
from synth.design.read_resistor import read_resistor
from synth.design.read_target import read_target
from synth.design.read_transfer import read_transfer
from synth.design.sensor import read_sensor, sensor_resistor
from synth.design.sensor_points import sensor_points
from synth.design.transfer import transfer_targets
from synth.errors import DesignError, name_list, nearest_name
from synth.inputs import present, require_suffix
from synth.units import (
    parse_quantity,
    parse_tcr,
    parse_temperature,
)

_TOP_KEYS = ("design", "source", "resistor", "regulator", "controlled", "transistor",
             "amplifier", "target", "point", "transfer", "sensor", "linearity", "array")


_DESIGN_KEYS = (
    "title", "ground", "ambient", "max_power_use", "max_voltage_use", "temperature",
    "package", "packages", "tolerance", "tcr", "require", "min_yield", "notes", "margin",
    "voltage_margin", "classes", "class_table",
)


_RENAMED_DESIGN_KEYS = (("margin", "max_power_use"), ("voltage_margin", "max_voltage_use"))
"""(old, new) ``[design]`` names: the old one is still read, with a deprecation note."""


_SOURCE_KEYS = ("ref", "kind", "plus", "minus", "from", "to", "value", "tolerance", "note",
                "range")




_REGULATOR_KEYS = ("ref", "output", "sense", "reference", "setpoint", "tolerance", "note")




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
    read_class_settings(reader, settings)
    if reader.has("notes") and not isinstance(reader.table["notes"], str):
        reader.fail("notes must be text")
    for note in notes:  # once the table has read cleanly
        warnings.warn(note, DeprecationWarning, stacklevel=3)
    settings["deprecations"] = tuple(notes)
    return settings


def _read_source(origin: str, index: int, raw: Any,
                 ranges: dict[str, tuple[float, float]]) -> Source:
    reader = ItemReader(origin, item_label("source", index, raw), raw, _SOURCE_KEYS)
    ref = reader.text("ref")
    kind = reader.text("kind")
    if kind in ("voltage", "current") and reader.has("range"):
        # the source runs over a range: its value is the middle unless given
        span = source_range(reader, "range", raw["range"], "V" if kind == "voltage" else "A")
        ranges[ref] = span
        raw = {"value": (span[0] + span[1]) / 2, **raw}
        reader = ItemReader(origin, reader.item, raw, _SOURCE_KEYS)
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












def _read_regulator(origin: str, index: int, raw: Any) -> Regulator:
    reader = ItemReader(origin, item_label("regulator", index, raw), raw, _REGULATOR_KEYS)
    ref = reader.text("ref")
    output, sense, reference = reader.text("output"), reader.text("sense"), reader.text("reference")
    if sense == reference:
        reader.fail(f"sense and reference are both {sense!r}; the setpoint needs two nodes")
    setpoint = reader.parsed("setpoint", lambda t: parse_quantity(t, "V"))
    tolerance = reader.fraction("tolerance", "0%", upper=0.99)
    return Regulator(ref=ref, output=output, sense=sense, reference=reference,
                     setpoint=setpoint, tolerance=tolerance)








def design_from_dict(data: Mapping[str, Any], origin: str = "<design>", *,
                     options: Mapping[tuple[str, str], str] | None = None) -> Design:
    """Validate a parsed design (the dict ``tomllib`` gives) into a :class:`Design`.

    Parameters
    ----------
    data : mapping
        Tables as in a design file.
    origin : str
        Named in error messages: the file path, or a description.
    options : mapping, optional
        For a design built from command-line options: the option behind each
        ``(item, key)`` (``("resistor RLOAD", "value")`` -> ``"--load"``), which
        a refusal of that key names instead of the item.

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
    with option_names(options or {}):
        return _design(data, origin)


def _design(data: Mapping[str, Any], origin: str) -> Design:
    for key in data:
        if key not in _TOP_KEYS:
            raise DesignError(f"{origin}: unknown table {key!r}{nearest_name(key, _TOP_KEYS)} "
                              f"(allowed: {', '.join(_TOP_KEYS)})")
    settings = _read_design_table(origin, data.get("design"))
    packages_path = None
    if settings["packages_path"]:
        # checked before the name is looked for: no other kind of file is read
        require_suffix(settings["packages_path"], "package table", f"{origin}, [design]")
        base = Path(origin).parent if not origin.startswith("<") else Path.cwd()
        path = base / settings["packages_path"]
        if not present(path):
            raise DesignError(f"{origin}, [design]: package table {settings['packages_path']!r} "
                              "was not found; check the path")
        packages = load_package_table(path)
        packages_path = path
    else:
        packages = load_package_table()
    if settings["default_package"] and settings["default_package"] not in packages:
        name = settings["default_package"]
        fail_item(origin, "[design]", f"package {name!r} is not in the package "
                  f"table{nearest_name(name, packages)}; use one of "
                  f"{name_list(sorted(packages))}")
    ranges: dict[str, tuple[float, float]] = {}
    sources = tuple(_read_source(origin, i, s, ranges)
                    for i, s in enumerate(table_array(origin, data, "source"), 1))
    resistors = tuple(read_resistor(origin, i, r, settings, packages)
                      for i, r in enumerate(table_array(origin, data, "resistor"), 1))
    sensors = tuple(read_sensor(origin, i, t)
                    for i, t in enumerate(table_array(origin, data, "sensor"), 1))
    resistors += tuple(sensor_resistor(origin, s, settings["ambient_c"]) for s in sensors)
    by_ref = {s.ref: s for s in sensors}
    linearities = tuple(read_linearity(origin, i, t, settings["ground"], by_ref)
                        for i, t in enumerate(table_array(origin, data, "linearity"), 1))
    regulators = tuple(_read_regulator(origin, i, g)
                       for i, g in enumerate(table_array(origin, data, "regulator"), 1))
    targets = tuple(read_target(origin, i, t, settings["ground"])
                    for i, t in enumerate(table_array(origin, data, "target"), 1))
    active = read_active_parts(origin, data, settings["ground"])
    sources += active.sources
    regulators += active.regulators
    targets += active.targets
    other_parts = {**{s.ref: f"{s.kind} source" for s in sources},
                   **{g.ref: "regulator" for g in regulators},
                   **{c.ref: "controlled source" for c in active.controlled},
                   **{t.ref: "transistor" for t in active.transistors},
                   **{s.ref: "temperature sensor" for s in sensors}}
    resistors, arrays = attach_arrays(
        origin, resistors, table_array(origin, data, "resistor"),
        [read_array(origin, i, a, settings, packages)
         for i, a in enumerate(table_array(origin, data, "array"), 1)],
        other_parts, settings["default_package"])
    design = Design(
        origin=origin, title=settings["title"], ground=settings["ground"],
        ambient_c=settings["ambient_c"], margin_frac=settings["margin_frac"],
        voltage_margin_frac=settings["voltage_margin_frac"],
        temperature_c=settings["temperature_c"], packages=packages,
        sources=sources, resistors=resistors, regulators=regulators, targets=targets,
        controlled=active.controlled, transistors=active.transistors,
        require=settings["require"], min_yield=settings["min_yield"],
        deprecations=settings["deprecations"], packages_path=packages_path,
        sensors=sensors, linearities=linearities, arrays=arrays,
    )
    check_references(design)
    points, base_names = read_points(origin, data, design.sources, ranges)
    points, grid_targets = sensor_points(origin, points, sensors, linearities)
    if grid_targets:
        design = replace(design, targets=design.targets + grid_targets)
    transfers = table_array(origin, data, "transfer")
    if points:
        expanded = expand_points(design, points, base_names=base_names)
        added = tuple(target for i, raw in enumerate(transfers, 1)
                      for target in transfer_targets(expanded,
                                                     read_transfer(origin, i, raw, expanded)))
        if not added:
            return expanded
        expanded = replace(expanded, targets=expanded.targets + added)
        check_references(expanded)
        return expanded
    if transfers:
        raise DesignError(f"{origin}: a [[transfer]] runs between two operating points, and the "
                          "design has none; add [[point]] tables or a source range")
    for target in design.targets:
        if target.at is not None:
            raise DesignError(f"{origin}, target {target.label!r}: at names point "
                              f"{target.at[0]!r}, but the design has no operating points; "
                              "add [[point]] tables or drop at")
    return design
