"""Targets, stresses and noise floors of candidate blocks, measured in the loop solve's own layout.

:meth:`synth.circuit.mesh.MeshSolver.solve_block` works entity-first (one row
per node, branch or resistor, candidates along the row).  :class:`BlockMeasure`
keeps that layout from the solve to the last quantity: every block is solved
straight into rows of the output arrays, and each target, resistor power,
voltage, the supply current and the noise floors are formed row by row with
in-place ufuncs, without a transpose, a sort or a temporary per candidate
block.  Only the quantities the design's targets need are formed: the current
and power scales of the noise floor, for example, only when a current or a
power is a target.  The caller reads the results candidate-first through
transposed views (:class:`MeasuredBlocks`).

The arithmetic is that of :meth:`synth.circuit.measure.Evaluator.evaluate`'s
general path operation for operation (so the values agree bit for bit; a sum of
three or more supply currents may round in another order, within 1e-15
relative).
"""

from __future__ import annotations

__all__ = ["BlockMeasure", "MeasuredBlocks"]

import math
from dataclasses import dataclass

import numpy as np

from synth.circuit.kernels import as_block
from synth.circuit.mesh import MeshSolver
from synth.design.target import Target
from synth.rating import NOISE_FRACTION

_MEASURED = ("voltage", "ratio", "loss", "current", "power")
"""Target kinds measured here, row by row."""

_SCALED_BY_VOLTAGE = ("gain", "offset")
"""Target kinds the caller measures whose noise floors scale the voltage scale."""

_LOSS_FACTOR = 20.0 / np.log(10.0)
"""dB per neper of a voltage ratio's logarithm: d(20 log10 x) = 20 / ln 10 dx / x."""


@dataclass(frozen=True)
class MeasuredBlocks:
    """Entity-first results of :meth:`BlockMeasure.measure` (candidates along the last axis).

    Attributes
    ----------
    voltages : numpy.ndarray
        ``(nodes, N)`` V.
    currents : numpy.ndarray
        ``(branches, N)`` A.
    outputs : numpy.ndarray
        ``(regulators, N)`` V.
    determinant : numpy.ndarray or None
        ``(N,)`` the regulators' Schur determinant (None without regulators).
    targets : numpy.ndarray
        ``(targets, N)``; the rows of :attr:`BlockMeasure.left` are the caller's.
    power, across : numpy.ndarray
        ``(resistors, N)`` W and V (absolute).
    supply : numpy.ndarray
        ``(N,)`` A delivered by the voltage sources and regulators.
    noise : numpy.ndarray
        ``(targets, N)`` each target's noise floor in its unit.
    """

    voltages: np.ndarray
    currents: np.ndarray
    outputs: np.ndarray
    determinant: np.ndarray | None
    targets: np.ndarray
    power: np.ndarray
    across: np.ndarray
    supply: np.ndarray
    noise: np.ndarray


