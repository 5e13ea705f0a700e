"""Transfer targets: ``output = gain × input + offset`` between two operating points.

A transfer names an input (a source's value, or a voltage in the network), an
output voltage and two operating points.  It becomes ordinary targets of the
expanded design (:mod:`synth.design.points`): the output at each point (a
window on each end), and the gain and offset through the two points

    gain = (out_b − out_a) / (in_b − in_a),    offset = out_a − gain · in_a,

measured from the solved network (so a source's tolerance moves the input, not
the gain).  With a source as input, each point's output is linear-fractional in
each resistance over one common denominator and the input is fixed, so gain
and offset are too: the search's box bounds hold.  With a voltage of the
network as input, the gain is a ratio of two such quantities (bounded like a
ratio target), but the offset is not linear-fractional; an offset then is
refused.  When the two points give fixed resistors different values (a
sensor), the two outputs have different denominators and gain and offset are
not linear-fractional either: the search then bounds them by nothing (it stays
exact, and prunes by the other targets only).
"""

from __future__ import annotations

__all__ = ["TRANSFER_KINDS", "Transfer", "transfer_targets"]

import math
from dataclasses import dataclass

from synth.design.model import Design
from synth.design.points import COPY_MARK, point_label
from synth.design.target import Target
from synth.errors import DesignError, name_list, nearest_name

TRANSFER_KINDS = ("gain", "offset")
"""Target kinds a transfer adds, measured across two operating points."""


@dataclass(frozen=True)
class Transfer:
    """``output = gain × input + offset`` between two operating points.

    Attributes
    ----------
    name : str
        Label of its targets (``"name gain"``, ``"name offset"``, ``"name output @ point"``).
    input : str or tuple of str
        A source's designator (its value, V or A), or a node (its voltage to
        ground) or node pair ``(a, b)`` (``V(a) − V(b)``), in the single design.
    output : tuple of str
        Node pair ``(a, b)``: the output voltage ``V(a) − V(b)``.
    points : tuple of str
        The two points, ``(a, b)``.
    ends : tuple of float or None
        The output's goal at each point, V.
    ends_within : float or None
        Half-width of each end's window, V (absolute) ...
    ends_within_rel : float or None
        ... or as a share of each end's goal.
    gain, gain_within, gain_within_rel : float or None
        The gain's goal (V/V, or V/A for a current input) and window.
    offset, offset_within, offset_within_rel : float or None
        The offset's goal (V) and window.
    """

    name: str
    input: str | tuple[str, str]
    output: tuple[str, str]
    points: tuple[str, str]
    ends: tuple[float, float] | None = None
    ends_within: float | None = None
    ends_within_rel: float | None = None
    gain: float | None = None
    gain_within: float | None = None
    gain_within_rel: float | None = None
    offset: float | None = None
    offset_within: float | None = None
    offset_within_rel: float | None = None


def _node(name: str, point: str, ground: str) -> str:
    return name if name == ground else f"{name}{COPY_MARK}{point}"


def transfer_targets(design: Design, transfer: Transfer) -> tuple[Target, ...]:
    """The targets of one transfer in a design of operating points.

    Parameters
    ----------
    design : Design
        Expanded by :func:`synth.design.points.expand_points`.
    transfer : Transfer

    Returns
    -------
    tuple of Target
        The output at each point (when ``ends`` is given), then the gain and
        the offset (each when its goal is given).

    Raises
    ------
    DesignError
        A point, source or node that is not in the design; an input with the
        same value at both points; an offset window with a voltage as input.
    """
    origin, item = design.origin, f"transfer {transfer.name!r}"
    single = design.single
    if single is None or not design.points:
        raise DesignError(f"{origin}, {item}: a transfer needs two operating points; add "
                          "[[point]] tables or a source range")
    names = [p.name for p in design.points]
    for point in transfer.points:
        if point not in names:
            raise DesignError(f"{origin}, {item}: no point {point!r}{nearest_name(point, names)};"
                              f" name two of {name_list(names)}")
    a, b = transfer.points
    if a == b:
        raise DesignError(f"{origin}, {item}: both points are {a!r}; name two different points")
    ground = design.ground
    nodes = set(single.node_names)
    for node in transfer.output:
        if node not in nodes:
            raise DesignError(f"{origin}, {item}: output node {node!r} is not in the circuit"
                              f"{nearest_name(node, nodes)}; name a node a part touches")
    out = tuple(_node(n, p, ground) for p in (a, b) for n in transfer.output)
    sources = {s.ref: s for s in single.sources}
    input_refs: tuple[str, ...] = ()
    unit = "V/V"
    if isinstance(transfer.input, str) and transfer.input in sources:
        source = sources[transfer.input]
        values = [next(p for p in design.points if p.name == name).sources.get(
            source.ref, source.value) for name in (a, b)]
        if values[0] == values[1]:
            raise DesignError(f"{origin}, {item}: input {source.ref} is {values[0]:g} at both "
                              "points; a gain needs two different input values")
        if source.kind == "current":
            unit = "V/A"
            input_refs = tuple(f"{source.ref}{COPY_MARK}{p}" for p in (a, b))
            ins: tuple[str, ...] = ()
        else:
            ins = tuple(_node(n, p, ground) for p in (a, b) for n in (source.pos, source.neg))
    else:
        pair = (transfer.input, ground) if isinstance(transfer.input, str) else transfer.input
        for node in pair:
            if node not in nodes:
                raise DesignError(f"{origin}, {item}: input {node!r} is neither a source nor a "
                                  f"node of the circuit{nearest_name(node, nodes | set(sources))}"
                                  "; name a source or a node")
        ins = tuple(_node(n, p, ground) for p in (a, b) for n in pair)
        if transfer.offset is not None:
            raise DesignError(f"{origin}, {item}: an offset needs a source as input (with a "
                              "voltage of the network as input the offset is not bounded "
                              "exactly); give windows on the ends or on the gain")
    targets: list[Target] = []
    if transfer.ends is not None:
        for point, end in zip((a, b), transfer.ends, strict=True):
            targets.append(Target(
                label=point_label(f"{transfer.name} output", point), kind="voltage",
                nodes=tuple(_node(n, point, ground) for n in transfer.output), ref=None,
                equals=end, within_abs=transfer.ends_within,
                within_rel=transfer.ends_within_rel, at_least=None, at_most=None, unit="V",
                point=point))
    for kind, goal, within, within_rel, kind_unit in (
            ("gain", transfer.gain, transfer.gain_within, transfer.gain_within_rel, unit),
            ("offset", transfer.offset, transfer.offset_within, transfer.offset_within_rel,
             "V")):
        if goal is None:
            continue
        if not math.isfinite(goal):
            raise DesignError(f"{origin}, {item}: the {kind} must be finite")
        targets.append(Target(
            label=f"{transfer.name} {kind}", kind=kind, nodes=out + ins, ref=None,
            equals=goal, within_abs=within, within_rel=within_rel, at_least=None,
            at_most=None, unit=kind_unit, at=(a, b), input_refs=input_refs))
    return tuple(targets)
