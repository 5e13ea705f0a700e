"""Networks made of islands that meet only at ground, each solved on its own.

A design of operating points is one copy of its network per point, and the
copies share nothing but the ground node: no current flows from one copy to
another (a copy's branch currents sum to zero at each of its own nodes, so the
net current it sends into ground is zero too).  Each island is then a network
of its own, ground included, and the whole network's solution is the islands'
solutions side by side.  Fifty copies of a four-resistor divider are two
hundred resistors to one solve (the sparse nodal solve, which factors each of
the search's far-apart candidates alone) but fifty small loop solves of three
loops each, batched over the candidates as the dense solve does best.

:func:`ground_islands` finds the islands; :class:`IslandSolver` solves them.
"""

from __future__ import annotations

__all__ = ["IslandSolver", "ground_islands"]

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from synth.circuit.kernels import as_block, refuse_gains, resistance_rows
from synth.circuit.mesh import MeshSolver
from synth.circuit.network import Network
from synth.circuit.solution import MeshSolution
from synth.circuit.topology import UnionFind


def ground_islands(network: Network) -> list[np.ndarray]:
    """The groups of non-ground nodes that meet one another only through ground.

    Two nodes are in one island when a branch joins them (ground itself joins
    nothing).  Islands are listed by their first node, each its nodes ascending.

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> from synth.circuit.network import build_network
    >>> rows = [{"ref": f"R{k}", "nodes": [n, "gnd"], "value": "1k"}
    ...         for k, n in enumerate(["a", "b"], 1)]
    >>> src = [{"ref": f"V{k}", "kind": "voltage", "plus": n, "minus": "gnd", "value": "1 V"}
    ...        for k, n in enumerate(["a", "b"], 1)]
    >>> net = build_network(design_from_dict({"resistor": rows, "source": src}))
    >>> [[net.nodes[i] for i in island] for island in ground_islands(net)]
    [['a'], ['b']]
    """
    sets = UnionFind(len(network.nodes))
    for a, b in network.branch_ends:
        if a and b:
            sets.union(int(a), int(b))
    groups: dict[int, list[int]] = {}
    for node in range(1, len(network.nodes)):
        groups.setdefault(sets.find(node), []).append(node)
    return [np.array(nodes, dtype=int) for nodes in groups.values()]


def _part(ends: np.ndarray, inside: np.ndarray) -> np.ndarray:
    """Indices of the branches (rows of ``ends``) whose nodes lie in the island (or ground)."""
    if not len(ends):
        return np.zeros(0, dtype=int)
    return np.flatnonzero(np.all(inside[ends], axis=1) & np.any(ends > 0, axis=1))


class IslandSolver:
    """Solve a network of islands that meet only at ground, one loop solve per island.

    Parameters
    ----------
    network : Network
        Without regulating elements or controlled sources (their senses and
        controls may tie islands together), and with at least two islands
        (see :func:`ground_islands`).
    resistor_weights : array_like, optional
        Typical resistances, ohm, in the network's resistor order (handed to
        each island's :class:`~synth.circuit.mesh.MeshSolver`).

    Notes
    -----
    Each island with ground is solved by :class:`~synth.circuit.mesh.MeshSolver`;
    its node voltages and branch currents are the whole network's, since no
    current crosses from one island to another through ground (Kirchhoff's
    current law summed over the island's nodes).  The results are those of a
    solve of the whole network to rounding.

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> from synth.circuit.network import build_network
    >>> rows = [{"ref": "R1", "nodes": ["a", "m"], "value": "1k"},
    ...         {"ref": "R2", "nodes": ["m", "gnd"], "value": "1k"},
    ...         {"ref": "R3", "nodes": ["b", "gnd"], "value": "1k"}]
    >>> src = [{"ref": "V1", "kind": "voltage", "plus": "a", "minus": "gnd", "value": "2 V"},
    ...        {"ref": "V2", "kind": "voltage", "plus": "b", "minus": "gnd", "value": "1 V"}]
    >>> net = build_network(design_from_dict({"resistor": rows, "source": src}))
    >>> sol = IslandSolver(net).solve([[1e3, 1e3, 1e3]], voltages=[2.0, 1.0])
    >>> [float(sol.node_voltages[0, net.node_index(n)]) for n in ("m", "b")]
    [1.0, 1.0]
    """

    def __init__(self, network: Network, resistor_weights: ArrayLike | None = None):
        if network.regulator_refs or network.controlled:
            raise ValueError("IslandSolver takes networks without regulators or controlled "
                             "sources")
        islands = ground_islands(network)
        if len(islands) < 2:
            raise ValueError("IslandSolver needs a network of two islands or more")
        self.network = network
        weights = (None if resistor_weights is None
                   else np.asarray(resistor_weights, dtype=float))
        self.n_r = len(network.resistor_refs)
        self.n_v = len(network.vsource_refs)
        self.n_i = len(network.isource_refs)
        groups: dict[bytes, list[_Island]] = {}
        solvers: dict[bytes, MeshSolver] = {}
        for nodes in islands:
            island, sub = _island(network, nodes)
            key = _shape_key(sub)
            if key not in solvers:
                solvers[key] = MeshSolver(sub, None if weights is None
                                          else weights[island.resistors])
            groups.setdefault(key, []).append(island)
        self.groups = [_Group(solvers[key], members, self.n_r, self.n_v)
                       for key, members in groups.items()]
        """Islands of one shape (the same branches between the same renumbered nodes, as
        the copies of a network are) share one solver and are solved as one batch."""
        self.largest_island = max(g.resistors.shape[1] for g in self.groups)
        """The most resistors of any island."""
        self.last_regulator_system = np.zeros((0, 0, 0))
        """Empty: the islands have no regulators (the attribute every solver offers)."""

    @property
    def loop_count(self) -> int:
        """Independent loops closed by resistors, summed over the islands."""
        return sum(g.solver.loop_count * len(g.resistors) for g in self.groups)

    @property
    def preferred_chunk(self) -> int:
        """Candidates per block: the smallest of the islands' own."""
        return min(g.solver.preferred_chunk for g in self.groups)

    def solve(self, resistances: ArrayLike, voltages: ArrayLike | None = None,
              currents: ArrayLike | None = None, setpoints: ArrayLike | None = None,
              chunk: int | None = None, gains: ArrayLike | None = None) -> MeshSolution:
        """Solve every candidate (parameters as :meth:`synth.circuit.mesh.MeshSolver.solve`).

        The islands of one shape are stacked along the candidate axis and solved
        in one batch.

        Returns
        -------
        MeshSolution
        """
        refuse_gains(gains)
        r_all = resistance_rows(resistances, self.n_r)
        n = len(r_all)
        e_all = np.broadcast_to(as_block(voltages, self.n_v, n, "voltages"), (n, self.n_v))
        j_all = np.broadcast_to(as_block(currents, self.n_i, n, "currents"), (n, self.n_i))
        as_block(setpoints, 0, n, "setpoints")
        nodes = np.zeros((n, len(self.network.nodes)))
        branches = np.empty((n, len(self.network.branch_refs)))
        for g in self.groups:
            k = len(g.resistors)
            part = g.solver.solve(_stacked(r_all, g.resistors), _stacked(e_all, g.vsources),
                                  _stacked(j_all, g.isources), chunk=chunk)
            volts = part.node_voltages.reshape(k, n, -1)[:, :, 1:]
            nodes[:, g.nodes] = volts.transpose(1, 0, 2)
            branches[:, g.branches] = part.branch_currents.reshape(k, n, -1).transpose(1, 0, 2)
        return MeshSolution(node_voltages=nodes, branch_currents=branches,
                            regulator_outputs=np.zeros((n, 0)))


