"""The electrical graph of a design, and the topology rules a solvable one obeys.

A :class:`Network` numbers the nodes (ground is node 0) and lists the
branches by kind: resistors, independent voltage sources, independent current
sources and regulating elements.  Branch orientation is fixed here once and
used by both solvers:

* resistor: from ``nodes[0]`` to ``nodes[1]``;
* voltage source: from ``minus`` to ``plus`` (its current is the current it
  delivers, out of ``plus``);
* current source: from ``from`` to ``to``;
* regulating element: from ground to ``output``.

A linear DC network has a unique solution when every node reaches ground,
no loop consists of voltage-defined branches only and no cut consists of
current sources only.  :func:`build_network` refuses the others with the
parts named.
"""

from __future__ import annotations

__all__ = ["ControlledBranch", "Network", "build_network"]

from dataclasses import dataclass, field

import numpy as np

from synth.circuit.topology import check_topology
from synth.design.model import Design
from synth.errors import DesignError, nearest_name


@dataclass(frozen=True)
class ControlledBranch:
    """A controlled source as the solvers see it.

    Attributes
    ----------
    ref, kind : str
        ``kind`` is ``"vcvs"``, ``"vccs"``, ``"ccvs"`` or ``"cccs"``.
    slot : int
        Its place among the voltage sources (voltage output) or current
        sources (current output) of the network.
    control_nodes : tuple of int or None
        Node indices ``(a, b)`` of the controlling voltage.
    control_branch : int or None
        Index in :attr:`Network.branch_refs` of the controlling current.
    gain : float
        Nominal gain.
    """

    ref: str
    kind: str
    slot: int
    control_nodes: tuple[int, int] | None
    control_branch: int | None
    gain: float

    @property
    def voltage_output(self) -> bool:
        return self.kind in ("vcvs", "ccvs")


@dataclass(frozen=True)
class Network:
    """Nodes and oriented branches of a circuit.

    Attributes
    ----------
    origin : str
        Where the design came from, for messages.
    nodes : tuple of str
        Node names; ``nodes[0]`` is ground.
    resistor_refs, vsource_refs, isource_refs, regulator_refs : tuple of str
        Reference designators by branch kind.
    resistor_ends, vsource_ends, isource_ends, regulator_ends : numpy.ndarray
        ``(count, 2)`` node indices ``[n0, n1]`` in the orientation above.
    regulator_sense : numpy.ndarray
        ``(regulators, 2)`` node indices ``[sense, reference]``.
    """

    origin: str
    nodes: tuple[str, ...]
    resistor_refs: tuple[str, ...]
    resistor_ends: np.ndarray
    vsource_refs: tuple[str, ...]
    vsource_ends: np.ndarray
    isource_refs: tuple[str, ...]
    isource_ends: np.ndarray
    regulator_refs: tuple[str, ...] = ()
    regulator_ends: np.ndarray = field(default_factory=lambda: np.zeros((0, 2), dtype=int))
    regulator_sense: np.ndarray = field(default_factory=lambda: np.zeros((0, 2), dtype=int))
    controlled: tuple[ControlledBranch, ...] = ()

    @property
    def branch_refs(self) -> tuple[str, ...]:
        """All branches in solver order: resistors, voltage sources, current sources, regulators."""
        return self.resistor_refs + self.vsource_refs + self.isource_refs + self.regulator_refs

    @property
    def branch_ends(self) -> np.ndarray:
        """``(branches, 2)`` node indices in :attr:`branch_refs` order."""
        return np.concatenate(
            [self.resistor_ends, self.vsource_ends, self.isource_ends, self.regulator_ends]
        ).astype(int)

    def node_index(self, name: str) -> int:
        """Index of a node by name."""
        return self.nodes.index(name)

    def with_test_source(self, plus: str, minus: str) -> Network:
        """This network plus a current source ``TEST`` driving 1 A into ``plus`` from ``minus``.

        Solved with every other source set to zero it gives the resistance
        seen between the two nodes: ``V(plus) - V(minus)`` in ohm.
        """
        ends = np.array([[self.node_index(minus), self.node_index(plus)]])
        return Network(
            origin=self.origin, nodes=self.nodes,
            resistor_refs=self.resistor_refs, resistor_ends=self.resistor_ends,
            vsource_refs=self.vsource_refs, vsource_ends=self.vsource_ends,
            isource_refs=(*self.isource_refs, "TEST"),
            isource_ends=np.concatenate([self.isource_ends, ends]).astype(int),
            regulator_refs=self.regulator_refs, regulator_ends=self.regulator_ends,
            regulator_sense=self.regulator_sense,
            controlled=tuple(
                c if c.control_branch is None or c.control_branch < self._test_slot()
                else ControlledBranch(c.ref, c.kind, c.slot, c.control_nodes,
                                      c.control_branch + 1, c.gain)
                for c in self.controlled),
        )

    def _test_slot(self) -> int:
        """Branch index at which a test current source is inserted."""
        return len(self.resistor_refs) + len(self.vsource_refs) + len(self.isource_refs)


