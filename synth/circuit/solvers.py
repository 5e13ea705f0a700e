"""Choosing the solver for a network: the dense loop solve, or the sparse nodal solve when large."""

from __future__ import annotations

__all__ = ["Solver", "network_solver"]

from numpy.typing import ArrayLike

from synth.circuit.controlled import ControlledSolver
from synth.circuit.islands import IslandSolver, ground_islands
from synth.circuit.mesh import MeshSolver
from synth.circuit.network import Network
from synth.circuit.sparse import SPARSE_ABOVE, SparseSolver

Solver = MeshSolver | SparseSolver | ControlledSolver | IslandSolver
"""Any of the solvers :func:`network_solver` chooses (one interface)."""


def network_solver(network: Network, resistor_weights: ArrayLike | None = None,
                   sparse: bool | None = None) -> Solver:
    """The solver for a network: dense loop solve, or sparse nodal solve when it is large.

    Parameters
    ----------
    network : Network
    resistor_weights : array_like, optional
        Typical resistances, ohm (see :class:`synth.circuit.mesh.MeshSolver`).
    sparse : bool, optional
        Force the choice; by default the sparse solve is used for networks of
        more than :data:`synth.circuit.sparse.SPARSE_ABOVE` resistors, unless
        the network is islands that meet only at ground (a design's copies at
        its operating points), each no larger than that and without regulators
        or controlled sources: then each island gets its own loop solve.

    Returns
    -------
    MeshSolver, SparseSolver, ControlledSolver or IslandSolver
        Controlled sources are solved around either (superposition).
    """
    if sparse is None:
        sparse = len(network.resistor_refs) > SPARSE_ABOVE
        if sparse and not (network.controlled or network.regulator_refs):
            if len(ground_islands(network)) > 1:
                islands = IslandSolver(network, resistor_weights)
                if islands.largest_island <= SPARSE_ABOVE:
                    return islands
    if network.controlled:
        return ControlledSolver(network, resistor_weights, sparse=sparse)
    return SparseSolver(network) if sparse else MeshSolver(network, resistor_weights)
