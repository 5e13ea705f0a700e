"""Refusing networks whose equations say nothing: a ratio over 0 V, a singular regulator or
controlled-source system.  Both ``check`` and ``design`` run these rules on the solves of
an :class:`~synth.circuit.measure.Evaluator` before they judge any candidate."""

from __future__ import annotations

__all__ = ["refuse_singular", "refuse_undefined_ratios"]

import numpy as np

from synth.circuit.controlled import ControlledSolver
from synth.circuit.network import Network
from synth.circuit.solution import MeshSolution
from synth.circuit.solvers import Solver
from synth.design.model import Design
from synth.errors import DesignError, excerpt, name_list
from synth.rating import NOISE_FRACTION


def refuse_undefined_ratios(design: Design, node_index: dict[str, int],
                            sol: MeshSolution) -> None:
    """Refuse a ratio or loss whose reference voltage is zero for every value set solved.

    A reference voltage within the noise floor of the network's voltage
    scale (:data:`synth.rating.NOISE_FRACTION`) counts as zero: 0 / 0 (a
    network whose sources are all 0 V) and noise / noise say nothing.

    Raises
    ------
    DesignError
        Naming the target and the reference voltage.
    """
    v = sol.node_voltages
    with np.errstate(invalid="ignore"):
        scale = np.where(np.isfinite(v), np.abs(v), 0.0).max(axis=1, initial=0.0)
    for target in design.targets:
        if target.kind not in ("ratio", "loss"):
            continue
        _, _, c, d = target.nodes
        den = np.abs(v[:, node_index[c]] - v[:, node_index[d]])
        if np.all(~(den > NOISE_FRACTION * scale)):
            reference = f"V({c})" if d == design.ground else f"V({c}) - V({d})"
            volts = "every voltage of the network is 0 V" if not np.any(scale > 0) \
                else "it is 0 V up to rounding"
            label = excerpt(target.label, quoted=True)
            raise DesignError(
                f"{design.origin}, target {label}: the {target.kind}'s "
                f"reference voltage {reference} is 0 V for these values ({volts}), so "
                f"the {target.kind} is undefined; drive that node pair with a source "
                "or measure against another pair")


def refuse_singular(origin: str, network: Network, solver: Solver, sol: MeshSolution,
                    drive: float) -> None:
    """Refuse a network the solver found singular for every value set solved.

    A regulating element whose output cannot move its sense node, several
    whose setpoints depend on each other, or controlled sources whose loop
    gain is exactly one leave the network's equations singular: no unique
    solution.  The refusal names the parts involved (those with a share in
    the singular system's null vector).

    Parameters
    ----------
    drive : float
        The largest voltage the sources could drive (V): source voltages,
        setpoints, source currents times the largest resistance, at least 1.
        An output beyond 1e12 times it is the pole of a sense node the output
        cannot move.

    Raises
    ------
    DesignError
        Naming the regulators or controlled sources involved.
    """
    with np.errstate(over="ignore", invalid="ignore"):
        outputs = sol.regulator_outputs
        undefined = (~np.isfinite(outputs) & np.isfinite(drive)) | (
            np.abs(outputs) > 1e12 * drive)
    mesh = solver.inner if isinstance(solver, ControlledSolver) else solver
    refs = network.regulator_refs
    if len(refs) and np.all(undefined.any(axis=1)):
        involved = _dependent(mesh.last_regulator_system, refs)
        if len(involved) > 1:
            raise DesignError(
                f"{origin}: regulators {name_list(involved)} set sense voltages that "
                "depend on each other, so the network's equations are singular (no "
                "output voltages meet every setpoint, or any do); give each its own "
                "sense node pair, or remove one")
        ref = involved[0] if involved else refs[int(np.argmax(undefined[0]))]
        raise DesignError(
            f"{origin}, regulator {ref}: its output cannot move its sense node, so nothing "
            "sets its voltage; connect the sense node to the output through the feedback "
            "network")
    if network.controlled and np.all(~np.isfinite(sol.node_voltages).all(axis=1)):
        assert isinstance(solver, ControlledSolver)
        sources = tuple(c.ref for c in network.controlled)
        involved = _dependent(solver.last_loop_matrix, sources) or sources
        raise DesignError(
            f"{origin}: the controlled sources {name_list(involved)} leave the circuit "
            "without a unique solution (their loop gain is exactly one, so the network's "
            "equations are singular); check their gains and control connections")


def _dependent(systems: np.ndarray, refs: tuple[str, ...]) -> tuple[str, ...]:
    """The parts whose equations (rows of the first of ``systems``) are linearly dependent:
    those with a share in the left null vector of its smallest singular value."""
    if not len(systems) or not np.all(np.isfinite(systems[0])):
        return ()
    left, values, _ = np.linalg.svd(systems[0])
    if values[-1] > 1e-9 * max(float(values[0]), 1e-300):
        return ()
    share = np.abs(left[:, -1])
    return tuple(ref for ref, part in zip(refs, share, strict=True) if part > 1e-6)
