"""Value consolidation across a board's networks, solved exactly by CP-SAT.

Each network offers a pool of feasible candidates; each candidate needs a set
of BOM lines (distinct orderable parts).  Choose one candidate per network so
that, in order of priority,

1. the number of distinct BOM lines on the board is smallest;
2. then (when a house stock is given) the number of lines that must be
   bought is smallest;
3. then the total of the networks' errors is smallest.

The model: a Boolean per (network, candidate) with exactly one per network,
a Boolean per BOM line, and for each network and line ``Σ candidates needing
the line ≤ line`` (the aggregated form of ``candidate ⇒ line``, whose linear
relaxation is much tighter).  The priorities are solved one after another, each later stage
keeping the earlier optimum as a constraint, so the result is exactly
lexicographic when every stage is proven optimal.
"""

from __future__ import annotations

__all__ = ["Consolidation", "Pool", "consolidate"]

import time
from collections.abc import Hashable, Sequence
from dataclasses import dataclass
from typing import Any

from ortools.sat.python import cp_model

_ERROR_UNIT = 1e-9  # errors enter the model as integers of this size (fractions)


@dataclass(frozen=True)
class Pool:
    """One network's candidates.

    Attributes
    ----------
    lines : sequence of frozenset
        The BOM line keys each candidate needs.
    errors : sequence of float
        Each candidate's objective (largest relative error), as a fraction.
    """

    lines: Sequence[frozenset[Hashable]]
    errors: Sequence[float]


@dataclass(frozen=True)
class Consolidation:
    """Result of :func:`consolidate`.

    Attributes
    ----------
    choice : tuple of int
        Chosen candidate index per network.
    lines : int
        Distinct BOM lines of the choice.
    to_buy : int
        Lines of the choice not in stock (0 without a stock).
    total_error : float
        Sum of the chosen candidates' errors.
    optimal : bool
        Every stage was proven optimal (else the best found within the limit).
    status : str
        CP-SAT's status of each stage, e.g. ``"lines: OPTIMAL; error: FEASIBLE"``.
    elapsed_s : float
        Solve time, s.
    lines_optimal : bool
        The number of lines (the first priority) was proven minimal.
    """

    choice: tuple[int, ...]
    lines: int
    to_buy: int
    total_error: float
    optimal: bool
    status: str
    elapsed_s: float
    lines_optimal: bool = True


def consolidate(pools: Sequence[Pool], in_stock: frozenset[Hashable] | None = None,
                time_limit_s: float = 30.0, seed: int = 0) -> Consolidation:
    """Choose one candidate per network with the fewest distinct BOM lines.

    Parameters
    ----------
    pools : sequence of Pool
        One per network, each with at least one candidate.
    in_stock : frozenset, optional
        Line keys on the shelf; with it, fewer lines to buy is the second priority.
    time_limit_s : float
        Limit for the whole solve, s (shared by the stages).
    seed : int
        CP-SAT's random seed (one worker, so the result repeats).

    Returns
    -------
    Consolidation

    Examples
    --------
    >>> pools = [Pool([frozenset({"1k", "2k"}), frozenset({"1k", "3k"})], [0.01, 0.0]),
    ...          Pool([frozenset({"2k"}), frozenset({"4k"})], [0.02, 0.0])]
    >>> result = consolidate(pools)
    >>> result.choice, result.lines, result.optimal
    ((0, 0), 2, True)
    """
    start = time.perf_counter()
    model = cp_model.CpModel()
    picks = [[model.new_bool_var(f"n{i}c{c}") for c in range(len(p.lines))]
             for i, p in enumerate(pools)]
    keys = sorted({key for p in pools for s in p.lines for key in s}, key=repr)
    used = {key: model.new_bool_var(f"line{k}") for k, key in enumerate(keys)}
    for i, pool in enumerate(pools):
        model.add_exactly_one(picks[i])
        # a line is needed when the network's chosen candidate needs it; with exactly one
        # candidate per network, summing the candidates that need a line gives the same
        # integer solutions as one implication per candidate and a far tighter LP bound
        needing: dict[Hashable, list[cp_model.IntVar]] = {}
        for c, needed in enumerate(pool.lines):
            for key in needed:
                needing.setdefault(key, []).append(picks[i][c])
        for key, variables in needing.items():
            model.add(sum(variables) <= used[key])
    line_count = sum(used.values())
    buy_count = sum(v for key, v in used.items() if in_stock is None or key not in in_stock)
    error_sum = sum(round(err / _ERROR_UNIT) * picks[i][c]
                    for i, pool in enumerate(pools) for c, err in enumerate(pool.errors))
    # hint: each network at its own best candidate
    for i, pool in enumerate(pools):
        best = int(min(range(len(pool.errors)), key=pool.errors.__getitem__))
        for c, var in enumerate(picks[i]):
            model.add_hint(var, c == best)
    stages: list[tuple[str, Any]] = [("lines", line_count)]
    if in_stock is not None:
        stages.append(("to buy", buy_count))
    stages.append(("error", error_sum))
    solver = cp_model.CpSolver()
    solver.parameters.num_workers = 1  # one worker: the result repeats run after run
    solver.parameters.random_seed = seed
    values: list[list[bool]] = []
    flags: dict[Hashable, bool] = {}
    statuses: list[str] = []
    for stage, (name, objective) in enumerate(stages):
        remaining = max(time_limit_s - (time.perf_counter() - start), 0.05)
        solver.parameters.max_time_in_seconds = remaining
        # core-based search proves lower bounds on sums of Booleans (line counts: a
        # MaxSAT view) far faster than the default single-worker search; the weighted
        # error stage does better with the default search started from the hint
        solver.parameters.optimize_with_core = name != "error"
        model.minimize(objective)
        status = solver.solve(model)
        statuses.append(f"{name}: {solver.status_name(status)}")
        if status not in (cp_model.OPTIMAL, cp_model.FEASIBLE):
            if not values:
                raise RuntimeError(f"CP-SAT found no assignment ({solver.status_name(status)})")
            break  # keep the previous stage's assignment: still valid for every stage so far
        values = [[solver.boolean_value(v) for v in row] for row in picks]
        flags = {key: solver.boolean_value(v) for key, v in used.items()}
        reached = round(solver.objective_value)
        if stage < len(stages) - 1:
            model.add(objective <= reached)
            # the previous assignment is a solution of the next stage: hand all of it over
            model.clear_hints()  # type: ignore[no-untyped-call]  # ortools leaves it unannotated
            for row, chosen in zip(picks, values, strict=True):
                for var, on in zip(row, chosen, strict=True):
                    model.add_hint(var, on)
            for key, var in used.items():
                model.add_hint(var, flags[key])
    optimal = len(statuses) == len(stages) and all(s.endswith("OPTIMAL") for s in statuses)
    choice = tuple(row.index(True) for row in values)
    chosen_lines = set().union(*(pools[i].lines[c] for i, c in enumerate(choice)))
    return Consolidation(
        choice=choice, lines=len(chosen_lines),
        to_buy=sum(1 for key in chosen_lines if in_stock is None or key not in in_stock)
        if in_stock is not None else 0,
        total_error=float(sum(pools[i].errors[c] for i, c in enumerate(choice))),
        optimal=optimal, status="; ".join(statuses), elapsed_s=time.perf_counter() - start,
        lines_optimal=statuses[0].endswith("OPTIMAL"),
    )