class BlockMeasure:
    """Measure candidate blocks of one network for one list of targets.

    Parameters
    ----------
    solver : MeshSolver
        The network's loop solver.
    targets : tuple of Target
        The design's targets, in order.
    node_index, branch_index, resistor_index : dict
        Row of each node, branch and resistor by name.
    supply_columns : numpy.ndarray
        Branch rows whose delivered current counts in the supply current.
    """

    def __init__(self, solver: MeshSolver, targets: tuple[Target, ...],
                 node_index: dict[str, int], branch_index: dict[str, int],
                 resistor_index: dict[str, int], supply_columns: np.ndarray):
        self.solver = solver
        network = solver.network
        self.n_nodes = len(network.nodes)
        self.n_branches = len(network.branch_refs)
        self.n_r = len(network.resistor_refs)
        self.ends = [(int(a), int(b)) for a, b in network.resistor_ends]
        self.supply_rows = [int(c) for c in supply_columns]
        self.n_targets = len(targets)
        kinds = {t.kind for t in targets}
        self.need_v = bool(kinds & {"voltage", "ratio", "loss", *_SCALED_BY_VOLTAGE})
        self.need_i = "current" in kinds
        self.need_p = "power" in kinds
        self.plan: list[tuple[str, tuple[int, ...]]] = []
        """Per target its kind and the rows it reads (nodes, a branch or a resistor)."""
        for target in targets:
            if target.kind in ("voltage", "ratio", "loss"):
                rows = tuple(node_index[n] for n in target.nodes)
            elif target.kind == "current":
                rows = (branch_index[target.ref or ""],)
            elif target.kind == "power":
                rows = (resistor_index[target.ref or ""],)
            else:
                rows = ()
            self.plan.append((target.kind, rows))
        self.left = [k for k, t in enumerate(targets) if t.kind not in _MEASURED]
        """Targets whose values the caller measures (a seen resistance, a transfer); the
        noise row of a transfer holds the voltage scale, for the caller to divide."""
        self._kept: MeasuredBlocks | None = None
        self._scratch = np.empty((4, 0))

    def measure(self, r: np.ndarray, voltages: np.ndarray, currents: np.ndarray,
                setpoints: np.ndarray, *, reuse: bool = False) -> MeasuredBlocks:
        """Solve and measure ``(N, resistors)`` candidates, block by block.

        Parameters
        ----------
        r : numpy.ndarray
            ``(N, resistors)`` ohm (any memory order; an F-ordered array, whose
            transpose is contiguous, is read without a copy).
        voltages, currents, setpoints : numpy.ndarray
            Source values, V, A and V, ``(count,)`` shared or ``(N, count)``.
        reuse : bool
            Write into the arrays of the previous call with ``reuse`` when they
            have the same size (no fresh memory per call); the results of that
            call are then overwritten.

        Returns
        -------
        MeasuredBlocks
        """
        solver = self.solver
        n = len(r)
        out = self._outputs(n, reuse)
        e_all = as_block(voltages, solver.n_v, n, "voltages")
        j_all = as_block(currents, solver.n_i, n, "currents")
        s_all = as_block(setpoints, solver.n_g, n, "setpoints")
        chunk = solver.preferred_chunk
        shared: dict[int, tuple[np.ndarray, np.ndarray, np.ndarray]] = {}
        with np.errstate(all="ignore"):
            for start in range(0, n, chunk):
                stop = min(start + chunk, n)
                m = stop - start
                pick = slice(start, stop)
                if m not in shared or not (len(e_all) == len(j_all) == len(s_all) == 1):
                    shared[m] = (_rows(e_all, pick, n), _rows(j_all, pick, n),
                                 _rows(s_all, pick, n))
                e, j, s = shared[m]
                r_block = np.ascontiguousarray(r[pick].T)
                v, i = out.voltages[:, pick], out.currents[:, pick]
                solver.solve_block(r_block, e, j, s, out=(v, i, out.outputs[:, pick]))
                if out.determinant is not None:
                    out.determinant[pick] = solver.last_determinant
                self._measure_block(out, pick, r_block, v, i)
        return out

    def _outputs(self, n: int, reuse: bool) -> MeasuredBlocks:
        kept = self._kept
        if reuse and kept is not None and kept.supply.shape[0] == n:
            return kept
        n_t = self.n_targets
        fresh = MeasuredBlocks(
            voltages=np.empty((self.n_nodes, n)), currents=np.empty((self.n_branches, n)),
            outputs=np.empty((self.solver.n_g, n)),
            determinant=np.empty(n) if self.solver.n_g else None,
            targets=np.zeros((n_t, n)), power=np.empty((self.n_r, n)),
            across=np.empty((self.n_r, n)), supply=np.empty(n), noise=np.zeros((n_t, n)))
        if reuse:
            self._kept = fresh
        return fresh

    def _work(self, m: int) -> np.ndarray:
        """``(rows, m)`` scratch: four rows, then one per branch (for the magnitudes)."""
        if self._scratch.shape[1] < m:
            self._scratch = np.empty((4 + max(self.n_branches, self.n_nodes), m))
        return self._scratch[:, :m]

    def _measure_block(self, out: MeasuredBlocks, pick: slice, r: np.ndarray,
                       v: np.ndarray, i: np.ndarray) -> None:
        m = r.shape[1]
        work = self._work(m)
        power, across = out.power[:, pick], out.across[:, pick]
        i_r = i[: self.n_r]
        np.multiply(i_r, r, out=power)  # (I·R)·I: neither I² nor I²·R leaves the float range first
        np.multiply(power, i_r, out=power)
        for k, (a, b) in enumerate(self.ends):
            np.subtract(v[a], v[b], out=across[k])
            np.absolute(across[k], out=across[k])
        supply = out.supply[pick]
        if self.supply_rows:
            first, *rest = self.supply_rows
            np.maximum(i[first], 0.0, out=supply)
            for row in rest:
                np.maximum(i[row], 0.0, out=work[0])
                np.add(supply, work[0], out=supply)
        else:
            supply.fill(0.0)
        if not self.n_targets:
            return
        targets, noise = out.targets[:, pick], out.noise[:, pick]
        # the ground row of the node voltages is zero: the largest starts after it
        v_scale, i_scale, p_scale = work[1], work[2], work[3]
        if self.need_v:
            _largest(v[1:], v_scale, work[4:])
        if self.need_i:
            _largest(i, i_scale, work[4:])
        if self.need_p:
            _largest(power, p_scale, work[4:])
        for k, (kind, rows) in enumerate(self.plan):
            row = targets[k]
            if kind == "voltage":
                np.subtract(v[rows[0]], v[rows[1]], out=row)
                noise[k] = v_scale
            elif kind in ("ratio", "loss"):
                a, b, c, d = rows
                num, den = work[0], noise[k]
                np.subtract(v[a], v[b], out=num)
                np.subtract(v[c], v[d], out=den)
                np.divide(num, den, out=row)
                if kind == "loss":
                    row[~(row > 0)] = np.nan
                    np.log10(row, out=row)
                    np.multiply(row, -20.0, out=row)
                np.absolute(den, out=den)
                if kind == "ratio":
                    np.divide(v_scale, den, out=den)
                else:
                    np.absolute(num, out=num)
                    np.divide(1.0, num, out=num)
                    np.divide(1.0, den, out=den)
                    np.add(num, den, out=num)
                    np.multiply(v_scale, _LOSS_FACTOR, out=den)
                    np.multiply(den, num, out=den)
                np.nan_to_num(den, copy=False, nan=0.0, posinf=0.0)
            elif kind == "current":
                row[...] = i[rows[0]]
                noise[k] = i_scale
            elif kind == "power":
                row[...] = power[rows[0]]
                noise[k] = p_scale
            elif kind in _SCALED_BY_VOLTAGE:
                noise[k] = v_scale


