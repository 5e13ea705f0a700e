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

__all__ = ["RANKINGS", "YIELD_POOL", "synthesize"]

import math
import time
from collections.abc import Callable
from dataclasses import replace

import numpy as np

from synth.binding import distance, limit_text, nearest_text
from synth.catalog.series import coarsest_series
from synth.checking import check_block, required_problems
from synth.circuit.measure import Evaluator
from synth.deadline import Deadline
from synth.design.model import REQUIREMENTS, Design
from synth.errors import DesignError
from synth.results import Candidate, Problem, SynthesisResult, TargetReport
from synth.search.branch_and_bound import SearchOutcome
from synth.search.choices import Choices, combination_count, values_of_row
from synth.search.orders import RANKINGS
from synth.search.parallel import search
from synth.search.problem import SearchProblem
from synth.search.ranking import TIE_TOLERANCE
from synth.search.start import start_search
from synth.spread.analyse import analyse_spread
from synth.spread.fit import fitted_run
from synth.spread.records import SpreadSettings
from synth.spread.shard_map import POOL_START_S, process_shards
from synth.spread.worst_case import WorstCase


def _series_label(value: float, choice: Choices) -> str:
    return coarsest_series(value) or choice.label


_RECHECK_BLOCK = 2048
"""Candidates re-checked per batched solve (the memory of one block stays bounded)."""

_RECHECK_PROBE = 32
"""Candidates re-checked first under a time limit, to measure what one costs."""

_RECHECK_SHARE = 0.5
"""Share of the time left after the search that re-checking and showing candidates may take."""

_SHOW_FACTOR = 1.0
"""Seconds kept for showing a candidate (its rows of the report, or its JSON) per second its
re-check took: showing took 0.2 to 0.8 times the re-check, measured on networks of 4 to 20
free parts, so a re-check cut to fit leaves the time to print what it kept."""


def _candidates(design: Design, evaluator: Evaluator, choices: list[Choices],
                indices: np.ndarray, deadline: Deadline | None = None,
                per_candidate_s: float | None = None) -> list[Candidate]:
    """Re-check ranked candidates in batched solves and build their records.

    With a limited ``deadline``, re-checking and showing the candidates take at
    most :data:`_RECHECK_SHARE` of the time left: the blocks are sized from
    the cost of a candidate (``per_candidate_s``, else measured on a first
    block of :data:`_RECHECK_PROBE`), the time to show each candidate
    re-checked is reserved on the deadline (:data:`_SHOW_FACTOR`), the best
    candidate is always re-checked, and the candidates that do not fit are
    dropped and the cut recorded.
    """
    if not len(indices):
        return []
    problem = SearchProblem(design, evaluator, choices, relaxed=False)
    limited = deadline is not None and deadline.limited
    ends = (deadline.elapsed() + (deadline.budget(_RECHECK_SHARE) or 0.0)
            if deadline is not None and limited else math.inf)
    clock = time.perf_counter if deadline is None else deadline.clock
    out: list[Candidate] = []
    spent = 0.0
    while len(out) < len(indices):
        done = len(out)
        size = min(_RECHECK_BLOCK, len(indices) - done)
        if deadline is not None and limited:
            cost = (spent / done if done else per_candidate_s)
            left = ends - deadline.elapsed() - spent * _SHOW_FACTOR  # less what showing takes
            if cost is None:  # measured on a first block (the best alone when time is up)
                size = min(size, _RECHECK_PROBE if left > 0 else 1)
            else:
                size = min(size, int(max(left, 0.0) / (max(cost, 1e-9) * (1 + _SHOW_FACTOR))))
            if not size and done:
                deadline.cut("re-check", f"{done:,} of the {len(indices):,} candidates "
                             "found re-checked and shown, the rest dropped",
                             asked=len(indices), done=done)
                break
            size = max(size, 1)  # the best candidate, whatever the time
        began = clock()
        out += _checked(design, evaluator, choices, problem, indices[done:done + size], done)
        took = clock() - began
        spent += took
        if deadline is not None:
            deadline.reserve(took * _SHOW_FACTOR)
    return out


