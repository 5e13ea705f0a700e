"""Operating points: one copy of the network per point, the free parts shared across copies.

A design that must hold at several source values (a battery from 3.0 to 4.2 V,
a signal from -10 V to +10 V) or temperatures is expanded into one design
holding a copy of the network per point.  The copies share only the ground
node, so no current flows between them; each copy has its own source values
(and fixed resistors a point may set, such as a sensor), and its own copy of
every target that applies at its point.  Every copy of a free resistor takes
the value the search chooses for the first copy (``follows``), so the
existing search, its box bounds (each copy's quantities are linear-fractional
in each resistance), the re-check and the spread apply unchanged, the
objective being the largest error over every point.

Names in the expanded design: node ``n`` of point ``p`` is ``"n@p"`` (ground
is shared); sources, regulators and controlled sources of point ``p`` are
``"V1@p"``; the first point's resistors keep their designators (they are the
physical parts) and later points' copies are ``"R1@p"``; a target's copy is
labelled ``"label @ p"``.
"""

from __future__ import annotations

__all__ = ["COPY_MARK", "expand_points", "point_label", "range_points"]

import itertools
import math
from collections.abc import Mapping, Sequence
from dataclasses import replace

from synth.design.checks import check_references
from synth.design.model import (
    ControlledSource,
    Design,
    OperatingPoint,
    Regulator,
    Resistor,
    Source,
)
from synth.design.target import Target
from synth.errors import DesignError, name_list, nearest_name

COPY_MARK = "@"
"""Joins a node's or part's name to its point's in the expanded design (``"out@cold"``)."""

ABSOLUTE_ZERO_C = -273.15
"""The least temperature a point may state, °C."""


def point_label(label: str, point: str) -> str:
    """A target's label at one point: ``"label @ point"``.

    Examples
    --------
    >>> point_label("voltage at out", "cold")
    'voltage at out @ cold'
    """
    return f"{label} {COPY_MARK} {point}"


def range_points(base: Sequence[OperatingPoint],
                 ranges: Mapping[str, tuple[float, float]],
                 units: Mapping[str, str] | None = None) -> tuple[OperatingPoint, ...]:
    """Each point once per combination of its ranged sources' ends.

    A network's node voltages and currents are affine in each source's value,
    so their extremes over a range of source values lie at its ends (over
    several ranges, at the corners of their box): checking the ends is exact.

    Parameters
    ----------
    base : sequence of OperatingPoint
        The named points (an empty sequence: one unnamed point).
    ranges : mapping of str to (float, float)
        Source designator -> its (low, high) values, V or A.
    units : mapping of str to str, optional
        Each ranged source's unit, for the end points' names.

    Returns
    -------
    tuple of OperatingPoint
        Named ``"VBAT low"``, ``"VBAT high"`` (``"cold, VBAT low"`` for a named
        point); a point that sets a ranged source itself keeps its value.

    Examples
    --------
    >>> [p.name for p in range_points([], {"VB": (3.0, 4.2)})]
    ['VB low', 'VB high']
    """
    units = units or {}
    points = list(base) or [OperatingPoint(name="")]
    out: list[OperatingPoint] = []
    for point in points:
        free = [ref for ref in ranges if ref not in point.sources]
        if not free:
            out.append(point)
            continue
        for ends in itertools.product((0, 1), repeat=len(free)):
            values = dict(point.sources)
            words = []
            for ref, end in zip(free, ends, strict=True):
                values[ref] = ranges[ref][end]
                words.append(f"{ref} {'high' if end else 'low'}")
            name = ", ".join(([point.name] if point.name else []) + words)
            out.append(replace(point, name=name, sources=values,
                               range_ends=point.range_ends + tuple(free)))
    return tuple(out)


def _check_points(design: Design, points: Sequence[OperatingPoint],
                  also_named: set[str]) -> None:
    origin = design.origin
    if not points:
        raise DesignError(f"{origin}: operating points need at least one point; add a "
                          "[[point]] table")
    sources = {s.ref: s for s in design.sources}
    resistors = {r.ref: r for r in design.resistors}
    seen: set[str] = set()
    for point in points:
        item = f"{origin}, point {point.name!r}"
        if not point.name or COPY_MARK in point.name or not point.name.isprintable():
            raise DesignError(f"{item}: a point's name must be printable text without "
                              f"{COPY_MARK!r}; rename it")
        if point.name in seen:
            raise DesignError(f"{item}: another point has the same name; give each point "
                              "its own name")
        seen.add(point.name)
        for ref, value in point.sources.items():
            if ref not in sources:
                raise DesignError(f"{item}: no source {ref!r}{nearest_name(ref, sources)}; "
                                  f"name one of {name_list(sorted(sources))}")
            if not math.isfinite(value):
                raise DesignError(f"{item}: the value of {ref} must be finite")
        for ref, value in point.resistors.items():
            resistor = resistors.get(ref)
            if resistor is None:
                raise DesignError(f"{item}: no resistor {ref!r}{nearest_name(ref, resistors)}; "
                                  f"name one of {name_list(sorted(resistors))}")
            if resistor.free:
                raise DesignError(f"{item}: resistor {ref} is chosen by the search, so it has "
                                  "one value at every point; set values of fixed resistors "
                                  "only")
            if resistor.position.count != 1:
                raise DesignError(f"{item}: resistor {ref} is a position of several parts; a "
                                  "point may set single parts only")
            if not (math.isfinite(value) and value > 0):
                raise DesignError(f"{item}: the value of {ref} must be a positive resistance")
        if point.temperature_c is not None and not point.temperature_c >= ABSOLUTE_ZERO_C:
            raise DesignError(f"{item}: temperature {point.temperature_c:g} °C lies below "
                              "absolute zero (-273.15 °C); give a temperature above it")
    seen |= also_named
    for target in design.targets:
        for name in target.at or ():
            if name not in seen:
                raise DesignError(f"{origin}, target {target.label!r}: at names point "
                                  f"{name!r}, which is not defined{nearest_name(name, seen)}; "
                                  f"name one of {name_list(sorted(seen))}")


