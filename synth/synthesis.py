"""``synthesize()``: from targets to ranked, re-checked standard-value designs.

It builds every free position's choices, finds the ideal continuous values,
runs the exact branch-and-bound search, then re-checks each returned
candidate with a full mesh solve (:func:`synth.analysis.check`) so that the
numbers shown are those of the real network, loads and sources included.
When no candidate meets every window and limit, a relaxed search ranks the
nearest designs by their largest violation and names the binding target or
limit.
"""

from __future__ import annotations

__all__ = ["RANKINGS", "synthesize"]

import math
from collections.abc import Callable
from dataclasses import replace

import numpy as np

from synth.catalog.series import coarsest_series
from synth.checking import check, stress_problems
from synth.circuit.measure import Evaluator
from synth.design.model import Design
from synth.errors import DesignError
from synth.results import Candidate, PartReport, SynthesisResult, TargetReport
from synth.search.branch_and_bound import SearchOutcome, search
from synth.search.choices import Choices, choices_for, combination_count
from synth.search.ideal import ideal_values
from synth.spread.analyse import analyse_spread
from synth.spread.records import SpreadSettings
from synth.spread.worst_case import WorstCase

RANKINGS = ("nominal", "worst-case", "yield")


def _seeds(choices: list[Choices], ideal: dict[str, float]) -> np.ndarray | None:
    if not ideal or len(choices) > 12:
        return None
    around = []
    for choice in choices:
        wanted = ideal.get(choice.ref)
        if wanted is None:
            return None
        at = int(np.searchsorted(choice.values, wanted))
        around.append(sorted({min(max(at - 1, 0), len(choice) - 1), min(at, len(choice) - 1)}))
    grid = np.meshgrid(*[np.array(a) for a in around], indexing="ij")
    return np.stack([g.ravel() for g in grid], axis=1).astype(np.int64)


def _series_label(value: float, choice: Choices) -> str:
    return coarsest_series(value) or choice.label


def _split_part(part: PartReport, a: float, b: float, how: str) -> list[PartReport]:
    out = []
    for suffix, value in (("A", a), ("B", b)):
        if how == "series":
            current, voltage = part.current, abs(part.current) * value
        else:
            voltage = part.voltage
            current = part.current * (part.value / value)
        power = current * current * value
        out.append(replace(
            part, ref=part.ref + suffix, value=value, current=current, voltage=voltage,
            power=power,
            utilization=None if part.allowed_power is None else power / part.allowed_power,
            voltage_utilization=None if part.allowed_voltage is None
            else voltage / part.allowed_voltage,
        ))
    return out


def _candidate(design: Design, choices: list[Choices], indices: np.ndarray, rank: int,
               objective: float) -> Candidate:
    positions = {}
    values: dict[str, float] = {}
    labels: dict[str, str] = {}
    splits = {}
    for p, choice in enumerate(choices):
        i = int(indices[p])
        positions[choice.ref] = float(choice.values[i])
        if choice.combine is None:
            values[choice.ref] = float(choice.values[i])
            labels[choice.ref] = _series_label(values[choice.ref], choice)
        else:
            a, b = float(choice.first[i]), float(choice.second[i])
            values[choice.ref + "A"], values[choice.ref + "B"] = a, b
            labels[choice.ref + "A"] = _series_label(a, choice)
            labels[choice.ref + "B"] = _series_label(b, choice)
            splits[choice.ref] = (a, b, choice.combine)
    result = check(design, values=positions)
    parts: list[PartReport] = []
    problems = [p for p in result.problems]
    for part in result.parts:
        if part.ref in splits:
            a, b, how = splits[part.ref]
            pieces = _split_part(part, a, b, how)
            parts.extend(pieces)
            problems = [p for p in problems if not p.startswith(f"{part.ref} ")]
            for piece in pieces:
                problems.extend(stress_problems(piece))
        else:
            parts.append(part)
    all_positions = dict(result.values)
    return Candidate(
        rank=rank, values=values, positions=all_positions, series=labels,
        objective=objective, targets=result.targets, parts=tuple(parts),
        supply_current=result.supply_current, feasible=not problems,
        problems=tuple(problems), check=result,
    )


def _objective(design: Design, reports: tuple[TargetReport, ...]) -> float:
    """Largest relative error over ``equals`` targets (a zero goal: error / window)."""
    worst = 0.0
    for target, report in zip(design.targets, reports, strict=True):
        if target.equals is None:
            continue
        scale = abs(target.equals) if target.equals else (target.within_abs or 1.0)
        worst = max(worst, abs(report.value - target.equals) / scale)
    return worst