_RANKED_FREELY = _RECHECK_BLOCK
"""Up to this many candidates are ranked as asked whatever the time limit: so few cost the
search little, and measuring their re-check first would cost more (the re-check still fits
them to the time, block by block)."""


def _ranked_top(design: Design, evaluator: Evaluator, choices: list[Choices],
                seeds: np.ndarray | None, top: int, least: int, deadline: Deadline
                ) -> tuple[int, float | None]:
    """How many candidates a time-limited search should rank, and the re-check's cost of one.

    Ranking more candidates than can be re-checked and shown in the time the
    search leaves only costs the search time and memory: under a limit, when
    ``top`` is more than ``least``, :data:`_RECHECK_PROBE` candidates (the
    seeds, or the lowest choices) are re-checked to measure the cost of one,
    and the ranking keeps as many as fit :data:`_RECHECK_SHARE` of what the
    search will leave (at least ``least``).  Without a limit: ``top``, None.
    """
    if not deadline.limited or top <= least:
        return top, None
    rows = (np.asarray(seeds, dtype=np.int64) if seeds is not None and len(seeds)
            else np.zeros((1, len(choices)), dtype=np.int64))
    rows = np.resize(rows[:_RECHECK_PROBE], (_RECHECK_PROBE, len(choices)))
    began = deadline.clock()
    _checked(design, evaluator, choices, SearchProblem(design, evaluator, choices,
                                                       relaxed=False), rows, 0)
    per = max(deadline.clock() - began, 1e-9) / len(rows)
    after_search = deadline.remaining() * (1 - _SEARCH_SHARE) * _RECHECK_SHARE
    return max(min(top, int(after_search / (per * (1 + _SHOW_FACTOR)))), least), per


def _checked(design: Design, evaluator: Evaluator, choices: list[Choices],
             problem: SearchProblem, indices: np.ndarray, ranked_before: int
             ) -> list[Candidate]:
    """The candidate records of one block of ranked choice indices."""
    positions = problem.resistances(indices)
    parts = problem.part_values(indices)
    if not ranked_before:
        evaluator.check_regulators(positions[:1])
    checked = check_block(design, evaluator, positions, parts)
    out = []
    for rank, (row, result) in enumerate(zip(indices, checked, strict=True),
                                         start=ranked_before + 1):
        values = values_of_row(choices, row)
        labels = {ref: _series_label(values[ref], choice)
                  for choice in choices for ref in choice.position.part_refs}
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


YIELD_POOL = 50
"""Candidates ranked or filtered by yield: the nominal best this many, whatever ``top`` is."""


def _limit_cost(design: Design, evaluator: Evaluator, choices: list[Choices],
                seeds: np.ndarray | None, best: Candidate | None, deadline: Deadline,
                jobs: int = 1) -> tuple[tuple[Problem, ...], Candidate | None]:
    """The part limits that cost the best design accuracy, and the limit-free best.

    Searches again with every part's power and voltage limit dropped (windows
    kept).  When that finds a design although none met everything (``best``
    None), or reaches a smaller objective than ``best``, the limits its best
    design breaks are the ones that bind.  With a deadline already passed the
    search is skipped, and a search the deadline cuts short is recorded.
    """
    if not any(r.package for r in design.resistors):
        return (), None
    if deadline.expired():
        deadline.cut("limit-cost search", "skipped: which part limit costs accuracy is not "
                     "known")
        return (), None
    free = search(design, evaluator, choices, top=1, time_limit_s=deadline.budget(0.8),
                  seeds=seeds, part_limits=False, jobs=jobs)
    if not free.proven:
        deadline.cut("limit-cost search", f"stopped after {free.elapsed_s:.2g} s, unfinished: "
                     "a part limit that costs accuracy may go unnamed")
    if not len(free.ranked.objective):
        return (), None
    unlimited = _candidates(design, evaluator, choices, free.ranked.indices[:1])[0]
    if best is not None and unlimited.objective >= best.objective - TIE_TOLERANCE:
        return (), None
    return tuple(p for p in unlimited.problems if p.kind != "window"), unlimited