def _rows(values: np.ndarray, pick: slice, n: int) -> np.ndarray:
    """Entity-first block of per-candidate values, or the shared row repeated."""
    if len(values) == n and n > 1:
        return np.ascontiguousarray(values[pick].T)
    count = pick.stop - pick.start
    return np.ascontiguousarray(np.broadcast_to(values[:1], (count, values.shape[1])).T)


def _largest(rows: np.ndarray, out: np.ndarray, scratch: np.ndarray) -> np.ndarray:
    """``NOISE_FRACTION`` times the largest finite magnitude down each column, ``(M,)``.

    ``fmax`` skips NaN (counted as zero, as no row is negative); an infinite
    value (rare: a candidate beyond the float range) sends its column through
    the exact masked maximum.  ``scratch`` holds at least as many rows as ``rows``.
    """
    if not len(rows):
        out.fill(0.0)
        return out
    magnitude = np.absolute(rows, out=scratch[:len(rows)])
    np.fmax.reduce(magnitude, axis=0, out=out)
    np.fmax(out, 0.0, out=out)
    if not math.isfinite(float(out.max(initial=0.0))):
        bad = ~np.isfinite(out)
        values = rows[:, bad]
        out[bad] = np.where(np.isfinite(values), np.abs(values), 0.0).max(axis=0, initial=0.0)
    np.multiply(out, NOISE_FRACTION, out=out)
    return out
