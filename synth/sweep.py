"""Design-space sweeps: one synthesis (or check) per point of a grid of design-file values.

A sweep names values of a design file by keys (``source.VBAT.value``,
``target.2.equals``, ``resistor.RLOAD.value``, ``design.ambient``) and steps each over
a range, linearly or on a log scale (:func:`sweep_axis` reads ``KEY=LOW:HIGH:STEPS`` and
``KEY=LOW:HIGH:STEPS:log``).  :func:`sweep` edits the design's tables at every point of
the cartesian grid of its axes, reads each edited design as the design reader reads a
file (so every point is checked before any work starts), then runs every point: in this
process, in local worker processes (``jobs``) or on a Dask distributed cluster
(``cluster``).  The points come back in grid order whatever runs them, and each point's
figures are those of a direct :func:`synth.synthesis.synthesize` or
:func:`synth.checking.check` of the edited design.
"""

from __future__ import annotations

__all__ = [
    "MAX_POINTS", "SPACINGS", "SweepAxis", "SweepPoint", "SweepResult", "available_cores",
    "edit_tables", "grid_designs", "run_point", "sweep", "sweep_axis",
]

import itertools
import math
import re
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from decimal import Decimal
from pathlib import Path
from typing import Any

from synth.design.model import Design
from synth.design.reader import design_from_dict
from synth.errors import DesignError, InfeasibleError, RnsynthError, excerpt
from synth.inputs import read_toml, require_suffix
from synth.parallel import available_cores, ordered_map
from synth.sweep_keys import edit_tables, place_of
from synth.units import (
    parse_fraction,
    parse_quantity,
    parse_resistance,
    parse_tcr,
    parse_temperature,
)

MAX_POINTS = 10_000
"""The most grid points a sweep may have (all axes' steps multiplied)."""

SPACINGS = ("linear", "log")

@dataclass(frozen=True)
class SweepAxis:
    """One swept design-file value.

    Attributes
    ----------
    key : str
        The value's place in the design file: ``TABLE.ITEM.FIELD`` (``source.V1.value``;
        ITEM a designator, a target's name or label, or a 1-based position) or
        ``design.FIELD``.
    values : tuple of float
        The values stepped over, in SI units (V, A, W, ohm, °C; a percentage as a
        fraction, a TCR per kelvin), low to high.
    unit : str
        ``"V"``, ``"A"``, ``"W"``, ``"Hz"``, ``"%"``, ``"C"``, ``"ppm/C"``, ``"Ω"`` (a
        resistor's ``value``), or ``""`` for another plain number or resistance.
    spacing : {"linear", "log"}
    """

    key: str
    values: tuple[float, ...]
    unit: str = ""
    spacing: str = "linear"

    def text(self, value: float) -> str | float:
        """``value`` as the design file gets it: text with its unit, or a plain number."""
        if self.unit == "%":
            return f"{_decimal(value, 2)}%"
        if self.unit == "ppm/C":
            return f"{_decimal(value, 6)} ppm/C"
        if self.unit and self.unit != "Ω":
            return f"{value!r} {self.unit}"
        return value


def _decimal(value: float, exponent: int) -> str:
    """``value × 10**exponent`` written exactly (read back, it gives ``value`` again)."""
    return format(Decimal(repr(value)).scaleb(exponent).normalize(), "f")


# -- reading an axis ---------------------------------------------------------------------

_QUANTITY = re.compile(r"(?:V|A|W|Hz)$")
_TEMPERATURE = re.compile(r"\d\s*(?:°\s*C|degC|C)$")


def _reader_of(text: str) -> tuple[str, Callable[[str], float]]:
    """The unit family of one end of a range, from its suffix, and its reader."""
    if "/" in text:
        return "ppm/C", parse_tcr
    if text.endswith(("%", "ppm")):
        return "%", parse_fraction
    unit = _QUANTITY.search(text)
    if unit:
        symbol = unit.group()
        return symbol, lambda t: parse_quantity(t, symbol)
    if _TEMPERATURE.search(text):
        return "C", parse_temperature
    return "", parse_resistance


