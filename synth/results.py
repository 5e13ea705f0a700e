"""Result records of the two top-level jobs: a checked design and ranked synthesis candidates.
"""

from __future__ import annotations

__all__ = [
    "PROBLEM_KINDS", "Candidate", "CheckResult", "PartReport", "Problem", "SynthesisResult",
    "TargetReport",
]

import math
from dataclasses import dataclass, field

from synth.deadline import Cut
from synth.design.model import Design
from synth.linearity import LinearityCheck
from synth.spread.records import SpreadResult
from synth.units import format_eng, format_window


def _edge(value: float | None, side: int) -> float:
    return side * math.inf if value is None else value


PROBLEM_KINDS = ("power", "voltage", "window", "yield", "linearity")
"""A part over its power allowance, over its voltage allowance, a target out of its window,
a Monte Carlo yield short of ``min_yield``, an output off its linearity target's line by more
than allowed (°C)."""


@dataclass(frozen=True)
class Problem:
    """One thing that fails, as data: the text report renders it.

    Attributes
    ----------
    kind : {"power", "voltage", "window"}
        See :data:`PROBLEM_KINDS`.
    subject : str
        The physical part's designator, or the target's label.
    value : float
        What the part dissipates or sees, or the target's value.
    limit : float
        The allowance broken, or the window edge the value lies beyond.
    unit : str
        Unit of ``value`` and ``limit`` (W, V, A, Ω, "" for a ratio).
    low, high : float or None
        The whole window of a target (None for a part's limit).
    basis : {"nominal", "worst case", "yield"}
        Where it fails: at nominal values, somewhere in the tolerance box, or
        in the Monte Carlo yield.
    reading : tuple of (str, float), or None
        For a target judged in another quantity (a linearity target's grid
        point: ``("°C", slope)``, slope in V/°C): the text reads the value's
        distance from the window's middle, and the window's half-width, in it.
    """

    kind: str
    subject: str
    value: float
    limit: float
    unit: str
    low: float | None = None
    high: float | None = None
    basis: str = "nominal"
    reading: tuple[str, float] | None = None

    def __str__(self) -> str:
        text = self._text()
        return f"at worst case, {text}" if self.basis == "worst case" else text

    def _text(self) -> str:
        if self.kind == "yield":
            return (f"the Monte Carlo yield's 95 % lower bound {self.value * 100:.4g} % is short "
                    f"of min_yield {self.limit * 100:g} %")
        if self.kind == "linearity":
            return (f"{self.subject} is {self.value:+.3g} °C off its line, beyond the "
                    f"±{self.limit:g} °C allowed")
        if self.kind == "power":
            return (f"{self.subject} dissipates {format_eng(self.value, 'W')}, over its allowed "
                    f"{format_eng(self.limit, 'W')}")
        if self.kind == "voltage":
            return (f"{self.subject} sees {format_eng(self.value, 'V')}, over its allowed "
                    f"{format_eng(self.limit, 'V')}")
        if self.reading is not None and self.low is not None and self.high is not None:
            unit, per = self.reading
            off = (self.value - (self.low + self.high) / 2) / per
            return (f"target {self.subject} reads {off:+.3g} {unit} off its line, beyond the "
                    f"±{(self.high - self.low) / 2 / abs(per):.3g} {unit} allowed")
        return (f"target {self.subject} = {format_eng(self.value, self.unit, 6)} lies outside "
                f"{format_window(_edge(self.low, -1), _edge(self.high, 1), self.unit)}")


@dataclass(frozen=True)
class PartReport:
    """Stress of one part.

    Attributes
    ----------
    ref, kind : str
        Reference designator; ``"resistor"``, ``"voltage source"``,
        ``"current source"`` or ``"regulator"``.
    value : float
        Ohm, V or A (a regulator: the output voltage it drives).
    current : float
        A, in the part's sign convention.
    voltage : float
        V across the part (absolute for resistors).
    power : float
        W dissipated (resistors) or delivered (sources).
    package : str or None
        Package name.
    rated_power, allowed_power : float or None
        W: package rating at its rated ambient; what the design allows after
        derating at the design ambient times the margin.
    utilization : float or None
        ``power / allowed_power``; above 1 the part is over its allowance.
    limiting_voltage, allowed_voltage : float or None
        V: the package's limiting element voltage, and that times the
        design's voltage margin.
    voltage_utilization : float or None
        ``voltage / allowed_voltage``.
    position : str or None
        The resistor position this physical part belongs to (its own
        designator for a single part; ``"R1"`` for ``"R1A"``); None for sources.
    point : str or None
        In a design of operating points: the point these figures are taken at
        (for a resistor, the point of its largest use of its allowance); None
        without points.
    """

    ref: str
    kind: str
    value: float
    current: float
    voltage: float
    power: float
    package: str | None = None
    rated_power: float | None = None
    allowed_power: float | None = None
    utilization: float | None = None
    limiting_voltage: float | None = None
    allowed_voltage: float | None = None
    voltage_utilization: float | None = None
    position: str | None = None
    point: str | None = None


