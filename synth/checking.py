"""Analysis of a design whose values are all given (``rnsynth check``).

:func:`check` solves the network once by loop currents, measures every
target and every physical part's current, voltage, dissipation and use of
its allowance, and optionally repeats the solve by modified nodal analysis to
show the two agree.  :func:`check_block` does the same for many value sets in
one batched solve (the re-check of ranked candidates).
"""

from __future__ import annotations

__all__ = [
    "check", "check_block", "part_problems", "required_problems", "resolve_values",
    "target_reports", "worst_points",
]

from collections.abc import Mapping
from dataclasses import replace

import numpy as np

from synth.cautions import power_cautions, voltage_cautions
from synth.circuit.measure import Evaluation, Evaluator
from synth.circuit.nodal import nodal_solve
from synth.circuit.solution import solution_difference
from synth.deadline import Deadline
from synth.design.model import Design
from synth.design.points import point_label
from synth.errors import DesignError, name_list, nearest_name
from synth.linearity import check_linearity
from synth.parallel import check_jobs
from synth.rating import exceeds, falls_short, use_of
from synth.results import CheckResult, PartReport, Problem, TargetReport
from synth.search.ideal import ideal_values
from synth.spread.analyse import analyse_spread
from synth.spread.fit import fitted_run
from synth.spread.records import SpreadResult, SpreadSettings
from synth.spread.shard_map import POOL_START_S, process_shards


def target_reports(design: Design, values: np.ndarray, noise: np.ndarray | None = None
                   ) -> tuple[TargetReport, ...]:
    """Build :class:`TargetReport` rows from one candidate's target values.

    A target is met when its value lies inside its window, edges included
    (with the slack of :data:`synth.rating.LIMIT_SLACK`, or the value's noise
    floor from ``noise`` where that is larger: :attr:`Evaluation.target_noise`).  Its error follows
    :meth:`synth.design.model.Target.error`: relative for a non-zero goal,
    absolute in the target's unit for a zero goal.
    """
    rows = []
    floors = np.zeros(len(design.targets)) if noise is None else noise
    for target, value, floor in zip(design.targets, values, floors, strict=True):
        low, high = target.bounds
        met = (bool(np.isfinite(value)) and not bool(falls_short(value, low, floor))
               and not bool(exceeds(value, high, floor)))
        error = None if target.equals is None else float(target.error(float(value)))
        if not met:
            status = "out of window"
        elif target.equals is not None and target.within_abs is None \
                and target.within_rel is None:
            status = "soft goal"
        else:
            status = "met"
        rows.append(TargetReport(
            label=target.label, kind=target.kind, unit=target.unit, value=float(value),
            goal=target.equals, low=low, high=high, error=error, met=met,
            relative=target.relative, status=status,
            error_unit=target.reading[0] if target.reading else None,
        ))
    return tuple(rows)