def sweep_axis(text: str) -> SweepAxis:
    """Read one axis written ``KEY=LOW:HIGH:STEPS`` or ``KEY=LOW:HIGH:STEPS:log``.

    Parameters
    ----------
    text : str
        LOW and HIGH in the notation of design files (``10 V``, ``4k7``, ``1%``,
        ``60 C``), both in one unit; STEPS the number of values, both ends included
        (1 only when LOW equals HIGH).  ``log`` spaces the values evenly on a log
        scale (LOW and HIGH then both positive); the default, ``lin``, evenly.

    Returns
    -------
    SweepAxis

    Raises
    ------
    DesignError
        When the text is malformed, a value unreadable, the range empty or STEPS
        out of 1 .. :data:`MAX_POINTS`.

    Examples
    --------
    >>> axis = sweep_axis("source.V1.value=10 V:15 V:6")
    >>> axis.values, axis.unit
    ((10.0, 11.0, 12.0, 13.0, 14.0, 15.0), 'V')
    >>> sweep_axis("resistor.R2.value=1k:100k:3:log").values
    (1000.0, 10000.0, 100000.0)
    """
    shown = excerpt(text, quoted=True)
    key, equals, span = text.partition("=")
    key = key.strip()
    if not equals or not key:
        raise DesignError(f"--over {shown}: write KEY=LOW:HIGH:STEPS, e.g. "
                          "source.V1.value=10V:15V:6")
    parts = [p.strip() for p in span.split(":")]
    if len(parts) == 4 and parts[3].lower() in ("log", "lin"):
        spacing = "log" if parts[3].lower() == "log" else "linear"
        parts = parts[:3]
    else:
        spacing = "linear"
    if len(parts) != 3:
        raise DesignError(f"--over {shown}: write KEY=LOW:HIGH:STEPS (or "
                          "KEY=LOW:HIGH:STEPS:log), e.g. source.V1.value=10V:15V:6")
    low_text, high_text, steps_text = parts
    unit, parse = _reader_of(low_text)
    if _reader_of(high_text)[0] != unit:
        raise DesignError(f"--over {key}: {low_text!r} and {high_text!r} are in different "
                          "units; write both ends in one unit")
    try:
        low, high = parse(low_text), parse(high_text)
    except DesignError as exc:
        raise DesignError(f"--over {key}: {exc}") from None
    steps = _steps(key, steps_text)
    if low > high:
        raise DesignError(f"--over {key}: range {low_text}..{high_text} is empty; give the "
                          "low end first")
    if steps > 1 and low == high:
        raise DesignError(f"--over {key}: {steps} steps from {low_text} to the same "
                          f"{high_text}; widen the range or give 1 step")
    if steps == 1 and low != high:
        raise DesignError(f"--over {key}: 1 step cannot reach both {low_text} and "
                          f"{high_text}; give at least 2 steps")
    if spacing == "log" and not low > 0:
        raise DesignError(f"--over {key}: a log spacing needs both ends above zero, not "
                          f"{low_text}; use a linear spacing")
    if not unit and key.startswith("resistor.") and key.endswith(".value"):
        unit = "Ω"  # a resistor's value: shown in ohm, written as a plain number
    return SweepAxis(key, _spaced(low, high, steps, spacing), unit, spacing)


def _steps(key: str, text: str) -> int:
    try:
        steps = int(text)
    except ValueError:
        raise DesignError(f"--over {key}: STEPS {excerpt(text, quoted=True)} is not a whole "
                          "number; give the number of values, e.g. 5") from None
    if not 1 <= steps <= MAX_POINTS:
        raise DesignError(f"--over {key}: STEPS {steps} must be 1 to {MAX_POINTS:,}")
    return steps


def _spaced(low: float, high: float, steps: int, spacing: str) -> tuple[float, ...]:
    """``steps`` values from ``low`` to ``high``, both ends exact."""
    if steps == 1:
        return (low,)
    if spacing == "log":
        # in decades, so that whole decades come out exact (1k, 10k, 100k)
        first, last = math.log10(low), math.log10(high)
        inner = [10 ** (first + (last - first) * k / (steps - 1)) for k in range(1, steps - 1)]
    else:
        inner = [low + (high - low) * k / (steps - 1) for k in range(1, steps - 1)]
    return (low, *inner, high)


def grid_designs(tables: Mapping[str, Any], origin: str, axes: Sequence[SweepAxis]
                 ) -> list[tuple[tuple[float, ...], Design]]:
    """Every grid point's values (axis order) and its design, read as a design file.

    The first axis varies slowest (the grid's rows read like nested loops, the first
    axis outermost).

    Raises
    ------
    DesignError
        When a key names nothing, an axis repeats, the grid exceeds :data:`MAX_POINTS`
        or the design reader refuses a point's design (the key and value named).
    """
    if not axes:
        raise DesignError("a sweep needs at least one --over KEY=LOW:HIGH:STEPS")
    keys = [a.key for a in axes]
    for key in keys:
        if keys.count(key) > 1:
            raise DesignError(f"--over {key} is given twice; sweep each key once")
    points = math.prod(len(a.values) for a in axes)
    if points > MAX_POINTS:
        raise DesignError(f"the sweep has {points:,} points, over the {MAX_POINTS:,} a sweep "
                          "may have; give fewer steps")
    base = design_from_dict(tables, origin)
    places = [place_of(tables, base, key) for key in keys]
    out = []
    for values in itertools.product(*(a.values for a in axes)):
        written = [a.text(v) for a, v in zip(axes, values, strict=True)]
        edited = edit_tables(tables, places, written)
        try:
            design = design_from_dict(edited, origin)
        except DesignError as exc:
            at = ", ".join(f"{a.key} = {w}" for a, w in zip(axes, written, strict=True))
            raise DesignError(f"--over at {at}: {exc}") from None
        out.append((tuple(values), design))
    return out


