"""Targets and part stresses of many candidate value sets at once.

An :class:`Evaluator` binds a design to its network and solvers, then turns a
block of candidate resistances ``(N, resistors)`` into arrays of target
values, part currents, voltages and dissipations, all vectorised over
candidates.  Both ``check`` (one candidate) and the search use it.
"""

from __future__ import annotations

__all__ = ["Evaluation", "Evaluator", "SourceValues"]

from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike

from synth.derating import allowed_power
from synth.design import Design, Target
from synth.errors import DesignError
from synth.mesh import MeshSolution, MeshSolver
from synth.network import Network, build_network


@dataclass(frozen=True)
class SourceValues:
    """Values of the independent sources and setpoints, shared or per candidate.

    Attributes
    ----------
    voltages : numpy.ndarray
        Voltage sources, V, ``(count,)`` or ``(N, count)``.
    currents : numpy.ndarray
        Current sources, A.
    setpoints : numpy.ndarray
        Regulating element setpoints, V.
    """

    voltages: np.ndarray
    currents: np.ndarray
    setpoints: np.ndarray


@dataclass(frozen=True)
class Evaluation:
    """Everything a candidate block produces (candidate axis first).

    Attributes
    ----------
    solution : MeshSolution
        Node voltages and branch currents.
    targets : numpy.ndarray
        ``(N, targets)`` in the design's target order (V, A, W, ohm or ratio).
    resistor_power : numpy.ndarray
        ``(N, resistors)`` W.
    resistor_voltage : numpy.ndarray
        ``(N, resistors)`` V across each resistor (absolute).
    supply_current : numpy.ndarray
        ``(N,)`` A: sum of the currents delivered by voltage sources and
        regulating elements (a source that absorbs current, such as a
        forward-biased LED modelled as a voltage drop, counts zero).
    """

    solution: MeshSolution
    targets: np.ndarray
    resistor_power: np.ndarray
    resistor_voltage: np.ndarray
    supply_current: np.ndarray