@dataclass(frozen=True)
class _Island:
    """One island's nodes (ground first) and branches, as indices into the whole network."""

    nodes: np.ndarray
    resistors: np.ndarray
    vsources: np.ndarray
    isources: np.ndarray


class _Group:
    """Islands of one shape: their solver and, one row per island, the whole network's
    columns of their resistors, sources, nodes (ground left out) and branches."""

    def __init__(self, solver: MeshSolver, members: list[_Island], n_r: int, n_v: int):
        self.solver = solver
        self.resistors = np.array([m.resistors for m in members], dtype=int)
        self.vsources = np.array([m.vsources for m in members], dtype=int)
        self.isources = np.array([m.isources for m in members], dtype=int)
        self.nodes = np.array([m.nodes[1:] for m in members], dtype=int)
        self.branches = np.concatenate(
            [self.resistors, n_r + self.vsources, n_r + n_v + self.isources], axis=1)


def _stacked(block: np.ndarray, columns: np.ndarray) -> np.ndarray:
    """``(N, whole)`` values as ``(islands · N, island's)``: island after island."""
    picked = block[:, columns]  # (N, islands, island's)
    islands, width = columns.shape
    return np.ascontiguousarray(picked.transpose(1, 0, 2)).reshape(islands * len(block), width)


def _island(network: Network, nodes: np.ndarray) -> tuple[_Island, Network]:
    """The island of ``nodes`` and its network, ground included, nodes renumbered in order."""
    every = np.concatenate([[0], nodes]).astype(int)
    inside = np.zeros(len(network.nodes), dtype=bool)
    inside[every] = True
    renumber = np.full(len(network.nodes), -1, dtype=int)
    renumber[every] = np.arange(len(every))
    r = _part(network.resistor_ends, inside)
    v = _part(network.vsource_ends, inside)
    i = _part(network.isource_ends, inside)
    sub = Network(
        origin=network.origin, nodes=tuple(network.nodes[k] for k in every),
        resistor_refs=tuple(network.resistor_refs[k] for k in r),
        resistor_ends=renumber[network.resistor_ends[r]].reshape(-1, 2),
        vsource_refs=tuple(network.vsource_refs[k] for k in v),
        vsource_ends=renumber[network.vsource_ends[v]].reshape(-1, 2),
        isource_refs=tuple(network.isource_refs[k] for k in i),
        isource_ends=renumber[network.isource_ends[i]].reshape(-1, 2))
    return _Island(every, r, v, i), sub


def _shape_key(sub: Network) -> bytes:
    """What two islands share when one solver serves both: node count and every branch's ends."""
    parts = [np.array([len(sub.nodes), len(sub.resistor_refs), len(sub.vsource_refs),
                       len(sub.isource_refs)]), sub.resistor_ends, sub.vsource_ends,
             sub.isource_ends]
    return b"".join(np.ascontiguousarray(p, dtype=np.int64).tobytes() for p in parts)
