"""Greedy line covers and each network's best candidate within a line set (synth.bom.cover).

References: the least error within a line set is checked against an exhaustive search
over every choice [CALC-exhaustive].
"""

from __future__ import annotations

import time

import numpy as np
import pytest

from bom.exhaustive import least_error_within
from synth.bom.consolidate import Pool
from synth.bom.cover import best_within, greedy_cover, smallest_need


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
