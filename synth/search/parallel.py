"""The exact search spread over processes: the space cut in slices, each searched apart.

A search that one process does not prove within :data:`TRIAL_S` is cut in
slices along one free position: slice ``j`` keeps a contiguous run of that
position's choices.  The position is the one with the most choices among those
the search bounds on their own axis (cutting a member of a series chain would
cut the chain's sums, which doubles the work).  Each slice is searched exactly
by :func:`synth.search.branch_and_bound.search` in a worker process
(:func:`synth.parallel.ordered_map`), the slices nearest the known good
candidates first, each seeded with the trial's best candidates and the caller's
seeds moved to its nearest choices.  The slices share their bar: each writes
the tie classes of its best ``top`` objectives to shared memory as it goes and
drops every box that cannot beat the ``top`` best known over all slices
(:class:`_SharedBar`), which never drops one of the best ``top`` of the space.

The slices are disjoint and together cover the space, so the best ``top`` of
their best ``top`` (merged by :meth:`RankedCandidates.merged`, the same ranking
and tie-break as one search) are the best ``top`` of the space.  The result is
proven only when every slice is, and is then the same whatever the number of
processes.
"""

from __future__ import annotations

__all__ = ["SLICES_PER_JOB", "TRIAL_S", "search"]

import math
import time
from collections.abc import Callable
from dataclasses import dataclass, replace
from multiprocessing import shared_memory
from typing import Any

import numpy as np

import synth.search.branch_and_bound as branch_and_bound
from synth.circuit.measure import Evaluator
from synth.design.model import Design
from synth.parallel import check_jobs, in_worker, ordered_map
from synth.search.branch_and_bound import SearchOutcome
from synth.search.chains import SearchSpace
from synth.search.choices import Choices
from synth.search.problem import SearchProblem
from synth.search.ranking import TIE_TOLERANCE

TRIAL_S = 1.5
"""Seconds one process searches first: a search it proves within them is not cut in slices
(starting workers would cost more than it saves).  Measured on an idle 2-core machine: a
5-part E96 ladder with one tap set (2.7e11 combinations) proves in 0.9 s alone; after a
0.5 s trial its slices took 2.5 s over 2 processes, so a shorter trial made the common
one-second search 2.5 times slower.  An 8-part E24 ladder over 1k..1M with three taps set,
not proven alone in 42 s, was proven by 2 processes in 14.5 s with this trial."""

SLICES_PER_JOB = 2
"""Slices per worker process: smaller slices even out the workers' loads, but each
slice bounds its own boxes from the top (measured: 2 per process did least work)."""


class _SharedBar:
    """The bar every slice knows: each slice's best ``top`` objectives, in shared memory.

    Row ``r`` holds slice ``r``'s best ``top`` objectives as tie classes
    (``floor(objective / TIE_TOLERANCE)``, ascending; infinity where none yet);
    row 0 the trial's.  Classes are written, not objectives: the sorted classes of
    a search's best ``top`` only fall as it goes, so a row read while its slice
    writes it is never below what the slice holds.  The ``top``-th smallest class
    over every row is then held by ``top`` distinct candidates of the space, and a
    box whose bound exceeds that class's upper edge holds none of the best ``top``.
    """

    def __init__(self, name: str, row: int, rows: int, top: int):
        self.name, self.row, self.rows, self.top = name, row, rows, top

    def table(self) -> np.ndarray:
        memory = _attached.get(self.name)
        if memory is None:
            for old in _attached.values():
                old.close()
            _attached.clear()
            memory = _attached[self.name] = shared_memory.SharedMemory(name=self.name)
        return np.ndarray((self.rows, self.top), dtype=np.float64, buffer=memory.buf)

    def __call__(self, objectives: np.ndarray) -> float:
        table = self.table()
        mine = _classes(objectives, self.top)
        table[self.row, : len(mine)] = mine
        known = float(np.partition(table.ravel(), self.top - 1)[self.top - 1])
        return known * TIE_TOLERANCE


