"""The validated records of a design: sources, positions, regulators, active parts, targets.

A resistor entry of a design file is a *position*: one physical part, or
N >= 2 parts in series or in parallel between the same two nodes
(:class:`Position`).  The network sees the position's effective resistance;
every physical part's current, voltage and dissipation comes from
:meth:`Position.split`, the one place that divides a position into its parts.
"""

from __future__ import annotations

__all__ = [
    "MAX_PARTS", "PART_SUFFIXES", "REQUIREMENTS", "TARGET_KINDS", "TARGET_UNITS",
    "ControlledSource", "Design", "PartShares", "Position", "Regulator", "Resistor", "Source",
    "Target", "Transistor",
]

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from synth.catalog.packages import PackageRating
from synth.rating import Allowance, allowance

TARGET_KINDS = ("voltage", "current", "ratio", "power", "resistance")
TARGET_UNITS = {"voltage": "V", "current": "A", "power": "W", "resistance": "Ω", "ratio": ""}
REQUIREMENTS = ("nominal", "worst-case", "yield")
"""Bases a design's windows and limits may be required to hold on."""
MAX_PARTS = 6
"""Most physical parts one position may hold (series strings of 3-6 parts carry high voltage)."""
PART_SUFFIXES = "ABCDEF"
"""Designator suffixes of a position's parts: R1 of three parts is R1A, R1B, R1C."""


@dataclass(frozen=True)
class PartShares:
    """How a position's current, voltage and dissipation divide among its parts.

    Every array is ``(M, parts)``: candidate axis first, then the position's
    parts in designator order.

    Attributes
    ----------
    current : numpy.ndarray
        A through each part, in the position's sign convention.
    voltage : numpy.ndarray
        V across each part (absolute).
    power : numpy.ndarray
        W dissipated in each part.
    """

    current: np.ndarray
    voltage: np.ndarray
    power: np.ndarray


@dataclass(frozen=True)
class Position:
    """A resistor position: one part, or N >= 2 parts in series or in parallel.

    Attributes
    ----------
    ref : str
        The position's designator (``"R1"``).
    arrangement : {"single", "series", "parallel"}
        How its parts are joined.
    count : int
        Number of physical parts (1 for a single part).
    equal_parts : bool
        Every part takes the same value (a string with an equal voltage share).
    part_values : tuple of float or None
        Each part's resistance, ohm, when the file gives them (a fixed
        position, or the values ``check`` uses).

    Examples
    --------
    >>> p = Position("R1", "series", 2)
    >>> p.part_refs
    ('R1A', 'R1B')
    >>> float(p.effective(np.array([[442e3, 432e3]]))[0])
    874000.0
    >>> s = p.split(np.array([[442e3, 432e3]]), np.array([400 / 874e3]))
    >>> [round(float(v), 2) for v in s.voltage[0]]
    [202.29, 197.71]
    """

    ref: str
    arrangement: str = "single"
    count: int = 1
    equal_parts: bool = False
    part_values: tuple[float, ...] | None = None

    @property
    def part_refs(self) -> tuple[str, ...]:
        """Designators of the physical parts: ``("R1",)`` or ``("R1A", "R1B", ...)``."""
        if self.count == 1:
            return (self.ref,)
        return tuple(self.ref + PART_SUFFIXES[k] for k in range(self.count))

    def effective(self, part_values: np.ndarray) -> np.ndarray:
        """Effective resistance of ``(M, count)`` part values, ohm, ``(M,)``."""
        values = np.asarray(part_values, dtype=float)
        if self.arrangement == "parallel":
            return 1.0 / np.sum(1.0 / values, axis=1)  # type: ignore[no-any-return]  # numpy types this array expression as Any
        return np.sum(values, axis=1)  # type: ignore[no-any-return]  # numpy types this array expression as Any

    def equal_split(self, effective: np.ndarray) -> np.ndarray:
        """Part values ``(M, count)`` of equal parts giving ``effective`` ohm."""
        effective = np.asarray(effective, dtype=float)
        each = (effective / self.count if self.arrangement == "series"
                else effective * self.count)
        return np.repeat(each[:, None], self.count, axis=1)

    def split(self, part_values: np.ndarray, current: np.ndarray) -> PartShares:
        """Each part's current, voltage and dissipation from the position's current.

        Parameters
        ----------
        part_values : numpy.ndarray
            ``(M, count)`` ohm.
        current : numpy.ndarray
            ``(M,)`` A through the position (its sign kept).

        Notes
        -----
        Series parts carry the position's current, each seeing I·R_k; parallel
        parts share the position's voltage V = I·R_eff, each carrying V/R_k
        (Ohm's and Kirchhoff's laws).
        """
        values = np.asarray(part_values, dtype=float)
        current = np.asarray(current, dtype=float)
        if self.arrangement == "parallel":
            across = current * self.effective(values)
            part_current = across[:, None] / values
            part_voltage = np.repeat(np.abs(across)[:, None], self.count, axis=1)
        else:
            part_current = np.repeat(current[:, None], self.count, axis=1)
            part_voltage = np.abs(current)[:, None] * values
        return PartShares(current=part_current, voltage=part_voltage,
                          power=part_current * part_current * values)


