"""Value consolidation across a board's networks: fewest lines by CP-SAT, least error exactly.

Each network offers a pool of feasible candidates; each candidate needs a set
of BOM lines (distinct orderable parts).  Choose one candidate per network so
that, in order of priority,

1. the number of distinct BOM lines on the board is smallest;
2. then (when a house stock is given) the number of lines that must be
   bought is smallest;
3. then the total of the networks' errors is smallest.

Stages 1 and 2 are solved by CP-SAT, started from a greedy cover
(:func:`synth.bom.cover.greedy_cover`) made smaller by swaps of two lines for one
(:func:`synth.bom.cover.improved_cover`).  The model: a Boolean per (network,
candidate) with exactly one per network, a Boolean per BOM line, and for each
network and line ``Σ candidates needing the line ≤ line`` (the aggregated form of
``candidate ⇒ line``, whose linear relaxation is much tighter).  CP-SAT's core-based
search runs first from the greedy cover as a hint, then, when that does not prove
the stage, from no hint, whose lower bounds come out far higher
(:data:`_HINTED_SHARE`).  A stage is proven when CP-SAT proves it or its lower bound
reaches the best assignment known.  Stage 3 first takes, with the lines of stages 1
and 2 fixed, each network's least-error candidate
(:func:`synth.bom.cover.best_within`): exact for those lines, as the networks no
longer interact.  CP-SAT then looks, within what is left of the work limit, for
another choice with as few lines (and as few to buy) and a smaller total error; when
it proves there is none, the result is exactly lexicographic.

Every limit is deterministic unless the wall clock binds: CP-SAT runs one
worker with a fixed seed and a limit in its *deterministic time* (work units,
about a second each on a desktop machine), so the same board gives the same
choice on every run.  The wall-clock limit only guards against a slow machine;
when it cuts a stage short the result is marked so.

More processes (``workers``) solve the board's independent components side by
side, each component with its own single-worker model and its own share of the
work limit, never one model on several CP-SAT workers: those workers trade
solutions and bounds as they find them, so what a limit cuts depends on the
threads' timing, and CP-SAT's interleaved search, which repeats for a given
number of workers, runs a different portfolio of strategies for each number.
Either way the BOM would change with ``--jobs``; with one worker per model it
does not.
"""

from __future__ import annotations

__all__ = ["DEFAULT_WORK_LIMIT", "Consolidation", "Pool", "Stage", "consolidate"]

import math
import time
from collections.abc import Hashable, Sequence
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from typing import Any

from ortools.sat.python import cp_model

from synth.bom.cover import best_within, greedy_cover, improved_cover, smallest_need
from synth.bom.presolve import Component, Presolved, disjoint_need, presolve, subsets