def resolve_values(design: Design, given: Mapping[str, float] | None = None
                   ) -> tuple[np.ndarray, np.ndarray]:
    """Every position's resistance and every physical part's, ohm, for a check.

    Parameters
    ----------
    design : Design
    given : mapping, optional
        Values that override the file, by designator: a position (``R1``,
        its effective value) or a physical part of a position of several
        parts (``R1A``, ``R1B``; give all of one position's parts).

    Returns
    -------
    positions : numpy.ndarray
        ``(resistors,)`` effective ohm, design order.
    parts : numpy.ndarray
        ``(parts,)`` ohm of every physical part (:attr:`Design.part_refs` order).

    Raises
    ------
    DesignError
        When a name is not a part of the design, when only some parts of a
        position are given, or when a free part has no value.
    """
    given = dict(given or {})
    known = set(design.part_refs) | {r.ref for r in design.resistors}
    unknown = sorted(name for name in given if name not in known)
    if unknown:
        raise DesignError(
            f"{design.origin}: values name {unknown[0]!r}, not a resistor of the design"
            f"{nearest_name(unknown[0], known)}; use the designators {name_list(sorted(known))}"
        )
    positions, parts = [], []
    missing = []
    resolved: dict[str, np.ndarray] = {}
    for resistor in design.resistors:
        position = resistor.position
        if resistor.follows and resistor.copy_of is not None:
            # an operating point's copy of a part: the same physical part's value
            if resistor.copy_of in resolved:
                values = resolved[resistor.copy_of]
                parts.extend(values.tolist())
                positions.append(float(position.effective(values[None, :])[0]))
            continue
        named = [ref for ref in position.part_refs if ref in given and ref != resistor.ref]
        if named and len(named) < position.count:
            absent = [ref for ref in position.part_refs if ref not in given]
            raise DesignError(f"{design.origin}: values give {name_list(named)} but not "
                              f"{name_list(absent)}; give every part of {resistor.ref}")
        if named:
            values = np.array([given[ref] for ref in position.part_refs], dtype=float)
        elif resistor.ref in given:
            effective = float(given[resistor.ref])
            values = (np.array(position.part_values)
                      if position.part_values is not None
                      and np.isclose(position.effective(np.array([position.part_values]))[0],
                                     effective, rtol=1e-12)
                      else position.equal_split(np.array([effective]))[0])
        elif position.part_values is not None:
            values = np.array(position.part_values, dtype=float)
        elif resistor.value is not None:
            values = position.equal_split(np.array([resistor.value]))[0]
        else:
            missing.append(resistor.ref)
            continue
        if np.any(~np.isfinite(values)) or np.any(values <= 0):
            raise DesignError(f"{design.origin}: the value of {resistor.ref} must be a positive "
                              "resistance")
        parts.extend(values.tolist())
        resolved[resistor.ref] = values
        positions.append(float(position.effective(values[None, :])[0]))
    if missing:
        raise DesignError(
            f"{design.origin}: {name_list(missing)} still need a value for check; add value = "
            "\"...\" to each or run rnsynth design to choose them"
        )
    return np.array(positions, dtype=float), np.array(parts, dtype=float)


def part_problems(part: PartReport) -> list[Problem]:
    """A record for each allowance (power, voltage) the physical part goes over."""
    problems = []
    if part.allowed_power is not None and bool(exceeds(part.power, part.allowed_power)):
        problems.append(Problem("power", part.ref, part.power, part.allowed_power, "W"))
    if part.allowed_voltage is not None and bool(exceeds(part.voltage, part.allowed_voltage)):
        problems.append(Problem("voltage", part.ref, part.voltage, part.allowed_voltage, "V"))
    return problems


def _point_problems(design: Design, part: PartReport) -> list[Problem]:
    """:func:`part_problems`, the subject naming the operating point in a design of points."""
    found = part_problems(part)
    if not design.points or part.point is None:
        return found
    return [replace(p, subject=point_label(p.subject, part.point)) for p in found]


def worst_points(reports: list[PartReport]) -> list[PartReport]:
    """Each physical resistor once: its report at the operating point it is most stressed.

    The point of the largest use of its allowed dissipation (of its voltage
    allowance on a tie; of its dissipation for an unrated part).  Sources and
    regulators keep one report per point.
    """
    worst: dict[str, PartReport] = {}
    order: list[str] = []

    def stress(p: PartReport) -> tuple[float, float, float]:
        return (p.utilization if p.utilization is not None else -1.0,
                p.voltage_utilization if p.voltage_utilization is not None else -1.0, p.power)

    for part in reports:
        if part.kind != "resistor":
            continue
        if part.ref not in worst:
            order.append(part.ref)
            worst[part.ref] = part
        elif stress(part) > stress(worst[part.ref]):
            worst[part.ref] = part
    return [worst[ref] for ref in order] + [p for p in reports if p.kind != "resistor"]


def _window_problem(target: TargetReport, reading: tuple[str, float] | None) -> Problem:
    edge = target.low if target.value < target.low else target.high
    return Problem("window", target.label, target.value, edge, target.unit,
                   low=target.low, high=target.high, reading=reading)


def _physical_refs(design: Design) -> dict[str, tuple[str, ...]]:
    """Each position's physical part designators, a later point's copy under its leader's."""
    own = {r.ref: r.part_refs for r in design.resistors if r.copy_of is None}
    return {r.ref: own[r.copy_of] if r.copy_of is not None else r.part_refs
            for r in design.resistors}


