"""CP-SAT consolidation is optimal: compared with brute force over every combination.

Reference: the brute force below tries every choice [CALC-exhaustive].
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from bom.exhaustive import least_error_within, lexicographic_best
from synth.bom.consolidate import Pool, consolidate


def brute_force(pools, in_stock=None):
    best = None
    for choice in itertools.product(*[range(len(p.lines)) for p in pools]):
        lines = set().union(*(pools[i].lines[c] for i, c in enumerate(choice)))
        buy = sum(1 for k in lines if in_stock is not None and k not in in_stock)
        error = sum(pools[i].errors[c] for i, c in enumerate(choice))
        key = (len(lines), buy, round(error, 9))
        if best is None or key < best:
            best = key
    return best


def random_pools(rng, networks, most, values=12):
    pools = []
    for _ in range(networks):
        count = int(rng.integers(1, most + 1))
        lines = [frozenset(int(v) for v in rng.choice(values, size=int(rng.integers(1, 4)),
                                                      replace=False)) for _ in range(count)]
        errors = [float(round(e, 6)) for e in rng.uniform(0, 0.01, size=count)]
        pools.append(Pool(lines, errors))
    return pools


@pytest.mark.parametrize("seed", range(15))
def test_optimal_against_brute_force(seed):
    rng = np.random.default_rng(seed)
    pools = random_pools(rng, networks=int(rng.integers(2, 6)), most=6)
    result = consolidate(pools)
    assert result.optimal and result.status == "lines: OPTIMAL; error: OPTIMAL"
    lines, _, error = brute_force(pools)
    assert result.lines == lines
    assert result.total_error == pytest.approx(error, abs=1e-8)
    chosen = set().union(*(pools[i].lines[c] for i, c in enumerate(result.choice)))
    assert len(chosen) == result.lines


@pytest.mark.parametrize("seed", range(8))
def test_stock_preference_against_brute_force(seed):
    rng = np.random.default_rng(100 + seed)
    pools = random_pools(rng, networks=4, most=5)
    in_stock = frozenset(int(v) for v in rng.choice(12, size=5, replace=False))
    result = consolidate(pools, in_stock=in_stock)
    lines, buy, error = brute_force(pools, in_stock)
    assert (result.lines, result.to_buy) == (lines, buy)
    assert result.total_error == pytest.approx(error, abs=1e-8)


def test_repeatable():
    pools = random_pools(np.random.default_rng(5), networks=6, most=8)
    assert consolidate(pools).choice == consolidate(pools).choice


# -- stages, proofs and limits, against the exhaustive search of tests/bom/exhaustive.py --


@pytest.mark.parametrize("seed", range(12))
def test_every_proven_stage_matches_the_exhaustive_search(seed):
    rng = np.random.default_rng(300 + seed)
    pools = random_pools(rng, networks=int(rng.integers(2, 6)), most=6)
    in_stock = (frozenset(int(v) for v in rng.choice(12, size=4, replace=False))
                if seed % 2 else None)
    result = consolidate(pools, in_stock=in_stock)
    lines, buy, error = lexicographic_best(pools, in_stock)
    stages = {s.name: s for s in result.stages}
    assert [s.name for s in result.stages] == (["lines", "to buy", "error"] if in_stock
                                               else ["lines", "error"])
    assert stages["lines"].proven and stages["lines"].value == lines == result.lines_bound
    if in_stock:
        assert stages["to buy"].proven and stages["to buy"].value == buy == result.to_buy
    assert stages["error"].proven
    chosen = set().union(*(pools[i].lines[c] for i, c in enumerate(result.choice)))
    # proven for the chosen lines in every case; over every choice when the scope says so
    assert result.total_error == pytest.approx(least_error_within(pools, chosen), abs=1e-12)
    if stages["error"].scope == "every choice":
        assert result.optimal and result.total_error == pytest.approx(error, abs=1e-8)


def test_a_tiny_work_limit_keeps_the_best_known_with_an_honest_bound():
    pools = random_pools(np.random.default_rng(7), networks=7, most=5, values=20)
    result = consolidate(pools, work_limit=1e-6)
    lines, _, _ = lexicographic_best(pools)
    first = result.stages[0]
    assert not result.optimal and result.cut == "work limit"
    assert not first.proven and result.status.startswith("lines: FEASIBLE")
    assert first.bound <= lines <= first.value == result.lines
    assert result.stages[-1].scope == "chosen lines" and result.stages[-1].work == 0.0


def test_a_tiny_time_limit_falls_back_to_each_networks_own_best():
    pools = random_pools(np.random.default_rng(8), networks=5, most=5)
    result = consolidate(pools, time_limit_s=1e-9)
    own = tuple(min(range(len(p.errors)), key=lambda c, p=p: (p.errors[c], c)) for p in pools)
    assert result.fallback and result.choice == own and not result.optimal
    assert result.cut == "time limit" and not any(s.proven for s in result.stages)
    assert result.status == "lines: NOT SOLVED; error: NOT SOLVED"


def test_three_runs_give_the_same_choice_and_work():
    pools = random_pools(np.random.default_rng(9), networks=30, most=40, values=60)
    runs = [consolidate(pools, work_limit=0.5) for _ in range(3)]
    assert len({(r.choice, r.status, tuple((s.value, s.bound, s.work) for s in r.stages))
                for r in runs}) == 1


# -- reductions, components and workers --


def apart_pools(rng, groups, networks, most):
    """Groups of networks over value ranges apart from each other's: one component each."""
    pools = []
    for group in range(groups):
        for pool in random_pools(rng, networks=networks, most=most, values=8):
            pools.append(Pool([frozenset(v + 100 * group for v in s) for s in pool.lines],
                              pool.errors))
    return pools


