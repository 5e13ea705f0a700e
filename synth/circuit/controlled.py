"""Solving networks with linear controlled sources, by superposition over the loop solve.

Every controlled source is first treated as an independent source of unknown
value u_k.  The network is linear, so its solution is the solution with all
u = 0 (the independent sources acting) plus u_k times the solution of a unit
u_k alone.  Each controlled source then adds one equation: u_k = gain_k ×
(its controlling voltage or current), which is linear in u.  The small
system (I − G·C) u = G·c₀ is solved per candidate, vectorised, and the
solutions are combined.

The network determinant is det Z (positive for positive resistors) times the
determinant of any regulators' Schur complement times det(I − G·C).  It is
affine in each resistance, so a box of values over which it keeps one sign at
every vertex holds no pole: the branch-and-bound bounds stay exact there (see
:mod:`synth.search`), and boxes where the sign changes are split and
enumerated instead.
"""

from __future__ import annotations

__all__ = ["ControlledSolver"]

import numpy as np
from numpy.typing import ArrayLike

from synth.circuit.kernels import broadcast_rows
from synth.circuit.mesh import MeshSolver
from synth.circuit.network import Network
from synth.circuit.solution import MeshSolution
from synth.circuit.sparse import SparseSolver

_SINGULAR = 1e-12
"""Relative size of a determinant below which the controlled sources' system is singular."""


class ControlledSolver:
    """Loop-current solver for networks with controlled sources (same interface as MeshSolver).

    Parameters
    ----------
    network : Network
        A network whose :attr:`Network.controlled` lists its controlled sources.
    resistor_weights : array_like, optional
        As for :class:`synth.mesh.MeshSolver`.
    sparse : bool
        Solve the network around the controlled sources with
        :class:`synth.circuit.sparse.SparseSolver` instead of the dense loop solve.
    """

    def __init__(self, network: Network, resistor_weights: ArrayLike | None = None,
                 sparse: bool = False):
        self.network = network
        self.inner: MeshSolver | SparseSolver = (
            SparseSolver(network) if sparse else MeshSolver(network, resistor_weights))
        self.gains = np.array([c.gain for c in network.controlled])
        self.n_v, self.n_i = len(network.vsource_refs), len(network.isource_refs)
        self.n_g = len(network.regulator_refs)
        self.last_loop_matrix = np.zeros((0, len(self.gains), len(self.gains)))
        """``(N, controlled, controlled)`` the system I - G·C of the last solve (its rows are
        the controlled sources' equations; singular where their loop gain is one)."""

    @property
    def loop_count(self) -> int:
        """Unknown loop currents of the underlying loop solve."""
        return self.inner.loop_count

    def _control(self, sol: MeshSolution) -> np.ndarray:
        """``(N, controlled)`` controlling voltage or current of each controlled source."""
        out = np.empty((len(sol.node_voltages), len(self.network.controlled)))
        for k, c in enumerate(self.network.controlled):
            if c.control_nodes is not None:
                a, b = c.control_nodes
                out[:, k] = sol.node_voltages[:, a] - sol.node_voltages[:, b]
            else:
                out[:, k] = sol.branch_currents[:, c.control_branch]
        return out

    def _unit(self, k: int) -> tuple[np.ndarray, np.ndarray]:
        e, j = np.zeros(self.n_v), np.zeros(self.n_i)
        c = self.network.controlled[k]
        (e if c.voltage_output else j)[c.slot] = 1.0
        return e, j

    def solve(
        self,
        resistances: ArrayLike,
        voltages: ArrayLike | None = None,
        currents: ArrayLike | None = None,
        setpoints: ArrayLike | None = None,
        chunk: int | None = None,
        gains: ArrayLike | None = None,
    ) -> MeshSolution:
        """Solve every candidate.

        Parameters are those of :meth:`synth.mesh.MeshSolver.solve`; the
        entries of ``voltages``/``currents`` at the controlled sources' slots
        are ignored.  ``gains`` gives each controlled source's gain,
        ``(controlled,)`` or ``(N, controlled)``; the nominal gains by default.
        """
        r = np.atleast_2d(np.asarray(resistances, dtype=float))
        n = len(r)
        e = np.array(broadcast_rows(voltages, self.n_v, n))  # copies: slots are zeroed below
        j = np.array(broadcast_rows(currents, self.n_i, n))
        for c in self.network.controlled:
            (e if c.voltage_output else j)[:, c.slot] = 0.0
        base = self.inner.solve(r, e, j, setpoints, chunk)
        units = []
        for k in range(len(self.network.controlled)):
            unit_e, unit_j = self._unit(k)
            units.append(self.inner.solve(r, unit_e, unit_j, np.zeros(self.n_g), chunk))
        g = broadcast_rows(self.gains if gains is None else gains, len(self.gains), n)
        control = np.stack([self._control(u) for u in units], axis=2)  # (N, k, j)
        matrix = np.eye(len(units))[None, :, :] - g[:, :, None] * control
        self.last_loop_matrix = matrix
        rhs = g * self._control(base)
        with np.errstate(all="ignore"):
            # singular (no unique solution) when the determinant is negligible beside the
            # product of the rows' lengths (Hadamard's bound): rounding leaves about 1e-17
            hadamard = np.prod(np.linalg.norm(matrix, axis=2), axis=1)
            if len(units) == 1:
                determinant = matrix[:, 0, 0]
                singular = ~np.isfinite(determinant) | (np.abs(determinant)
                                                        <= _SINGULAR * hadamard)
                values = np.where(singular[:, None], np.nan, rhs / matrix[:, 0, :])
            else:
                determinant = np.linalg.det(matrix)
                singular = ~np.isfinite(determinant) | (np.abs(determinant)
                                                        <= _SINGULAR * hadamard)
                safe = np.where(singular[:, None, None], np.eye(len(units)), matrix)
                values = np.linalg.solve(safe, rhs[:, :, None])[:, :, 0]
                values[singular] = np.nan
        node_v = base.node_voltages.copy()
        branch_i = base.branch_currents.copy()
        outputs = base.regulator_outputs.copy()
        for k, unit in enumerate(units):
            node_v += values[:, k:k + 1] * unit.node_voltages
            branch_i += values[:, k:k + 1] * unit.branch_currents
            outputs += values[:, k:k + 1] * unit.regulator_outputs
        if base.regulator_determinant is not None:
            determinant = determinant * base.regulator_determinant
        return MeshSolution(node_voltages=node_v, branch_currents=branch_i,
                            regulator_outputs=outputs, regulator_determinant=determinant)