@dataclass(frozen=True)
class Source:
    """An independent source.

    Attributes
    ----------
    ref : str
        Reference designator.
    kind : {"voltage", "current"}
        A voltage source holds ``V(plus) - V(minus) = value`` (V); a current
        source drives ``value`` amperes through itself from ``from`` to ``to``,
        that is into node ``to``.
    pos, neg : str
        ``plus``/``minus`` for a voltage source, ``to``/``from`` for a current source.
    value : float
        V or A.
    tolerance : float
        Relative tolerance of the value (fraction).
    tolerance_abs : float or None
        Absolute tolerance, V or A, when the file gives one with a unit
        (``tolerance = "10 uA"``): the value may then span zero.
    """

    ref: str
    kind: str
    pos: str
    neg: str
    value: float
    tolerance: float
    tolerance_abs: float | None = None


@dataclass(frozen=True)
class Resistor:
    """A resistor, fixed (``value``) or free (``choose`` with ``range``).

    Attributes
    ----------
    ref : str
        Reference designator.
    nodes : tuple of str
        Its two nodes; its current is counted from ``nodes[0]`` to ``nodes[1]``.
    value : float or None
        Resistance, ohm (for a free part: the value ``check`` uses, if given).
    choose : str or None
        Series name (``"E96"``) or house stock file for a free part.
    stock_path : Path or None
        The stock file ``choose`` names, resolved.
    range : tuple of float or None
        Allowed values of a free part, ohm (low, high).
    tolerance : float
        Relative tolerance (fraction).
    tcr : float
        Temperature coefficient, fraction per kelvin.
    package : str or None
        Package name in the design's package table, or None (not rated).
    position : Position
        Its physical parts: one, or N >= 2 in series or in parallel.
    bom : bool
        True when the part goes on the bill of materials; False for resistors
        that model something else (a load, a sensor, an input resistance).
    """

    ref: str
    nodes: tuple[str, str]
    value: float | None
    choose: str | None
    stock_path: Path | None
    range: tuple[float, float] | None
    tolerance: float
    tcr: float
    package: str | None
    position: Position
    bom: bool = True

    @property
    def combine(self) -> str | None:
        """``"series"`` or ``"parallel"`` for a position of several parts, else None."""
        return None if self.position.count == 1 else self.position.arrangement

    @property
    def part_refs(self) -> tuple[str, ...]:
        """Designators of the physical parts of this position."""
        return self.position.part_refs

    @property
    def free(self) -> bool:
        """True when the optimiser picks this part's value."""
        return self.choose is not None


@dataclass(frozen=True)
class Regulator:
    """An ideal regulating element (the control loop of a regulator or amplifier).

    It drives node ``output`` from ground with whatever voltage makes
    ``V(sense) - V(reference) = setpoint``, delivering any current needed.

    Attributes
    ----------
    ref : str
        Reference designator.
    output, sense, reference : str
        Node names.
    setpoint : float
        Regulated voltage, V (the reference voltage of the regulator).
    tolerance : float
        Relative tolerance of the setpoint (fraction).
    """

    ref: str
    output: str
    sense: str
    reference: str
    setpoint: float
    tolerance: float