def _node(name: str, point: str, ground: str) -> str:
    return name if name == ground else f"{name}{COPY_MARK}{point}"


def _ref(ref: str, point: str) -> str:
    return f"{ref}{COPY_MARK}{point}"


def _applies(target: Target, point: OperatingPoint, base_names: Mapping[str, str]) -> bool:
    """True when ``target`` is measured at ``point`` (``at`` may name the point a range
    expansion came from)."""
    if target.at is None:
        return True
    return point.name in target.at or base_names.get(point.name) in target.at


def expand_points(design: Design, points: Sequence[OperatingPoint], *,
                  base_names: Mapping[str, str] | None = None) -> Design:
    """The design with one copy of its network per operating point.

    Parameters
    ----------
    design : Design
        A design of one network (no points yet); its targets may name points in ``at``.
    points : sequence of OperatingPoint
        The points, in the order reports list them.
    base_names : mapping of str to str, optional
        For points made by :func:`range_points`: the named point each came
        from, so a target ``at`` that name applies at each of its ends.

    Returns
    -------
    Design
        ``points`` holds the points, ``single`` the design given.

    Raises
    ------
    DesignError
        A point naming a missing source or resistor, a free resistor's value
        set by a point, two points of one name, a temperature below absolute
        zero, a target at a missing point.

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "10 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k"},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
    ...     "target": [{"voltage": "out", "equals": "5 V"}]})
    >>> e = expand_points(d, [OperatingPoint("lo", {"V1": 8.0}),
    ...                       OperatingPoint("hi", {"V1": 12.0})])
    >>> [r.ref for r in e.resistors], [t.label for t in e.targets]
    (['R1', 'R2', 'R1@hi', 'R2@hi'], ['voltage at out @ lo', 'voltage at out @ hi'])
    """
    if design.points:
        raise DesignError(f"{design.origin}: the design already has operating points; expand "
                          "its single design instead")
    names = dict(base_names or {})
    _check_points(design, points, set(names.values()))
    ground = design.ground
    resistors: list[Resistor] = []
    sources: list[Source] = []
    regulators: list[Regulator] = []
    controlled: list[ControlledSource] = []
    targets: list[Target] = []
    first_overrides = points[0].resistors
    for number, point in enumerate(points):
        p = point.name
        copied = {r.ref: (r.ref if number == 0 else _ref(r.ref, p)) for r in design.resistors}
        others = ([s.ref for s in design.sources] + [g.ref for g in design.regulators]
                  + [c.ref for c in design.controlled])
        for ref in others:
            copied[ref] = _ref(ref, p)
        for r in design.resistors:
            value = point.resistors.get(r.ref, r.value)
            own = r.ref in point.resistors or r.ref in first_overrides
            if number == 0:
                resistors.append(replace(r, nodes=(_node(r.nodes[0], p, ground),
                                                   _node(r.nodes[1], p, ground)),
                                         value=value, point=p))
                continue
            position = replace(r.position, ref=copied[r.ref])
            resistors.append(replace(
                r, ref=copied[r.ref], nodes=(_node(r.nodes[0], p, ground),
                                             _node(r.nodes[1], p, ground)),
                value=value, choose=None, stock_path=None, position=position, bom=False,
                point=p, copy_of=r.ref, follows=r.free or not own))
        for s in design.sources:
            sources.append(replace(s, ref=copied[s.ref], pos=_node(s.pos, p, ground),
                                   neg=_node(s.neg, p, ground),
                                   value=point.sources.get(s.ref, s.value), point=p,
                                   copy_of=s.ref))
        for g in design.regulators:
            regulators.append(replace(g, ref=copied[g.ref], output=_node(g.output, p, ground),
                                      sense=_node(g.sense, p, ground),
                                      reference=_node(g.reference, p, ground), copy_of=g.ref))
        for c in design.controlled:
            controlled.append(replace(
                c, ref=copied[c.ref], pos=_node(c.pos, p, ground), neg=_node(c.neg, p, ground),
                control_nodes=None if c.control_nodes is None else
                (_node(c.control_nodes[0], p, ground), _node(c.control_nodes[1], p, ground)),
                control_ref=None if c.control_ref is None else copied[c.control_ref],
                copy_of=c.ref))
        for t in design.targets:
            if not _applies(t, point, names):
                continue
            targets.append(replace(
                t, label=point_label(t.label, p),
                nodes=tuple(_node(n, p, ground) for n in t.nodes),
                ref=None if t.ref is None else copied.get(t.ref, t.ref),
                without=tuple(copied[w] for w in t.without), point=p))
    expanded = replace(design, resistors=tuple(resistors), sources=tuple(sources),
                       regulators=tuple(regulators), controlled=tuple(controlled),
                       targets=tuple(targets), points=tuple(points), single=design)
    check_references(expanded)
    return expanded