_ERROR_UNIT = 1e-9  # errors enter the model as integers of this size (fractions)
DEFAULT_WORK_LIMIT = 20.0
"""CP-SAT deterministic time allowed to the consolidation by default, work units."""
_SUBSETS_UP_TO = 10  # larger candidates are compared by scanning, not by their subsets
_LINES_SHARE = 0.6  # of the work limit, at most, for the fewest lines (the rest follows)
_HINTED_SHARE = 0.5
"""Of a first stage's work, at most, for its search from the greedy cover's hint; an
unproven stage spends the rest searching from no hint, for its lower bound.  From the
hint, CP-SAT's core-based search proves small boards soonest (a 10-network E96 board in 4
work units) but its bound stalls: on a 50-network E96 board 10 lines after 12 work units,
where the same search from no hint proves 14 in 12.  Neither the LP relaxation (13) nor
a MILP of the same model (HiGHS through scipy: 14 after 240 s, two nodes) does better
there; 18 lines is the best found either way."""


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
class Stage:
    """One priority of the consolidation and what is known of it.

    Attributes
    ----------
    name : str
        ``"lines"``, ``"to buy"`` or ``"error"``.
    value : float
        The chosen assignment's count of lines or lines to buy, or its total error
        (fraction).
    proven : bool
        ``value`` is proven least, given the earlier stages (for ``"error"``: given
        the chosen lines at least, see ``scope``).
    bound : float
        A proven lower bound on ``value`` given the earlier stages (``value`` itself
        when proven).
    scope : str
        For ``"error"``: ``"every choice"`` when no choice with as few lines (and as
        few to buy) has a smaller total error, ``"chosen lines"`` when the total is
        proven least only for the chosen lines; ``""`` for the other stages.
    work : float
        CP-SAT deterministic time spent, work units (repeats run after run).
    elapsed_s : float
        Wall-clock time spent, s.
    """

    name: str
    value: float
    proven: bool
    bound: float
    scope: str = ""
    work: float = 0.0
    elapsed_s: float = 0.0


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
        Every stage was proven optimal, the error over every choice with as few lines
        (and as few to buy): the exact lexicographic optimum.
    status : str
        Each stage's state, e.g. ``"lines: OPTIMAL; error: OPTIMAL"``; ``FEASIBLE``
        for a stage not proven, ``OPTIMAL FOR THE CHOSEN LINES`` for an error proven
        least for the chosen lines only, ``NOT SOLVED`` after a fallback.
    elapsed_s : float
        Solve time, s.
    lines_optimal : bool
        The number of lines (the first priority) was proven minimal.
    stages : tuple of Stage
        Each priority in order, with its value, proof and bound.
    fallback : bool
        No cover was found within the limits: every network keeps its own best
        candidate (no consolidation).
    cut : str
        ``""``, or the limit that cut a stage short: ``"work limit"`` (the result
        repeats) or ``"time limit"`` (the wall clock: a rerun may differ).
    """

    choice: tuple[int, ...]
    lines: int
    to_buy: int
    total_error: float
    optimal: bool
    status: str
    elapsed_s: float
    lines_optimal: bool = True
    stages: tuple[Stage, ...] = ()
    fallback: bool = False
    cut: str = ""

    @property
    def lines_bound(self) -> int:
        """A proven lower bound on the board's lines."""
        return int(self.stages[0].bound) if self.stages else self.lines


def _line_set(lines: Sequence[Sequence[frozenset[int]]], choice: Sequence[int]) -> frozenset[int]:
    return frozenset().union(*(lines[i][c] for i, c in enumerate(choice)))


def _total(errors: Sequence[Sequence[float]], choice: Sequence[int]) -> float:
    return float(sum(errors[i][c] for i, c in enumerate(choice)))