@dataclass(frozen=True)
class TargetReport:
    """How one target came out.

    Attributes
    ----------
    label, kind, unit : str
        As in the design.
    value : float
        Achieved value.
    goal : float or None
        The ``equals`` value.
    low, high : float
        The hard window (``-inf``/``inf`` where open).
    error : float or None
        The goal's error by :meth:`synth.design.model.Target.error`:
        ``(value - goal) / |goal|`` for a non-zero goal, ``value - goal`` in
        the target's unit for a zero goal; None without a goal.
    met : bool
        True when the value lies inside the window (edges included).
    relative : bool
        True when ``error`` is a fraction, False when it is in ``unit``.
    status : str
        ``"met"`` (inside its window), ``"out of window"``, ``"soft goal"``
        (a goal without a window: as near as the catalogue and the limits
        allow), ``"goal missed"`` (a soft goal that a limit costs accuracy;
        see ``binding`` and ``unlimited_error``) or ``"out of band"`` (met
        at nominal values, broken on the basis the design requires).
    binding : str or None
        For ``"goal missed"``: the limit that costs the accuracy.
    unlimited_error : float or None
        For ``"goal missed"``: the error the catalogue reaches without that limit.
    error_unit : str or None
        The unit of ``error`` when the target is judged in another quantity (``"°C"``
        for a point of a linearity target); None otherwise.
    """

    label: str
    kind: str
    unit: str
    value: float
    goal: float | None
    low: float
    high: float
    error: float | None
    met: bool
    relative: bool = True
    status: str = "met"
    binding: str | None = None
    unlimited_error: float | None = None
    error_unit: str | None = None


@dataclass(frozen=True)
class CheckResult:
    """Result of :func:`check`.

    Attributes
    ----------
    design : Design
    values : dict of str to float
        Resistance of every physical part, ohm (``R1A``, ``R1B`` for a
        position of several parts).
    nodes : dict of str to float
        Node voltages, V.
    parts : tuple of PartReport
    targets : tuple of TargetReport
    supply_current : float
        A delivered by voltage sources and regulating elements (those that
        absorb current count zero).
    max_voltage : float
        Largest voltage between any two nodes, V.
    cautions : tuple of str
    problems : tuple of Problem
        One record per part over its allowance or target out of its window.
    verify_difference : float or None
        Largest difference between mesh and nodal results, each quantity relative
        to the larger of its two values with a floor from the network's scale
        (:func:`synth.circuit.solution.solution_difference`; None unless ``verify``).
    filled : dict of str to float
        Free parts that had no value and were checked at their ideal value, ohm.
    spread : SpreadResult or None
        Tolerance, temperature and supply spread, when asked for.
    positions : dict of str to float
        Effective resistance of every position, ohm.
    linearity : tuple of LinearityCheck
        Each linearity target's errors in °C on its grid and refined.
    """

    design: Design
    values: dict[str, float]
    nodes: dict[str, float]
    parts: tuple[PartReport, ...]
    targets: tuple[TargetReport, ...]
    supply_current: float
    max_voltage: float
    cautions: tuple[str, ...]
    problems: tuple[Problem, ...]
    verify_difference: float | None
    filled: dict[str, float] = field(default_factory=dict)
    spread: SpreadResult | None = None
    positions: dict[str, float] = field(default_factory=dict)
    linearity: tuple[LinearityCheck, ...] = ()

    @property
    def ok(self) -> bool:
        """True when every target is met and every part is within its allowance."""
        return not self.problems


