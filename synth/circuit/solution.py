"""The solution record every solver returns: node voltages, branch currents, regulator outputs.
"""

from __future__ import annotations

__all__ = ["MeshSolution"]

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