class _Model:
    """The CP-SAT model of the choice, its objectives and one deterministic solver."""

    def __init__(self, lines: Sequence[Sequence[frozenset[int]]],
                 errors: Sequence[Sequence[float]] | None,
                 buy: frozenset[int], seed: int) -> None:
        self.lines = lines
        self.model = cp_model.CpModel()
        self.picks = [[self.model.new_bool_var(f"n{i}c{c}") for c in range(len(pool))]
                      for i, pool in enumerate(lines)]
        present = sorted(frozenset().union(*(c for pool in lines for c in pool)))
        self.used = {k: self.model.new_bool_var(f"line{k}") for k in present}
        for row, pool in zip(self.picks, lines, strict=True):
            self.model.add_exactly_one(row)
            # a line is needed when the network's chosen candidate needs it; with exactly
            # one candidate per network, summing the candidates that need a line gives the
            # same integer solutions as one implication per candidate and a far tighter
            # LP bound
            needing: dict[int, list[cp_model.IntVar]] = {}
            for var, needed in zip(row, pool, strict=True):
                for key in sorted(needed):
                    needing.setdefault(key, []).append(var)
            for key, variables in needing.items():
                self.model.add(sum(variables) <= self.used[key])
        self.objectives: dict[str, Any] = {
            "lines": sum(self.used.values()),
            "to buy": sum(self.used[k] for k in present if k in buy),
        }
        if errors is not None:
            self.objectives["error"] = sum(
                round(err / _ERROR_UNIT) * var
                for row, pool_errors in zip(self.picks, errors, strict=True)
                for var, err in zip(row, pool_errors, strict=True))
        self.solver = cp_model.CpSolver()
        self.solver.parameters.num_workers = 1  # one worker: the result repeats run after run
        self.solver.parameters.random_seed = seed

    def solve(self, name: str, hint: Sequence[int] | None, work: float, seconds: float
              ) -> tuple[tuple[int, ...] | None, float, float, bool]:
        """Minimise one objective from a hinted assignment (or none).

        Returns the assignment found (None when none), the proven lower bound (in the
        objective's units), the deterministic time spent and whether CP-SAT proved it.
        """
        self.model.clear_hints()  # type: ignore[no-untyped-call]  # ortools leaves it unannotated
        if hint is not None:
            needed: set[int] = set()
            for row, pool, pick in zip(self.picks, self.lines, hint, strict=True):
                for c, var in enumerate(row):
                    self.model.add_hint(var, c == pick)
                needed |= pool[pick]
            for k, var in self.used.items():
                self.model.add_hint(var, k in needed)
        self.model.minimize(self.objectives[name])
        params = self.solver.parameters
        params.max_deterministic_time = max(work, 0.0)
        params.max_time_in_seconds = max(seconds, 0.001)
        # core-based search proves lower bounds on sums of Booleans (line counts: a
        # MaxSAT view) far faster than the default single-worker search; the weighted
        # error does better with the default search started from the hint
        params.optimize_with_core = name != "error"
        status = self.solver.solve(self.model)
        found = None
        if status in (cp_model.OPTIMAL, cp_model.FEASIBLE):
            found = tuple(next(c for c, var in enumerate(row) if self.solver.boolean_value(var))
                          for row in self.picks)
        bound = float(self.solver.best_objective_bound)
        if status == cp_model.OPTIMAL:
            bound = float(self.solver.objective_value)
        return (found, bound, float(self.solver.deterministic_time),
                status == cp_model.OPTIMAL)

    def keep(self, name: str, value: int) -> None:
        """Hold an objective at most at ``value`` for the later stages."""
        self.model.add(self.objectives[name] <= value)


@dataclass(frozen=True)
class _Part:
    """One component's fewest lines (then fewest to buy): its lines, bounds, work, time."""

    lines: frozenset[int]
    bounds: dict[str, int]
    work: dict[str, float]
    elapsed_s: dict[str, float]


def _solve_part(part: Component, buy: frozenset[int], names: Sequence[str], seed: int,
                work: float, deadline: float) -> _Part | None:
    """Fewest lines of one component, then fewest to buy, by CP-SAT from a greedy cover.

    ``work`` is the component's share of the work limit: the lines take 60 % of it at
    most, the lines to buy half of what is left.  None when the greedy cover does not
    finish before ``deadline``.
    """
    lines = part.lines
    if len(lines) == 1:  # one network: its smallest candidate (then fewest to buy)
        best = min(lines[0], key=lambda c: (len(c), len(c & buy), sorted(c)))
        return _Part(best, {"lines": len(best), "to buy": len(best & buy)},
                     dict.fromkeys(names, 0.0), dict.fromkeys(names, 0.0))
    cover = greedy_cover(lines, deadline)
    if cover is None:
        return None
    cover = improved_cover(lines, cover, deadline)
    choice = tuple(next(c for c, s in enumerate(pool) if s <= cover) for pool in lines)
    model = _Model(lines, None, buy, seed)

    def count(name: str, picked: Sequence[int]) -> int:
        used = _line_set(lines, picked)
        return len(used) if name == "lines" else len(used & buy)

    bounds: dict[str, int] = {}
    spent: dict[str, float] = {}
    elapsed: dict[str, float] = {}
    for name in names:
        began = time.perf_counter()
        budget = (_LINES_SHARE * work if name == "lines"
                  else (work - sum(spent.values())) / 2)
        found, bound, spent[name], proven = model.solve(name, choice, _HINTED_SHARE * budget,
                                                        deadline - began)
        if found is not None and count(name, found) <= count(name, choice):
            choice = found
        value = count(name, choice)
        floor = max(smallest_need(lines), disjoint_need(lines)) if name == "lines" else 0
        if not proven and max(floor, math.ceil(bound - 1e-6)) < value:
            # the core search proves far higher bounds when no hint steers it
            found, free_bound, more, _ = model.solve(name, None, budget - spent[name],
                                                     deadline - time.perf_counter())
            spent[name] += more
            bound = max(bound, free_bound)
            if found is not None and count(name, found) < value:
                choice = found
                value = count(name, choice)
        bounds[name] = min(value, max(floor, math.ceil(bound - 1e-6)))
        model.keep(name, value)
        elapsed[name] = time.perf_counter() - began
    return _Part(_line_set(lines, choice), bounds, spent, elapsed)


