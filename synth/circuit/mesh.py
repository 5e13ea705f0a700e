"""Batched loop-current (mesh) analysis over a spanning tree.

The solver picks a spanning tree that holds every voltage-defined branch
(voltage sources and regulating elements) and no current source.  Each branch
left out of the tree, a *link*, closes one fundamental loop with the tree.
Loops closed by current sources carry a known current; the loops closed by
resistors carry the unknowns.  Kirchhoff's voltage law around those loops,

    Z(R) i = B_V E - B_R (R ∘ c),    Z(R) = B_R diag(R) B_Rᵀ,

is linear in the branch resistances R, so the loop-resistance matrices of many
candidate value sets are formed at once by one matrix product.  Z is symmetric
positive definite for positive resistors, so it is factored without pivoting
(LDLᵀ), vectorised over candidates: Python loops run over the few loops of the
network, never over candidates.  Regulating elements add one unknown output
voltage and one constraint each; they are eliminated through the Schur
complement of Z.

Works for non-planar networks (no meshes of a drawing are needed).

References
----------
Fundamental loops of a spanning tree and the loop-impedance equations: the
cotree method of network topology, e.g. Desoer & Kuh, *Basic Circuit Theory*
(1969), and Nilsson & Riedel, *Electric Circuits*, ch. 4 (b - n + 1 independent
loops).
"""

from __future__ import annotations

__all__ = ["DEFAULT_CHUNK", "MeshSolution", "MeshSolver"]  # MeshSolution: re-exported

from collections.abc import Iterator

import numpy as np
from numpy.typing import ArrayLike

from synth.circuit.kernels import (
    SparseMap,
    as_block,
    block_rows,
    fill_pattern,
    ldl_solve,
    node_depths,
    refuse_gains,
    resistance_scale,
)
from synth.circuit.network import Network
from synth.circuit.solution import MeshSolution
from synth.circuit.topology import UnionFind

DEFAULT_CHUNK = 1 << 15
"""Candidates solved per block: large enough to amortise numpy's call cost, small
enough that a block's work arrays stay in cache and memory stays bounded."""


