"""Cross-reference checks of a whole design: unique designators, known nodes and parts.
"""

from __future__ import annotations

__all__ = ["check_references"]

from synth.design.model import Design
from synth.errors import DesignError, nearest_name


def check_references(design: Design) -> None:
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
        for left_out in target.without:
            if left_out not in resistor_refs:
                raise DesignError(f"{item}: without names {left_out!r}, not a resistor"
                                  f"{nearest_name(left_out, resistor_refs)}; name resistors")
        if target.kind == "power" and target.ref not in resistor_refs:
            raise DesignError(f"{item}: no resistor {target.ref!r}"
                              f"{nearest_name(target.ref or '', resistor_refs)}; name a resistor")