def _binding(candidate: Candidate) -> str:
    worst, text = -math.inf, "a target or limit"
    for t in candidate.targets:
        if t.met:
            continue
        edge = t.low if t.value < t.low else t.high
        scale = abs(t.goal) if t.goal else max(abs(edge), 1e-300)
        gap = abs(t.value - edge) / scale
        if gap > worst:
            window = f"{t.low:.6g}..{t.high:.6g}".replace("-inf..", "<= ").replace("..inf", "")
            worst, text = gap, (f"target {t.label!r} (nearest design gives {t.value:.6g}, "
                                f"window {window})")
    for p in candidate.parts:
        for use, what, limit, unit in ((p.utilization, "dissipation", p.allowed_power, "W"),
                                       (p.voltage_utilization, "voltage", p.allowed_voltage,
                                        "V")):
            if use is not None and use > 1 and use - 1 > worst:
                amount = p.power if what == "dissipation" else p.voltage
                worst, text = use - 1, (f"the {what} limit of {p.ref} ({amount:.4g} {unit} "
                                        f"against {limit:.4g} {unit} allowed)")
    return text


def synthesize(
    design: Design,
    top: int = 10,
    time_limit_s: float | None = None,
    progress: Callable[[float], None] | None = None,
    spread: SpreadSettings | None = None,
    rank_by: str = "nominal",
) -> SynthesisResult:
    """Choose standard values for a design's free parts.

    Parameters
    ----------
    design : Design
        A design with at least one free part (``choose``).
    top : int
        Number of distinct candidates to return (default 10).
    time_limit_s : float, optional
        Stop searching after this many seconds; the result is then marked
        unproven unless the search had already finished.
    progress : callable, optional
        Called with the settled share of the search space (0..1).
    spread : SpreadSettings, optional
        Analyse every returned candidate's spread (worst case, RSS, Monte Carlo).
    rank_by : {"nominal", "worst-case", "yield"}
        ``"nominal"`` minimises the largest relative error at nominal values;
        ``"worst-case"`` the largest worst-case relative error over the
        tolerance box (exact, by the same branch and bound); ``"yield"``
        finds the nominal best candidates, then orders them by Monte Carlo
        yield (highest first; ties keep the nominal order).

    Returns
    -------
    SynthesisResult

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "12 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
    ...                   "range": ["1k", "100k"]},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
    ...     "target": [{"voltage": "out", "equals": "4 V"}]})
    >>> best = synthesize(d).candidates[0]
    >>> best.values["R1"], best.objective
    (20000.0, 0.0)

    Notes
    -----
    The objective is the largest relative error over the ``equals`` targets
    at nominal values, subject to every window, bound and limit; ties (within
    1e-12) go to fewer distinct values, then coarser series, then lower supply
    current.  The search is exact: see :mod:`synth.search`.
    """
    if rank_by not in RANKINGS:
        raise DesignError(f"rank_by {rank_by!r} is not known; use one of {', '.join(RANKINGS)}")
    choices = [choices_for(r, design.origin) for r in design.free_resistors]
    evaluator = Evaluator(design)
    ranges = WorstCase(design, evaluator).ranges if rank_by == "worst-case" else None
    ideal = ideal_values(design, evaluator)
    seeds = _seeds(choices, ideal)
    outcome: SearchOutcome = search(design, evaluator, choices, top=top,
                                    time_limit_s=time_limit_s, seeds=seeds, progress=progress,
                                    target_ranges=ranges)
    feasible = len(outcome.ranked.objective) > 0
    binding = None
    if not feasible:
        remaining = None if time_limit_s is None else max(time_limit_s - outcome.elapsed_s, 1.0)
        relaxed = search(design, evaluator, choices, top=min(top, 5), time_limit_s=remaining,
                         seeds=seeds, relaxed=True)
        ranked = relaxed.ranked
        proven = outcome.proven and relaxed.proven
        evaluated = outcome.evaluated + relaxed.evaluated
        elapsed = outcome.elapsed_s + relaxed.elapsed_s
    else:
        ranked, proven = outcome.ranked, outcome.proven
        evaluated, elapsed = outcome.evaluated, outcome.elapsed_s
    candidates = []
    for rank, row in enumerate(ranked.indices, start=1):
        candidate = _candidate(design, choices, row, rank, 0.0)
        candidates.append(replace(candidate, objective=_objective(design, candidate.targets)))
    if spread is not None or rank_by == "yield":
        settings = spread or SpreadSettings()
        candidates = [replace(c, spread=analyse_spread(design, c.positions, settings, evaluator))
                      for c in candidates]
    if rank_by == "yield" and candidates:
        order = sorted(candidates, key=lambda c: (-(c.spread.yield_fraction or 0.0)
                                                  if c.spread else 0.0, c.rank))
        candidates = [replace(c, rank=k) for k, c in enumerate(order, start=1)]
    if not feasible and candidates:
        binding = _binding(candidates[0])
    return SynthesisResult(
        design=design, ideal=ideal, candidates=tuple(candidates),
        proven_optimal=proven, feasible=feasible and bool(candidates),
        binding=binding, evaluated=evaluated, combinations=combination_count(choices),
        elapsed_s=elapsed, rank_by=rank_by,
    )
