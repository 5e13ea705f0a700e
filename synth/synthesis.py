"""``synthesize()``: from targets to ranked, re-checked standard-value designs.

It builds every free position's choices, finds the ideal continuous values,
runs the exact branch-and-bound search, then re-checks each returned
candidate with a full mesh solve (:func:`synth.checking.check_block`, one batched solve) so that the
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
from synth.checking import check_block
from synth.circuit.measure import Evaluator
from synth.design.model import Design
from synth.errors import DesignError
from synth.results import Candidate, SynthesisResult, TargetReport
from synth.search.branch_and_bound import SearchOutcome, search
from synth.search.choices import Choices, choices_for, combination_count
from synth.search.ideal import ideal_values
from synth.search.problem import SearchProblem
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


def _candidates(design: Design, evaluator: Evaluator, choices: list[Choices],
                indices: np.ndarray) -> list[Candidate]:
    """Re-check ranked candidates in one batched solve and build their records."""
    if not len(indices):
        return []
    problem = SearchProblem(design, evaluator, choices, relaxed=False)
    positions = problem.resistances(indices)
    parts = problem.part_values(indices)
    evaluator.check_regulators(positions[:1])
    checked = check_block(design, evaluator, positions, parts)
    out = []
    for rank, (row, result) in enumerate(zip(indices, checked, strict=True), start=1):
        values: dict[str, float] = {}
        labels: dict[str, str] = {}
        for p, choice in enumerate(choices):
            for ref, value in zip(choice.position.part_refs, choice.parts[int(row[p])],
                                  strict=True):
                values[ref] = float(value)
                labels[ref] = _series_label(float(value), choice)
        out.append(Candidate(
            rank=rank, values=values, positions=dict(result.positions), series=labels,
            objective=_objective(design, result.targets), targets=result.targets,
            parts=result.parts, supply_current=result.supply_current,
            feasible=not result.problems, problems=result.problems, check=result,
        ))
    return out


def _objective(design: Design, reports: tuple[TargetReport, ...]) -> float:
    """Largest ``|value - goal| / scale`` over ``equals`` targets (see Target.objective)."""
    terms = [float(target.objective(report.value))
             for target, report in zip(design.targets, reports, strict=True)
             if target.equals is not None]
    return max(terms, default=0.0)


def _binding(candidate: Candidate) -> str:
    """The problem the nearest design breaks most, in words."""
    worst, text = -math.inf, "a target or limit"
    for problem in candidate.problems:
        if problem.kind == "window":
            target = next(t for t in candidate.targets if t.label == problem.subject)
            scale = abs(target.goal) if target.goal else max(abs(problem.limit), 1e-300)
            gap = abs(problem.value - problem.limit) / scale
            described = f"target {problem.subject!r} ({problem})"
        else:
            gap = problem.value / problem.limit - 1 if problem.limit > 0 else math.inf
            what = "dissipation" if problem.kind == "power" else "voltage"
            described = (f"the {what} limit of {problem.subject} ({problem.value:.4g} "
                         f"{problem.unit} against {problem.limit:.4g} {problem.unit} allowed)")
        if gap > worst:
            worst, text = gap, described
    return text


def synthesize(
    design: Design,
    *,
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
    candidates = _candidates(design, evaluator, choices, ranked.indices)
    if spread is not None or rank_by == "yield":
        settings = spread or SpreadSettings()
        candidates = [replace(c, spread=analyse_spread(
            design, c.positions, settings, evaluator,
            part_values=np.array([c.check.values[ref] for ref in design.part_refs])))
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
