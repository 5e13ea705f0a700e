"""Numerical kernels of the batched loop solve: sparse index maps, the symbolic fill pattern and the
vectorised LDLᵀ solve.
"""

from __future__ import annotations

__all__ = [
    "SparseMap", "as_block", "block_rows", "broadcast_rows", "fill_pattern", "ldl_solve",
    "node_depths", "refuse_gains", "resistance_rows", "resistance_scale",
]

import numpy as np
from numpy.typing import ArrayLike


def broadcast_rows(values: ArrayLike | None, count: int, n: int) -> np.ndarray:
    """``(n, count)`` values: zeros when None, a vector repeated for every candidate."""
    if values is None:
        return np.zeros((n, count))
    array = np.asarray(values, dtype=float)
    return np.broadcast_to(array if array.ndim == 2 else array[None, :], (n, count))


def as_block(values: ArrayLike | None, count: int, n: int | None, what: str) -> np.ndarray:
    """Return ``values`` as an ``(N, count)`` float array (a vector is shared by all)."""
    if values is None:
        if count:
            raise ValueError(f"{what}: {count} values are needed")
        return np.zeros((n or 1, 0))
    array = np.asarray(values, dtype=float)
    if array.ndim == 1:
        array = array[None, :]
    if array.ndim != 2 or array.shape[1] != count:
        raise ValueError(f"{what}: expected shape (N, {count}) or ({count},), got {array.shape}")
    return array


def refuse_gains(gains: ArrayLike | None) -> None:
    """Raise ValueError for controlled-source gains given to a solver of a network without
    controlled sources (None or an empty array is no gains)."""
    if gains is not None and np.size(gains):
        raise ValueError("gains: this network has no controlled sources; use "
                         "ControlledSolver for one that has")


def resistance_rows(resistances: ArrayLike, count: int) -> np.ndarray:
    """``(N, count)`` resistances (ohm) from one candidate's row or N rows."""
    array = np.asarray(resistances, dtype=float)
    if array.ndim == 1:
        array = array[None, :]
    if array.ndim != 2 or array.shape[1] != count:
        raise ValueError(f"resistances: expected shape (N, {count}), got {array.shape}")
    return array


def node_depths(n_nodes: int, ends: np.ndarray) -> np.ndarray:
    """Branch count from ground to each node (breadth-first over every branch)."""
    depth = np.full(n_nodes, n_nodes, dtype=int)
    depth[0] = 0
    frontier = [0]
    while frontier:
        nxt = []
        for node in frontier:
            for a, b in ends:
                for here, there in ((a, b), (b, a)):
                    if here == node and depth[there] > depth[node] + 1:
                        depth[there] = depth[node] + 1
                        nxt.append(int(there))
        frontier = nxt
    return depth


def block_rows(values: np.ndarray, pick: slice, n: int) -> np.ndarray:
    """Entity-first block of per-candidate values, or the shared row repeated."""
    if len(values) == n and n > 1:
        return np.ascontiguousarray(values[pick].T)
    count = pick.stop - pick.start
    return np.ascontiguousarray(np.broadcast_to(values[:1], (count, values.shape[1])).T)


class SparseMap:
    """``out = A @ X`` for a small constant matrix A with few non-zeros.

    Network matrices hold mostly 0 and ±1, so summing the few rows of X that
    matter with in-place ufuncs beats a general matrix product on short
    inner dimensions, and allocates nothing per row.
    """

    def __init__(self, matrix: np.ndarray):
        self.shape = matrix.shape
        self.terms = [
            [(int(k), float(matrix[row, k])) for k in np.flatnonzero(matrix[row])]
            for row in range(matrix.shape[0])
        ]

    def apply(self, x: np.ndarray, out: np.ndarray | None = None,
              accumulate: bool = False) -> np.ndarray:
        """Return ``A @ x`` (``x`` is ``(cols, M)``); add into ``out`` when ``accumulate``."""
        if out is None:
            out = np.zeros((self.shape[0], x.shape[1]))
            accumulate = True
        for row, terms in enumerate(self.terms):
            target = out[row]
            if not accumulate:
                if not terms:
                    target.fill(0.0)
                    continue
                k, c = terms[0]
                if c == 1.0:
                    target[...] = x[k]
                else:
                    np.multiply(x[k], c, out=target)
                rest = terms[1:]
            else:
                rest = terms
            for k, c in rest:
                if c == 1.0:
                    np.add(target, x[k], out=target)
                elif c == -1.0:
                    np.subtract(target, x[k], out=target)
                else:
                    target += c * x[k]
        return out


def fill_pattern(n: int, nonzero: set[tuple[int, int]]) -> frozenset[tuple[int, int]]:
    """Entries ``(i, j)``, ``i <= j``, that can be non-zero during the elimination.

    Symbolic factorisation: eliminating loop ``k`` couples every pair of
    later loops that both touch ``k``.  Entries outside the pattern stay zero
    for every candidate, so the numeric elimination skips them (a ladder's
    tridiagonal Z then costs O(n) instead of O(n³)).
    """
    pattern = set(nonzero) | {(i, i) for i in range(n)}
    for k in range(n):
        touched = [i for i in range(k + 1, n) if (k, i) in pattern]
        for a in touched:
            pattern.update((a, b) for b in touched if b >= a)
    return frozenset(pattern)


