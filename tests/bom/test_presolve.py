"""Exact reductions of the fewest-lines problem and its components (synth.bom.presolve).

References: every reduction is checked against an exhaustive search over every choice of
the whole board and of each component [CALC-exhaustive].
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from synth.bom.presolve import disjoint_need, presolve


def random_lines(rng, networks, most, values=10):
    return [[frozenset(int(v) for v in rng.choice(values, size=int(rng.integers(1, 4)),
                                                  replace=False))
             for _ in range(int(rng.integers(1, most + 1)))] for _ in range(networks)]


def fewest(lines, buy):
    """Every line set built by one candidate per network: the (lines, to buy) least one."""
    best = None
    for choice in itertools.product(*lines):
        used = frozenset().union(*choice)
        key = (len(used), len(used & buy))
        if best is None or key < best[0]:
            best = (key, used)
    return best


@pytest.mark.parametrize("seed", range(40))
def test_forced_lines_and_components_keep_the_fewest_lines_and_to_buy(seed):
    rng = np.random.default_rng(700 + seed)
    lines = random_lines(rng, networks=int(rng.integers(1, 6)), most=5)
    everything = frozenset().union(*(c for pool in lines for c in pool))
    buy = (frozenset(int(v) for v in rng.choice(10, size=5, replace=False)) & everything
           if seed % 2 else everything)
    reduced = presolve(lines, buy)
    (want, _) = fewest(lines, buy)
    parts = [fewest(part.lines, buy) for part in reduced.components]
    got = (len(reduced.forced) + sum(key[0] for key, _ in parts),
           len(reduced.forced & buy) + sum(key[1] for key, _ in parts))
    assert got == want
    # the reduced sets, put together, still build a candidate of every network
    allowed = reduced.forced.union(*(used for _, used in parts))
    assert all(any(c <= allowed for c in pool) for pool in lines)
    # components share no line, with each other nor with the forced lines
    seen = set(reduced.forced)
    for part in reduced.components:
        used = frozenset().union(*(c for pool in part.lines for c in pool))
        assert not used & seen
        seen |= used
    assert disjoint_need(lines) <= want[0]


def test_a_line_in_stock_gives_way_only_to_a_line_in_stock():
    # lines 1 and 2 dominate each other in the one network that uses them; with 1 in
    # stock and 2 not, 2 must go, not 1
    lines = [[frozenset({0, 1}), frozenset({0, 2})], [frozenset({0})]]
    assert presolve(lines, buy=frozenset({0, 2})).forced == {0, 1}
    assert presolve(lines, buy=frozenset({0, 1})).forced == {0, 2}


def test_equal_networks_keep_one_and_easier_networks_go():
    same = [frozenset({0, 1}), frozenset({1, 2}), frozenset({0, 2})]
    easier = [frozenset({0}), frozenset({1}), frozenset({2})]  # any line of a pair covers it
    reduced = presolve([same, list(same), easier])
    assert [part.networks for part in reduced.components] == [(0,)]
    assert not reduced.forced


def test_a_past_deadline_stops_before_the_first_reduction_that_can_wait():
    lines = [[frozenset({0, 1}), frozenset({1, 2})], [frozenset({0, 1}), frozenset({1, 2})]]
    late = presolve(lines, deadline=0.0)
    assert [part.networks for part in late.components] == [(0, 1)]
    assert late.forced == frozenset()
    # in time: the second network goes, line 0 gives way to line 2, {1, 2} is forced
    reduced = presolve(lines)
    assert reduced.forced == {1, 2} and reduced.components == ()


def test_disjoint_need_adds_networks_apart():
    assert disjoint_need([[frozenset({0, 1})], [frozenset({1, 2})], [frozenset({3, 4})]]) == 4
    assert disjoint_need([]) == 0