# -- one point ---------------------------------------------------------------------------


@dataclass(frozen=True)
class SweepPoint:
    """The outcome of one grid point.

    Attributes
    ----------
    values : tuple of float
        The swept values, in the order of the axes, SI units.
    mode : {"design", "check"}
        A synthesis of the free parts, or a check of the given values.
    verdict : {"meets", "fails", "error"}
        ``meets``: every window and limit holds on the design's basis (a synthesis:
        the best design found); ``fails``: not (no standard values meet them, or the
        checked design breaks one); ``error``: the point could not be calculated
        (see ``note``).
    objective : float or None
        The largest error over the ``equals`` targets (relative for a non-zero goal,
        in half windows for a zero goal): the synthesis's objective of its best
        design, or that of the checked design.
    chosen : dict of str to float
        Ohm of each free physical part: the best design's standard values, or the
        values a check used for the parts marked ``choose``.
    proven : bool or None
        A synthesis's ``proven_optimal``; None for a check.
    supply_current : float or None
        A delivered by the supplies, of the best or checked design; None when it has
        no voltage source or regulator (:attr:`synth.design.model.Design.has_supply`).
    targets : dict of str to float
        Each target's value (in its unit) by label.
    note : str
        Why the point fails or could not be calculated; empty when it meets.
    """

    values: tuple[float, ...]
    mode: str
    verdict: str
    objective: float | None = None
    chosen: dict[str, float] | None = None
    proven: bool | None = None
    supply_current: float | None = None
    targets: dict[str, float] | None = None
    note: str = ""

    @property
    def ok(self) -> bool:
        return self.verdict == "meets"


@dataclass(frozen=True)
class _Task:
    values: tuple[float, ...]
    design: Design
    check_only: bool
    time_limit_s: float | None


def _objective(design: Design, values: Sequence[float]) -> float:
    terms = [float(t.objective(v)) for t, v in zip(design.targets, values, strict=True)
             if t.equals is not None]
    return max(terms, default=0.0)


def _one_line(exc: BaseException) -> str:
    return str(exc).replace("\r", "\\r").replace("\n", "\\n")


def run_point(task: _Task) -> SweepPoint:
    """Synthesise (or check) one grid point's design; a failure becomes its ``note``."""
    try:
        if task.check_only or not task.design.free_resistors:
            return _checked(task)
        return _synthesised(task)
    except InfeasibleError as exc:
        return SweepPoint(task.values, _mode(task), "fails", note=_one_line(exc))
    except RnsynthError as exc:
        return SweepPoint(task.values, _mode(task), "error", note=_one_line(exc))
    except (ArithmeticError, RuntimeError, ValueError, MemoryError) as exc:
        # a numerical or solver failure at this point, reported in its row
        return SweepPoint(task.values, _mode(task), "error",
                          note=f"the calculation could not be completed "
                               f"({type(exc).__name__}: {_one_line(exc)})")


def _mode(task: _Task) -> str:
    return "check" if task.check_only or not task.design.free_resistors else "design"


def _checked(task: _Task) -> SweepPoint:
    from synth.checking import check

    design = task.design
    result = check(design)
    free = {ref for r in design.free_resistors for ref in r.part_refs}
    targets = {t.label: t.value for t in result.targets}
    return SweepPoint(
        task.values, "check", "meets" if result.ok else "fails",
        objective=_objective(design, [t.value for t in result.targets]),
        chosen={ref: v for ref, v in result.values.items() if ref in free}, proven=None,
        supply_current=result.supply_current if design.has_supply else None, targets=targets,
        note="; ".join(map(str, result.problems)))


def _synthesised(task: _Task) -> SweepPoint:
    from synth.synthesis import synthesize

    result = synthesize(task.design, top=1, time_limit_s=task.time_limit_s)
    if not result.candidates:
        return SweepPoint(task.values, "design", "fails", proven=result.proven_optimal,
                          note="no candidate could be evaluated")
    best = result.candidates[0]
    note = ""
    if not result.feasible:
        problems = [str(p) for p in best.problems]
        # the binding limit, unless it only repeats one of the problems
        if result.binding and not any(p in result.binding for p in problems):
            problems.append(f"binding: {result.binding}")
        note = "; ".join(problems)
    elif not result.proven_optimal:
        note = "search cut by the time limit: the best found, not proven optimal"
    return SweepPoint(
        task.values, "design", "meets" if result.feasible else "fails",
        objective=best.objective, chosen=dict(best.values), proven=result.proven_optimal,
        supply_current=best.supply_current if task.design.has_supply else None,
        targets={t.label: t.value for t in best.targets}, note=note)