@dataclass(frozen=True)
class Candidate:
    """One ranked design.

    Attributes
    ----------
    rank : int
        1 for the best.
    values : dict of str to float
        Ohm by physical part reference (a combined position ``R1`` gives
        ``R1A`` and ``R1B``); free parts only.
    positions : dict of str to float
        Effective ohm of every resistor position, fixed ones included.
    series : dict of str to str
        The coarsest series holding each free part's value (``"E24"``), or
        the stock file it came from.
    objective : float
        Largest relative error over the ``equals`` targets at nominal values.
    targets : tuple of TargetReport
    parts : tuple of PartReport
        Every physical resistor, then the sources and regulators.
    supply_current : float
        A.
    feasible : bool
        Every window and limit met.
    problems : tuple of Problem
        What fails, when not feasible.
    check : CheckResult
        The full re-check of the candidate.
    spread : SpreadResult or None
        Tolerance, temperature and supply spread, when asked for.
    """

    rank: int
    values: dict[str, float]
    positions: dict[str, float]
    series: dict[str, str]
    objective: float
    targets: tuple[TargetReport, ...]
    parts: tuple[PartReport, ...]
    supply_current: float
    feasible: bool
    problems: tuple[Problem, ...]
    check: CheckResult
    spread: SpreadResult | None = None

    @property
    def yield_low(self) -> float | None:
        """The 95 % lower bound of the Monte Carlo yield; None without a Monte Carlo."""
        spread = self.spread
        return None if spread is None or spread.yield_interval is None else spread.yield_interval[0]

    @property
    def hottest(self) -> PartReport | None:
        """The resistor using the largest share of its allowed dissipation."""
        rated = [p for p in self.parts if p.kind == "resistor" and p.utilization is not None]
        return max(rated, key=lambda p: p.utilization or 0.0) if rated else None


@dataclass(frozen=True)
class SynthesisResult:
    """Result of :func:`synthesize`.

    Attributes
    ----------
    design : Design
    ideal : dict of str to float
        Ideal continuous value of each free position, ohm.
    candidates : tuple of Candidate
        Best first.  When none is feasible these are the nearest designs.
    proven_optimal : bool
        The search finished: the best candidate is provably the best over
        the whole catalogue product (same objective as an exhaustive search);
        for an infeasible design, that none meets everything and the nearest
        designs are the nearest.
    feasible : bool
        The best candidate meets every window and limit.
    binding : str or None
        When infeasible: the target or limit the nearest design breaks most.
    evaluated : int
        Candidate value sets solved during the search.
    combinations : int
        Size of the catalogue product.
    elapsed_s : float
        Search time, s.
    rank_by : str
        ``"nominal"``, ``"worst-case"`` or ``"yield"``: what ordered the candidates.
    require : str
        The basis every window and limit had to hold on (see ``Design.require``).
    min_yield : float or None
        The least yield required, with ``require = "yield"``.
    considered : int
        How many candidates were re-checked (and, by yield, ranked or filtered).
    unlimited_objective : float or None
        When a part limit costs the best design accuracy: the objective the
        catalogue reaches with every part limit dropped.
    binding_limits : tuple of Problem
        The part limits that cost that accuracy (the limit-free best design breaks them).
    time_limit_s : float or None
        The time limit the call ran under, s (None: none).
    cuts : tuple of Cut
        What the time limit shortened or skipped (search, re-check, spread,
        Monte Carlo samples, the limit-cost search), in order; empty when
        nothing was cut.  A cut result is never ``proven_optimal``.
    common_mode_rejected : bool
        With ``require = "worst-case"`` and a matched array: the search found designs
        holding with each array's common deviation at its two ends, but none held again
        once it was scanned (:mod:`synth.spread.common_mode`), so none is feasible.
    """

    design: Design
    ideal: dict[str, float]
    candidates: tuple[Candidate, ...]
    proven_optimal: bool
    feasible: bool
    binding: str | None
    evaluated: int
    combinations: int
    elapsed_s: float
    rank_by: str = "nominal"
    require: str = "nominal"
    min_yield: float | None = None
    considered: int = 0
    unlimited_objective: float | None = None
    binding_limits: tuple[Problem, ...] = ()
    time_limit_s: float | None = None
    cuts: tuple[Cut, ...] = ()
    common_mode_rejected: bool = False