def _classes(objectives: np.ndarray, top: int) -> np.ndarray:
    """The tie classes of the best ``top`` objectives, ascending."""
    return np.sort(np.floor(objectives[:top] / TIE_TOLERANCE))


_attached: dict[str, shared_memory.SharedMemory] = {}
"""Shared tables this worker has attached, by name (the last search's only)."""


@dataclass(frozen=True)
class _Slice:
    """One slice's search, as a worker receives it."""

    design: Design
    evaluator: Evaluator
    choices: list[Choices]
    seeds: np.ndarray
    options: dict[str, Any]
    deadline: float | None  # time.time() by which the slice stops, unproven


def _sliced(choice: Choices, low: int, high: int) -> Choices:
    """The choices ``low..high - 1`` (still in ascending order)."""
    keep = slice(low, high)
    return replace(choice, values=choice.values[keep], parts=choice.parts[keep],
                   rank=choice.rank[keep])


def _search_slice(task: _Slice) -> SearchOutcome:
    """Search one slice (in a worker)."""
    options = dict(task.options)
    if task.deadline is not None:
        options["time_limit_s"] = max(task.deadline - time.time(), 1e-3)
    return branch_and_bound.search(task.design, task.evaluator, task.choices,
                                   seeds=task.seeds if len(task.seeds) else None, **options)


def _split_axis(design: Design, evaluator: Evaluator, choices: list[Choices],
                options: dict[str, Any]) -> int:
    """The position to cut: the one with the most choices among those the search
    bounds apart (cutting a member of a series chain would cut the chain's sums)."""
    sizes = [len(c) for c in choices]
    alone = list(range(len(choices)))
    if options.get("chains", True):
        problem = SearchProblem(design, evaluator, choices, relaxed=False)
        alone = [a.members[0] for a in SearchSpace(problem).axes if len(a.members) == 1]
    pool = alone or list(range(len(choices)))
    return max(pool, key=lambda p: (sizes[p], -p))


def _slice_seeds(seeds: np.ndarray, axis: int, low: int, high: int) -> np.ndarray:
    """Seeds moved into the slice ``low..high - 1`` of ``axis`` (to its nearest choice),
    in the slice's own indices, without repeats."""
    if not len(seeds):
        return seeds
    moved = seeds.copy()
    moved[:, axis] = np.clip(seeds[:, axis], low, high - 1) - low
    return np.unique(moved, axis=0)


