"""Analysis of a design whose values are all given (``rnsynth check``).

:func:`check` solves the network once by loop currents, measures every
target and every part's current, voltage, dissipation and rating use, and
optionally repeats the solve by modified nodal analysis to show the two agree.
"""

from __future__ import annotations

__all__ = ["check", "resolve_values", "stress_problems", "target_reports"]

from collections.abc import Mapping

import numpy as np

from synth.cautions import power_cautions, voltage_cautions
from synth.circuit.measure import Evaluation, Evaluator
from synth.circuit.nodal import nodal_solve
from synth.design.model import Design, Target
from synth.errors import DesignError
from synth.rating import derating_factor
from synth.results import CheckResult, PartReport, TargetReport
from synth.search.ideal import ideal_values
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings


def _error(target: Target, value: float) -> float | None:
    if target.equals is None:
        return None
    if target.equals == 0:
        return value
    return (value - target.equals) / abs(target.equals)


def target_reports(design: Design, values: np.ndarray) -> tuple[TargetReport, ...]:
    """Build :class:`TargetReport` rows from one candidate's target values."""
    rows = []
    for target, value in zip(design.targets, values, strict=True):
        low, high = target.bounds
        rows.append(TargetReport(
            label=target.label, kind=target.kind, unit=target.unit, value=float(value),
            goal=target.equals, low=low, high=high, error=_error(target, float(value)),
            met=bool(low <= value <= high) and bool(np.isfinite(value)),
        ))
    return tuple(rows)


def resolve_values(design: Design, given: Mapping[str, float] | None = None) -> np.ndarray:
    """Resistance of every resistor for a check, ohm, in design order.

    Parameters
    ----------
    design : Design
    given : mapping, optional
        Values by reference designator that override the file (e.g. ideal values).

    Raises
    ------
    DesignError
        When a free part has neither a ``value`` nor an entry in ``given``.
    """
    given = dict(given or {})
    missing = [r.ref for r in design.resistors if r.value is None and r.ref not in given]
    if missing:
        raise DesignError(
            f"{design.origin}: {', '.join(missing)} still need a value for check; add value = "
            "\"...\" to each or run rnsynth design to choose them"
        )
    return np.array([given.get(r.ref, r.value) for r in design.resistors], dtype=float)


def stress_problems(part: PartReport) -> list[str]:
    """One line for each allowance (power, voltage) the part goes over."""
    lines = []
    if part.utilization is not None and part.utilization > 1:
        lines.append(f"{part.ref} dissipates {part.power:.4g} W, over its allowed "
                     f"{part.allowed_power:.4g} W")
    if part.voltage_utilization is not None and part.voltage_utilization > 1:
        lines.append(f"{part.ref} sees {part.voltage:.4g} V, over its allowed "
                     f"{part.allowed_voltage:.4g} V")
    return lines


def _part_reports(design: Design, ev: Evaluator, r: np.ndarray,
                  result: Evaluation) -> list[PartReport]:
    sol = result.solution
    parts = []
    for k, resistor in enumerate(design.resistors):
        rating = design.rating(resistor)
        power = float(result.resistor_power[0, k])
        across = float(result.resistor_voltage[0, k])
        allowed = None if rating is None else float(ev.allowed_power[k])
        allowed_v = None if rating is None else float(ev.allowed_voltage[k])
        parts.append(PartReport(
            ref=resistor.ref, kind="resistor", value=float(r[k]),
            current=float(sol.branch_currents[0, k]), voltage=across, power=power,
            package=resistor.package,
            rated_power=None if rating is None else rating.rated_power_w,
            allowed_power=allowed,
            utilization=None if allowed is None else (power / allowed if allowed > 0 else np.inf),
            limiting_voltage=None if rating is None else rating.limiting_voltage_v,
            allowed_voltage=allowed_v,
            voltage_utilization=None if allowed_v is None else across / allowed_v,
        ))
    v = sol.node_voltages[0]
    # sources and controlled sources: current as delivered (out of plus, into `to`)
    two_terminal = ([(s.ref, f"{s.kind} source", s.value, s.pos, s.neg) for s in design.sources]
                    + [(c.ref, f"controlled source ({c.kind})", c.gain, c.pos, c.neg)
                       for c in design.controlled])
    for ref, kind, value, pos, neg in two_terminal:
        current = float(sol.branch_currents[0, ev.branch_index[ref]])
        across = float(v[ev.node_index[pos]] - v[ev.node_index[neg]])
        parts.append(PartReport(ref=ref, kind=kind, value=value, current=current,
                                voltage=across, power=current * across))
    for g, regulator in enumerate(design.regulators):
        col = ev.branch_index[regulator.ref]
        current = float(sol.branch_currents[0, col])
        out = float(sol.regulator_outputs[0, g])
        parts.append(PartReport(
            ref=regulator.ref, kind="regulator", value=out, current=current, voltage=out,
            power=current * out,
        ))
    return parts


