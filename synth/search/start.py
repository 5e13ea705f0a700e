"""What every exact search of a design starts from: its choices, its evaluator with the
solver's rules checked, its ideal values and the seeds they give.

:func:`start_search` serves :func:`synth.synthesize` and the least-cost class choice
(:mod:`synth.least_cost`), which search many variants of one design the same way.
"""

from __future__ import annotations

__all__ = ["GRID_UP_TO", "LOCAL_LEAST_S", "LOCAL_SHARE", "SearchStart", "probe_rows",
           "search_seeds", "start_search"]

from dataclasses import dataclass

import numpy as np

from synth.circuit.measure import Evaluator
from synth.deadline import Deadline
from synth.design.model import Design
from synth.search.choices import Choices, choices_for
from synth.search.ideal import ideal_values
from synth.search.local import local_seeds
from synth.search.problem import SearchProblem

GRID_UP_TO = 12
"""Most free parts whose ideal values' neighbouring choices all seed the search (2^k rows)."""

LOCAL_SHARE = 0.1
"""Share of the time left the local descent may take under a limit."""

LOCAL_LEAST_S = 0.1
"""Seconds the local descent may take however little time is left (an incumbent at once)."""


@dataclass(frozen=True)
class SearchStart:
    """The start of a design's search.

    Attributes
    ----------
    choices : list of Choices
        Each free part's standard values, in the design's order of free parts.
    evaluator : Evaluator
        The design's evaluator, its regulators and ratio targets checked.
    ideal : dict of str to float
        The continuous best value of each free part, ohm (empty when none is found).
    seeds : numpy.ndarray or None
        ``(n, free parts)`` choice indices the search starts from; None without ideal values.
    """

    choices: list[Choices]
    evaluator: Evaluator
    ideal: dict[str, float]
    seeds: np.ndarray | None


def probe_rows(design: Design, choices: list[Choices]) -> np.ndarray:
    """``(3, resistors)`` value sets: every free part at its lowest, middle and highest choice."""
    base = np.array([r.value if r.value is not None else 1.0 for r in design.resistors])
    probes = np.tile(base, (3, 1))
    index = {r.ref: k for k, r in enumerate(design.resistors)}
    for choice in choices:
        values = choice.values
        probes[:, index[choice.ref]] = values[[0, len(values) // 2, -1]]
    return probes


def search_seeds(problem: SearchProblem, ideal: dict[str, float], deadline: Deadline
                 ) -> np.ndarray | None:
    """Seeds of the search: the roundings of the ideal values, and a local descent's points."""
    choices = problem.choices
    if not ideal:
        return None
    budget = deadline.budget(LOCAL_SHARE)
    found = [local_seeds(problem, ideal, time_limit_s=None if budget is None
                         else max(budget, LOCAL_LEAST_S))]
    if len(choices) <= GRID_UP_TO and all(c.ref in ideal for c in choices):
        around = []
        for choice in choices:
            at = int(np.searchsorted(choice.values, ideal[choice.ref]))
            around.append(sorted({min(max(at - 1, 0), len(choice) - 1),
                                  min(at, len(choice) - 1)}))
        grid = np.meshgrid(*[np.array(a) for a in around], indexing="ij")
        found.append(np.stack([g.ravel() for g in grid], axis=1).astype(np.int64))
    return np.concatenate(found)


def start_search(design: Design, deadline: Deadline) -> SearchStart:
    """The choices, evaluator, ideal values and seeds of ``design``'s search.

    Raises
    ------
    DesignError
        When the solver's rules refuse the network at the lowest, middle or highest
        choices (as ``check`` applies them).
    """
    choices = [choices_for(r, design.origin) for r in design.free_resistors]
    evaluator = Evaluator(design)
    probes = probe_rows(design, choices)
    evaluator.check_regulators(probes)  # the solver's rules, as check applies them
    evaluator.check_ratios(probes)
    ideal = ideal_values(design, evaluator)
    seeds = search_seeds(SearchProblem(design, evaluator, choices, relaxed=False), ideal,
                         deadline)
    return SearchStart(choices, evaluator, ideal, seeds)
