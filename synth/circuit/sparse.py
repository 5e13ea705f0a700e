"""Sparse nodal solve for large networks, batched over candidates near one another.

The dense loop solve of :mod:`synth.circuit.mesh` forms every entry of the
loop matrix for every candidate: its work grows with the square of the loop
count, which suits small networks and many candidates.  Above
:data:`SPARSE_ABOVE` resistors :class:`SparseSolver` is used instead.  It
writes Kirchhoff's current law over *supernodes*: every voltage-defined
branch (voltage source, regulating element) ties its two nodes, so the nodes
joined by such branches move together, ``V = T u + offset`` with the offset
set by the source voltages.  The unknowns ``u`` are the supernode voltages
(the supernode holding ground is at 0 V), and

    K(g) u = b,    K(g) = Bᵀ diag(g) B,    B = Aᵀ T,

with A the node-resistor incidence and g the conductances: the Laplacian of
the contracted graph with ground removed, sparse, symmetric and positive
definite for positive resistors.  It is factored by ``scipy.sparse.linalg.splu``
(a minimum-degree ordering of Kᵀ + K, no pivoting off the diagonal, as suits a
symmetric positive definite matrix).

Candidates are solved in blocks.  A block shares one factorisation, that of
the geometric mean of its candidates' conductances (the reference), and
every candidate is solved by conjugate gradients preconditioned with it.
Candidates of a spread analysis differ from the nominal by their tolerances
only, so the preconditioned matrix has its eigenvalues within the range of the conductance ratios
g / g_ref (for 1 % parts within 0.98 to 1.02) and a few iterations reach
rounding level.  A candidate whose conductances differ from the reference's
by more than :data:`_ITERATE_RATIO`, or that has not converged after
:data:`_MAX_ITERATIONS`, is factored on its own instead.  Either way the
result is the solution of the candidate's own equations to rounding.

Regulating elements are solved by superposition: each one's output voltage is
an unknown source; one extra right-hand side per regulator gives the
sense-minus-reference voltage as an affine function of the outputs, and that
small system is solved per candidate (its determinant is returned, as the
mesh solve returns its Schur complement's).

References
----------
Supernodes and nodal analysis: Nilsson & Riedel, *Electric Circuits*, ch. 4.
The preconditioned conjugate gradient method and its convergence bound:
Golub & Van Loan, *Matrix Computations* (4th ed.), §11.5; the eigenvalues of
the pencil (K(g), K(g_ref)) lie within [min g/g_ref, max g/g_ref] because both
are sums of the same positive semidefinite rank-one terms (Axelsson,
*Iterative Solution Methods*, 1994, on spectral equivalence).
"""

from __future__ import annotations

__all__ = ["SPARSE_ABOVE", "SparseSolver"]

from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from synth.circuit.kernels import (
    as_block,
    block_rows,
    refuse_gains,
    resistance_rows,
    resistance_scale,
)
from synth.circuit.network import Network
from synth.circuit.solution import MeshSolution
from synth.circuit.topology import UnionFind

SPARSE_ABOVE = 64
"""Networks with more resistors than this are solved by :class:`SparseSolver`.  Measured
with ``benchmarks/large_network.py`` grids, a whole ``check`` with 10,000 samples takes
(dense / sparse): 24 resistors 0.31 / 0.60 s, 60 resistors 1.29 / 0.89 s, 112 resistors
6.7 / 1.4 s, 180 resistors 22.5 / 2.6 s.  The dense loop solve's work grows with the
square of the loop count; below the threshold it stays, since the search solves many
candidates far apart, which the dense solve batches and the sparse one factors one by
one."""

_ITERATE_RATIO = 4.0
"""Largest spread max(g/g_ref) / min(g/g_ref) of a candidate solved by iteration: the
preconditioned matrix's condition number is at most this, so conjugate gradients gain
at least a factor (√4 − 1)/(√4 + 1) = 1/3 per step."""

_MAX_ITERATIONS = 60
"""Iterations after which a candidate still moving is factored on its own."""

_TOLERANCE = 1e-13
"""Stop when a step changes the solution by less than this share of its size."""

_BLOCK_ENTRIES = 1 << 17
"""Candidates per block times nodes: keeps each work array near the cache (1 MiB;
measured: blocks of 256 candidates of a 528-node grid solve 2.5 times faster than
blocks of 4096)."""


def _scipy() -> tuple[Any, Any]:
    """``scipy.sparse`` and ``scipy.sparse.linalg``, imported on first use (light start-up)."""
    import scipy.sparse as sp
    import scipy.sparse.linalg as spla

    return sp, spla