def search(design: Design, evaluator: Evaluator, choices: list[Choices], *, jobs: int = 1,
           top: int = 10, time_limit_s: float | None = None, seeds: np.ndarray | None = None,
           progress: Callable[[float], None] | None = None, supply_first: bool = False,
           **options: Any) -> SearchOutcome:
    """:func:`synth.search.branch_and_bound.search` on up to ``jobs`` processes.

    Parameters
    ----------
    design, evaluator, choices, top, time_limit_s, seeds, progress, supply_first
        As for :func:`synth.search.branch_and_bound.search`; ``progress`` is called
        as each slice finishes.
    jobs : int
        Most processes to use; 1 searches in this process only.
    **options
        The other keywords of :func:`synth.search.branch_and_bound.search`, passed on
        to every slice (picklable: a worst-case callable is a bound method of a
        picklable object).

    Returns
    -------
    SearchOutcome
        With ``evaluated`` summed over the trial and the slices and ``elapsed_s``
        the wall time of the whole.  A proven outcome is the same for every ``jobs``.

    Examples
    --------
    >>> from synth.design.reader import design_from_dict
    >>> from synth.search.choices import choices_for
    >>> d = design_from_dict({
    ...     "source": [{"ref": "V1", "kind": "voltage", "plus": "in", "minus": "gnd",
    ...                 "value": "12 V"}],
    ...     "resistor": [{"ref": "R1", "nodes": ["in", "out"], "choose": "E24",
    ...                   "range": ["1k", "100k"]},
    ...                  {"ref": "R2", "nodes": ["out", "gnd"], "value": "10k"}],
    ...     "target": [{"voltage": "out", "equals": "4 V"}]})
    >>> found = search(d, Evaluator(d), [choices_for(d.resistors[0])], top=1, jobs=1)
    >>> found.proven, found.ranked.objective.tolist()
    (True, [0.0])
    """
    jobs = check_jobs(jobs)
    start = time.perf_counter()
    wall_start = time.time()
    serial = dict(options, top=top, seeds=seeds, supply_first=supply_first)
    if jobs == 1 or in_worker() or not choices:
        return branch_and_bound.search(design, evaluator, choices, time_limit_s=time_limit_s,
                                       progress=progress, **serial)
    trial_s = TRIAL_S if time_limit_s is None else min(TRIAL_S, time_limit_s)
    trial = branch_and_bound.search(design, evaluator, choices, time_limit_s=trial_s,
                                    progress=progress, **serial)
    if trial.proven or (time_limit_s is not None and time_limit_s <= TRIAL_S):
        return replace(trial, elapsed_s=time.perf_counter() - start)
    sizes = [len(c) for c in choices]
    axis = _split_axis(design, evaluator, choices, options)
    count = min(sizes[axis], jobs * SLICES_PER_JOB)
    edges = np.linspace(0, sizes[axis], count + 1).round().astype(np.int64)
    known = trial.ranked.indices
    if seeds is not None and len(seeds):
        known = np.concatenate([np.asarray(seeds, dtype=np.int64), known])
    # slices nearest the known candidates first: their bar then reaches the others early
    near = float(np.median(known[:, axis])) if len(known) else sizes[axis] / 2
    order = sorted(range(count), key=lambda j: (abs((edges[j] + edges[j + 1] - 1) / 2 - near),
                                                j))
    deadline = None if time_limit_s is None else wall_start + time_limit_s
    memory = shared_memory.SharedMemory(create=True, size=(count + 1) * top * 8)
    try:
        table = np.ndarray((count + 1, top), dtype=np.float64, buffer=memory.buf)
        table[:] = np.inf
        first_row = _classes(trial.ranked.objective, top)
        table[0, : len(first_row)] = first_row
        del table  # the memory closes only when no array uses it
        tasks = []
        for row, j in enumerate(order, start=1):
            low, high = int(edges[j]), int(edges[j + 1])
            sliced = list(choices)
            sliced[axis] = _sliced(choices[axis], low, high)
            share = _SharedBar(memory.name, row, count + 1, top)
            tasks.append(_Slice(design, evaluator, sliced,
                                _slice_seeds(known, axis, low, high),
                                dict(options, top=top, supply_first=supply_first,
                                     shared_bar=share), deadline))
        outcomes = _run(tasks, jobs, progress)
    finally:
        memory.close()
        memory.unlink()
    ranked = trial.ranked
    for j, outcome in zip(order, outcomes, strict=True):
        found = outcome.ranked
        indices = found.indices.copy()
        indices[:, axis] += edges[j]
        ranked = ranked.merged(replace(found, indices=indices), top, supply_first)
    total = math.prod(sizes)
    proven = all(o.proven for o in outcomes)
    # each slice's settled share, weighted by its share of the space
    settled = sum(o.settled * (edges[j + 1] - edges[j]) / sizes[axis]
                  for j, o in zip(order, outcomes, strict=True))
    return SearchOutcome(ranked=ranked, proven=proven,
                         evaluated=trial.evaluated + sum(o.evaluated for o in outcomes),
                         combinations=total, elapsed_s=time.perf_counter() - start,
                         settled=1.0 if proven else min(float(settled), 1.0))


def _run(tasks: list[_Slice], jobs: int, progress: Callable[[float], None] | None
         ) -> list[SearchOutcome]:
    """Every slice's outcome, in slice order; ``progress`` told as each finishes."""
    finished = 0

    def slice_done(_: int) -> None:
        nonlocal finished
        finished += 1
        if progress is not None:
            progress(finished / len(tasks))

    return ordered_map(_search_slice, tasks, jobs, done=slice_done)