def _with_goal_status(candidate: Candidate, binding: str | None,
                      unlimited: Candidate | None) -> Candidate:
    """Mark each soft goal that a limit costs accuracy as ``goal missed``."""
    if binding is None or unlimited is None:
        return candidate
    targets = []
    for report, free in zip(candidate.targets, unlimited.targets, strict=True):
        if (report.status == "soft goal" and report.error is not None
                and free.error is not None and abs(free.error) < abs(report.error)):
            report = replace(report, status="goal missed", binding=binding,
                             unlimited_error=free.error)
        targets.append(report)
    return replace(candidate, targets=tuple(targets))


def _spread_of(design: Design, evaluator: Evaluator, candidate: Candidate,
               settings: SpreadSettings, jobs: int = 1,
               stop: Callable[[], bool] | None = None) -> Candidate:
    values = candidate.check.values
    if design.points:  # the copies at later points: their leader's or their point's values
        r0 = evaluator.follow(np.array([candidate.positions.get(
            r.ref, r.value if r.value is not None else np.nan) for r in design.resistors]))
        parts = evaluator.part_values(r0)[0]
        for c, ref in enumerate(design.part_refs):
            parts[c] = values.get(ref, parts[c])
        parts = evaluator.follow_parts(parts)[0]
    else:
        parts = np.array([values[ref] for ref in design.part_refs])
    return replace(candidate, spread=analyse_spread(
        design, candidate.positions, settings, evaluator, part_values=parts,
        map_shards=process_shards(jobs, fine=stop is not None) if jobs > 1 else None,
        stop=stop))


def _fitted_spread(design: Design, evaluator: Evaluator, candidate: Candidate,
                   settings: SpreadSettings, seconds: float, deadline: Deadline,
                   jobs: int = 1) -> Candidate:
    """The candidate's spread with its Monte Carlo shrunk to fit ``seconds``.

    Pilot runs measure the cost of a sample and the samples that fit are run, at most
    those asked (:func:`synth.spread.fit.fitted_run`).  A shortened run keeps the asked
    count in its settings and says how many ran; the cut is recorded on ``deadline``.
    The pilots run in this process; the run fitted after them may spread its shards
    over ``jobs`` processes (:func:`synth.spread.shard_map.process_shards`), which only
    makes it end sooner.
    """
    asked = settings.samples
    if not deadline.limited:
        return _spread_of(design, evaluator, candidate, settings, jobs)

    began: list[float] = []  # the run's start, by its first reading of the clock

    def clock() -> float:
        now = deadline.elapsed()
        if not began:
            began.append(now)
        return now

    def past_its_share() -> bool:  # a run that never read the clock was not timed
        return bool(began) and deadline.elapsed() >= began[0] + seconds

    def run(samples: int, final: bool) -> Candidate:
        return _spread_of(design, evaluator, candidate, replace(settings, samples=samples),
                          jobs if final else 1, past_its_share if final else None)

    kept, samples = fitted_run(run, asked, seconds, clock,
                               reserve_s=POOL_START_S if jobs > 1 else 0.0)
    if kept.spread is not None and (kept.spread.samples_run or 0) < samples:
        samples = kept.spread.samples_run or 0  # the final run stopped at its share's end
    if samples >= asked:
        return kept
    if samples == 0:
        deadline.cut("Monte Carlo", f"skipped: 0 of {asked:,} samples run", asked=asked,
                     done=0)
        return kept
    assert kept.spread is not None
    ran = kept.spread.samples_run or 0
    deadline.cut("Monte Carlo", f"{asked:,} samples asked, {ran:,} run to fit the time "
                 "limit; the yield interval is that of the samples run", asked=asked, done=ran)
    return replace(kept, spread=replace(kept.spread, settings=settings, samples_cut="time limit"))


def _on_basis(design: Design, candidate: Candidate) -> Candidate:
    """The candidate with what fails on the design's required basis added to its problems."""
    extra = required_problems(design, candidate.spread)
    if not extra:
        return candidate
    broken = {p.subject for p in extra if p.kind == "window"}
    targets = tuple(replace(t, status="out of band") if t.label in broken and t.met else t
                    for t in candidate.targets)
    return replace(candidate, problems=candidate.problems + extra, feasible=False,
                   targets=targets)


