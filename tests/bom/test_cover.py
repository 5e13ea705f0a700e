"""Greedy line covers and each network's best candidate within a line set (synth.bom.cover).

References: the least error within a line set is checked against an exhaustive search
over every choice [CALC-exhaustive].
"""

from __future__ import annotations

import time

import numpy as np
import pytest

from bom.exhaustive import least_error_within, lexicographic_best
from synth.bom.consolidate import Pool, consolidate
from synth.bom.cover import best_within, greedy_cover, improved_cover, smallest_need


def random_lines(rng, networks, most, values=10):
    return [[frozenset(int(v) for v in rng.choice(values, size=int(rng.integers(1, 4)),
                                                  replace=False))
             for _ in range(int(rng.integers(1, most + 1)))] for _ in range(networks)]


@pytest.mark.parametrize("seed", range(20))
def test_greedy_cover_covers_every_network_and_keeps_no_spare_line(seed):
    rng = np.random.default_rng(seed)
    lines = random_lines(rng, networks=int(rng.integers(1, 8)), most=6)
    cover = greedy_cover(lines)
    assert all(any(c <= cover for c in pool) for pool in lines)
    for line in cover:  # every line is needed by some network
        assert not all(any(c <= cover - {line} for c in pool) for pool in lines)
    assert len(cover) >= smallest_need(lines)


def test_greedy_cover_scores_large_candidates_too():
    # a candidate of 12 lines is scored by going through the missing sets, not subsets
    big = frozenset(range(12))
    assert greedy_cover([[big], [frozenset({3})], [frozenset({20})]]) == big | {20}


def test_greedy_cover_gives_up_past_its_deadline():
    assert greedy_cover([[frozenset({1})]], deadline=time.perf_counter() - 1) is None
    assert greedy_cover([]) == frozenset()


@pytest.mark.parametrize("seed", range(20))
def test_best_within_is_the_least_error_for_the_lines(seed):
    rng = np.random.default_rng(50 + seed)
    lines = random_lines(rng, networks=int(rng.integers(1, 5)), most=5)
    errors = [[float(e) for e in rng.uniform(0, 0.01, size=len(pool))] for pool in lines]
    allowed = greedy_cover(lines)
    choice = best_within(lines, errors, allowed)
    assert all(lines[i][c] <= allowed for i, c in enumerate(choice))
    total = sum(errors[i][c] for i, c in enumerate(choice))
    pools = [Pool(pool, e) for pool, e in zip(lines, errors, strict=True)]
    assert total == pytest.approx(least_error_within(pools, allowed), abs=1e-12)


def test_best_within_breaks_ties_by_rank_and_refuses_no_fit():
    assert best_within([[frozenset({1}), frozenset({1})]], [[0.0, 0.0]], frozenset({1})) == (0,)
    with pytest.raises(ValueError, match="network 0 has no candidate"):
        best_within([[frozenset({1})]], [[0.0]], frozenset({2}))


@pytest.mark.parametrize("seed", range(20))
def test_swaps_keep_a_cover_never_larger_nor_below_the_fewest_lines(seed):
    rng = np.random.default_rng(100 + seed)
    lines = random_lines(rng, networks=int(rng.integers(2, 7)), most=5, values=8)
    greedy = greedy_cover(lines)
    better = improved_cover(lines, greedy)
    assert all(any(c <= better for c in pool) for pool in lines)
    fewest, _, _ = lexicographic_best([Pool(pool, [0.0] * len(pool)) for pool in lines])
    assert fewest <= len(better) <= len(greedy)


def test_a_swap_of_two_lines_for_one_reaches_the_fewest_where_the_greedy_cover_does_not(
        monkeypatch):
    from synth.bom import consolidate as module

    # the greedy cover takes 6 lines where 5 suffice
    lines = [[frozenset(c) for c in pool] for pool in (
        [{2, 3}, {2, 4}], [{1, 4, 5}, {0, 7}, {0, 6, 7}, {0, 1, 4}],
        [{4}, {5, 6}, {0, 7}, {0, 1, 7}], [{3, 6, 7}, {2, 5, 7}, {3, 6}])]
    pools = [Pool(pool, [0.0] * len(pool)) for pool in lines]
    fewest, _, _ = lexicographic_best(pools)
    greedy = greedy_cover(lines)
    better = improved_cover(lines, greedy)
    assert len(greedy) > len(better) == fewest
    # the consolidation starts CP-SAT from the smaller cover
    started = []

    def improved(*args, **kwargs):
        started.append(improved_cover(*args, **kwargs))
        return started[-1]

    monkeypatch.setattr(module, "improved_cover", improved)
    assert consolidate(pools, presolved=False).lines == fewest
    assert started == [better]


def test_swaps_stop_at_the_deadline():
    lines = [[frozenset({k}), frozenset({10})] for k in range(4)]
    cover = frozenset(range(4))
    assert improved_cover(lines, cover, deadline=time.perf_counter() - 1.0) == cover
    assert improved_cover(lines, cover) == {10}
