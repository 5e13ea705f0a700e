"""Choosing the solver for a network: the dense loop solve, or the sparse nodal solve when large."""

from __future__ import annotations

__all__ = ["Solver", "network_solver"]

from numpy.typing import ArrayLike

from synth.circuit.controlled import ControlledSolver
from synth.circuit.mesh import MeshSolver
from synth.circuit.network import Network
from synth.circuit.sparse import SPARSE_ABOVE, SparseSolver

Solver = MeshSolver | SparseSolver | ControlledSolver
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
        more than :data:`synth.circuit.sparse.SPARSE_ABOVE` resistors.

    Returns
    -------
    MeshSolver, SparseSolver or ControlledSolver
        Controlled sources are solved around either (superposition).
    """
    if sparse is None:
        sparse = len(network.resistor_refs) > SPARSE_ABOVE
    if network.controlled:
        return ControlledSolver(network, resistor_weights, sparse=sparse)
    return SparseSolver(network) if sparse else MeshSolver(network, resistor_weights)