@dataclass(frozen=True)
class ControlledSource:
    """A linear controlled source.

    Attributes
    ----------
    ref : str
    kind : {"vcvs", "vccs", "ccvs", "cccs"}
        Voltage- or current-controlled, voltage or current output.
    pos, neg : str
        Output: ``plus``/``minus`` for a voltage output (V(plus) - V(minus) =
        gain × control), ``to``/``from`` for a current output (gain × control
        amperes through it from ``from`` to ``to``).
    control_nodes : tuple of str or None
        ``(a, b)``: the controlling voltage V(a) - V(b).
    control_ref : str or None
        The part whose current controls it (its current in its own sign convention).
    gain : float
        V/V, A/V (S), V/A (ohm) or A/A.
    gain_low, gain_high : float
        The range the gain may take (for spread); both equal ``gain`` when fixed.
    """

    ref: str
    kind: str
    pos: str
    neg: str
    control_nodes: tuple[str, str] | None
    control_ref: str | None
    gain: float
    gain_low: float
    gain_high: float

    @property
    def voltage_output(self) -> bool:
        """True for a voltage output (a voltage-defined branch)."""
        return self.kind in ("vcvs", "ccvs")


@dataclass(frozen=True)
class Transistor:
    """A bipolar transistor in its forward-active region (DC model).

    It is solved as a base-emitter drop (a voltage source ``REF.BE``) and a
    collector current β × base current (a controlled source ``REF.C``); a
    target ``REF active`` keeps the collector-emitter voltage above ``vce_sat``.

    Attributes
    ----------
    ref, polarity : str
        ``polarity`` is ``"npn"`` or ``"pnp"``.
    collector, base, emitter : str
    vbe : float
        Base-emitter drop magnitude, V.
    beta, beta_low, beta_high : float
        Typical, least and greatest current gain.
    vce_sat : float
        Least collector-emitter voltage magnitude still counted as active, V.
    """

    ref: str
    polarity: str
    collector: str
    base: str
    emitter: str
    vbe: float
    beta: float
    beta_low: float
    beta_high: float
    vce_sat: float


@dataclass(frozen=True)
class Target:
    """One requirement on the network.

    Attributes
    ----------
    label : str
        Name shown in tables, e.g. ``"voltage at sense"`` or the user's ``name``.
    kind : {"voltage", "current", "ratio", "power", "resistance"}
        What is measured.
    nodes : tuple of str
        ``(a, b)`` for a voltage or resistance, ``(a, b, c, d)`` for a ratio
        ``(V(a) - V(b)) / (V(c) - V(d))``; empty for current and power.
    ref : str or None
        The part a current or power target names.
    equals : float or None
        Goal value (V, A, W, ohm, or a plain ratio).
    within_abs, within_rel : float or None
        Half-width of the hard window around ``equals`` (absolute, or relative).
    at_least, at_most : float or None
        Bounds.
    unit : str
        Unit symbol for display.
    """

    label: str
    kind: str
    nodes: tuple[str, ...]
    ref: str | None
    equals: float | None
    within_abs: float | None
    within_rel: float | None
    at_least: float | None
    at_most: float | None
    unit: str

    @property
    def bounds(self) -> tuple[float, float]:
        """The hard window ``(low, high)``: ``within`` and the bounds combined."""
        low, high = -math.inf, math.inf
        if self.equals is not None:
            half = None
            if self.within_abs is not None:
                half = self.within_abs
            elif self.within_rel is not None:
                half = abs(self.equals) * self.within_rel
            if half is not None:
                low, high = self.equals - half, self.equals + half
        if self.at_least is not None:
            low = max(low, self.at_least)
        if self.at_most is not None:
            high = min(high, self.at_most)
        return low, high

    @property
    def relative(self) -> bool:
        """True when the error is relative: the target has a non-zero goal."""
        return self.equals is not None and self.equals != 0

    @property
    def scale(self) -> float:
        """What one unit of the ranking objective means for this target.

        ``|equals|`` for a non-zero goal (the objective is then the relative
        error); the half window for a zero goal (a zero goal needs an absolute
        ``within``); for bound-only targets the largest finite bound (or 1),
        used to rank violations.
        """
        if self.equals is not None and self.equals != 0:
            return abs(self.equals)
        if self.within_abs is not None:
            return self.within_abs
        low, high = self.bounds
        finite = [abs(b) for b in (low, high) if math.isfinite(b) and b != 0]
        return max(finite) if finite else 1.0

    def error(self, value: np.ndarray | float) -> np.ndarray:
        """The error of achieved values against the goal: THE rule for every report.

        Relative, ``(value - goal) / |goal|``, for a non-zero goal; absolute,
        ``value - goal`` in the target's unit, for a zero goal (a bridge null
        is judged in µV, not in per cent).  NaN when there is no goal.

        Examples
        --------
        >>> t = Target("out", "voltage", ("out", "gnd"), None, 5.0, None, 0.01, None, None, "V")
        >>> round(float(t.error(5.05)), 12)
        0.01
        """
        value = np.asarray(value, dtype=float)
        if self.equals is None:
            return np.full(value.shape, np.nan)
        if self.equals == 0:
            return value - 0.0
        return (value - self.equals) / abs(self.equals)

    def objective(self, value: np.ndarray | float) -> np.ndarray:
        """``|value - goal| / scale``: this target's term of the ranking objective."""
        value = np.asarray(value, dtype=float)
        if self.equals is None:
            return np.zeros(value.shape)
        return np.abs(value - self.equals) / self.scale