@pytest.mark.parametrize("presolved", [True, False])
@pytest.mark.parametrize("seed", range(10))
def test_with_and_without_reductions_the_exhaustive_optimum(seed, presolved):
    rng = np.random.default_rng(900 + seed)
    pools = (apart_pools(rng, groups=2, networks=2, most=5) if seed % 2
             else random_pools(rng, networks=int(rng.integers(2, 6)), most=6))
    in_stock = (frozenset(int(v) for v in rng.choice(12, size=4, replace=False))
                if seed % 3 else None)
    result = consolidate(pools, in_stock=in_stock, presolved=presolved)
    lines, buy, error = lexicographic_best(pools, in_stock)
    assert result.lines_optimal and (result.lines, result.lines_bound) == (lines, lines)
    assert result.to_buy == (buy if in_stock else 0)
    assert all(s.proven and s.bound == s.value for s in result.stages)
    if result.stages[-1].scope == "every choice":
        assert result.total_error == pytest.approx(error, abs=1e-8)


def test_components_are_bounded_and_proven_apart_and_add_up():
    pools = apart_pools(np.random.default_rng(11), groups=3, networks=3, most=4)
    result = consolidate(pools)
    lines, _, _ = lexicographic_best(pools)
    first = result.stages[0]
    assert first.proven and first.value == first.bound == lines


def test_workers_give_the_same_bom():
    pools = apart_pools(np.random.default_rng(12), groups=3, networks=8, most=20)
    one, two = (consolidate(pools, workers=n, work_limit=0.01) for n in (1, 2))
    assert (one.choice, one.status, one.cut) == (two.choice, two.status, two.cut)
    assert ([(s.value, s.bound, s.work) for s in one.stages]
            == [(s.value, s.bound, s.work) for s in two.stages])


def test_the_error_model_keeps_only_candidates_unbeaten_in_lines_and_error():
    from synth.bom.consolidate import _undominated

    pool = [frozenset({0, 1}), frozenset({0}), frozenset({0}), frozenset({0, 1}),
            frozenset({2})]
    # {0, 1} at 0.0 beats {0, 1} at 0.01; {0} at 0.01 beats {0} at 0.02; {2} is apart
    assert _undominated(pool, [0.01, 0.02, 0.01, 0.0, 0.05]) == [2, 3, 4]


# boards where a candidate needs only some of another's lines at a larger error, so that
# dropping the wrong one of the two loses the least error over every choice
@pytest.mark.parametrize(("seed", "values"), [(43, 8), (44, 5), (48, 8), (73, 8), (91, 8),
                                              (99, 6), (110, 6), (152, 5), (153, 6)])
def test_least_error_over_every_choice_on_crowded_values(seed, values):
    rng = np.random.default_rng(seed)
    pools = random_pools(rng, networks=int(rng.integers(2, 5)), most=6, values=values)
    result = consolidate(pools)
    lines, _, error = lexicographic_best(pools)
    assert result.lines == lines and result.stages[-1].scope == "every choice"
    assert result.total_error == pytest.approx(error, abs=1e-8)


def test_an_unproven_stage_searches_again_from_no_hint_for_its_bound(monkeypatch):
    from synth.bom import consolidate as module

    calls = []

    def solve(self, name, hint, work, seconds):
        calls.append((name, hint is None, round(work, 6)))
        if name == "error":
            return None, 0.0, 0.0, False
        # from the hint: no proof and a weak bound; from no hint: a higher bound
        return None, (4.0 if hint is None else 2.0), work, False

    monkeypatch.setattr(module._Model, "solve", solve)
    # two networks that share no line: the floor is 2 lines and the greedy cover 6
    pools = [Pool([frozenset({0, 1, 2}), frozenset({3, 4, 5})], [0.0, 0.01]),
             Pool([frozenset({0, 6, 7}), frozenset({3, 8, 9})], [0.0, 0.01])]
    result = consolidate(pools, work_limit=10.0, presolved=False)
    lines = result.stages[0]
    assert calls[:2] == [("lines", False, 3.0), ("lines", True, 3.0)]  # 0.6 x 10, halved
    assert (lines.value, lines.bound, lines.proven, lines.work) == (5, 4, False, 6.0)