# -- the sweep ---------------------------------------------------------------------------


@dataclass(frozen=True)
class SweepResult:
    """A whole sweep: its axes and one point per grid point, first axis slowest.

    Attributes
    ----------
    origin : str
        The design file.
    axes : tuple of SweepAxis
    points : tuple of SweepPoint
    runner : str
        ``"in-process"``, ``"local processes"`` or ``"cluster"`` (the figures do not
        depend on it).
    """

    origin: str
    axes: tuple[SweepAxis, ...]
    points: tuple[SweepPoint, ...]
    runner: str = "in-process"

    @property
    def ok(self) -> bool:
        """True when every point meets its windows and limits."""
        return all(p.ok for p in self.points)


def _tables_of(design: str | Path | Mapping[str, Any], origin: str | None
               ) -> tuple[dict[str, Any], str]:
    if isinstance(design, Mapping):
        return dict(design), origin or "<design>"
    require_suffix(design, "design file")
    return read_toml(design, "design file"), origin or str(design)


def sweep(design: str | Path | Mapping[str, Any], over: Sequence[SweepAxis | str], *,
          check_only: bool = False, jobs: int | None = None, cluster: Any = None,
          time_limit_s: float | None = None, origin: str | None = None) -> SweepResult:
    """Synthesise (or check) a design at every point of a grid of its values.

    Parameters
    ----------
    design : str, Path or mapping
        A design file, or its tables as ``tomllib`` reads them (then name it by
        ``origin``).
    over : sequence of SweepAxis or str
        The axes (text as :func:`sweep_axis` reads it); the first varies slowest.
    check_only : bool
        Check every point instead of synthesising its free parts (a design without
        free parts is always checked).
    jobs : int, optional
        Local worker processes; 1 runs in this process; default all cores
        (:func:`available_cores`).  Ignored with ``cluster``.
    cluster : str or distributed.Client, optional
        A Dask distributed scheduler's address (``tcp://host:port``) or a client:
        the points run on its workers (which need rnsynth installed).
    time_limit_s : float, optional
        Each point's search time limit, s (a point cut short says so in its note).
    origin : str, optional
        How messages name the design.

    Returns
    -------
    SweepResult
        The points in grid order, whatever ran them.

    Raises
    ------
    DesignError
        Bad input: an unknown key, a bad range, a point's design refused, an
        unreachable cluster.

    Examples
    --------
    >>> tables = {
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "12 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k"},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
    ...     "target": [{"name": "out", "voltage": "out", "at_least": "5 V"}]}
    >>> result = sweep(tables, ["source.V1.value=8V:12V:3"], jobs=1)
    >>> [(p.values[0], p.verdict, round(p.targets["out"], 9)) for p in result.points]
    [(8.0, 'fails', 4.0), (10.0, 'meets', 5.0), (12.0, 'meets', 6.0)]

    Notes
    -----
    Each point is exactly a direct :func:`synth.synthesis.synthesize` (best design
    only) or :func:`synth.checking.check` of the design file with the swept values
    written in; the work is spread with :mod:`concurrent.futures` or Dask, never
    changed by it.  With ``time_limit_s`` a point's search may stop at a different
    place from run to run (its note says it is unproven).
    """
    if jobs is not None and jobs < 1:
        raise DesignError(f"--jobs {jobs} must be at least 1")
    if time_limit_s is not None and not (math.isfinite(time_limit_s) and time_limit_s > 0):
        raise DesignError(f"--time-limit {time_limit_s} must be a positive number of seconds "
                          "(a finite one)")
    axes = tuple(a if isinstance(a, SweepAxis) else sweep_axis(a) for a in over)
    tables, name = _tables_of(design, origin)
    tasks = [_Task(values, point, check_only, time_limit_s)
             for values, point in grid_designs(tables, name, axes)]
    if cluster is not None:
        from synth.cluster import run_on_cluster

        points, runner = run_on_cluster(cluster, run_point, tasks), "cluster"
    else:
        workers = min(available_cores() if jobs is None else jobs, len(tasks))
        points, runner = _run_local(tasks, workers)
    return SweepResult(name, axes, tuple(points), runner)


def _run_local(tasks: Sequence[_Task], workers: int) -> tuple[list[SweepPoint], str]:
    """Every point in grid order: here with one worker, else on ``workers`` processes."""
    return (ordered_map(run_point, tasks, workers),
            "in-process" if workers <= 1 else "local processes")