@dataclass(frozen=True)
class Design:
    """A whole design, validated.

    Attributes
    ----------
    origin : str
        The file it came from (or a description for designs built in memory).
    title : str
        Free text.
    ground : str
        The reference node (0 V).
    ambient_c : float
        Ambient temperature for derating, °C.
    margin_frac : float
        Share of the derated power rating a part may use (0.5 = 50 %).
    voltage_margin_frac : float
        Share of the limiting element voltage a part may see (0.8 = 80 %).
    temperature_c : tuple of float
        Operating temperature range (low, high), °C, for TCR spread.
    packages : dict of str to PackageRating
        The package table in force.
    sources, resistors, regulators, targets : tuple
        The parts and requirements, in file order.
    require : {"nominal", "worst-case", "yield"}
        On which basis every window, bound and limit must hold: at nominal
        values, over the whole tolerance box, or in at least ``min_yield`` of
        Monte Carlo samples (95 % lower confidence bound).
    min_yield : float or None
        The least yield (fraction) with ``require = "yield"``.
    deprecations : tuple of str
        One note per old key name the file used (still read for one version).
    """

    origin: str
    title: str
    ground: str
    ambient_c: float
    margin_frac: float
    voltage_margin_frac: float
    temperature_c: tuple[float, float]
    sources: tuple[Source, ...]
    resistors: tuple[Resistor, ...]
    regulators: tuple[Regulator, ...]
    targets: tuple[Target, ...]
    packages: Mapping[str, PackageRating] = field(repr=False)
    controlled: tuple[ControlledSource, ...] = ()
    transistors: tuple[Transistor, ...] = ()
    require: str = "nominal"
    min_yield: float | None = None
    deprecations: tuple[str, ...] = ()

    @property
    def free_resistors(self) -> tuple[Resistor, ...]:
        """The resistors whose value the optimiser picks."""
        return tuple(r for r in self.resistors if r.free)

    @property
    def node_names(self) -> tuple[str, ...]:
        """Every node the parts touch, ground first, then in order of appearance."""
        names = [self.ground]
        for s in self.sources:
            names += [s.neg, s.pos]
        for r in self.resistors:
            names += list(r.nodes)
        for g in self.regulators:
            names += [g.output, g.sense, g.reference]
        for c in self.controlled:
            names += [c.neg, c.pos, *(c.control_nodes or ())]
        return tuple(dict.fromkeys(names))

    def rating(self, resistor: Resistor) -> PackageRating | None:
        """The package rating of a resistor, or None when it names no package."""
        return self.packages[resistor.package] if resistor.package else None

    @property
    def rating_ambient_c(self) -> float:
        """The ambient every allowance is taken at, °C: the hottest the design states.

        The larger of ``ambient`` and the top of ``temperature`` (see
        :mod:`synth.rating`).
        """
        return max(self.ambient_c, self.temperature_c[1])

    def allowance(self, resistor: Resistor) -> Allowance | None:
        """The allowance of each physical part of ``resistor``, or None when unrated."""
        rating = self.rating(resistor)
        if rating is None:
            return None
        return allowance(rating, ambient_c=self.rating_ambient_c,
                         max_power_use=self.margin_frac,
                         max_voltage_use=self.voltage_margin_frac)

    @property
    def part_refs(self) -> tuple[str, ...]:
        """Every physical resistor's designator, position by position."""
        return tuple(ref for r in self.resistors for ref in r.part_refs)

    def position_of(self, ref: str) -> tuple[int, int] | None:
        """``(resistor index, part index)`` of a physical part or single position, or None."""
        for k, resistor in enumerate(self.resistors):
            if ref in resistor.part_refs:
                return k, resistor.part_refs.index(ref)
        return None
