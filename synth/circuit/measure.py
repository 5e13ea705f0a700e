"""Targets and part stresses of many candidate value sets at once.

An :class:`Evaluator` binds a design to its network and solvers, then turns a
block of candidate resistances ``(N, resistors)`` into arrays of target
values, part currents, voltages and dissipations, all vectorised over
candidates.  Both ``check`` (one candidate) and the search use it.
"""

from __future__ import annotations

__all__ = ["Evaluation", "Evaluator", "SourceValues"]

from dataclasses import dataclass, replace

import numpy as np
from numpy.typing import ArrayLike

from synth.circuit.batch import BatchMeasure
from synth.circuit.blocks import BlockMeasure
from synth.circuit.mesh import MeshSolver
from synth.circuit.network import Network, build_network
from synth.circuit.solution import MeshSolution
from synth.circuit.solvers import Solver, network_solver
from synth.circuit.wellposed import refuse_singular, refuse_undefined_ratios
from synth.design.model import Design
from synth.design.target import Target


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
    gains : numpy.ndarray or None
        Controlled sources' gains, ``(count,)`` or ``(N, count)`` (None: nominal).
    """

    voltages: np.ndarray
    currents: np.ndarray
    setpoints: np.ndarray
    gains: np.ndarray | None = None


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
        ``(N,)`` A (with operating points: the largest over the points): sum of
        the currents delivered by voltage sources and
        regulating elements (a source that absorbs current, such as a
        forward-biased LED modelled as a voltage drop, counts zero).  An
        amplifier's output current counts too: its output is a regulating
        element fed from the amplifier's supply.
    part_current, part_voltage, part_power : numpy.ndarray
        ``(N, parts)`` each physical part's current (A), voltage (V, absolute)
        and dissipation (W), in the order of :attr:`Design.part_refs`, from
        :meth:`Position.split`.
    target_noise : numpy.ndarray
        ``(N, targets)`` each target value's noise floor in its unit:
        :data:`synth.rating.NOISE_FRACTION` of the network's scale for that
        quantity (see :func:`target_noise`); windows are met within it.
    """

    solution: MeshSolution
    targets: np.ndarray
    resistor_power: np.ndarray
    resistor_voltage: np.ndarray
    supply_current: np.ndarray
    part_current: np.ndarray
    part_voltage: np.ndarray
    part_power: np.ndarray
    target_noise: np.ndarray


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
        self.solver: Solver = network_solver(self.network, self.weights)
        self._blocks: BlockMeasure | None = None
        self._seen: dict[tuple[str, str], Solver] = {}
        self._without: dict[tuple[str, ...], tuple[Evaluator, np.ndarray]] = {}
        index = {n: i for i, n in enumerate(self.network.nodes)}
        self.node_index = index
        refs = self.network.branch_refs
        self.branch_index = {ref: k for k, ref in enumerate(refs)}
        self.resistor_index = {r.ref: k for k, r in enumerate(design.resistors)}
        self.part_refs = design.part_refs
        self.part_columns: list[slice] = []
        start = 0
        for resistor in design.resistors:
            self.part_columns.append(slice(start, start + resistor.position.count))
            start += resistor.position.count
        self.multi_part = [k for k, r in enumerate(design.resistors) if r.position.count > 1]
        pairs = design.followers
        self.copies = np.array([c for c, _ in pairs], dtype=int)
        """Resistor columns that take another column's value (operating points' copies)."""
        self.leaders = np.array([lead for _, lead in pairs], dtype=int)
        self.copy_parts = np.array([col for c, _ in pairs for col in
                                    range(self.part_columns[c].start, self.part_columns[c].stop)],
                                   dtype=int)
        self.leader_parts = np.array([col for _, lead in pairs for col in
                                      range(self.part_columns[lead].start,
                                            self.part_columns[lead].stop)], dtype=int)
        allowances = [design.allowance(r) for r in design.resistors for _ in r.part_refs]
        self.allowed_power = np.array([np.nan if a is None else a.power_w for a in allowances])
        """Per physical part, W (NaN for an unrated part), at the design's rating ambient."""
        self.allowed_voltage = np.array([np.nan if a is None else a.voltage_v
                                         for a in allowances])
        """Per physical part, V (NaN for an unrated part)."""
        n_cv = sum(1 for c in design.controlled if c.voltage_output)
        n_ci = len(design.controlled) - n_cv
        self.nominal_sources = SourceValues(
            voltages=np.array([s.value for s in design.sources if s.kind == "voltage"]
                              + [0.0] * n_cv),
            currents=np.array([s.value for s in design.sources if s.kind == "current"]
                              + [0.0] * n_ci),
            setpoints=np.array([g.setpoint for g in design.regulators]),
            gains=np.array([c.gain for c in design.controlled]) if design.controlled else None,
        )
        self.supply_columns = np.array(
            [self.branch_index[ref]
             for ref in (*self.network.vsource_refs, *self.network.regulator_refs)],
            dtype=int,
        )
        """Branch columns whose delivered current counts in the supply current."""
        self.supply_groups: list[np.ndarray] = []
        """With operating points: the supply columns of each point (the supply current is
        the largest point's); empty otherwise."""
        if design.points:
            supply_refs = (*self.network.vsource_refs, *self.network.regulator_refs)
            names = [p.name for p in design.points]
            self.supply_groups = [
                np.array([k for k, ref in enumerate(supply_refs)
                          if ref.rpartition("@")[2] == name], dtype=int) for name in names]
        self.batch = BatchMeasure(design.targets, self.node_index, self.branch_index,
                                  self.resistor_index, self.network.resistor_ends,
                                  self.supply_columns, self.supply_groups, self._seen_target)
        """Measures a whole solved batch (the general path; every seen resistance)."""
        if isinstance(self.solver, MeshSolver):
            self._blocks = BlockMeasure(self.solver, design.targets, self.node_index,
                                        self.branch_index, self.resistor_index,
                                        self.supply_columns)

    def _seen_solver(self, plus: str, minus: str) -> Solver:
        key = (plus, minus)
        if key not in self._seen:
            self._seen[key] = network_solver(self.network.with_test_source(plus, minus),
                                             self.weights)
        return self._seen[key]

    def _solve(self, solver: Solver, r: np.ndarray,
               voltages: np.ndarray, currents: np.ndarray, setpoints: np.ndarray,
               gains: np.ndarray | None) -> MeshSolution:
        return solver.solve(r, voltages, currents, setpoints, gains=gains)

    def seen_resistance(self, resistances: np.ndarray, plus: str, minus: str,
                        gains: np.ndarray | None = None) -> np.ndarray:
        """Resistance between two nodes with independent sources zeroed, ohm, ``(N,)``.

        Voltage sources are shorted and current sources opened; regulating
        elements keep regulating (their setpoint is zeroed, their loop stays).
        A 1 A test current is driven into ``plus`` and the voltage read.
        """
        solver = self._seen_solver(plus, minus)
        n_i = len(self.network.isource_refs)
        test = np.zeros(n_i + 1)
        test[-1] = 1.0
        sol = self._solve(solver, resistances, np.zeros(len(self.network.vsource_refs)), test,
                          np.zeros(len(self.network.regulator_refs)), gains)
        v = sol.node_voltages
        return v[:, self.node_index[plus]] - v[:, self.node_index[minus]]  # type: ignore[no-any-return]  # numpy types this array expression as Any

    def follow(self, resistances: np.ndarray) -> np.ndarray:
        """``(N, resistors)`` ohm with every point's copy at its leader's value (a copy)."""
        r = np.array(np.atleast_2d(resistances), dtype=float)
        if len(self.copies):
            r[:, self.copies] = r[:, self.leaders]
        return r

    def follow_parts(self, part_values: np.ndarray) -> np.ndarray:
        """``(N, parts)`` ohm with every copy's parts at its leader's part values (a copy)."""
        parts = np.array(np.atleast_2d(part_values), dtype=float)
        if len(self.copy_parts):
            parts[:, self.copy_parts] = parts[:, self.leader_parts]
        return parts

    def part_values(self, resistances: np.ndarray) -> np.ndarray:
        """Physical part values ``(N, parts)`` for position values ``(N, resistors)``, ohm.

        A position of several parts takes the part values its file gives when
        they make up the position's value, and otherwise equal parts.
        """
        r = np.atleast_2d(np.asarray(resistances, dtype=float))
        out = np.empty((len(r), len(self.part_refs)))
        for k, resistor in enumerate(self.design.resistors):
            cols = self.part_columns[k]
            position = resistor.position
            if position.count == 1:
                out[:, cols.start] = r[:, k]
                continue
            out[:, cols] = position.equal_split(r[:, k])
            if position.part_values is not None:
                given = np.array(position.part_values)
                same = np.isclose(r[:, k], position.effective(given[None, :])[0], rtol=1e-12)
                out[same, cols] = given
        return out

    def effective(self, part_values: np.ndarray) -> np.ndarray:
        """Position values ``(N, resistors)`` from physical part values ``(N, parts)``, ohm."""
        parts = np.atleast_2d(np.asarray(part_values, dtype=float))
        if not self.multi_part:
            return parts.copy()
        out = np.empty((len(parts), len(self.design.resistors)))
        for k, resistor in enumerate(self.design.resistors):
            cols = self.part_columns[k]
            out[:, k] = (parts[:, cols.start] if resistor.position.count == 1
                         else resistor.position.effective(parts[:, cols]))
        return out

    def part_resistor(self) -> np.ndarray:
        """Index of the position each physical part belongs to, ``(parts,)``."""
        return np.repeat(np.arange(len(self.design.resistors)),
                         [r.position.count for r in self.design.resistors])

    def evaluate(self, resistances: ArrayLike, sources: SourceValues | None = None,
                 part_values: np.ndarray | None = None, *, parts: bool = True,
                 reuse: bool = False) -> Evaluation:
        """Solve a block of candidates and measure every target and part.

        Parameters
        ----------
        resistances : array_like
            ``(N, resistors)`` ohm, in the design's resistor order: each
            position's effective value.
        sources : SourceValues, optional
            Source values; the design's nominal values by default.
        part_values : numpy.ndarray, optional
            ``(N, parts)`` ohm of every physical part (see :meth:`part_values`,
            the default); only the columns of positions of several parts are read.
        parts : bool
            False skips dividing positions into their parts (the search's box
            bounds use positions only); the part arrays are then ``(N, 0)``.
        reuse : bool
            Let this call write into the arrays of the previous call with
            ``reuse`` of the same size, overwriting that call's results (no
            fresh memory per call: for a caller that reduces each result before
            it asks for the next).

        Returns
        -------
        Evaluation
            The arrays of a loop-solved network are candidate-first views of
            entity-first arrays (:mod:`synth.circuit.blocks`).
        """
        r = np.atleast_2d(np.asarray(resistances, dtype=float))
        if len(self.copies):
            r = self.follow(r)
            if part_values is not None:
                part_values = self.follow_parts(part_values)
        src = sources or self.nominal_sources
        if self._blocks is not None:
            return self._evaluate_blocks(self._blocks, r, src, part_values, parts, reuse)
        return self.evaluate_general(r, src, part_values, parts=parts)

    def _evaluate_blocks(self, blocks: BlockMeasure, r: np.ndarray, src: SourceValues,
                         part_values: np.ndarray | None, parts: bool, reuse: bool
                         ) -> Evaluation:
        got = blocks.measure(r, src.voltages, src.currents, src.setpoints, reuse=reuse)
        sol = MeshSolution(node_voltages=got.voltages.T, branch_currents=got.currents.T,
                           regulator_outputs=got.outputs.T,
                           regulator_determinant=got.determinant)
        for k in blocks.left:
            target = self.design.targets[k]
            got.targets[k] = self.batch.target_values(target, r, sol, got.power.T, None)
            if target.kind in ("gain", "offset"):
                self.batch.transfer_noise(target, sol, got.noise[k])
        power, across = got.power.T, got.across.T
        supply = self.batch.supply(sol) if self.supply_groups else got.supply
        if parts:
            part_i, part_u, part_p = self._split(r, got.currents[:blocks.n_r].T, across, power,
                                                 part_values)
        else:
            part_i = part_u = part_p = np.zeros((len(r), 0))
        return Evaluation(solution=sol, targets=got.targets.T, resistor_power=power,
                          resistor_voltage=across, supply_current=supply,
                          part_current=part_i, part_voltage=part_u, part_power=part_p,
                          target_noise=got.noise.T)

    def evaluate_general(self, r: np.ndarray, src: SourceValues,
                         part_values: np.ndarray | None = None, *, parts: bool = True
                         ) -> Evaluation:
        """:meth:`evaluate` for any solver: solve the whole batch, then measure it
        (:class:`synth.circuit.batch.BatchMeasure`).

        The form every solver takes (sparse and controlled solves use it); a
        loop-solved network goes through :class:`synth.circuit.blocks.BlockMeasure`
        instead, whose values are the same.
        """
        gains = src.gains if src.gains is not None else self.nominal_sources.gains
        sol = self._solve(self.solver, r, src.voltages, src.currents, src.setpoints, gains)
        got = self.batch.measure(r, sol, gains)
        if parts:
            n_r = len(self.network.resistor_refs)
            part_i, part_u, part_p = self._split(r, sol.branch_currents[:, :n_r], got.across,
                                                 got.power, part_values)
        else:
            part_i = part_u = part_p = np.zeros((len(r), 0))
        return Evaluation(solution=sol, targets=got.targets, resistor_power=got.power,
                          resistor_voltage=got.across, supply_current=got.supply,
                          part_current=part_i, part_voltage=part_u, part_power=part_p,
                          target_noise=got.noise)

    def target_noise(self, sol: MeshSolution, power: np.ndarray) -> np.ndarray:
        """``(N, targets)`` the noise floor of each target value, in the target's unit
        (:meth:`synth.circuit.batch.BatchMeasure.noise`)."""
        return self.batch.noise(sol, power)

    def transfer_terms(self, target: Target, sol: MeshSolution
                       ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """Output and input at each of a transfer's two points, ``(N,)`` each
        (:meth:`synth.circuit.batch.BatchMeasure.transfer_terms`)."""
        return self.batch.transfer_terms(target, sol)

    def _seen_target(self, target: Target, r: np.ndarray, gains: np.ndarray | None
                     ) -> np.ndarray:
        """A resistance target's values, ohm ``(N,)``: a test-source solve of its own."""
        a, b = target.nodes
        if target.without:
            reduced, keep = self._reduced(target.without)
            return reduced.seen_resistance(r[:, keep], a, b, gains)
        return self.seen_resistance(r, a, b, gains)

    def _split(self, r: np.ndarray, current: np.ndarray, across: np.ndarray, power: np.ndarray,
               part_values: np.ndarray | None
               ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        if not self.multi_part:
            return current, across, power
        if part_values is None:
            part_values = self.part_values(r)
        n = len(self.part_refs)
        part_i, part_u, part_p = (np.empty((len(r), n)) for _ in range(3))
        for k, resistor in enumerate(self.design.resistors):
            cols = self.part_columns[k]
            if resistor.position.count == 1:
                part_i[:, cols.start] = current[:, k]
                part_u[:, cols.start] = across[:, k]
                part_p[:, cols.start] = power[:, k]
                continue
            shares = resistor.position.split(part_values[:, cols], current[:, k])
            part_i[:, cols], part_u[:, cols], part_p[:, cols] = (
                shares.current, shares.voltage, shares.power)
        return part_i, part_u, part_p

    def _reduced(self, without: tuple[str, ...]) -> tuple[Evaluator, np.ndarray]:
        """An evaluator of the network with the positions ``without`` opened (left out)."""
        if without not in self._without:
            kept = [k for k, r in enumerate(self.design.resistors) if r.ref not in without]
            design = replace(self.design, resistors=tuple(self.design.resistors[k]
                                                          for k in kept), targets=())
            self._without[without] = (Evaluator(design, self.weights[kept]),
                                      np.array(kept, dtype=int))
        return self._without[without]

    def check_ratios(self, resistances: np.ndarray) -> None:
        """Refuse a ratio or loss whose reference voltage is zero for every value set given
        (:func:`synth.circuit.wellposed.refuse_undefined_ratios`)."""
        if not any(t.kind in ("ratio", "loss") for t in self.design.targets):
            return
        src = self.nominal_sources
        sol = self._solve(self.solver, self.follow(resistances), src.voltages,
                          src.currents, src.setpoints, src.gains)
        refuse_undefined_ratios(self.design, self.node_index, sol)

    def check_regulators(self, resistances: np.ndarray) -> None:
        """Refuse a network the solver finds singular for every value set given
        (:func:`synth.circuit.wellposed.refuse_singular`)."""
        if not self.network.regulator_refs and not self.network.controlled:
            return
        src = self.nominal_sources
        r = self.follow(resistances)
        sol = self._solve(self.solver, r, src.voltages, src.currents, src.setpoints, src.gains)
        with np.errstate(over="ignore", invalid="ignore"):
            drive = max(np.max(np.abs(src.voltages), initial=0.0),
                        np.max(np.abs(src.setpoints), initial=0.0),
                        np.max(np.abs(src.currents), initial=0.0)
                        * float(np.max(np.abs(r), initial=0.0)), 1.0)
        refuse_singular(self.design.origin, self.network, self.solver, sol, drive)


def _typical(resistor: object) -> float:
    value = getattr(resistor, "value", None)
    if value is not None:
        return float(value)
    span = getattr(resistor, "range", None)
    if span is not None:
        return float(np.sqrt(span[0] * span[1]))
    return 1e3