def check(design: Design, values: Mapping[str, float] | None = None,
          verify: bool = False, fill_ideal: bool = True,
          spread: SpreadSettings | None = None) -> CheckResult:
    """Analyse a design whose resistor values are all known.

    Parameters
    ----------
    design : Design
        A validated design.
    values : mapping, optional
        Resistances by reference designator (ohm) overriding the file's values.
    verify : bool
        Also solve by modified nodal analysis and report the largest difference.
    fill_ideal : bool
        Check free parts that have no value at their ideal continuous value
        (see :func:`synth.ideal.ideal_values`) instead of refusing.
    spread : SpreadSettings, optional
        Also analyse the spread over tolerance, temperature and supply
        (:func:`synth.spread.analyse_spread`).

    Returns
    -------
    CheckResult

    Raises
    ------
    DesignError
        When a part has no value, or a regulating element cannot regulate.

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
    Allowed dissipation is the package's rated power, derated linearly from
    its rated ambient (70 °C) to zero at its zero-power temperature (155 °C),
    times the design margin (50 % by default; common practice).
    """
    given = dict(values or {})
    filled: dict[str, float] = {}
    missing = [p.ref for p in design.resistors if p.value is None and p.ref not in given]
    if missing and fill_ideal and design.targets:
        ideal = ideal_values(design)
        filled = {ref: ideal[ref] for ref in missing if ref in ideal}
        given.update(filled)
    r = resolve_values(design, given)
    ev = Evaluator(design, typical_resistances=r)
    ev.check_regulators(r)
    result = ev.evaluate(r[None, :])
    v = result.solution.node_voltages[0]
    parts = _part_reports(design, ev, r, result)
    targets = target_reports(design, result.targets[0])
    problems = []
    over_rating: list[str] = []
    over_margin: list[str] = []
    for part in parts:
        if part.utilization is not None and part.utilization > 1:
            rating = design.packages[part.package or ""]
            full = rating.rated_power_w * float(derating_factor(
                design.ambient_c, rating.rated_ambient_c, rating.zero_power_c))
            (over_rating if part.power > full else over_margin).append(part.ref)
        if part.voltage_utilization is not None and part.voltage_utilization > 1:
            if part.ref not in over_margin + over_rating:
                over_margin.append(part.ref)
        problems.extend(stress_problems(part))
    for target in targets:
        if not target.met:
            problems.append(f"target {target.label} = {target.value:.6g} lies outside "
                            f"{target.low:.6g}..{target.high:.6g}")
    max_voltage = float(v.max() - v.min())
    cautions = voltage_cautions(max_voltage) + power_cautions(over_rating, over_margin)
    difference = None
    if verify:
        net, src = ev.network, ev.nominal_sources
        other = nodal_solve(net, r[None, :], src.voltages, src.currents, src.setpoints)
        scale_v = max(float(np.abs(v).max()), 1e-300)
        scale_i = max(float(np.abs(result.solution.branch_currents).max()), 1e-300)
        difference = max(
            float(np.abs(other.node_voltages - result.solution.node_voltages).max()) / scale_v,
            float(np.abs(other.branch_currents - result.solution.branch_currents).max()) / scale_i,
        )
    return CheckResult(
        design=design,
        values={res.ref: float(r[k]) for k, res in enumerate(design.resistors)},
        nodes={name: float(v[k]) for k, name in enumerate(ev.network.nodes)},
        parts=tuple(parts), targets=targets,
        supply_current=float(result.supply_current[0]), max_voltage=max_voltage,
        cautions=tuple(cautions), problems=tuple(problems), verify_difference=difference,
        filled=filled,
        spread=None if spread is None else analyse_spread(
            design, {res.ref: float(r[k]) for k, res in enumerate(design.resistors)}, spread,
            ev),
    )