def _part_reports(design: Design, ev: Evaluator, row: int, result: Evaluation,
                  parts: np.ndarray) -> list[PartReport]:
    sol = result.solution
    reports = []
    physical = _physical_refs(design)
    for k, resistor in enumerate(design.resistors):
        allowance = design.allowance(resistor)
        cols = ev.part_columns[k]
        for offset, ref in enumerate(physical[resistor.ref]):
            col = cols.start + offset
            power = float(result.part_power[row, col])
            across = float(result.part_voltage[row, col])
            reports.append(PartReport(
                ref=ref, kind="resistor", value=float(parts[col]),
                current=float(result.part_current[row, col]), voltage=across, power=power,
                package=resistor.package,
                rated_power=None if allowance is None else allowance.rated_power_w,
                allowed_power=None if allowance is None else allowance.power_w,
                utilization=None if allowance is None
                else float(use_of(power, allowance.power_w)),
                limiting_voltage=None if allowance is None else allowance.limiting_voltage_v,
                allowed_voltage=None if allowance is None else allowance.voltage_v,
                voltage_utilization=None if allowance is None
                else float(use_of(across, allowance.voltage_v)),
                position=resistor.copy_of or resistor.ref, point=resistor.point,
            ))
    v = sol.node_voltages[row]
    point_of = {s.ref: s.point for s in design.sources if s.point is not None}
    # sources and controlled sources: current as delivered (out of plus, into `to`)
    two_terminal = ([(s.ref, f"{s.kind} source", s.value, s.pos, s.neg) for s in design.sources]
                    + [(c.ref, f"controlled source ({c.kind})", c.gain, c.pos, c.neg)
                       for c in design.controlled])
    for ref, kind, value, pos, neg in two_terminal:
        current = float(sol.branch_currents[row, ev.branch_index[ref]])
        across = float(v[ev.node_index[pos]] - v[ev.node_index[neg]])
        reports.append(PartReport(ref=ref, kind=kind, value=value, current=current,
                                  voltage=across, power=current * across,
                                  point=point_of.get(ref)))
    for g, regulator in enumerate(design.regulators):
        col = ev.branch_index[regulator.ref]
        current = float(sol.branch_currents[row, col])
        out = float(sol.regulator_outputs[row, g])
        reports.append(PartReport(
            ref=regulator.ref, kind="regulator", value=out, current=current, voltage=out,
            power=current * out,
        ))
    return reports


def _cautions(design: Design, parts: list[PartReport], max_voltage: float) -> list[str]:
    over_rating: list[str] = []
    over_margin: list[str] = []
    by_ref = {ref: resistor for resistor in design.resistors for ref in resistor.part_refs}
    for part in parts:
        if part.kind != "resistor" or part.allowed_power is None:
            continue
        allowance = design.allowance(by_ref[part.ref])
        name = part.ref if part.point is None or not design.points else point_label(
            part.ref, part.point)
        assert allowance is not None
        if bool(exceeds(part.power, part.allowed_power)):
            hot = bool(exceeds(part.power, allowance.derated_power_w))
            (over_rating if hot else over_margin).append(name)
        elif part.allowed_voltage is not None and bool(exceeds(part.voltage,
                                                                part.allowed_voltage)):
            over_margin.append(name)
    return voltage_cautions(max_voltage) + power_cautions(over_rating, over_margin)


