"""Targets, resistor stresses, supply current and noise floors of a whole solved batch.

The general measurement, for any solver (loop, sparse nodal, controlled): the
batch is solved at once and every quantity read from its
:class:`~synth.circuit.solution.MeshSolution`, candidate axis first, with the
formulas of the targets: a node-voltage difference, the ratio of two
differences and its −20·log10 in dB, a transfer's gain or offset between two
points, a branch current, I·R·I, a seen resistance.  A loop-solved network is
measured block by block in the solver's own layout instead
(:mod:`synth.circuit.blocks`), operation for operation the same arithmetic.
"""

from __future__ import annotations

__all__ = ["BatchMeasure", "BatchValues", "SeenResistance"]

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from synth.circuit.solution import MeshSolution
from synth.design.target import Target
from synth.rating import NOISE_FRACTION

SeenResistance = Callable[[Target, np.ndarray, np.ndarray | None], np.ndarray]
"""Given a resistance target, resistances ``(N, resistors)`` ohm and the controlled sources'
gains, the resistance seen between the target's nodes, ohm ``(N,)`` (a solve of its own)."""


@dataclass(frozen=True)
class BatchValues:
    """What :meth:`BatchMeasure.measure` reads from a solved batch (candidate axis first).

    Attributes
    ----------
    targets : numpy.ndarray
        ``(N, targets)`` in the targets' order (V, A, W, ohm, ratio or dB).
    power, across : numpy.ndarray
        ``(N, resistors)`` each resistor's dissipation I·R·I, W, and voltage |I·R|, V (where
        I·R is not finite, an infinite resistance for example, the voltage between its ends).
    supply : numpy.ndarray
        ``(N,)`` A delivered by the supplies (the largest operating point's).
    noise : numpy.ndarray
        ``(N, targets)`` each target value's noise floor in its unit.
    """

    targets: np.ndarray
    power: np.ndarray
    across: np.ndarray
    supply: np.ndarray
    noise: np.ndarray


