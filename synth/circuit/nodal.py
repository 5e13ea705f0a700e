"""Modified nodal analysis: an independent solver that cross-checks the mesh solve.

Unknowns are the node voltages (ground excluded) and the currents of the
voltage-defined branches; equations are Kirchhoff's current law at every node
plus one constraint per voltage source (``V(plus) - V(minus) = E``), per
controlled voltage output (``V(plus) - V(minus) = gain × control``) and per
regulating element (``V(sense) - V(reference) = setpoint``); a controlled
current output stamps ``gain × control`` into the current law.  It shares only
the :class:`~synth.network.Network` numbering with :mod:`synth.mesh`, and solves
with ``numpy.linalg.solve`` (LU with partial pivoting) per candidate, so the
two agree only if both are right.

References
----------
Ho, Ruehli & Brennan, "The modified nodal approach to network analysis",
IEEE Trans. Circuits Syst. 22(6), 1975.
"""

from __future__ import annotations

__all__ = ["nodal_solve"]

import numpy as np
from numpy.typing import ArrayLike

from synth.circuit.kernels import broadcast_rows, resistance_scale
from synth.circuit.network import ControlledBranch, Network
from synth.circuit.solution import MeshSolution


def _incidence(ends: np.ndarray, n_nodes: int) -> np.ndarray:
    """``(nodes, branches)``: +1 where a branch leaves its first node, -1 at its second."""
    inc = np.zeros((n_nodes, len(ends)))
    for b, (a, c) in enumerate(ends):
        inc[a, b] += 1.0
        inc[c, b] -= 1.0
    return inc


def _control_row(network: Network, c: ControlledBranch, r: np.ndarray, j: np.ndarray, m: int,
                 size: int) -> tuple[np.ndarray, np.ndarray]:
    """The controlling quantity as ``coeff @ x + const`` over the MNA unknowns x."""
    n = len(r)
    coeff, const = np.zeros((n, size)), np.zeros(n)

    def add_node(node: int, weight: np.ndarray | float) -> None:
        if node:
            coeff[:, node - 1] += weight

    if c.control_nodes is not None:
        add_node(c.control_nodes[0], 1.0)
        add_node(c.control_nodes[1], -1.0)
        return coeff, const
    b = int(c.control_branch)  # type: ignore[arg-type]  # set whenever control_nodes is None
    n_r, n_v, n_i = len(network.resistor_refs), len(network.vsource_refs), len(network.isource_refs)
    if b < n_r:  # a resistor's current (V(a) - V(b)) / R
        a, z = network.resistor_ends[b]
        add_node(int(a), 1.0 / r[:, b])
        add_node(int(z), -1.0 / r[:, b])
    elif b < n_r + n_v:  # a voltage-defined branch: its current is an unknown
        coeff[:, m + b - n_r] = 1.0
    elif b < n_r + n_v + n_i:  # an independent current source: a constant
        const += j[:, b - n_r - n_v]
    else:  # a regulating element's current
        coeff[:, m + n_v + b - n_r - n_v - n_i] = 1.0
    return coeff, const


