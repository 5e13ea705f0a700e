"""CP-SAT consolidation is optimal: compared with brute force over every combination.

Reference: the brute force below tries every choice [CALC-exhaustive].
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest

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
