"""Line covers of a board: a greedy cover, and each network's best candidate within a line set.

A *cover* is a set of BOM lines from which every network can build one of its
candidates.  :func:`greedy_cover` finds a small one quickly (the starting point
the exact consolidation improves on and, when that is cut short, the best
assignment known); :func:`best_within` picks, once the lines are fixed, each
network's least-error candidate.  The second is exact: with the line set fixed
the networks no longer interact, so the least total error is the sum of each
network's own least error, found by going through its candidates.
"""

from __future__ import annotations

__all__ = ["best_within", "greedy_cover", "improved_cover", "smallest_need"]

import itertools
import time
from collections.abc import Sequence

_SUBSETS_UP_TO = 10  # a missing set of at most this many lines is scored by its subsets


def smallest_need(lines: Sequence[Sequence[frozenset[int]]]) -> int:
    """A lower bound on the lines of any cover: the most that one network needs at least.

    Examples
    --------
    >>> smallest_need([[frozenset({0, 1}), frozenset({2})], [frozenset({3, 4})]])
    2
    """
    return max((min(len(c) for c in pool) for pool in lines if pool), default=0)


def _covered(missing: frozenset[int], by_missing: dict[frozenset[int], set[int]]) -> set[int]:
    """Networks that adding ``missing`` completes: those with a candidate missing a subset."""
    out: set[int] = set()
    if len(missing) <= _SUBSETS_UP_TO:
        items = sorted(missing)
        for size in range(len(items) + 1):
            for subset in itertools.combinations(items, size):
                out |= by_missing.get(frozenset(subset), set())
    else:
        for other, networks in by_missing.items():
            if other <= missing:
                out |= networks
    return out


def greedy_cover(lines: Sequence[Sequence[frozenset[int]]],
                 deadline: float | None = None) -> frozenset[int] | None:
    """A small set of lines from which every network can build a candidate.

    Parameters
    ----------
    lines : sequence of sequences of frozenset of int
        Per network, each candidate's lines (numbered 0, 1, …; every network has a
        candidate).
    deadline : float, optional
        A ``time.perf_counter()`` instant; past it the search gives up.

    Returns
    -------
    frozenset of int or None
        The cover, or None when the deadline passed first.

    Notes
    -----
    Each step adds the missing lines of one candidate of a network not yet
    covered, choosing the addition that completes the most networks per line
    added (ties: fewer lines, then the smallest line numbers), until every
    network is covered; then lines that no network needs any more are dropped,
    in ascending order.  The greedy rule is Chvátal's for set cover; the
    result depends only on the input, and is no proof of the fewest lines.

    Examples
    --------
    >>> greedy_cover([[frozenset({0, 1}), frozenset({2, 3})], [frozenset({1, 2})],
    ...               [frozenset({1, 4}), frozenset({2, 5})]])
    frozenset({0, 1, 2, 4})
    """
    chosen: set[int] = set()
    open_networks = list(range(len(lines)))
    while open_networks:
        if deadline is not None and time.perf_counter() > deadline:
            return None
        by_missing: dict[frozenset[int], set[int]] = {}
        for i in open_networks:
            for candidate in lines[i]:
                by_missing.setdefault(candidate - chosen, set()).add(i)
        best: tuple[float, int, tuple[int, ...]] | None = None
        for missing in by_missing:
            gain = len(_covered(missing, by_missing)) / max(len(missing), 1)
            score = (-gain, len(missing), tuple(sorted(missing)))
            if best is None or score < best:
                best = score
        assert best is not None  # an open network has a candidate
        chosen.update(best[2])
        open_networks = [i for i in open_networks
                         if not any(c <= chosen for c in lines[i])]
    for line in sorted(chosen):
        rest = chosen - {line}
        if all(any(c <= rest for c in pool) for pool in lines):
            chosen = rest
    return frozenset(chosen)


def improved_cover(lines: Sequence[Sequence[frozenset[int]]], cover: frozenset[int],
                   deadline: float | None = None) -> frozenset[int]:
    """A cover made smaller by swaps of two of its lines for one, while one is found.

    Parameters
    ----------
    lines : sequence of sequences of frozenset of int
        Per network, each candidate's lines.
    cover : frozenset of int
        A cover of every network (:func:`greedy_cover`'s).
    deadline : float, optional
        A ``time.perf_counter()`` instant; past it the cover found so far is returned.

    Returns
    -------
    frozenset of int
        A cover of no more lines than ``cover``.

    Notes
    -----
    A local search of the fewest lines (a 2-for-1 exchange, as in local search for set
    cover): for each pair of the cover's lines, in ascending order, the networks left
    without a candidate once both go must each be completed by one same new line; the
    smallest such line replaces the pair, and the search starts again from the smaller
    cover.  The result depends only on the input.  On a 50-network E96 board it takes the
    greedy cover's 18 lines to 17 at once, where CP-SAT from the greedy cover found none
    fewer within its work limit.

    Examples
    --------
    >>> pools = [[frozenset({0, 1}), frozenset({4})], [frozenset({2, 3}), frozenset({4})]]
    >>> sorted(improved_cover(pools, frozenset({0, 1, 2, 3})))  # 0, 1 for 4; then 2, 3 go
    [4]
    """
    chosen = set(cover)
    swapped = True
    while swapped:
        swapped = False
        for pair in itertools.combinations(sorted(chosen), 2):
            if deadline is not None and time.perf_counter() > deadline:
                return frozenset(chosen)
            rest = chosen.difference(pair)
            # for each network left open: the single lines that would complete it
            completing: set[int] | None = None
            for pool in lines:
                missing = [c - rest for c in pool]
                if any(not m for m in missing):
                    continue
                ones = {next(iter(m)) for m in missing if len(m) == 1}
                completing = ones if completing is None else completing & ones
                if not completing:
                    break
            if completing is None:  # the pair was not needed at all
                chosen = rest
            elif completing:
                chosen = rest | {min(completing)}
            else:
                continue
            swapped = True
            break
    return frozenset(chosen)


def best_within(lines: Sequence[Sequence[frozenset[int]]], errors: Sequence[Sequence[float]],
                allowed: frozenset[int]) -> tuple[int, ...]:
    """Each network's least-error candidate built from ``allowed`` lines alone.

    Parameters
    ----------
    lines : sequence of sequences of frozenset of int
        Per network, each candidate's lines.
    errors : sequence of sequences of float
        Per network, each candidate's error (fraction).
    allowed : frozenset of int
        The lines fixed by the earlier stages; every network has a candidate within them.

    Returns
    -------
    tuple of int
        The chosen candidate per network (ties: the lowest index, the better rank).

    Raises
    ------
    ValueError
        When a network has no candidate within ``allowed``.

    Notes
    -----
    With the line set fixed, a network's choice changes neither the lines nor
    another network's options, so the sum of the errors is least exactly when
    each network's own error is least: going through each network's candidates
    proves the least total error for these lines.

    Examples
    --------
    >>> best_within([[frozenset({0, 1}), frozenset({0})], [frozenset({2})]],
    ...             [[0.01, 0.02], [0.0]], frozenset({0, 2}))
    (1, 0)
    """
    choice = []
    for number, (pool, pool_errors) in enumerate(zip(lines, errors, strict=True)):
        fits = [c for c, needed in enumerate(pool) if needed <= allowed]
        if not fits:
            raise ValueError(f"network {number} has no candidate within the allowed lines")
        choice.append(min(fits, key=lambda c: (pool_errors[c], c)))  # used at once
    return tuple(choice)
