"""The solution record every solver returns: node voltages, branch currents, regulator outputs.
"""

from __future__ import annotations

__all__ = ["MeshSolution", "solution_difference"]

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class MeshSolution:
    """Results for a batch of candidates (candidate axis first).

    Attributes
    ----------
    node_voltages : numpy.ndarray
        ``(N, nodes)`` V, ground first, in :attr:`Network.nodes` order.
    branch_currents : numpy.ndarray
        ``(N, branches)`` A in :attr:`Network.branch_refs` order: resistor
        current from ``nodes[0]`` to ``nodes[1]``; source and regulating
        element current as delivered (out of ``plus``/``output``, into ``to``).
    regulator_outputs : numpy.ndarray
        ``(N, regulators)`` V driven by each regulating element.
    regulator_determinant : numpy.ndarray or None
        ``(N,)`` determinant of the regulators' Schur complement (None when
        the network has no regulating element).  The network's determinant
        is this times det Z > 0 and is affine in each resistance, so a sign
        that holds at every vertex of a box of values holds inside it: then no
        quantity has a pole in the box.
    """

    node_voltages: np.ndarray
    branch_currents: np.ndarray
    regulator_outputs: np.ndarray
    regulator_determinant: np.ndarray | None = None


def _relative(first: np.ndarray, second: np.ndarray, floor: np.ndarray | float) -> float:
    """Largest ``|a - b| / max(|a|, |b|, floor)``; equal infinities agree, a lone one is inf."""
    if first.size == 0:
        return 0.0
    with np.errstate(invalid="ignore", over="ignore"):
        gap = np.abs(first - second)
        size = np.maximum(np.maximum(np.abs(first), np.abs(second)), floor)
        share = np.where(gap == 0, 0.0, gap / np.where(size > 0, size, 1.0))
    agree = (first == second) | (np.isnan(first) & np.isnan(second))
    share = np.where(agree, 0.0, np.where(np.isfinite(share), share, np.inf))
    return float(share.max())


def solution_difference(first: MeshSolution, second: MeshSolution,
                        resistances: np.ndarray) -> float:
    """How far two solutions of the same candidates differ, relative to what they compare.

    Every node voltage and branch current is compared relative to the larger
    magnitude of its two values, with an absolute floor from the network's
    scale: the largest node voltage for voltages; for a resistor's current,
    the larger of the largest branch current and the current the largest
    voltage drives through that resistor; for a source's current, the largest
    of those.  So a current that is tiny beside the network (1 Ω in series with
    1 PΩ carries 10 fA from 10 V) is compared to what its resistor's rounding
    allows (10 V / 1 Ω times the unit roundoff), not to its own size, and a
    quantity that is zero up to rounding (a balanced bridge's null) is judged
    against the network, not against its own noise.

    Parameters
    ----------
    first, second : MeshSolution
        Solutions of the same ``(N, resistors)`` candidates by two methods.
    resistances : numpy.ndarray
        ``(N, resistors)`` ohm, the candidates solved.

    Returns
    -------
    float
        The largest relative difference (0 when they agree exactly, inf when a
        value is finite in one and not in the other).

    Examples
    --------
    >>> a = MeshSolution(np.array([[0.0, 10.0, 1e-15]]), np.array([[2e-3, 2e-3]]),
    ...                  np.zeros((1, 0)))
    >>> b = MeshSolution(np.array([[0.0, 10.0, 0.0]]), np.array([[2e-3, 2.002e-3]]),
    ...                  np.zeros((1, 0)))
    >>> round(solution_difference(a, b, np.array([[1e3]])), 6)
    0.0002

    Notes
    -----
    A componentwise relative error with a floor, the mixed measure of rounding
    analysis (N. J. Higham, *Accuracy and Stability of Numerical Algorithms*,
    2nd ed., SIAM 2002, §1.2): a solve accurate to the unit roundoff of its
    scale differs by about 1e-16 here, whatever the size of each quantity.
    """
    r = np.atleast_2d(np.asarray(resistances, dtype=float))
    with np.errstate(invalid="ignore"):
        volts = np.concatenate([first.node_voltages, second.node_voltages], axis=1)
        amps = np.concatenate([first.branch_currents, second.branch_currents], axis=1)
        v_scale = np.nanmax(np.where(np.isfinite(volts), np.abs(volts), 0.0), axis=1,
                            initial=0.0)
        i_scale = np.nanmax(np.where(np.isfinite(amps), np.abs(amps), 0.0), axis=1,
                            initial=0.0)
    n_r = r.shape[1]
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        driven = np.where(r > 0, v_scale[:, None] / r, 0.0)
    # a source's current is a sum of resistor currents: its scale is the largest of them
    largest = driven.max(axis=1, initial=0.0)
    current_floor = np.broadcast_to(np.maximum(i_scale, largest)[:, None],
                                    first.branch_currents.shape).copy()
    current_floor[:, :n_r] = np.maximum(i_scale[:, None], driven)
    return max(
        _relative(first.node_voltages, second.node_voltages, v_scale[:, None]),
        _relative(first.branch_currents, second.branch_currents,
                  current_floor),
    )