class Evaluator:
    """Solve and measure candidates of one design.

    Parameters
    ----------
    design : Design
        A validated design.
    typical_resistances : array_like, optional
        Typical value of each resistor (ohm), to choose a well-conditioned
        spanning tree; defaults to given values or the geometric middle of
        each free part's range.
    """

    def __init__(self, design: Design, typical_resistances: ArrayLike | None = None):
        self.design = design
        self.network: Network = build_network(design)
        if typical_resistances is None:
            typical_resistances = [_typical(r) for r in design.resistors]
        self.weights = np.asarray(typical_resistances, dtype=float)
        self.solver = MeshSolver(self.network, self.weights)
        self._seen: dict[tuple[str, str], MeshSolver] = {}
        index = {n: i for i, n in enumerate(self.network.nodes)}
        self.node_index = index
        refs = self.network.branch_refs
        self.branch_index = {ref: k for k, ref in enumerate(refs)}
        self.resistor_index = {r.ref: k for k, r in enumerate(design.resistors)}
        rated = [design.rating(r) for r in design.resistors]
        self.allowed_power = np.array(
            [np.nan if p is None else float(allowed_power(p, design.ambient_c, design.margin_frac))
             for p in rated]
        )
        self.allowed_voltage = np.array(
            [np.nan if p is None else p.limiting_voltage_v * design.voltage_margin_frac
             for p in rated]
        )
        self.nominal_sources = SourceValues(
            voltages=np.array([s.value for s in design.sources if s.kind == "voltage"]),
            currents=np.array([s.value for s in design.sources if s.kind == "current"]),
            setpoints=np.array([g.setpoint for g in design.regulators]),
        )
        self._supply_columns = np.array(
            [self.branch_index[ref]
             for ref in (*self.network.vsource_refs, *self.network.regulator_refs)],
            dtype=int,
        )

    def _seen_solver(self, plus: str, minus: str) -> MeshSolver:
        key = (plus, minus)
        if key not in self._seen:
            self._seen[key] = MeshSolver(self.network.with_test_source(plus, minus), self.weights)
        return self._seen[key]

    def seen_resistance(self, resistances: np.ndarray, plus: str, minus: str) -> np.ndarray:
        """Resistance between two nodes with independent sources zeroed, ohm, ``(N,)``.

        Voltage sources are shorted and current sources opened; regulating
        elements keep regulating (their setpoint is zeroed, their loop stays).
        A 1 A test current is driven into ``plus`` and the voltage read.
        """
        solver = self._seen_solver(plus, minus)
        n_i = len(self.network.isource_refs)
        test = np.zeros(n_i + 1)
        test[-1] = 1.0
        sol = solver.solve(
            resistances,
            voltages=np.zeros(len(self.network.vsource_refs)),
            currents=test,
            setpoints=np.zeros(len(self.network.regulator_refs)),
        )
        v = sol.node_voltages
        return v[:, self.node_index[plus]] - v[:, self.node_index[minus]]

    def evaluate(self, resistances: ArrayLike, sources: SourceValues | None = None) -> Evaluation:
        """Solve a block of candidates and measure every target and part.

        Parameters
        ----------
        resistances : array_like
            ``(N, resistors)`` ohm, in the design's resistor order.
        sources : SourceValues, optional
            Source values; the design's nominal values by default.

        Returns
        -------
        Evaluation
        """
        r = np.atleast_2d(np.asarray(resistances, dtype=float))
        src = sources or self.nominal_sources
        sol = self.solver.solve(r, src.voltages, src.currents, src.setpoints)
        n_r = len(self.network.resistor_refs)
        i_r = sol.branch_currents[:, :n_r]
        power = i_r * i_r * r
        ends = self.network.resistor_ends
        across = np.abs(sol.node_voltages[:, ends[:, 0]] - sol.node_voltages[:, ends[:, 1]])
        targets = np.column_stack(
            [self._target_values(t, r, sol, power) for t in self.design.targets]
        ) if self.design.targets else np.zeros((len(r), 0))
        supply = np.clip(sol.branch_currents[:, self._supply_columns], 0.0, None).sum(axis=1)
        return Evaluation(solution=sol, targets=targets, resistor_power=power,
                          resistor_voltage=across, supply_current=supply)

    def _target_values(self, target: Target, r: np.ndarray, sol: MeshSolution,
                       power: np.ndarray) -> np.ndarray:
        v = sol.node_voltages
        idx = self.node_index
        if target.kind == "voltage":
            a, b = target.nodes
            return v[:, idx[a]] - v[:, idx[b]]
        if target.kind == "ratio":
            a, b, c, d = target.nodes
            with np.errstate(divide="ignore", invalid="ignore"):
                return (v[:, idx[a]] - v[:, idx[b]]) / (v[:, idx[c]] - v[:, idx[d]])
        if target.kind == "current":
            return sol.branch_currents[:, self.branch_index[target.ref or ""]]
        if target.kind == "power":
            return power[:, self.resistor_index[target.ref or ""]]
        a, b = target.nodes
        return self.seen_resistance(r, a, b)

    def check_regulators(self, resistances: np.ndarray) -> None:
        """Refuse a design whose regulating element cannot move its sense node.

        Raises
        ------
        DesignError
            When the output voltage of a regulating element comes out
            undefined (its sense node does not depend on its output).
        """
        if not self.network.regulator_refs:
            return
        sol = self.solver.solve(np.atleast_2d(resistances), self.nominal_sources.voltages,
                                self.nominal_sources.currents, self.nominal_sources.setpoints)
        for k, ref in enumerate(self.network.regulator_refs):
            out = sol.regulator_outputs[:, k]
            if not np.all(np.isfinite(out)) or np.any(np.abs(out) > 1e12):
                raise DesignError(
                    f"{self.design.origin}, regulator {ref}: its output cannot move its sense "
                    "node, so nothing sets its voltage; connect the sense node to the output "
                    "through the feedback network"
                )


def _typical(resistor: object) -> float:
    value = getattr(resistor, "value", None)
    if value is not None:
        return float(value)
    span = getattr(resistor, "range", None)
    if span is not None:
        return float(np.sqrt(span[0] * span[1]))
    return 1e3
