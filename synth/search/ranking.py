"""Ranking of candidates: the objective, then the documented tie-break.
"""

from __future__ import annotations

__all__ = ["TIE_TOLERANCE", "RankedCandidates", "significant"]

from dataclasses import dataclass

import numpy as np

TIE_TOLERANCE = 1e-12
"""Objectives closer than this (as fractions) are ties, ordered by the tie-break."""


@dataclass(frozen=True)
class RankedCandidates:
    """The best candidates found, best first.

    Attributes
    ----------
    indices : numpy.ndarray
        ``(K, positions)`` index of each position's choice.
    objective : numpy.ndarray
        ``(K,)`` the ranking objective (largest relative error over ``equals``
        targets; in relaxed mode the largest relative violation).
    distinct : numpy.ndarray
        ``(K,)`` number of distinct part values among the free parts.
    coarseness : numpy.ndarray
        ``(K,)`` sum of the series ranks of the free parts' values.
    supply : numpy.ndarray
        ``(K,)`` supply current, A.
    """

    indices: np.ndarray
    objective: np.ndarray
    distinct: np.ndarray
    coarseness: np.ndarray
    supply: np.ndarray

    @staticmethod
    def empty(positions: int) -> RankedCandidates:
        return RankedCandidates(np.zeros((0, positions), dtype=np.int64), np.zeros(0),
                                np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.int64),
                                np.zeros(0))

    def merged(self, other: RankedCandidates, top: int, supply_first: bool = False
               ) -> RankedCandidates:
        """Both sets ranked together, the best ``top`` kept (ties by the tie-break).

        With ``supply_first`` a tie in the objective goes to the lower supply
        current before fewer distinct values and coarser series (what an
        error-against-supply front needs: the least supply at each error).
        """
        idx = np.concatenate([self.indices, other.indices])
        obj = np.concatenate([self.objective, other.objective])
        dis = np.concatenate([self.distinct, other.distinct])
        coa = np.concatenate([self.coarseness, other.coarseness])
        sup = np.concatenate([self.supply, other.supply])
        if len(obj) == 0:
            return self
        quantised = np.floor(obj / TIE_TOLERANCE)
        # the supply current breaks ties only beyond float noise: 12 significant digits
        supply_key = significant(sup, 12)
        keys = [idx[:, c] for c in range(idx.shape[1] - 1, -1, -1)]
        # duplicates only pair a row of self with one of other: the best top + len(self)
        # rows hold the best top distinct ones
        ties = (coa, dis, supply_key) if supply_first else (supply_key, coa, dis)
        order = np.lexsort((*keys, *ties, quantised))[: top + len(self.objective)]
        if idx.shape[1]:
            # the same candidate can arrive twice (a seed, then its box): keep it once
            _, first = np.unique(idx[order], axis=0, return_index=True)
            order = order[np.sort(first)]
        else:
            order = order[:1]
        order = order[:top]
        return RankedCandidates(idx[order], obj[order], dis[order], coa[order], sup[order])


def significant(values: np.ndarray, digits: int) -> np.ndarray:
    """``values`` rounded to ``digits`` significant digits (zeros and non-finite kept).

    Examples
    --------
    >>> significant(np.array([3.0000000000000004e-05, 0.0, 123456.789]), 6).tolist()
    [3e-05, 0.0, 123457.0]
    """
    values = np.asarray(values, dtype=float)
    out = values.copy()
    ok = np.isfinite(values) & (values != 0)
    exponent = np.floor(np.log10(np.abs(values[ok])))
    scale = 10.0 ** (digits - 1 - exponent)
    out[ok] = np.round(values[ok] * scale) / scale
    return out
