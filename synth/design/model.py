"""The validated records of a design: sources, resistor positions, regulators, active parts.

Positions are described in :mod:`synth.design.position`, targets in
:mod:`synth.design.target`.
"""

from __future__ import annotations

__all__ = [
    "REQUIREMENTS", "ControlledSource", "Design", "OperatingPoint", "Regulator", "Resistor",
    "Source", "Transistor",
]

from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

from synth.catalog.packages import PackageRating
from synth.catalog.part_classes import PartClass
from synth.design.position import Position
from synth.design.target import Target
from synth.rating import Allowance, allowance

if TYPE_CHECKING:  # the sensor records import this module's Resistor
    from synth.design.array import ResistorArray
    from synth.design.linearity import Linearity
    from synth.design.sensor import Sensor


@dataclass(frozen=True)
class OperatingPoint:
    """One operating point: the source values (and temperature) a copy of the network runs at.

    Attributes
    ----------
    name : str
        How targets (``at``) and reports name the point.
    sources : mapping of str to float
        Value of each source the point sets, V or A, by designator; the others
        keep their design value.
    temperature_c : float or None
        The point's temperature, °C (for parts whose value follows temperature).
    resistors : mapping of str to float
        Fixed resistors whose value differs at this point (a sensor), ohm by
        designator.
    range_ends : tuple of str
        The sources whose range this point is an end of (see
        :func:`synth.design.points.range_points`); empty for a point as written.
    """

    name: str
    sources: Mapping[str, float] = field(default_factory=dict)
    temperature_c: float | None = None
    resistors: Mapping[str, float] = field(default_factory=dict)
    range_ends: tuple[str, ...] = ()


REQUIREMENTS = ("nominal", "worst-case", "yield")
"""Bases a design's windows and limits may be required to hold on."""
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
    point : str or None
        In a design of operating points (:mod:`synth.design.points`): the point
        this copy of the source belongs to; None in a design without points.
    copy_of : str or None
        The designator of the source this copy stands for (its deviation is
        the same random draw at every point); None outside operating points.
    """

    ref: str
    kind: str
    pos: str
    neg: str
    value: float
    tolerance: float
    tolerance_abs: float | None = None
    point: str | None = None
    copy_of: str | None = None


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
    point : str or None
        In a design of operating points (:mod:`synth.design.points`): the point
        this copy of the network belongs to; None in a design without points.
    copy_of : str or None
        For the copies in the second and later points: the designator of the
        physical position (the first point's copy keeps it); None otherwise.
    follows : bool
        True when this copy takes ``copy_of``'s value (always for a free
        part; for a fixed one unless a point gives it its own value).
    classes : tuple of PartClass
        The classes the part may be bought in (``classes``), empty for a part of
        one series and tolerance; ``choose``, ``stock_path``, ``tolerance`` and
        ``tcr`` are then those of its cheapest class until one is chosen.
    array : str or None
        The matched array (:mod:`synth.design.array`) this part is a member of, or None.
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
    point: str | None = None
    copy_of: str | None = None
    follows: bool = False
    classes: tuple[PartClass, ...] = ()
    array: str | None = None

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
    copy_of : str or None
        In a design of operating points: the element this point's copy stands for.
    """

    ref: str
    output: str
    sense: str
    reference: str
    setpoint: float
    tolerance: float
    copy_of: str | None = None


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
    copy_of : str or None
        In a design of operating points: the source this point's copy stands for.
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
    copy_of: str | None = None

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
    sensors : tuple of Sensor
        The temperature sensors (``[[sensor]]``); each is also in ``resistors``,
        at its model's value at ``ambient``, left off the BOM.
    linearities : tuple of Linearity
        The linearity targets (``[[linearity]]``).
    deprecations : tuple of str
        One note per old key name the file used (still read for one version).
    packages_path : Path or None
        The design's own package table (``[design] packages``); None for the
        bundled ``catalogs/packages.csv``.
    points : tuple of OperatingPoint
        The operating points the network was copied for, in copy order
        (:func:`synth.design.points.expand_points`); empty for one network.
    single : Design or None
        With operating points: the design as written, one copy of the network.
    arrays : tuple of ResistorArray
        The matched resistor arrays (``[[array]]``, :mod:`synth.design.array`).
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
    packages_path: Path | None = None
    points: tuple[OperatingPoint, ...] = ()
    single: Design | None = field(default=None, repr=False)
    sensors: tuple[Sensor, ...] = ()
    linearities: tuple[Linearity, ...] = ()
    arrays: tuple[ResistorArray, ...] = ()

    @property
    def physical_resistors(self) -> tuple[Resistor, ...]:
        """Each physical position once: the resistors that are not a later point's copy."""
        return tuple(r for r in self.resistors if r.copy_of is None)

    @property
    def followers(self) -> tuple[tuple[int, int], ...]:
        """``(copy, leader)`` resistor indices: each copy that takes its leader's value."""
        index = {r.ref: k for k, r in enumerate(self.resistors)}
        return tuple((k, index[r.copy_of]) for k, r in enumerate(self.resistors)
                     if r.follows and r.copy_of in index)

    @property
    def has_supply(self) -> bool:
        """True when a voltage source or a regulator can deliver a supply current: the
        supply current is the current they deliver, so a design driven by current sources
        alone has none to report (not "0 A")."""
        return bool(self.regulators) or any(s.kind == "voltage" for s in self.sources)

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
