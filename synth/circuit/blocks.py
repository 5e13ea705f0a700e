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
import sys
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
        kinds_of = [("voltage", *_SCALED_BY_VOLTAGE), ("current",), ("power",)]
        self.homes = tuple(next((k for k, t in enumerate(targets) if t.kind in those), None)
                           for those in kinds_of)
        """Per scale (voltage, current, power), the first target whose noise floor is that
        scale itself: the scale is formed in its noise row (None: in a scratch row)."""
        self.left = [k for k, t in enumerate(targets) if t.kind not in _MEASURED]
        """Targets whose values the caller measures (a seen resistance, a transfer); the
        noise row of a transfer holds the voltage scale, for the caller to divide."""
        self._kept: MeasuredBlocks | None = None
        self._kept_for_reuse = False
        self._scratch = np.empty((5, 0))
        self._zeros = np.zeros(0)
        self._r_work = np.empty((self.n_r, 0))

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

        Notes
        -----
        The arrays of the last call are kept.  A later call of the same size or
        smaller writes into them (their first columns) instead of fresh memory
        (whose page faults cost more than the measurement on a large batch) when
        nothing else holds any of them any more: no result, array or view of one
        is alive (counted by the interpreter's references, against a baseline
        taken the same way on arrays nobody holds), or that call passed ``reuse``
        and this one does.
        """
        solver = self.solver
        n = len(r)
        out = self._outputs(n, reuse)
        e_all = as_block(voltages, solver.n_v, n, "voltages")
        j_all = as_block(currents, solver.n_i, n, "currents")
        s_all = as_block(setpoints, solver.n_g, n, "setpoints")
        chunk = solver.preferred_chunk
        with np.errstate(all="ignore"):
            for start in range(0, n, chunk):
                stop = min(start + chunk, n)
                pick = slice(start, stop)
                e, j, s = (_rows(e_all, pick, n), _rows(j_all, pick, n),
                           _rows(s_all, pick, n))
                r_block = self._transposed(r, pick)
                v, i = out.voltages[:, pick], out.currents[:, pick]
                solver.solve_block(r_block, e, j, s, out=(v, i, out.outputs[:, pick]))
                if out.determinant is not None:
                    out.determinant[pick] = solver.last_determinant
                self._measure_block(out, pick, r_block, v, i)
        return out

    def _transposed(self, r: np.ndarray, pick: slice) -> np.ndarray:
        """``(resistors, m)`` the rows ``pick`` of ``r`` entity-first: a view when ``r`` is
        F-ordered, else a copy into a buffer kept between blocks (no fresh memory)."""
        block = r[pick].T
        if block.flags.c_contiguous:
            return block
        m = block.shape[1]
        if self._r_work.shape[1] < m:
            self._r_work = np.empty((self.n_r, m))
        work = self._r_work[:, :m]
        work[...] = block
        return work

    def _outputs(self, n: int, reuse: bool) -> MeasuredBlocks:
        """The arrays a call of ``n`` candidates writes: the last call's (their first ``n``
        columns: a search asks for blocks of every size) when it may overwrite them (see
        :meth:`measure`), fresh ones otherwise."""
        kept = self._kept
        if kept is not None and kept.supply.shape[0] >= n and (
                (reuse and self._kept_for_reuse) or _unheld(kept)):
            self._kept_for_reuse = reuse
            return kept if kept.supply.shape[0] == n else _first_columns(kept, n)
        n_t = self.n_targets
        fresh = MeasuredBlocks(
            voltages=np.empty((self.n_nodes, n)), currents=np.empty((self.n_branches, n)),
            outputs=np.empty((self.solver.n_g, n)),
            determinant=np.empty(n) if self.solver.n_g else None,
            targets=np.zeros((n_t, n)), power=np.empty((self.n_r, n)),
            across=np.empty((self.n_r, n)), supply=np.empty(n), noise=np.zeros((n_t, n)))
        self._kept, self._kept_for_reuse = fresh, reuse
        return fresh

    def _work(self, m: int) -> np.ndarray:
        """``(5, m)`` scratch rows (and :attr:`_zeros` at least ``m`` long)."""
        if self._scratch.shape[1] < m:
            self._scratch = np.empty((5, m))
            self._zeros = np.zeros(m)  # a row, not a scalar: numpy's array-array loops are faster
        return self._scratch[:, :m]

    def _measure_block(self, out: MeasuredBlocks, pick: slice, r: np.ndarray,
                       v: np.ndarray, i: np.ndarray) -> None:
        m = r.shape[1]
        work = self._work(m)
        zero = self._zeros[:m]
        power, across = out.power[:, pick], out.across[:, pick]
        i_r = i[: self.n_r]
        # (I·R)·I: neither I² nor I²·R leaves the float range first; R·I is the solver's
        # own drop when it has one (the same product: multiplication commutes), which it
        # has when every resistance of the block is finite and of ordinary size
        drops = self.solver.last_drops
        if drops is None or drops.shape != i_r.shape:
            drops = np.multiply(i_r, r, out=across)
        np.multiply(drops, i_r, out=power)
        np.absolute(drops, out=across)
        if not math.isfinite(float(np.add.reduce(across, axis=None))):
            # a drop that is not a number (an infinite resistance carrying no current, or
            # a failed solve): the voltage between the resistor's ends instead
            undefined = ~np.isfinite(across)
            for row in np.flatnonzero(undefined.any(axis=1)).tolist():
                a, b = self.ends[row]
                here = undefined[row]
                across[row, here] = np.abs(v[a, here] - v[b, here])
        supply = out.supply[pick]
        if self.supply_rows:
            first, *rest = self.supply_rows
            np.maximum(i[first], zero, out=supply)
            for row in rest:
                np.maximum(i[row], zero, out=work[0])
                np.add(supply, work[0], out=supply)
        else:
            supply.fill(0.0)
        if not self.n_targets:
            return
        targets, noise = out.targets[:, pick], out.noise[:, pick]
        # each scale straight into the noise row of its first target that is the scale
        v_scale, i_scale, p_scale = (work[1 + s] if home is None else noise[home]
                                     for s, home in enumerate(self.homes))
        # the ground row of the node voltages is zero: the largest starts after it
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
                if k != self.homes[0]:
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
                if k != self.homes[1]:
                    noise[k] = i_scale
            elif kind == "power":
                row[...] = power[rows[0]]
                if k != self.homes[2]:
                    noise[k] = p_scale
            elif kind in _SCALED_BY_VOLTAGE and k != self.homes[0]:
                noise[k] = v_scale


def _first_columns(blocks: MeasuredBlocks, n: int) -> MeasuredBlocks:
    """Views of the first ``n`` candidates of every array of ``blocks``."""
    return MeasuredBlocks(
        voltages=blocks.voltages[:, :n], currents=blocks.currents[:, :n],
        outputs=blocks.outputs[:, :n],
        determinant=None if blocks.determinant is None else blocks.determinant[:n],
        targets=blocks.targets[:, :n], power=blocks.power[:, :n],
        across=blocks.across[:, :n], supply=blocks.supply[:n], noise=blocks.noise[:, :n])


def _references(blocks: MeasuredBlocks) -> int:
    """The largest reference count of any array of ``blocks`` (None entries skipped)."""
    arrays = (blocks.voltages, blocks.currents, blocks.outputs, blocks.determinant,
              blocks.targets, blocks.power, blocks.across, blocks.supply, blocks.noise)
    return max(sys.getrefcount(a) for a in arrays if a is not None)


def _baseline() -> int:
    """:func:`_references` of arrays that nothing but their record holds."""
    def fresh() -> np.ndarray:
        return np.empty((1, 1))

    return _references(MeasuredBlocks(fresh(), fresh(), fresh(), fresh()[0], fresh(),
                                      fresh(), fresh(), fresh()[0], fresh()))


_UNHELD = _baseline()
"""Reference count of an array only its :class:`MeasuredBlocks` holds (measured here, not
assumed: the count a call adds depends on the interpreter)."""


def _unheld(blocks: MeasuredBlocks) -> bool:
    """True when no reference to any array of ``blocks`` exists outside it (no result,
    array or view alive: a view holds its base), so its memory may be written again."""
    return _references(blocks) <= _UNHELD


def _rows(values: np.ndarray, pick: slice, n: int) -> np.ndarray:
    """Entity-first block of per-candidate values, or a read-only view repeating the shared
    row (no copy: the solve only reads its sources)."""
    if len(values) == n and n > 1:
        return np.ascontiguousarray(values[pick].T)
    count = pick.stop - pick.start
    if not values.shape[1]:
        return np.empty((0, count))
    row = np.ascontiguousarray(values[0], dtype=float)
    # each row one value repeated along the candidates (stride 0): a view, made directly
    # (numpy.broadcast_to costs more than many a small block's solve)
    return np.ndarray((len(row), count), dtype=float, buffer=row, strides=(row.itemsize, 0))


def _largest(rows: np.ndarray, out: np.ndarray, scratch: np.ndarray) -> np.ndarray:
    """``NOISE_FRACTION`` times the largest finite magnitude down each column, ``(M,)``.

    The largest magnitude is the larger of the largest value and minus the
    least, read in two reductions without a temporary of magnitudes; ``fmax``
    and ``fmin`` skip NaN.  A column of NaN
    only (counted zero) or with an infinite value (rare: a candidate beyond the
    float range) goes through the exact masked maximum.  ``scratch`` holds at
    least one row.
    """
    if not len(rows):
        out.fill(0.0)
        return out
    least = scratch[0]
    np.fmax.reduce(rows, axis=0, out=out)
    np.fmin.reduce(rows, axis=0, out=least)
    np.subtract(0.0, least, out=least)  # never -0.0
    # at least zero (+0.0 when the least is at most zero), or NaN for a column of NaN only
    np.fmax(least, out, out=out)
    if not math.isfinite(float(out.max(initial=0.0))):  # NaN or infinity
        bad = ~np.isfinite(out)
        values = rows[:, bad]
        out[bad] = np.where(np.isfinite(values), np.abs(values), 0.0).max(axis=0, initial=0.0)
    np.multiply(out, NOISE_FRACTION, out=out)
    return out