class SparseSolver:
    """Supernodal sparse solver for one network, reused for any values.

    Same interface as :class:`synth.circuit.mesh.MeshSolver`.

    Parameters
    ----------
    network : Network
        The circuit (controlled sources are handled around it, by
        :class:`synth.circuit.controlled.ControlledSolver`).
    resistor_weights : array_like, optional
        Accepted for the interface of :class:`~synth.circuit.mesh.MeshSolver`
        (a nodal solve needs no spanning tree); unused.

    Examples
    --------
    A 10 V source across 10 kΩ + 10 kΩ:

    >>> from synth.circuit.network import Network
    >>> import numpy as np
    >>> net = Network(origin="", nodes=("gnd", "in", "out"), resistor_refs=("R1", "R2"),
    ...               resistor_ends=np.array([[1, 2], [2, 0]]), vsource_refs=("V1",),
    ...               vsource_ends=np.array([[0, 1]]), isource_refs=(),
    ...               isource_ends=np.zeros((0, 2), int))
    >>> sol = SparseSolver(net).solve([[10e3, 10e3]], voltages=[10.0])
    >>> float(sol.node_voltages[0, 2])
    5.0
    """

    def __init__(self, network: Network, resistor_weights: ArrayLike | None = None):
        sp, _ = _scipy()
        self.network = network
        n_nodes = len(network.nodes)
        self.n_r = len(network.resistor_refs)
        self.n_v = len(network.vsource_refs)
        self.n_i = len(network.isource_refs)
        self.n_g = len(network.regulator_refs)
        # voltage-defined branches (sources, then regulators) tie their nodes together
        tied = np.concatenate([network.vsource_ends, network.regulator_ends]).astype(int)
        sets = UnionFind(n_nodes)
        for a, b in tied:
            if not sets.union(int(a), int(b)):
                raise ValueError("network fails the topology rules; run check_topology first")
        roots = [sets.find(k) for k in range(n_nodes)]
        ground_root = roots[0]
        labels: dict[int, int] = {}
        for root in roots:
            if root != ground_root and root not in labels:
                labels[root] = len(labels)
        self.n_s = len(labels)
        member = np.array([-1 if root == ground_root else labels[root] for root in roots])
        inside = member >= 0
        self._t = sp.csr_matrix((np.ones(int(inside.sum())), (np.flatnonzero(inside),
                                                              member[inside])),
                                shape=(n_nodes, self.n_s))
        # offsets: V(node) = U(its supernode) + offset_map @ [E, E_G], by a walk of the forest
        # of tied branches from each supernode's first node (ground for its own supernode)
        adjacency: dict[int, list[tuple[int, int, float]]] = {k: [] for k in range(n_nodes)}
        for b, (a, c) in enumerate(tied):
            # V(ends[1]) - V(ends[0]) = E_b (a source's plus over its minus; a regulator's
            # output over ground)
            adjacency[int(a)].append((int(c), b, 1.0))
            adjacency[int(c)].append((int(a), b, -1.0))
        offset = np.zeros((n_nodes, len(tied)))
        order: list[tuple[int, int, int, float]] = []  # child, parent, branch, sign
        seen: set[int] = set()
        starts = [0] + [k for k in range(n_nodes) if k and roots[k] == k]
        for start in sorted(set(starts), key=lambda k: (k != 0, k)):
            if start in seen:
                continue
            seen.add(start)
            stack = [start]
            while stack:
                parent = stack.pop()
                for child, b, sign in adjacency[parent]:
                    if child in seen:
                        continue
                    seen.add(child)
                    offset[child] = offset[parent]
                    offset[child, b] += sign
                    order.append((child, parent, b, sign))
                    stack.append(child)
        self._offset = sp.csr_matrix(offset)
        # currents of tied branches from the current law at each node, leaves first:
        # the branch to a node carries what the node's other branches leave unbalanced
        current_map = np.zeros((len(tied), n_nodes))
        below: dict[int, np.ndarray] = {}
        for child, _parent, b, _sign in reversed(order):
            total = below.get(child, np.zeros(n_nodes)).copy()
            total[child] += 1.0
            # incidence of branch b at `child`: +1 where it leaves (ends[0]), -1 at ends[1]
            at_child = 1.0 if tied[b, 0] == child else -1.0
            current_map[b] = total * at_child
            parent = _parent
            below[parent] = below.get(parent, np.zeros(n_nodes)) + total
        self._tied_current = sp.csr_matrix(current_map)
        ends_r = network.resistor_ends.astype(int)
        rows = np.arange(self.n_r)
        self._incidence_r = sp.csr_matrix(
            (np.concatenate([np.ones(self.n_r), -np.ones(self.n_r)]),
             (np.concatenate([ends_r[:, 0], ends_r[:, 1]]), np.concatenate([rows, rows]))),
            shape=(n_nodes, self.n_r))
        ends_i = network.isource_ends.astype(int)
        cols = np.arange(self.n_i)
        self._incidence_i = sp.csr_matrix(
            (np.concatenate([np.ones(self.n_i), -np.ones(self.n_i)]),
             (np.concatenate([ends_i[:, 0], ends_i[:, 1]]), np.concatenate([cols, cols]))),
            shape=(n_nodes, self.n_i))
        self._b = (self._incidence_r.T @ self._t).tocsr()  # (resistors, supernodes)
        self._b_t = self._b.T.tocsr()
        self._t_t = self._t.T.tocsr()
        sense = network.regulator_sense.astype(int)
        self._sense = sense.reshape(-1, 2)
        self.last_regulator_system = np.zeros((0, self.n_g, self.n_g))
        """``(M, regulators, regulators)`` the regulators' system of the last block solved
        (each sense voltage's dependence on each output), for naming dependent regulators."""
        self.factorizations = 0
        """Sparse factorisations done so far (one per block, plus candidates factored alone)."""
        self.iterations = 0
        """Conjugate-gradient steps done so far, summed over blocks."""

    @property
    def loop_count(self) -> int:
        """Independent loops closed by resistors (the unknowns a loop solve would have)."""
        return self.n_r - self.n_s

    @property
    def preferred_chunk(self) -> int:
        """Candidates per block: bounds each work array to about 1 MiB."""
        return max(16, _BLOCK_ENTRIES // max(len(self.network.nodes), 1))

    def solve(
        self,
        resistances: ArrayLike,
        voltages: ArrayLike | None = None,
        currents: ArrayLike | None = None,
        setpoints: ArrayLike | None = None,
        chunk: int | None = None,
        gains: ArrayLike | None = None,
    ) -> MeshSolution:
        """Solve every candidate (parameters as :meth:`synth.circuit.mesh.MeshSolver.solve`).

        Returns
        -------
        MeshSolution
        """
        refuse_gains(gains)
        r_all = resistance_rows(resistances, self.n_r)
        n = len(r_all)
        e_all = as_block(voltages, self.n_v, n, "voltages")
        j_all = as_block(currents, self.n_i, n, "currents")
        s_all = as_block(setpoints, self.n_g, n, "setpoints")
        chunk = chunk or self.preferred_chunk
        n_nodes, n_b = len(self.network.nodes), len(self.network.branch_refs)
        result = MeshSolution(
            node_voltages=np.empty((n, n_nodes)), branch_currents=np.empty((n, n_b)),
            regulator_outputs=np.empty((n, self.n_g)),
            regulator_determinant=np.empty(n) if self.n_g else None)
        for start in range(0, n, chunk):
            pick = slice(start, min(start + chunk, n))
            v, i, g_out, det = self._solve_block(
                np.ascontiguousarray(r_all[pick].T), block_rows(e_all, pick, n),
                block_rows(j_all, pick, n), block_rows(s_all, pick, n))
            result.node_voltages[pick] = v.T
            result.branch_currents[pick] = i.T
            result.regulator_outputs[pick] = g_out.T
            if result.regulator_determinant is not None:
                result.regulator_determinant[pick] = det
        return result

    def _solve_block(self, r: np.ndarray, e: np.ndarray, j: np.ndarray, s: np.ndarray
                     ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """One block, entity-first: ``r`` (resistors, M) ohm, ``e``, ``j``, ``s`` likewise."""
        m = r.shape[1]
        per_unit = resistance_scale(r)
        if per_unit is not None:
            # per-unit form, as the loop solve: R' = R / s and J' = s J leave every voltage
            # as it is and scale every current by s (a power of two: nothing is rounded)
            r = r / per_unit
            j = j * per_unit
        with np.errstate(divide="ignore"):
            g = 1.0 / r
        # right-hand sides: the independent sources, then a unit output of each regulator
        columns = 1 + self.n_g
        sources = np.zeros((self.n_v + self.n_g, columns, m))
        sources[:self.n_v, 0] = e
        for k in range(self.n_g):
            sources[self.n_v + k, 1 + k] = 1.0
        flat_sources = sources.reshape(self.n_v + self.n_g, columns * m)
        g_rep = np.tile(g, (1, columns))  # column c*m + k belongs to candidate k
        j_rep = np.zeros((self.n_i, columns * m))
        j_rep[:, :m] = j
        offset = self._offset @ flat_sources  # (nodes, columns*M)
        drive = self._incidence_r.T @ offset  # resistor voltages the offsets alone give
        rhs = -(self._t_t @ (self._incidence_i @ j_rep)) - self._b_t @ (g_rep * drive)
        u = self._spd_solve(g_rep, rhs)
        v = self._t @ u + offset
        v = v.reshape(-1, columns, m)
        if self.n_g:
            sense = v[self._sense[:, 0]] - v[self._sense[:, 1]]  # (G, columns, M)
            base, unit = sense[:, 0], sense[:, 1:]  # (G, M), (G, G, M): [sense, output, M]
            lhs = unit.transpose(2, 0, 1)
            self.last_regulator_system = lhs
            determinant = lhs[:, 0, 0].copy() if self.n_g == 1 else np.linalg.det(lhs)
            scale = np.abs(lhs).max(axis=(1, 2))
            regular = np.abs(determinant) > 1e-13 * np.maximum(scale, 1e-300) ** self.n_g
            outputs = np.full((self.n_g, m), np.nan)
            if regular.any():
                outputs[:, regular] = np.linalg.solve(
                    lhs[regular], (s - base).T[regular][:, :, None])[:, :, 0].T
            node_v = v[:, 0] + np.einsum("ngm,gm->nm", v[:, 1:], outputs)
        else:
            determinant = np.zeros(m)
            outputs = np.zeros((0, m))
            node_v = v[:, 0]
        i_r = g * (self._incidence_r.T @ node_v)
        unbalanced = -(self._incidence_r @ i_r) - self._incidence_i @ j
        i_tied = self._tied_current @ unbalanced
        currents = np.concatenate([i_r, i_tied[:self.n_v], j, i_tied[self.n_v:]])
        if per_unit is not None:
            currents /= per_unit
        return node_v, currents, outputs, determinant

    def _factor(self, g: np.ndarray) -> Any:
        """Sparse LU of K(g) for one candidate's conductances (symmetric mode)."""
        sp, spla = _scipy()
        self.factorizations += 1
        matrix = (self._b_t @ sp.diags(g) @ self._b).tocsc()
        return spla.splu(matrix, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                         options={"SymmetricMode": True})

    def _spd_solve(self, g: np.ndarray, rhs: np.ndarray) -> np.ndarray:
        """Solve ``K(g[:, k]) x_k = rhs[:, k]`` for every column k (conductances per column)."""
        if self.n_s == 0:
            return np.zeros((0, rhs.shape[1]))
        # the block's geometric mean: half the spread of its first candidate's ratios
        with np.errstate(divide="ignore"):
            reference = np.exp(np.log(g).mean(axis=1)) if g.shape[1] > 1 else g[:, 0]
        if not np.all(np.isfinite(reference) & (reference > 0)):
            reference = g[:, 0]
        lu = self._factor(reference)
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = g / reference[:, None]
        spread = ratio.max(axis=0) / ratio.min(axis=0)
        iterate = np.isfinite(spread) & (spread <= _ITERATE_RATIO)
        x = np.zeros_like(rhs)
        same = np.all(g == reference[:, None], axis=0)
        if same.any():
            x[:, same] = lu.solve(np.ascontiguousarray(rhs[:, same]))
        todo = np.flatnonzero(iterate & ~same)
        if todo.size:
            x[:, todo], done = self._conjugate_gradients(lu, g[:, todo], rhs[:, todo])
            iterate[todo[~done]] = False
        for k in np.flatnonzero(~iterate & ~same):
            x[:, k] = self._factor(g[:, k]).solve(np.ascontiguousarray(rhs[:, k]))
        return x

    def _apply(self, g: np.ndarray, x: np.ndarray) -> np.ndarray:
        """``K(g[:, k]) @ x[:, k]`` for every column."""
        return self._b_t @ (g * (self._b @ x))  # type: ignore[no-any-return]  # scipy is untyped

    def _conjugate_gradients(self, lu: Any, g: np.ndarray, rhs: np.ndarray
                             ) -> tuple[np.ndarray, np.ndarray]:
        """Preconditioned conjugate gradients for every column at once.

        Every column steps together (they converge at nearly the same step, and
        whole-block operations beat picking columns out); a converged column
        takes zero steps from then on.  Returns the solutions and which
        columns converged (the others are left to a factorisation of their own).
        """
        x = lu.solve(rhs)
        residual = rhs - self._apply(g, x)
        z = lu.solve(residual)
        p = z.copy()
        rz = np.einsum("ij,ij->j", residual, z)
        done = np.zeros(rhs.shape[1], dtype=bool)
        for _ in range(_MAX_ITERATIONS):
            self.iterations += 1
            q = self._apply(g, p)
            pq = np.einsum("ij,ij->j", p, q)
            with np.errstate(divide="ignore", invalid="ignore"):
                alpha = np.where(~done & (pq > 0), rz / pq, 0.0)
            step = alpha * p
            x += step
            residual -= alpha * q
            moved = np.abs(step).max(axis=0)
            done |= (moved <= _TOLERANCE * np.abs(x).max(axis=0)) | (pq <= 0)
            if done.all():
                break
            z = lu.solve(residual)
            rz_new = np.einsum("ij,ij->j", residual, z)
            with np.errstate(divide="ignore", invalid="ignore"):
                beta = np.where(rz > 0, rz_new / rz, 0.0)
            p *= beta
            p += z
            rz = rz_new
        return x, done