def check_block(design: Design, evaluator: Evaluator, positions: np.ndarray,
                parts: np.ndarray) -> list[CheckResult]:
    """Check many complete value sets of one design in one batched solve.

    Parameters
    ----------
    design : Design
    evaluator : Evaluator
        Bound to ``design``.
    positions : numpy.ndarray
        ``(K, resistors)`` effective ohm of every position.
    parts : numpy.ndarray
        ``(K, parts)`` ohm of every physical part.

    Returns
    -------
    list of CheckResult
        One per row, as :func:`check` gives it (without ``verify`` or spread).
    """
    positions = np.atleast_2d(np.asarray(positions, dtype=float))
    parts = np.atleast_2d(np.asarray(parts, dtype=float))
    result = evaluator.evaluate(positions, part_values=parts)
    physical = {ref for r in design.physical_resistors for ref in r.part_refs}
    # linearity is judged on the single network, its sensor at every temperature of the range
    single = design.single or design
    single_ev = (evaluator if single is design else Evaluator(single)) \
        if design.linearities else None
    column = {r.ref: k for k, r in enumerate(design.resistors)}
    single_columns = np.array([column[r.ref] for r in single.resistors], dtype=int)
    out = []
    for row in range(len(positions)):
        lines = tuple(check_linearity(single, lin, positions[row, single_columns], single_ev)
                      for lin in design.linearities)
        v = result.solution.node_voltages[row]
        reports = _part_reports(design, evaluator, row, result, parts[row])
        targets = target_reports(design, result.targets[row], result.target_noise[row])
        problems = [p for part in reports if part.kind == "resistor"
                    for p in _point_problems(design, part)]
        problems += [_window_problem(t, d.reading)
                     for t, d in zip(targets, design.targets, strict=True) if not t.met]
        problems += [Problem("linearity", f"{c.label} at {c.worst_c:.4g} °C", c.worst_error_c,
                             c.within_c, "°C") for c in lines if not c.met]
        max_voltage = float(v.max() - v.min())
        cautions = tuple(_cautions(design, reports, max_voltage))
        if design.points:
            reports = worst_points(reports)
        out.append(CheckResult(
            design=design,
            values={ref: float(parts[row, c]) for c, ref in enumerate(design.part_refs)
                    if ref in physical},
            nodes={name: float(v[k]) for k, name in enumerate(evaluator.network.nodes)},
            parts=tuple(reports), targets=targets,
            supply_current=float(result.supply_current[row]), max_voltage=max_voltage,
            cautions=cautions, problems=tuple(problems),
            verify_difference=None,
            positions={r.ref: float(positions[row, k]) for k, r in enumerate(design.resistors)
                       if r.copy_of is None},
            linearity=lines,
        ))
    return out


def check(design: Design, *, values: Mapping[str, float] | None = None,
          verify: bool = False, fill_ideal: bool = True,
          spread: SpreadSettings | None = None, jobs: int = 1,
          time_limit_s: float | None = None, deadline: Deadline | None = None) -> CheckResult:
    """Analyse a design whose resistor values are all known.

    Parameters
    ----------
    design : Design
        A validated design.
    values : mapping, optional
        Resistances by designator (ohm) overriding the file's values: a
        position's effective value (``R1``) or each physical part of a
        position of several parts (``R1A``, ``R1B``: a candidate's
        ``values``).  Unknown names are refused.
    verify : bool
        Also solve by modified nodal analysis and report the largest difference.
    fill_ideal : bool
        Check free parts that have no value at their ideal continuous value
        (see :func:`synth.search.ideal.ideal_values`) instead of refusing.
    spread : SpreadSettings, optional
        Also analyse the spread over tolerance, temperature and supply
        (:func:`synth.spread.analyse.analyse_spread`).
    jobs : int
        Most processes the Monte Carlo's seeded shards may use
        (:func:`synth.spread.shard_map.process_shards`); 1 (the default) runs them
        in this process.  The figures do not depend on it.
    time_limit_s : float, optional
        Seconds the call may take: the Monte Carlo is shrunk to the samples that fit
        (:func:`synth.spread.fit.fitted_run`; at least its first pilot's, 1,000, run),
        and a shortened run says so (``samples_run`` below the asked ``samples``,
        ``samples_cut = "time limit"``).
    deadline : Deadline, optional
        A deadline already running (a command's, started before this call); built from
        ``time_limit_s`` when not given.

    Returns
    -------
    CheckResult

    Raises
    ------
    DesignError
        When a part has no value, a name in ``values`` is unknown, or a
        regulating element cannot regulate.

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "12 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "value": "10k"},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}]})
    >>> round(check(d).nodes["out"], 6)
    6.0

    Notes
    -----
    Each physical part's allowance is its package's rated power, derated
    linearly from its rated ambient (70 °C) to zero at its zero-power
    temperature (155 °C) at the design's hottest ambient, times the design's
    power use limit (50 % by default; common practice), and its limiting
    element voltage times the voltage use limit (80 %); see :mod:`synth.rating`.
    """
    check_jobs(jobs)
    if time_limit_s is not None and not time_limit_s > 0:
        raise DesignError(f"time limit {time_limit_s!r} s must be a positive number of seconds")
    deadline = deadline or Deadline(time_limit_s)
    given = dict(values or {})
    filled: dict[str, float] = {}
    missing = [p.ref for p in design.resistors
               if p.value is None and p.position.part_values is None and p.ref not in given
               and not p.follows
               and not any(ref in given for ref in p.part_refs)]
    if missing and fill_ideal and design.targets:
        ideal = ideal_values(design)
        filled = {ref: ideal[ref] for ref in missing if ref in ideal}
        given.update(filled)
    positions, parts = resolve_values(design, given)
    ev = Evaluator(design, typical_resistances=positions)
    ev.check_regulators(positions)
    ev.check_ratios(positions)
    result = check_block(design, ev, positions[None, :], parts[None, :])[0]
    difference = None
    if verify:
        solved = ev.evaluate(positions[None, :], part_values=parts[None, :]).solution
        net, src = ev.network, ev.nominal_sources
        other = nodal_solve(net, positions[None, :], src.voltages, src.currents, src.setpoints)
        difference = solution_difference(solved, other, positions[None, :])
    spread_result = None
    if spread is None and design.require != "nominal":
        spread = SpreadSettings(samples=0) if design.require == "worst-case" else SpreadSettings()
    if spread is not None:
        spread_result = _spread(design, ev, result.positions, parts, spread, jobs, deadline)
    problems = result.problems + required_problems(design, spread_result)
    return CheckResult(**{**result.__dict__, "verify_difference": difference,
                          "filled": filled, "spread": spread_result, "problems": problems})