def _ends(pairs: list[tuple[int, int]]) -> np.ndarray:
    return np.array(pairs, dtype=int).reshape(-1, 2)


def build_network(design: Design) -> Network:
    """Number the nodes of a design and check that its circuit has one solution.

    Parameters
    ----------
    design : Design
        A validated design.

    Returns
    -------
    Network

    Raises
    ------
    DesignError
        When a node or island does not reach ground, when voltage sources
        (or regulating elements) form a loop, or when a group of nodes is fed
        only through current sources (a cut of current sources).
    """
    names = [design.ground]
    for s in design.sources:
        names += [s.neg, s.pos]
    for r in design.resistors:
        names += list(r.nodes)
    for g in design.regulators:
        names.append(g.output)
    for c in design.controlled:
        names += [c.neg, c.pos]
    nodes = tuple(dict.fromkeys(names))
    index = {n: i for i, n in enumerate(nodes)}
    origin = design.origin
    for g in design.regulators:
        if g.output == design.ground:
            raise DesignError(f"{origin}, regulator {g.ref}: output is the ground node; "
                              "name the node it drives")
        for role, node in (("sense", g.sense), ("reference", g.reference)):
            if node not in index:
                raise DesignError(f"{origin}, regulator {g.ref}: {role} node {node!r} touches "
                                  f"no part{nearest_name(node, nodes)}; name a node of the circuit")
    for c in design.controlled:
        for node in c.control_nodes or ():
            if node not in index:
                raise DesignError(f"{origin}, controlled source {c.ref}: control node {node!r} "
                                  f"touches no part{nearest_name(node, nodes)}; name a node of "
                                  "the circuit")
    # controlled sources follow the independent ones of their kind: voltage outputs are
    # voltage-defined branches, current outputs current-defined ones
    vsources = [(s.ref, s.neg, s.pos) for s in design.sources if s.kind == "voltage"]
    isources = [(s.ref, s.neg, s.pos) for s in design.sources if s.kind == "current"]
    n_v_independent, n_i_independent = len(vsources), len(isources)
    for c in design.controlled:
        (vsources if c.voltage_output else isources).append((c.ref, c.neg, c.pos))
    resistor_refs = tuple(r.ref for r in design.resistors)
    refs = (resistor_refs + tuple(v[0] for v in vsources) + tuple(i[0] for i in isources)
            + tuple(g.ref for g in design.regulators))
    controlled = []
    v_slot, i_slot = n_v_independent, n_i_independent
    for c in design.controlled:
        slot = v_slot if c.voltage_output else i_slot
        if c.voltage_output:
            v_slot += 1
        else:
            i_slot += 1
        controlled.append(ControlledBranch(
            ref=c.ref, kind=c.kind, slot=slot,
            control_nodes=None if c.control_nodes is None
            else (index[c.control_nodes[0]], index[c.control_nodes[1]]),
            control_branch=None if c.control_ref is None else refs.index(c.control_ref),
            gain=c.gain))
    network = Network(
        origin=origin,
        nodes=nodes,
        resistor_refs=resistor_refs,
        resistor_ends=_ends([(index[r.nodes[0]], index[r.nodes[1]]) for r in design.resistors]),
        vsource_refs=tuple(v[0] for v in vsources),
        vsource_ends=_ends([(index[v[1]], index[v[2]]) for v in vsources]),
        isource_refs=tuple(i[0] for i in isources),
        isource_ends=_ends([(index[i[1]], index[i[2]]) for i in isources]),
        regulator_refs=tuple(g.ref for g in design.regulators),
        regulator_ends=_ends([(0, index[g.output]) for g in design.regulators]),
        regulator_sense=_ends([(index[g.sense], index[g.reference]) for g in design.regulators]),
        controlled=tuple(controlled),
    )
    check_topology(network)
    return network