def _yield_low(candidate: Candidate) -> float:
    """The candidate's yield lower bound, 0 without a Monte Carlo (for ranking by yield)."""
    return candidate.yield_low or 0.0


def synthesize(
    design: Design,
    *,
    top: int = 10,
    time_limit_s: float | None = None,
    progress: Callable[[float], None] | None = None,
    spread: SpreadSettings | None = None,
    rank_by: str = "nominal",
    require: str | None = None,
    min_yield: float | None = None,
    deadline: Deadline | None = None,
    jobs: int = 1,
) -> SynthesisResult:
    """Choose standard values for a design's free parts.

    Parameters
    ----------
    design : Design
        A design with at least one free part (``choose``).
    top : int
        Number of distinct candidates to return (default 10).
    time_limit_s : float, optional
        Seconds the whole call may take: search, relaxed search, re-check,
        spread (its Monte Carlo shrunk to fit) and the limit-cost search
        share them.  Whatever the limit shortens is listed in
        :attr:`SynthesisResult.cuts`, and a cut result is never marked
        proven optimal.
    progress : callable, optional
        Called with the settled share of the search space (0..1).
    spread : SpreadSettings, optional
        Analyse every returned candidate's spread (worst case, RSS, Monte Carlo).
    rank_by : {"nominal", "worst-case", "yield"}
        ``"nominal"`` minimises the largest relative error at nominal values;
        ``"worst-case"`` the largest worst-case relative error over the
        tolerance box (exact, by the same branch and bound); ``"yield"``
        finds the nominal best candidates, then orders them by Monte Carlo
        yield (highest first; ties keep the nominal order), considering the
        nominal best :data:`YIELD_POOL` whatever ``top`` is.
    require : {"nominal", "worst-case", "yield"}, optional
        On which basis every window, bound and limit must hold (the design's
        ``require`` by default): at nominal values; over the whole tolerance
        box (exact: the search keeps only candidates that hold at every vertex,
        and every part's interior dissipation peak); or in at least
        ``min_yield`` of Monte Carlo samples, judged by the 95 % Clopper–Pearson
        lower bound, among the nominal best :data:`YIELD_POOL`.
    min_yield : float, optional
        Least yield (fraction) with ``require="yield"``; the design's by default.
    deadline : Deadline, optional
        A deadline already running (a command's, started before this call);
        built from ``time_limit_s`` when not given.  Its cuts are the result's.
    jobs : int
        Most processes the search (:mod:`synth.search.parallel`) and each Monte Carlo
        (its seeded shards, :mod:`synth.spread.shard_map`) may use; 1 (the default)
        runs everything in this process.  The result does not depend on it.

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
    require, min_yield = _basis(design, rank_by, require, min_yield, time_limit_s)
    deadline = deadline or Deadline(time_limit_s)
    cuts_before = len(deadline.cuts)
    start = start_search(design, deadline)
    choices, evaluator, ideal, seeds = start.choices, start.evaluator, start.ideal, start.seeds
    worst = (WorstCase(design, evaluator)
             if rank_by == "worst-case" or require == "worst-case" else None)
    by_yield = rank_by == "yield" or require == "yield"
    asked = max(top, YIELD_POOL) if by_yield else top
    ranked_top, per_candidate = _ranked_top(design, evaluator, choices, seeds, asked,
                                            max(YIELD_POOL if by_yield else 1, _RANKED_FREELY),
                                            deadline)
    # the search leaves time for what follows it: re-check, spread, limit-cost search
    outcome: SearchOutcome = search(
        design, evaluator, choices, top=ranked_top,
        time_limit_s=deadline.budget(_SEARCH_SHARE), seeds=seeds, progress=progress,
        target_ranges=worst.ranges if worst is not None and rank_by == "worst-case" else None,
        robust=worst.holds if worst is not None and require == "worst-case" else None,
        jobs=jobs)
    if not outcome.proven:
        why = ("at the time limit" if outcome.stopped != "memory" else
               "when its open boxes filled the memory allowed them")
        deadline.cut("search", f"stopped {why} after {outcome.elapsed_s:.2g} s with "
                     f"{outcome.settled * 100:.3g} % of the combinations settled: the best "
                     "found, not proven best")
    if ranked_top < asked and len(outcome.ranked.objective) >= ranked_top:
        deadline.cut("ranking", f"the best {ranked_top:,} of the {asked:,} candidates asked "
                     "ranked: the most whose re-check fits the time limit", asked=asked,
                     done=ranked_top)
    feasible = len(outcome.ranked.objective) > 0
    evaluated, elapsed, proven = outcome.evaluated, outcome.elapsed_s, outcome.proven

    ranked = outcome.ranked
    if not feasible:
        relaxed = search(design, evaluator, choices, top=min(top, 5),
                         time_limit_s=deadline.budget(_SEARCH_SHARE), seeds=seeds,
                         relaxed=True, jobs=jobs)
        if not relaxed.proven:
            deadline.cut("relaxed search", f"stopped after {relaxed.elapsed_s:.2g} s: the "
                         "designs shown are the nearest found, not proven nearest")
        proven = proven and relaxed.proven
        evaluated += relaxed.evaluated
        elapsed += relaxed.elapsed_s
        ranked = relaxed.ranked
    candidates = _candidates(design, evaluator, choices, ranked.indices, deadline,
                             per_candidate)
    follows = bool(candidates) and any(r.package for r in design.resistors)
    candidates = _with_spreads(design, evaluator, candidates, spread, by_yield, require,
                               deadline, _SPREAD_SHARE if follows else 1.0, jobs)
    rejudged = common_mode_rejected = False
    if require == "worst-case" and feasible and design.arrays:
        # the search took each array's common deviation at its ends only: the designs shown
        # are judged again on their scanned worst case, those that still hold first
        candidates = sorted((_on_basis(replace(design, require=require), c)
                             for c in candidates), key=lambda c: (not c.feasible, c.rank))
        rejudged = True
        if candidates and not candidates[0].feasible:
            feasible = proven = False
            common_mode_rejected = True
    if require == "worst-case" and not feasible:
        # the nearest designs, judged on the required basis (once), nearest first
        candidates = sorted(candidates if rejudged else
                            (_on_basis(replace(design, require=require), c)
                             for c in candidates), key=lambda c: (distance(c), c.rank))
    considered = len(candidates)
    yield_short = False
    if feasible and require == "yield":
        assert min_yield is not None
        candidates, yield_short = _by_min_yield(candidates, min_yield)
        feasible = not yield_short
    if by_yield and candidates:
        candidates = sorted(candidates, key=lambda c: (
            -(c.spread.yield_fraction or 0.0) if c.spread else 0.0, c.rank))
    candidates = [replace(c, rank=k) for k, c in enumerate(candidates[:top], start=1)]
    limits: tuple[Problem, ...] = ()
    unlimited: Candidate | None = None
    if candidates and (not feasible or any(t.status == "soft goal"
                                           for t in candidates[0].targets)):
        limits, unlimited = _limit_cost(design, evaluator, choices, seeds,
                                        candidates[0] if feasible else None, deadline, jobs)
    binding = _binding(design, candidates, limits, feasible, considered,
                       min_yield if yield_short else None)
    if feasible and binding is not None:
        candidates = [_with_goal_status(c, binding, unlimited) for c in candidates]
    cuts = deadline.cuts[cuts_before:]
    return SynthesisResult(
        design=design, ideal=ideal, candidates=tuple(candidates),
        proven_optimal=proven and not cuts, feasible=feasible and bool(candidates),
        binding=binding, evaluated=evaluated, combinations=combination_count(choices),
        elapsed_s=elapsed, rank_by=rank_by, require=require, min_yield=min_yield,
        considered=considered,
        unlimited_objective=None if unlimited is None else unlimited.objective,
        binding_limits=limits, time_limit_s=deadline.limit_s, cuts=cuts,
        common_mode_rejected=common_mode_rejected,
    )


_SEARCH_SHARE = 0.7
"""Share of the time left a search may take under a limit (the rest: re-check and spread)."""

_SPREAD_SHARE = 0.7
"""Share of the time left the spreads may take when the limit-cost search may follow."""


def _basis(design: Design, rank_by: str, require: str | None, min_yield: float | None,
           time_limit_s: float | None) -> tuple[str, float | None]:
    """The checked ranking, basis and least yield (the design's own by default)."""
    if rank_by not in RANKINGS:
        raise DesignError(f"rank_by {rank_by!r} is not known; use one of {', '.join(RANKINGS)}")
    require = require or design.require
    if require not in REQUIREMENTS:
        raise DesignError(f"require {require!r} is not known; use one of "
                          f"{', '.join(REQUIREMENTS)}")
    min_yield = design.min_yield if min_yield is None else min_yield
    if require == "yield" and min_yield is None:
        raise DesignError(f"{design.origin}: require = \"yield\" needs min_yield, such as 99%")
    if time_limit_s is not None and not time_limit_s > 0:
        raise DesignError(f"time limit {time_limit_s!r} s must be a positive number of seconds")
    return require, min_yield


def _with_spreads(design: Design, evaluator: Evaluator, candidates: list[Candidate],
                  spread: SpreadSettings | None, by_yield: bool, require: str,
                  deadline: Deadline, share: float, jobs: int = 1) -> list[Candidate]:
    """Each candidate's spread: Monte Carlo for all when yield ranks or filters, else the best.

    Under a time limit the spreads take at most ``share`` of the time left:
    the best candidate's is always analysed (its Monte Carlo shrunk to fit),
    the others' while time remains; the rest keep no spread, and the cut is
    recorded.
    """
    settings = spread or (SpreadSettings() if by_yield else
                          SpreadSettings(samples=0) if require == "worst-case" else None)
    if settings is None or not candidates:
        return candidates
    # worst case and RSS for every candidate; the others' yield reads n/a
    others = settings if by_yield else replace(settings, samples=0)
    budget = deadline.budget(share)
    ends = math.inf if budget is None else deadline.elapsed() + budget
    out: list[Candidate] = []
    for k, candidate in enumerate(candidates):
        left = ends - deadline.elapsed()
        if k and left <= 0:
            deadline.cut("spread", f"analysed for {k:,} of the {len(candidates):,} candidates "
                         "shown; the others show none", asked=len(candidates), done=k)
            return out + candidates[k:]
        chosen = settings if k == 0 else others
        # the candidates that still run Monte Carlo share the time left evenly
        sharing = len(candidates) - k if by_yield else 1
        out.append(_fitted_spread(design, evaluator, candidate, chosen, left / sharing,
                                  deadline, jobs))
    return out


def _by_min_yield(candidates: list[Candidate], min_yield: float
                  ) -> tuple[list[Candidate], bool]:
    """The candidates whose yield's lower bound reaches ``min_yield``, or (none) the nearest."""
    passing = [c for c in candidates if _yield_low(c) >= min_yield]
    if passing:
        return passing, False
    short = Problem("yield", "yield", 0.0, min_yield, "", basis="yield")
    nearest = sorted(candidates, key=lambda c: (-_yield_low(c), c.rank))
    return [replace(c, feasible=False,
                    problems=(*c.problems, replace(short, value=_yield_low(c))))
            for c in nearest], True


def _binding(design: Design, candidates: list[Candidate], limits: tuple[Problem, ...],
             feasible: bool, considered: int, short_of_yield: float | None) -> str | None:
    """The limit that binds, in words (None when nothing binds)."""
    if limits:
        return "; ".join(limit_text(design, p) for p in limits)
    if short_of_yield is not None and candidates:
        return (f"yield: the best of {considered} candidates reaches "
                f"{_yield_low(candidates[0]) * 100:.3g} % (95 % lower bound), short of "
                f"min_yield {short_of_yield * 100:g} %")
    if not feasible and candidates:
        return nearest_text(candidates[0])
    return None
