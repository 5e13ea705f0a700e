"""Topology rules a solvable DC network obeys: every node reaches ground, no loop of voltage-defined
branches, no cut of current sources.
"""

from __future__ import annotations

__all__ = ["Graph", "UnionFind", "check_topology"]

from collections.abc import Sequence
from typing import Any, Protocol

import numpy as np

from synth.errors import DesignError, name_list


class Graph(Protocol):
    """What the topology rules read of a network (see :class:`synth.circuit.network.Network`)."""

    @property
    def origin(self) -> str: ...
    @property
    def nodes(self) -> Sequence[str]: ...
    @property
    def branch_refs(self) -> Sequence[str]: ...
    @property
    def branch_ends(self) -> np.ndarray: ...
    @property
    def resistor_refs(self) -> Sequence[str]: ...
    @property
    def vsource_refs(self) -> Sequence[str]: ...
    @property
    def isource_refs(self) -> Sequence[str]: ...
    @property
    def regulator_refs(self) -> Sequence[str]: ...
    @property
    def vsource_ends(self) -> np.ndarray: ...
    @property
    def regulator_sense(self) -> np.ndarray: ...
    @property
    def controlled(self) -> Sequence[Any]: ...


class UnionFind:
    """Disjoint sets over ``0 .. n-1`` (path halving, union by size)."""

    def __init__(self, n: int):
        self.parent = list(range(n))
        self.size = [1] * n

    def find(self, x: int) -> int:
        while self.parent[x] != x:
            self.parent[x] = self.parent[self.parent[x]]
            x = self.parent[x]
        return x

    def union(self, a: int, b: int) -> bool:
        """Join the sets of ``a`` and ``b``; False when they were already one."""
        ra, rb = self.find(a), self.find(b)
        if ra == rb:
            return False
        if self.size[ra] < self.size[rb]:
            ra, rb = rb, ra
        self.parent[rb] = ra
        self.size[ra] += self.size[rb]
        return True


def check_topology(network: Graph) -> None:
    """Refuse a network without a unique DC solution (see :func:`build_network`)."""
    n = len(network.nodes)
    refs, ends = network.branch_refs, network.branch_ends
    origin, names = network.origin, network.nodes
    kinds = (["resistor"] * len(network.resistor_refs) + ["voltage"] * len(network.vsource_refs)
             + ["current"] * len(network.isource_refs) + ["voltage"] * len(network.regulator_refs))

    every = UnionFind(n)
    for a, b in ends:
        every.union(int(a), int(b))
    stranded = [i for i in range(n) if every.find(i) != every.find(0)]
    if stranded:
        island = [names[i] for i in stranded]
        parts = sorted({refs[k] for k, (a, b) in enumerate(ends) if a in stranded or b in stranded})
        raise DesignError(f"{origin}: node(s) {name_list(island)} (parts {name_list(parts)}) "
                          f"have no path to ground {names[0]!r}; connect them to the rest")

    voltage_defined = UnionFind(n)
    for k, (a, b) in enumerate(ends):
        if kinds[k] == "voltage" and not voltage_defined.union(int(a), int(b)):
            loop = [refs[j] for j in range(k + 1) if kinds[j] == "voltage"]
            raise DesignError(f"{origin}, {refs[k]}: voltage sources and regulator outputs "
                              f"{name_list(loop)} close a "
                              f"loop through nodes {names[a]!r} and {names[b]!r} with no "
                              "resistor in it; remove one or add a resistor in series")

    without_current = UnionFind(n)
    for k, (a, b) in enumerate(ends):
        if kinds[k] != "current":
            without_current.union(int(a), int(b))
    fed = [i for i in range(n) if without_current.find(i) != without_current.find(0)]
    if fed:
        cut = [names[i] for i in fed]
        sources = sorted({refs[k] for k, (a, b) in enumerate(ends)
                          if kinds[k] == "current" and ((a in fed) != (b in fed))})
        raise DesignError(f"{origin}: node(s) {name_list(cut)} are reached only through current "
                          f"source(s) {name_list(sources)}, a cut of current sources with no "
                          "defined voltage; add a resistor from them to the rest")

    # a regulator whose sense and reference nodes independent voltage sources already join:
    # no output voltage can change their difference, so nothing sets the output
    controlled_slots = {c.slot for c in network.controlled if c.voltage_output}
    fixed = UnionFind(n)
    for k, (a, b) in enumerate(network.vsource_ends):
        if k not in controlled_slots:
            fixed.union(int(a), int(b))
    for k, ref in enumerate(network.regulator_refs):
        sense, reference = (int(node) for node in network.regulator_sense[k])
        if fixed.find(sense) == fixed.find(reference):
            raise DesignError(
                f"{origin}, regulator {ref}: its output cannot move its sense node, so nothing "
                "sets its voltage (voltage sources already fix its sense and reference nodes); "
                "connect the sense node to the output through the feedback network")