def _undominated(pool: Sequence[frozenset[int]], errors: Sequence[float]) -> list[int]:
    """A network's candidates that no other beats in lines and error alike, in order.

    A candidate goes when another needs only some of its lines and has no larger error
    (of equal lines and errors, the later one goes): it is then never needed for the
    fewest lines, the fewest to buy nor the least total error.
    """
    seen: set[frozenset[int]] = set()
    kept = []
    for c in sorted(range(len(pool)), key=lambda c: (errors[c], c)):
        needed = pool[c]
        beaten = (any(s in seen for s in subsets(needed)) if len(needed) <= _SUBSETS_UP_TO
                  else any(s <= needed for s in seen))
        if not beaten:
            kept.append(c)
        seen.add(needed)
    return sorted(kept)


def consolidate(pools: Sequence[Pool], in_stock: frozenset[Hashable] | None = None,
                time_limit_s: float = 30.0, seed: int = 0,
                work_limit: float = DEFAULT_WORK_LIMIT, *, workers: int = 1,
                presolved: bool = True) -> Consolidation:
    """Choose one candidate per network with the fewest distinct BOM lines.

    Parameters
    ----------
    pools : sequence of Pool
        One per network, each with at least one candidate.
    in_stock : frozenset, optional
        Line keys on the shelf; with it, fewer lines to buy is the second priority.
    time_limit_s : float
        Wall-clock limit for the whole solve, s (a guard: the result then may differ
        from run to run, and says so in ``cut``).
    seed : int
        CP-SAT's random seed (one worker, so the result repeats).
    work_limit : float
        CP-SAT deterministic time for the whole solve, work units (the fewest lines
        take at most 60 % of it; what a stage leaves passes on).
    workers : int
        Threads solving the independent components of the board side by side (each
        with one CP-SAT worker and its own share of the work limit, so the result
        does not depend on it; CP-SAT releases the interpreter while it solves).
    presolved : bool
        Reduce the fewest-lines problem and split it into components first
        (:func:`synth.bom.presolve.presolve`); False solves the board as one model.

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
    deadline = start + time_limit_s
    keys = sorted({key for p in pools for s in p.lines for key in s}, key=repr)
    number = {key: k for k, key in enumerate(keys)}
    lines = [[frozenset(number[key] for key in s) for s in p.lines] for p in pools]
    errors = [[float(e) for e in p.errors] for p in pools]
    buy = frozenset(k for k, key in enumerate(keys) if in_stock is None or key not in in_stock)
    names = ["lines", "to buy", "error"] if in_stock is not None else ["lines", "error"]
    own_best = tuple(min(range(len(e)), key=lambda c: (e[c], c)) for e in errors)

    def count(name: str, choice: Sequence[int]) -> int:
        used = _line_set(lines, choice)
        return len(used) if name == "lines" else len(used & buy)

    def result(choice: tuple[int, ...], stages: list[Stage], fallback: bool = False,
               cut: str = "") -> Consolidation:
        words = []
        for stage in stages:
            if fallback:
                word = "NOT SOLVED"
            elif stage.proven and stage.scope == "chosen lines":
                word = "OPTIMAL FOR THE CHOSEN LINES"
            else:
                word = "OPTIMAL" if stage.proven else "FEASIBLE"
            words.append(f"{stage.name}: {word}")
        return Consolidation(
            choice=choice, lines=count("lines", choice),
            to_buy=count("to buy", choice) if in_stock is not None else 0,
            total_error=_total(errors, choice),
            optimal=not fallback and all(s.proven and s.scope != "chosen lines"
                                         for s in stages),
            status="; ".join(words), elapsed_s=time.perf_counter() - start,
            lines_optimal=stages[0].proven, stages=tuple(stages), fallback=fallback,
            cut=cut)

    if presolved:
        parts = presolve(lines, buy, deadline)
    else:  # the whole board as one part, as solved before the reductions
        parts = Presolved(frozenset(), (Component(tuple(range(len(lines))),
                                                  tuple(tuple(pool) for pool in lines)),))
    weights = [sum(map(len, part.lines)) if len(part.lines) > 1 else 0
               for part in parts.components]
    shares = [w / max(sum(weights), 1) for w in weights]
    firsts = names[:-1]

    def solve(numbered: tuple[int, Component]) -> _Part | None:
        return _solve_part(numbered[1], buy, firsts, seed, shares[numbered[0]] * work_limit,
                           deadline)

    if workers > 1 and sum(w > 0 for w in weights) > 1:
        with ThreadPoolExecutor(max_workers=workers) as pool:
            solved = list(pool.map(solve, enumerate(parts.components)))
    else:
        solved = [solve(numbered) for numbered in enumerate(parts.components)]
    if any(part is None for part in solved):
        stages = [Stage(name, count(name, own_best), False, smallest_need(lines) if
                        name == "lines" else 0.0) for name in firsts]
        stages.append(Stage("error", _total(errors, own_best), False, 0.0))
        return result(own_best, stages, fallback=True, cut="time limit")
    done = [part for part in solved if part is not None]
    allowed = parts.forced.union(*(part.lines for part in done))
    choice = best_within(lines, errors, allowed)
    if [count(name, own_best) for name in firsts] <= [count(name, choice) for name in firsts]:
        choice = own_best
    stages = []
    cut = ""
    spent = 0.0
    for name in firsts:
        value = count(name, choice)
        floor = len(parts.forced if name == "lines" else parts.forced & buy)
        bound = floor + sum(part.bounds[name] for part in done)
        if name == "lines":
            bound = max(bound, smallest_need(lines))
        bound = min(bound, value)
        work = sum(part.work[name] for part in done)
        spent += work
        proven = bound >= value
        if not proven and not cut:
            cut = "time limit" if time.perf_counter() >= deadline else "work limit"
        stages.append(Stage(name, value, proven, bound, work=work,
                            elapsed_s=sum(part.elapsed_s[name] for part in done)))
    began = time.perf_counter()
    choice = best_within(lines, errors, _line_set(lines, choice))
    scope, work = "chosen lines", 0.0
    if work_limit - spent > 0 and time.perf_counter() < deadline:
        kept = [_undominated(pool, pool_errors) for pool, pool_errors in zip(lines, errors,
                                                                           strict=True)]
        short = [[lines[i][c] for c in row] for i, row in enumerate(kept)]
        short_errors = [[errors[i][c] for c in row] for i, row in enumerate(kept)]
        model = _Model(short, short_errors, buy, seed)
        for stage in stages:
            model.keep(stage.name, int(stage.value))
        hint = best_within(short, short_errors, _line_set(lines, choice))
        found, _, work, exact = model.solve("error", hint, work_limit - spent,
                                            deadline - time.perf_counter())
        if found is not None:
            better = best_within(lines, errors, _line_set(short, found))
            if _total(errors, better) < _total(errors, choice):
                choice = better
            if exact:
                scope = "every choice"
    error = _total(errors, choice)
    stages.append(Stage("error", error, True, error, scope=scope, work=work,
                        elapsed_s=time.perf_counter() - began))
    return result(choice, stages, cut=cut)