def _spread(design: Design, ev: Evaluator, positions: dict[str, float], parts: np.ndarray,
            settings: SpreadSettings, jobs: int, deadline: Deadline) -> SpreadResult:
    """The spread, its Monte Carlo shrunk to fit what is left of ``deadline`` (at least
    the first pilot's samples run, so that a yield is always measured)."""

    limited = deadline.limited

    def run(samples: int, final: bool) -> SpreadResult:
        shards = process_shards(jobs, fine=limited) if final and jobs > 1 else None
        return analyse_spread(design, positions, replace(settings, samples=samples), ev,
                              part_values=parts, map_shards=shards,
                              stop=deadline.expired if final and limited else None)

    if not limited:
        return run(settings.samples, True)
    spread, _ = fitted_run(run, settings.samples, max(deadline.remaining(), 1e-9),
                           deadline.elapsed, reserve_s=POOL_START_S if jobs > 1 else 0.0)
    if (spread.samples_run or 0) >= settings.samples:  # the final run may stop early
        return spread
    return replace(spread, settings=settings, samples_cut="time limit")


def required_problems(design: Design, spread: SpreadResult | None) -> tuple[Problem, ...]:
    """What fails on the basis the design requires beyond nominal values.

    With ``require = "worst-case"``: each target's worst low and high against
    its window and each physical part's worst dissipation and voltage against
    its allowance; with ``require = "yield"``: the yield's 95 % lower bound
    against ``min_yield``.
    """
    if spread is None or design.require == "nominal":
        return ()
    problems: list[Problem] = []
    if design.require == "worst-case":
        for target, ts in zip(design.targets, spread.targets, strict=True):
            low, high = target.bounds
            for value in (ts.worst_low, ts.worst_high):
                if (not np.isfinite(value) or falls_short(value, low, ts.noise)
                        or exceeds(value, high, ts.noise)):
                    edge = low if value < low else high
                    problems.append(Problem("window", target.label, value, edge, target.unit,
                                            low=low, high=high, basis="worst case",
                                            reading=target.reading))
        for ps in spread.parts:
            if ps.allowed_power_hot is not None and exceeds(ps.worst_power,
                                                            ps.allowed_power_hot):
                problems.append(Problem("power", ps.ref, ps.worst_power, ps.allowed_power_hot,
                                        "W", basis="worst case"))
            if ps.allowed_voltage is not None and exceeds(ps.worst_voltage, ps.allowed_voltage):
                problems.append(Problem("voltage", ps.ref, ps.worst_voltage, ps.allowed_voltage,
                                        "V", basis="worst case"))
    elif spread.yield_interval is not None and design.min_yield is not None:
        low_bound = spread.yield_interval[0]
        if low_bound < design.min_yield:
            problems.append(Problem("yield", "yield", low_bound, design.min_yield, "",
                                    basis="yield"))
    return tuple(problems)