def nodal_solve(
    network: Network,
    resistances: ArrayLike,
    voltages: ArrayLike | None = None,
    currents: ArrayLike | None = None,
    setpoints: ArrayLike | None = None,
    gains: ArrayLike | None = None,
) -> MeshSolution:
    """Solve a batch of candidates by modified nodal analysis.

    Parameters
    ----------
    network : Network
        The circuit.
    resistances : array_like
        ``(N, resistors)`` ohm.
    voltages, currents, setpoints : array_like, optional
        Source values (V, A, V), ``(count,)`` or ``(N, count)``; entries at
        controlled sources' slots are ignored.
    gains : array_like, optional
        Controlled sources' gains (nominal by default).

    Returns
    -------
    MeshSolution
        Same layout and sign conventions as :meth:`synth.mesh.MeshSolver.solve`.

    Examples
    --------
    >>> import numpy as np
    >>> net = Network(origin="", nodes=("gnd", "in", "out"), resistor_refs=("R1", "R2"),
    ...               resistor_ends=np.array([[1, 2], [2, 0]]), vsource_refs=("V1",),
    ...               vsource_ends=np.array([[0, 1]]), isource_refs=(),
    ...               isource_ends=np.zeros((0, 2), int))
    >>> float(nodal_solve(net, [[10e3, 10e3]], voltages=[10.0]).node_voltages[0, 2])
    5.0
    """
    r = np.asarray(resistances, dtype=float)
    r = r[None, :] if r.ndim == 1 else r
    n = len(r)
    n_nodes = len(network.nodes)
    n_v, n_i = len(network.vsource_refs), len(network.isource_refs)
    n_g = len(network.regulator_refs)
    e, j = broadcast_rows(voltages, n_v, n), broadcast_rows(currents, n_i, n)
    s = broadcast_rows(setpoints, n_g, n)
    gain = broadcast_rows(gains if gains is not None else [c.gain for c in network.controlled],
                          len(network.controlled), n)
    scale = resistance_scale(r.T)
    if scale is not None:
        # per unit, as the mesh solve: R / s, and every current s times larger (voltages
        # as they are), so conductances near 1e-308 S are not subnormal; a gain from a
        # current to a voltage shrinks by s, one from a voltage to a current grows by s
        r, j = r / scale[:, None], j * scale[:, None]
        factor = np.ones_like(gain)
        for k, c in enumerate(network.controlled):
            by_current = c.control_nodes is None
            if by_current and c.voltage_output:
                factor[:, k] = 1.0 / scale
            elif not by_current and not c.voltage_output:
                factor[:, k] = scale
        gain = gain * factor
    inc_r = _incidence(network.resistor_ends, n_nodes)[1:]
    inc_v = _incidence(network.vsource_ends, n_nodes)[1:]
    inc_i = _incidence(network.isource_ends, n_nodes)[1:]
    inc_g = _incidence(network.regulator_ends, n_nodes)[1:]
    m = n_nodes - 1
    size = m + n_v + n_g
    matrix = np.zeros((n, size, size))
    # (inc_r / R) @ inc_rᵀ per candidate: a matrix product (BLAS), not a triple sum
    matrix[:, :m, :m] = np.matmul(inc_r[None, :, :] / r[:, None, :], inc_r.T)
    matrix[:, :m, m:m + n_v] = inc_v
    matrix[:, :m, m + n_v:] = inc_g
    matrix[:, m:m + n_v, :m] = -inc_v.T
    for g, (sense, reference) in enumerate(network.regulator_sense):
        row = m + n_v + g
        if sense:
            matrix[:, row, sense - 1] += 1.0
        if reference:
            matrix[:, row, reference - 1] -= 1.0
    rhs = np.zeros((n, size))
    controlled_i = {c.slot: c for c in network.controlled if not c.voltage_output}
    fixed_j = j.copy()
    for slot in controlled_i:
        fixed_j[:, slot] = 0.0
    rhs[:, :m] = -(fixed_j @ inc_i.T)
    rhs[:, m:m + n_v] = e
    rhs[:, m + n_v:] = s
    for k, c in enumerate(network.controlled):
        coeff, const = _control_row(network, c, r, j, m, size)
        coeff, const = coeff * gain[:, k:k + 1], const * gain[:, k]
        if c.voltage_output:  # V(plus) - V(minus) - gain * control = 0
            row = m + c.slot
            matrix[:, row, :] -= coeff
            rhs[:, row] = const
        else:  # gain * control amperes leave node `from` and enter node `to`
            column = inc_i[:, c.slot]
            matrix[:, :m, :] += column[None, :, None] * coeff[:, None, :]
            rhs[:, :m] -= column[None, :] * const[:, None]
    x = np.linalg.solve(matrix, rhs[:, :, None])[:, :, 0]
    node_v = np.concatenate([np.zeros((n, 1)), x[:, :m]], axis=1)
    ends = network.resistor_ends
    i_r = (node_v[:, ends[:, 0]] - node_v[:, ends[:, 1]]) / r
    j_all = j.copy()
    for k, c in enumerate(network.controlled):
        if not c.voltage_output:
            coeff, const = _control_row(network, c, r, j, m, size)
            j_all[:, c.slot] = gain[:, k] * (np.einsum("ns,ns->n", coeff, x) + const)
    branch_i = np.concatenate([i_r, x[:, m:m + n_v], j_all, x[:, m + n_v:]], axis=1)
    if scale is not None:
        branch_i /= scale[:, None]
    outputs = node_v[:, network.regulator_ends[:, 1]] if n_g else np.zeros((n, 0))
    return MeshSolution(node_voltages=node_v, branch_currents=branch_i, regulator_outputs=outputs)