class MeshSolver:
    """Loop-current solver for one network topology, reused for any values.

    Parameters
    ----------
    network : Network
        The circuit.
    resistor_weights : array_like, optional
        Typical resistance of each resistor (ohm), used only to choose the
        spanning tree: low resistances go into the tree first (by decade), so
        that large ones become links whose currents are solved directly.  This
        keeps networks mixing 1 Ω and 10 MΩ accurate.  Within a decade,
        branches nearer ground go first, which keeps the loops short and the
        loop matrix sparse.  Default: all equal.

    Examples
    --------
    A 10 V source across 10 kΩ + 10 kΩ:

    >>> from synth.circuit.network import Network
    >>> import numpy as np
    >>> net = Network(origin="", nodes=("gnd", "in", "out"), resistor_refs=("R1", "R2"),
    ...               resistor_ends=np.array([[1, 2], [2, 0]]), vsource_refs=("V1",),
    ...               vsource_ends=np.array([[0, 1]]), isource_refs=(),
    ...               isource_ends=np.zeros((0, 2), int))
    >>> sol = MeshSolver(net).solve([[10e3, 10e3]], voltages=[10.0])
    >>> float(sol.node_voltages[0, 2])
    5.0
    """

    def __init__(self, network: Network, resistor_weights: ArrayLike | None = None):
        self.network = network
        n_nodes = len(network.nodes)
        self.n_r = len(network.resistor_refs)
        self.n_v = len(network.vsource_refs)
        self.n_i = len(network.isource_refs)
        self.n_g = len(network.regulator_refs)
        ends = network.branch_ends
        n_b = len(ends)
        weights = (np.ones(self.n_r) if resistor_weights is None
                   else np.asarray(resistor_weights, dtype=float))
        r_slice = np.arange(self.n_r)
        v_slice = self.n_r + np.arange(self.n_v)
        g_slice = self.n_r + self.n_v + self.n_i + np.arange(self.n_g)

        # Kruskal: voltage-defined branches first (they must all be tree branches),
        # then resistors by decade of typical resistance, lowest first, and within a
        # decade nearest ground first (short fundamental loops keep Z sparse);
        # current sources never.
        depth = node_depths(n_nodes, ends)
        edge_depth = np.minimum(depth[ends[:self.n_r, 0]], depth[ends[:self.n_r, 1]])
        decade = np.floor(np.log10(np.maximum(weights, 1e-300)))
        by_weight = np.lexsort((np.arange(self.n_r), edge_depth, decade))
        order = list(v_slice) + list(g_slice) + list(r_slice[by_weight])
        sets = UnionFind(n_nodes)
        in_tree = np.zeros(n_b, dtype=bool)
        for b in order:
            if sets.union(int(ends[b, 0]), int(ends[b, 1])):
                in_tree[b] = True
        if in_tree.sum() != n_nodes - 1 or in_tree[v_slice].sum() + in_tree[g_slice].sum() != (
            self.n_v + self.n_g
        ):
            raise ValueError("network fails the topology rules; run check_topology first")

        # path matrix: V(node) = sum_t path[node, t] * v_t over tree branch voltages
        path = np.zeros((n_nodes, n_b))
        adjacency: dict[int, list[tuple[int, int]]] = {i: [] for i in range(n_nodes)}
        for b in (int(x) for x in np.flatnonzero(in_tree)):
            a, c = int(ends[b, 0]), int(ends[b, 1])
            adjacency[a].append((c, b))
            adjacency[c].append((a, b))
        seen, stack = {0}, [0]
        # the tree walk, parents before children: V(child) = V(parent) + sign * v_branch
        self._walk: list[tuple[int, int, int, float]] = []
        while stack:
            parent = stack.pop()
            for child, b in adjacency[parent]:
                if child in seen:
                    continue
                seen.add(child)
                sign = 1.0 if ends[b, 0] == child else -1.0
                path[child] = path[parent]
                path[child, b] += sign
                self._walk.append((child, parent, b, sign))
                stack.append(child)
        self.path = path

        links = np.flatnonzero(~in_tree)
        loops = np.zeros((len(links), n_b))
        for row, b in enumerate(links):
            loops[row, b] = 1.0
            loops[row] += path[ends[b, 1]] - path[ends[b, 0]]
        unknown = np.isin(links, r_slice)
        self.loops = loops
        b_u, b_k = loops[unknown], loops[~unknown]  # current-source loops are known
        self.n_u = len(b_u)
        # known loops come in current-source order
        k_order = np.argsort(links[~unknown])
        b_k = b_k[k_order]
        self._b_ur, self._b_uv, self._b_ug = b_u[:, r_slice], b_u[:, v_slice], b_u[:, g_slice]
        self._b_kr = b_k[:, r_slice]  # (nI, nR)
        self._b_u, self._b_k = b_u, b_k
        self._pairs = [(u, w) for u in range(self.n_u) for w in range(u, self.n_u)]
        self._pair_index = {p: k for k, p in enumerate(self._pairs)}
        # Z entries (upper triangle) = pair_matrix @ R
        self._pair_matrix = np.array(
            [self._b_ur[u] * self._b_ur[w] for u, w in self._pairs]
        ).reshape(len(self._pairs), self.n_r)
        sense = network.regulator_sense
        diff = path[sense[:, 0]] - path[sense[:, 1]] if self.n_g else np.zeros((0, n_b))
        self._d_r, self._d_v, self._d_g = diff[:, r_slice], diff[:, v_slice], diff[:, g_slice]
        # Q[g, u] = sum_r d_r[g, r] R[r] b_ur[u, r]  ->  (nG*nU, nR) @ R
        self._q_matrix = (self._d_r[:, None, :] * self._b_ur[None, :, :]).reshape(
            self.n_g * self.n_u, self.n_r
        )
        self._map_z = SparseMap(self._pair_matrix)
        self._fill = fill_pattern(self.n_u, {
            pair for pair, row in zip(self._pairs, self._pair_matrix, strict=True) if row.any()
        })
        self._map_uv = SparseMap(self._b_uv)
        self._map_neg_ur = SparseMap(-self._b_ur)
        self._map_kr_t = SparseMap(self._b_kr.T)
        self._map_u_t = SparseMap(self._b_u.T)
        self._map_k_t = SparseMap(self._b_k.T)
        self._work: dict[str, np.ndarray] = {}
        self._capacity: dict[str, np.ndarray] = {}
        self._work_size = -1
        self._work_views = -1
        self.last_determinant = np.zeros(0)
        """``(M,)`` the regulators' Schur determinant of the last block solved (a view of the
        solver's work arrays, valid until the next block)."""
        self.last_drops: np.ndarray | None = None
        """``(resistors, M)`` V, each resistor's R·I of the last block solved (a view of the
        solver's work arrays, valid until the next block); None when that block was solved
        per unit (its drops were formed from scaled values)."""
        self.last_regulator_system = np.zeros((0, self.n_g, self.n_g))
        """``(M, regulators, regulators)`` the regulators' Schur system of the last block
        solved (its rows are the regulators' constraints; singular where they depend)."""
        self.tree_branches = tuple(network.branch_refs[b] for b in np.flatnonzero(in_tree))

    @property
    def loop_count(self) -> int:
        """Number of unknown loop currents (independent loops closed by resistors)."""
        return self.n_u

    @property
    def loop_resistor_matrix(self) -> np.ndarray:
        """``(loops, resistors)`` fundamental-loop incidence of the resistors (a copy)."""
        return np.array(self._b_ur)

    @property
    def loop_vsource_matrix(self) -> np.ndarray:
        """``(loops, voltage sources)`` fundamental-loop incidence of the sources (a copy)."""
        return np.array(self._b_uv)

    @property
    def preferred_chunk(self) -> int:
        """Block size that keeps a block's work arrays near the cache (measured: larger
        networks have more work arrays and do better with smaller blocks)."""
        return DEFAULT_CHUNK if self.n_u <= 4 else DEFAULT_CHUNK // 2

    def solve(
        self,
        resistances: ArrayLike,
        voltages: ArrayLike | None = None,
        currents: ArrayLike | None = None,
        setpoints: ArrayLike | None = None,
        chunk: int | None = None,
        gains: ArrayLike | None = None,
    ) -> MeshSolution:
        """Solve every candidate; the whole batch is returned at once.

        Parameters
        ----------
        resistances : array_like
            ``(N, resistors)`` ohm, in :attr:`Network.resistor_refs` order.
        voltages : array_like, optional
            Voltage source values, V: ``(sources,)`` shared or ``(N, sources)``.
        currents : array_like, optional
            Current source values, A, shaped likewise.
        setpoints : array_like, optional
            Regulating element setpoints, V, shaped likewise.
        chunk : int, optional
            Candidates per block (memory use grows with it, not with N);
            :attr:`preferred_chunk` by default.
        gains : array_like, optional
            Controlled sources' gains: the signature is that of
            :meth:`synth.circuit.controlled.ControlledSolver.solve`; a network
            without controlled sources takes none (an empty array or None).

        Returns
        -------
        MeshSolution
        """
        refuse_gains(gains)
        r_all = np.asarray(resistances, dtype=float)
        n = 1 if r_all.ndim == 1 else len(r_all)
        result = MeshSolution(
            node_voltages=np.empty((n, len(self.network.nodes))),
            branch_currents=np.empty((n, len(self.network.branch_refs))),
            regulator_outputs=np.empty((n, self.n_g)),
            regulator_determinant=np.empty(n) if self.n_g else None,
        )
        start = 0
        for part in self.iter_solve_views(r_all, voltages, currents, setpoints, chunk):
            stop = start + len(part.node_voltages)
            result.node_voltages[start:stop] = part.node_voltages
            result.branch_currents[start:stop] = part.branch_currents
            result.regulator_outputs[start:stop] = part.regulator_outputs
            if result.regulator_determinant is not None:
                result.regulator_determinant[start:stop] = part.regulator_determinant
            start = stop
        return result

    def iter_solve(
        self,
        resistances: ArrayLike,
        voltages: ArrayLike | None = None,
        currents: ArrayLike | None = None,
        setpoints: ArrayLike | None = None,
        chunk: int | None = None,
    ) -> Iterator[MeshSolution]:
        """Solve block by block, yielding one :class:`MeshSolution` per block.

        Same parameters as :meth:`solve`; use this to keep memory bounded when
        only a reduction of the results is kept.  Each yielded solution owns
        its arrays (see :meth:`iter_solve_views` for the copy-free form).
        """
        for part in self.iter_solve_views(resistances, voltages, currents, setpoints, chunk):
            yield MeshSolution(
                node_voltages=part.node_voltages.copy(),
                branch_currents=part.branch_currents.copy(),
                regulator_outputs=part.regulator_outputs.copy(),
                regulator_determinant=None if part.regulator_determinant is None
                else part.regulator_determinant.copy())

    def iter_solve_views(
        self,
        resistances: ArrayLike,
        voltages: ArrayLike | None = None,
        currents: ArrayLike | None = None,
        setpoints: ArrayLike | None = None,
        chunk: int | None = None,
    ) -> Iterator[MeshSolution]:
        """Like :meth:`iter_solve`, but each solution VIEWS the solver's work arrays.

        A yielded solution is valid only until the next block is requested (the
        solver overwrites its work arrays): reduce or copy it first.
        """
        chunk = chunk or self.preferred_chunk
        r_all = np.asarray(resistances, dtype=float)
        if r_all.ndim == 1:
            r_all = r_all[None, :]
        if r_all.ndim != 2 or r_all.shape[1] != self.n_r:
            raise ValueError(f"resistances: expected shape (N, {self.n_r}), got {r_all.shape}")
        n = len(r_all)
        e_all = as_block(voltages, self.n_v, n, "voltages")
        j_all = as_block(currents, self.n_i, n, "currents")
        s_all = as_block(setpoints, self.n_g, n, "setpoints")
        for start in range(0, max(n, 1), chunk):
            stop = min(start + chunk, n)
            pick = slice(start, stop)

            work = self._workspace(stop - start)
            v_t, i_t, g_t = self.solve_block(
                np.ascontiguousarray(r_all[pick].T),
                block_rows(e_all, pick, n),
                block_rows(j_all, pick, n),
                block_rows(s_all, pick, n),
                out=(work["voltages"], work["currents"], work["outputs"]),
            )
            yield MeshSolution(node_voltages=v_t.T, branch_currents=i_t.T,
                               regulator_outputs=g_t.T,
                               regulator_determinant=work["determinant"] if self.n_g else None)

    def solve_block(
        self, r: np.ndarray, e: np.ndarray, j: np.ndarray, s: np.ndarray,
        out: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None,
    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Solve one block in entity-first layout (the fast inner routine).

        Parameters
        ----------
        r : numpy.ndarray
            ``(resistors, M)`` ohm.
        e, j, s : numpy.ndarray
            ``(voltage sources, M)`` V, ``(current sources, M)`` A and
            ``(regulators, M)`` V.
        out : tuple of numpy.ndarray, optional
            Arrays to write the three results into (shapes as returned);
            fresh arrays when omitted.

        Returns
        -------
        node_voltages, branch_currents, regulator_outputs : numpy.ndarray
            ``(nodes, M)`` V, ``(branches, M)`` A and ``(regulators, M)`` V.
        """
        m = r.shape[1]
        if out is None:
            out = (np.empty((len(self.network.nodes), m)),
                   np.empty((len(self.network.branch_refs), m)), np.empty((self.n_g, m)))
        voltages, currents, outputs = out
        scale = resistance_scale(r)
        if scale is not None:
            # per-unit form: R' = R / s, J' = s J and loop currents s i leave every voltage
            # as it is; s is a power of two, so nothing is rounded on the way
            r = r / scale
            j = j * scale
        work = self._workspace(m)
        rhs = work["rhs"]
        main = rhs[:, 0] if self.n_g else rhs
        self._map_uv.apply(e, out=main)
        r_known = None
        if self.n_i:
            r_known = r * self._map_kr_t.apply(j)
            self._map_neg_ur.apply(r_known, out=main, accumulate=True)
        if self.n_g:
            rhs[:, 1:] = self._b_ug[:, :, None]
        z = self._map_z.apply(r, out=work["z"])
        parts = ldl_solve(z, rhs, self.n_u, self._pair_index, work, self._fill)
        if self.n_g:
            if r_known is None:
                r_known = np.zeros_like(r)
            outputs[...] = self._regulator_outputs(r, e, s, parts, r_known)
            loop_i = parts[:, 0] + np.einsum("ugm,gm->um", parts[:, 1:], outputs)
        else:
            loop_i = parts
        self._map_u_t.apply(loop_i, out=currents)
        if self.n_i:
            self._map_k_t.apply(j, out=currents, accumulate=True)
        drops = np.multiply(r, currents[: self.n_r], out=work["drops"])
        self.last_drops = drops if scale is None else None
        # node voltages down the spanning tree: one operation per node (the path matrix
        # would cost the sum of all path lengths); a source's branch voltage is -E
        voltages[0].fill(0.0)
        n_r, n_rv = self.n_r, self.n_r + self.n_v
        for child, parent, b, sign in self._walk:
            if b < n_r:
                branch, sign_v = drops[b], sign
            elif b < n_rv:
                branch, sign_v = e[b - n_r], -sign
            else:
                branch, sign_v = outputs[b - n_rv - self.n_i], -sign
            (np.add if sign_v > 0 else np.subtract)(voltages[parent], branch, out=voltages[child])
        if scale is not None:
            currents /= scale
        return voltages, currents, outputs

    def _workspace(self, m: int) -> dict[str, np.ndarray]:
        """Scratch arrays for blocks of ``m`` candidates, kept between calls.

        Reusing them avoids fresh page-faulted memory on every block, which
        otherwise costs more than the arithmetic: the arrays are kept at the
        largest block size seen and a smaller block works on the first ``m``
        columns of each.  (One solver object should not be shared between
        threads.)
        """
        if self._work_size < m:
            columns = (1 + self.n_g,) if self.n_g else ()
            rhs_shape = (self.n_u, *columns, m)
            self._capacity = {
                "rhs": np.empty(rhs_shape),
                "z": np.empty((len(self._pairs), m)),
                "inverse": np.empty((self.n_u, m)),
                "factor": np.empty(m),
                "scratch": np.empty(m),
                "rhs_scratch": np.empty((*columns, m)),
                "drops": np.empty((self.n_r, m)),
                "voltages": np.empty((len(self.network.nodes), m)),
                "currents": np.empty((len(self.network.branch_refs), m)),
                "outputs": np.empty((self.n_g, m)),
                "determinant": np.empty(m),
            }
            self._work_size = m
            self._work_views = -1
        if self._work_views != m:
            self._work = {key: array[..., :m] for key, array in self._capacity.items()}
            self._work_views = m
        return self._work

    def _regulator_outputs(
        self, r: np.ndarray, e: np.ndarray, s: np.ndarray, parts: np.ndarray, r_known: np.ndarray
    ) -> np.ndarray:
        """Solve the Schur complement for the regulating elements' output voltages."""
        m = r.shape[1]
        q = (self._q_matrix @ r).reshape(self.n_g, self.n_u, m)
        # (Q X1 - D_G) E_G = S - Q X0 - D_R (R c) + D_V E
        lhs = np.einsum("gum,uhm->ghm", q, parts[:, 1:]) - self._d_g[:, :, None]
        # kept so that a singular system can be explained (which regulators depend)
        self.last_regulator_system = lhs.transpose(2, 0, 1)
        rhs = s - np.einsum("gum,um->gm", q, parts[:, 0]) - self._d_r @ r_known
        if self.n_v:
            rhs = rhs + self._d_v @ e
        determinant = self._workspace(m)["determinant"]
        self.last_determinant = determinant
        determinant[...] = lhs[0, 0] if self.n_g == 1 else np.linalg.det(lhs.transpose(2, 0, 1))
        if self.n_g == 1:
            # a regulator whose output cannot move its sense node (a zero coefficient) has
            # no solution: NaN, not the infinity a division would give, which the loop
            # currents would then turn into inf - inf
            pivot = lhs[0]
            singular = (pivot == 0.0) | ~np.isfinite(pivot)
            return np.divide(rhs, pivot, out=np.full_like(rhs, np.nan),  # type: ignore[no-any-return]  # numpy types this array expression as Any
                             where=~singular)
        # candidates whose regulator equations are singular get NaN outputs (as a single
        # regulator's zero coefficient gives), so the caller can name the regulator
        stacked = lhs.transpose(2, 0, 1)
        scale = np.abs(stacked).max(axis=(1, 2))
        regular = np.abs(determinant) > 1e-13 * np.maximum(scale, 1e-300) ** self.n_g
        out = np.full((self.n_g, m), np.nan)
        if regular.any():
            out[:, regular] = np.linalg.solve(stacked[regular],
                                              rhs.T[regular][:, :, None])[:, :, 0].T
        return out