class BatchMeasure:
    """Measure solved batches of one network for one list of targets.

    Parameters
    ----------
    targets : tuple of Target
        The design's targets, in order.
    node_index, branch_index, resistor_index : dict
        Column of each node, branch and resistor by name.
    resistor_ends : numpy.ndarray
        ``(resistors, 2)`` node columns of each resistor's ends.
    supply_columns : numpy.ndarray
        Branch columns whose delivered current counts in the supply current.
    supply_groups : list of numpy.ndarray
        With operating points, the supply columns of each point (the supply current is
        the largest point's); empty otherwise.
    seen : SeenResistance
        Measures a resistance target (it needs a solve of its own).
    """

    def __init__(self, targets: tuple[Target, ...], node_index: dict[str, int],
                 branch_index: dict[str, int], resistor_index: dict[str, int],
                 resistor_ends: np.ndarray, supply_columns: np.ndarray,
                 supply_groups: list[np.ndarray], seen: SeenResistance):
        self.targets = targets
        self.node_index, self.branch_index = node_index, branch_index
        self.resistor_index = resistor_index
        self.ends = resistor_ends
        self.supply_columns, self.supply_groups = supply_columns, supply_groups
        self.seen = seen

    def measure(self, r: np.ndarray, sol: MeshSolution, gains: np.ndarray | None
                ) -> BatchValues:
        """Every target, stress, the supply current and the noise floors of a solved batch.

        Parameters
        ----------
        r : numpy.ndarray
            ``(N, resistors)`` ohm the batch was solved with.
        sol : MeshSolution
            Its solution.
        gains : numpy.ndarray or None
            The controlled sources' gains it was solved with (for a seen resistance).
        """
        i_r = sol.branch_currents[:, :r.shape[1]]
        drops = i_r * r  # Ohm's law: the voltage across each resistor
        power = drops * i_r  # (I·R)·I: neither I² nor I²·R leaves the float range first
        across = np.abs(drops)
        undefined = ~np.isfinite(across)  # I·R not a number: the voltage between the ends
        if undefined.any():
            v = sol.node_voltages
            between = np.abs(v[:, self.ends[:, 0]] - v[:, self.ends[:, 1]])
            across[undefined] = between[undefined]
        targets = np.column_stack(
            [self.target_values(t, r, sol, power, gains) for t in self.targets]
        ) if self.targets else np.zeros((len(r), 0))
        return BatchValues(targets=targets, power=power, across=across,
                           supply=self.supply(sol), noise=self.noise(sol, power))

    def supply(self, sol: MeshSolution) -> np.ndarray:
        """``(N,)`` A: the delivered supply current (the largest operating point's)."""
        delivered = np.clip(sol.branch_currents[:, self.supply_columns], 0.0, None)
        if self.supply_groups:
            return np.max([delivered[:, cols].sum(axis=1)  # type: ignore[no-any-return]  # numpy types this array expression as Any
                           for cols in self.supply_groups], axis=0)
        return delivered.sum(axis=1)  # type: ignore[no-any-return]  # numpy types this array expression as Any

    def transfer_noise(self, target: Target, sol: MeshSolution, row: np.ndarray) -> None:
        """A gain's or offset's noise floor from the voltage scale ``row`` holds (in place)."""
        _, _, in_a, in_b = self.transfer_terms(target, sol)
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            span = np.abs(in_b - in_a)
            row[...] = (2 * row / span if target.kind == "gain"
                        else row * (1 + 2 * np.abs(in_a) / span))
        np.nan_to_num(row, copy=False, nan=0.0, posinf=0.0)

    def noise(self, sol: MeshSolution, power: np.ndarray) -> np.ndarray:
        """``(N, targets)`` the noise floor of each target value, in the target's unit.

        :data:`synth.rating.NOISE_FRACTION` of the network's scale for the
        quantity: the largest node voltage (V) for a voltage, the largest
        branch current (A) for a current, the largest dissipation (W) for a
        power; for a ratio the voltage scale over the ratio's reference
        voltage, for a loss the same through the logarithm (dB).  A resistance
        has none (its slack is relative).  A solve rounds to about 1e-16 of
        its scale, so a value within this floor of a window's edge cannot be
        told from the edge.
        """
        n = len(sol.node_voltages)
        out = np.zeros((n, len(self.targets)))
        if not self.targets:
            return out
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            def largest(values: np.ndarray) -> np.ndarray:
                finite = np.where(np.isfinite(values), np.abs(values), 0.0)
                return finite.max(axis=1, initial=0.0)  # type: ignore[no-any-return]  # numpy types this array expression as Any

            kinds = {t.kind for t in self.targets}
            v_scale = NOISE_FRACTION * largest(sol.node_voltages)
            i_scale = NOISE_FRACTION * largest(sol.branch_currents) if "current" in kinds \
                else v_scale
            p_scale = NOISE_FRACTION * largest(power) if "power" in kinds else v_scale
            v = sol.node_voltages
            idx = self.node_index
            for k, target in enumerate(self.targets):
                if target.kind == "voltage":
                    out[:, k] = v_scale
                elif target.kind == "current":
                    out[:, k] = i_scale
                elif target.kind == "power":
                    out[:, k] = p_scale
                elif target.kind in ("gain", "offset"):
                    _, _, in_a, in_b = self.transfer_terms(target, sol)
                    span = np.abs(in_b - in_a)
                    out[:, k] = (2 * v_scale / span if target.kind == "gain"
                                 else v_scale * (1 + 2 * np.abs(in_a) / span))
                elif target.kind in ("ratio", "loss"):
                    a, b, c, d = target.nodes
                    num = np.abs(v[:, idx[a]] - v[:, idx[b]])
                    den = np.abs(v[:, idx[c]] - v[:, idx[d]])
                    out[:, k] = (v_scale / den if target.kind == "ratio"
                                 else 20.0 / np.log(10.0) * v_scale * (1 / num + 1 / den))
        return np.nan_to_num(out, nan=0.0, posinf=0.0)

    def target_values(self, target: Target, r: np.ndarray, sol: MeshSolution,
                      power: np.ndarray, gains: np.ndarray | None = None) -> np.ndarray:
        """``(N,)`` one target's values, in its unit."""
        v = sol.node_voltages
        idx = self.node_index
        if target.kind == "voltage":
            a, b = target.nodes
            return v[:, idx[a]] - v[:, idx[b]]  # type: ignore[no-any-return]  # numpy types this array expression as Any
        if target.kind in ("ratio", "loss"):
            a, b, c, d = target.nodes
            with np.errstate(divide="ignore", invalid="ignore"):
                ratio = (v[:, idx[a]] - v[:, idx[b]]) / (v[:, idx[c]] - v[:, idx[d]])
                if target.kind == "ratio":
                    return ratio  # type: ignore[no-any-return]  # numpy types this array expression as Any
                # loss in dB, -20 log10 of the voltage ratio (NaN where the ratio is not positive)
                return -20.0 * np.log10(np.where(ratio > 0, ratio, np.nan))
        if target.kind in ("gain", "offset"):
            out_a, out_b, in_a, in_b = self.transfer_terms(target, sol)
            with np.errstate(divide="ignore", invalid="ignore"):
                gain = (out_b - out_a) / (in_b - in_a)
                return gain if target.kind == "gain" else out_a - gain * in_a  # type: ignore[no-any-return]  # numpy types this array expression as Any
        if target.kind == "current":
            return sol.branch_currents[:, self.branch_index[target.ref or ""]]
        if target.kind == "power":
            return power[:, self.resistor_index[target.ref or ""]]
        return self.seen(target, r, gains)

    def transfer_terms(self, target: Target, sol: MeshSolution
                       ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """Output and input at each of a transfer's two points, ``(N,)`` each.

        Outputs are node-pair voltages (V); inputs node-pair voltages or, for
        a current-source input, the source's current (A).
        """
        v = sol.node_voltages
        idx = self.node_index
        n = target.nodes

        def pair(k: int) -> np.ndarray:
            return v[:, idx[n[k]]] - v[:, idx[n[k + 1]]]  # type: ignore[no-any-return]  # numpy types this array expression as Any

        if target.input_refs:
            first, second = (sol.branch_currents[:, self.branch_index[ref]]
                             for ref in target.input_refs)
        else:
            first, second = pair(4), pair(6)
        return pair(0), pair(2), first, second