def ldl_solve(
    z: np.ndarray, rhs: np.ndarray, n: int, pair_index: dict[tuple[int, int], int],
    work: dict[str, np.ndarray] | None = None,
    filled: frozenset[tuple[int, int]] | None = None,
) -> np.ndarray:
    """Solve ``Z x = rhs`` for symmetric positive definite Z, per candidate.

    ``z`` holds the upper triangle, one row per entry ``(i, j)``, ``i <= j``,
    candidates along the last axis; ``rhs`` is ``(n, columns, M)``.  Both are
    overwritten; ``work`` may supply scratch arrays; ``filled`` (from
    :func:`fill_pattern`) lists the entries that can be non-zero.  Gaussian
    elimination without pivoting is stable for SPD matrices (Golub & Van
    Loan, *Matrix Computations*, §4.2).
    """
    if n == 0:
        return rhs
    if work is None:
        work = {"inverse": np.empty((n, z.shape[1])), "factor": np.empty(z.shape[1]),
                "scratch": np.empty(z.shape[1]), "rhs_scratch": np.empty(rhs.shape[1:])}
    inverse, factor = work["inverse"], work["factor"]
    scratch, rhs_scratch = work["scratch"], work["rhs_scratch"]
    pattern = filled if filled is not None else frozenset(pair_index)
    for k in range(n):
        np.divide(1.0, z[pair_index[k, k]], out=inverse[k])
        below = [i for i in range(k + 1, n) if (k, i) in pattern]
        for i in below:
            np.multiply(z[pair_index[k, i]], inverse[k], out=factor)
            for jj in below:
                if jj < i:
                    continue
                np.multiply(factor, z[pair_index[k, jj]], out=scratch)
                np.subtract(z[pair_index[i, jj]], scratch, out=z[pair_index[i, jj]])
            np.multiply(rhs[k], factor, out=rhs_scratch)
            np.subtract(rhs[i], rhs_scratch, out=rhs[i])
    for i in range(n - 1, -1, -1):
        for jj in range(i + 1, n):
            if (i, jj) not in pattern:
                continue
            np.multiply(rhs[jj], z[pair_index[i, jj]], out=rhs_scratch)
            np.subtract(rhs[i], rhs_scratch, out=rhs[i])
        np.multiply(rhs[i], inverse[i], out=rhs[i])
    return rhs


_SCALE_ABOVE = 600
"""Binary exponent of the largest resistance above which a block is solved per unit: sums
and products of loop resistances near 2**1024 (1.8e308 ohm) would overflow."""

_SCALE_BELOW = -600
"""Binary exponent below which a block is solved per unit (loop currents would overflow)."""

_SCALED_TOP = 500
"""Binary exponent the largest resistance of a scaled candidate is brought to: high enough
that the smallest ones of a wide network stay normal floats, low enough that loop sums
and products of two entries stay finite."""


_ORDINARY_LOW = 2.0 ** (_SCALE_BELOW + 1)
_ORDINARY_HIGH = 2.0 ** (_SCALE_ABOVE - 1)
"""Every resistance of a block within these (ohm) leaves each column's largest exponent in
:data:`_SCALE_BELOW` .. :data:`_SCALE_ABOVE`: no candidate is scaled."""


def resistance_scale(r: np.ndarray) -> np.ndarray | None:
    """Per-candidate powers of two to divide resistances ``(resistors, M)`` by, or None.

    None (no scaling) for every ordinary block; only a block whose largest
    resistance lies beyond about 1e180 ohm, or whose candidates have every
    resistance below about 2e-181 ohm, is solved in per-unit form.  Dividing
    by a power of two is exact, so scaled and unscaled solves agree wherever
    both are finite.

    Examples
    --------
    >>> resistance_scale(np.array([[1e3], [2e3]])) is None
    True
    >>> float(resistance_scale(np.array([[1e308], [1e308]]))[0]) == 2.0 ** 524
    True
    """
    if r.size == 0:
        return None
    if _ORDINARY_LOW <= r.min() and r.max() <= _ORDINARY_HIGH:
        # the common case, settled by two reductions and no temporary: every value is
        # then positive, its own magnitude (NaN fails both tests)
        return None
    magnitude = np.abs(r)
    with np.errstate(invalid="ignore"):
        top = np.max(magnitude, axis=0)
    finite = np.isfinite(top) & (top > 0)
    if not finite.any():
        return None
    exponent = np.frexp(np.where(finite, top, 1.0))[1]
    shift = np.where(exponent > _SCALE_ABOVE, exponent - _SCALED_TOP,
                     np.where(exponent < _SCALE_BELOW, exponent, 0))
    if not shift.any():
        return None
    return np.ldexp(1.0, shift)
