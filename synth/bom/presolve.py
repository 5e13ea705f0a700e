"""Exact reductions of the fewest-lines problem and its split into independent parts.

Each network offers candidates, each candidate a set of lines (numbered 0, 1, …);
the lines stage asks for the smallest set of lines from which every network can
build a candidate, and (with a stock) then the fewest lines to buy.  Before the
exact search, :func:`presolve` applies reductions that keep at least one
lexicographically best line set (fewest lines, then fewest to buy), repeated
until none applies:

- a candidate whose lines include all of another candidate's of the same
  network is dropped (the smaller one is never worse);
- a network that can build a candidate whenever another network can (each of
  the other's candidates includes one of its own) is dropped; of two such
  networks with the same candidates, the later one;
- a network left with a single candidate forces its lines; a forced line
  leaves the other candidates, and networks with a candidate made only of
  forced lines are covered and dropped;
- a line ``k`` *dominated* by a line ``j`` is dropped with every candidate that
  needs it: in every network, every candidate needing ``k`` has, with ``k``
  replaced by ``j``, a candidate within its lines (and ``j`` is in stock when
  ``k`` is).  Any line set using ``k`` then works as well with ``j`` instead,
  never with more lines nor more to buy.

The networks left are then split into *components* that share no candidate
line: the fewest lines of the board is the forced lines plus each component's
own fewest, and so is the fewest to buy, so each component is solved and
proven on its own.  :func:`disjoint_need` gives each component a lower bound of
its own (networks that share no candidate line need their lines apart).
"""

from __future__ import annotations

__all__ = ["Component", "Presolved", "disjoint_need", "presolve", "subsets"]

import itertools
import time
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

_SUBSETS_UP_TO = 10  # larger candidates are compared by scanning, not by their subsets


@dataclass(frozen=True)
class Component:
    """Networks that share candidate lines with each other and with no other network.

    Attributes
    ----------
    networks : tuple of int
        The networks' numbers on the board.
    lines : tuple of tuple of frozenset of int
        Per network, its candidates left, each as the lines it needs beyond the forced
        lines.
    """

    networks: tuple[int, ...]
    lines: tuple[tuple[frozenset[int], ...], ...]


@dataclass(frozen=True)
class Presolved:
    """Result of :func:`presolve`.

    Attributes
    ----------
    forced : frozenset of int
        Lines every best line set holds.
    components : tuple of Component
        What is left to solve, in independent parts (in order of their first network).
    """

    forced: frozenset[int]
    components: tuple[Component, ...]


def subsets(candidate: frozenset[int]) -> Iterable[frozenset[int]]:
    """Every subset of a candidate's lines, the smallest first.

    Examples
    --------
    >>> [sorted(s) for s in subsets(frozenset({2, 1}))]
    [[], [1], [2], [1, 2]]
    """
    items = sorted(candidate)
    for size in range(len(items) + 1):
        for subset in itertools.combinations(items, size):
            yield frozenset(subset)


def _includes_one(pool: frozenset[frozenset[int]], lines: frozenset[int]) -> bool:
    """Some candidate of ``pool`` needs only lines of ``lines``."""
    if len(lines) <= _SUBSETS_UP_TO:
        return any(s in pool for s in subsets(lines))
    return any(c <= lines for c in pool)


def _minimal(pool: Iterable[frozenset[int]]) -> frozenset[frozenset[int]]:
    """The candidates of a pool that include no other candidate's lines."""
    distinct = frozenset(pool)
    return frozenset(c for c in distinct
                     if not any(o != c and o in distinct for o in subsets(c))
                     ) if all(len(c) <= _SUBSETS_UP_TO for c in distinct) else frozenset(
        c for c in distinct if not any(o < c for o in distinct))


def _order(pool: frozenset[frozenset[int]]) -> tuple[tuple[int, ...], ...]:
    return tuple(sorted(tuple(sorted(c)) for c in pool))


def _drop_dominated_networks(pools: list[tuple[int, frozenset[frozenset[int]]]]
                             ) -> list[tuple[int, frozenset[frozenset[int]]]]:
    """Networks covered whenever another network left is covered go."""
    kept: list[tuple[int, frozenset[frozenset[int]]]] = []
    for position, (network, pool) in enumerate(pools):
        def easier_than(other: frozenset[frozenset[int]], pool: frozenset[frozenset[int]] = pool
                        ) -> bool:
            return all(_includes_one(pool, c) for c in other)
        dominated = False
        for other_position, (_, other) in enumerate(pools):
            if other_position == position or not easier_than(other):
                continue
            # the same candidates both ways: the earlier network stays
            if other_position < position or not all(_includes_one(other, c) for c in pool):
                dominated = True
                break
        if not dominated:
            kept.append((network, pool))
    return kept


def _completions(pool: frozenset[frozenset[int]]) -> dict[frozenset[int], set[int]]:
    """For each candidate and each of its lines: the rest of it, mapped to that line."""
    out: dict[frozenset[int], set[int]] = {}
    for candidate in pool:
        for line in candidate:
            out.setdefault(candidate - {line}, set()).add(line)
    return out


def _dominated_line(pools: list[tuple[int, frozenset[frozenset[int]]]],
                    completions: list[dict[frozenset[int], set[int]]], line: int,
                    lines: frozenset[int], buy: frozenset[int]) -> bool:
    """``line`` is dominated by another line in every network (see the module notes)."""
    others = set(lines - {line})
    if line not in buy:  # a line in stock gives way only to another line in stock
        others -= buy
    for (_, pool), completing in zip(pools, completions, strict=True):
        for candidate in pool:
            if line not in candidate:
                continue
            rest = candidate - {line}
            if len(rest) >= _SUBSETS_UP_TO:
                return False
            fits: set[int] = set()
            for subset in subsets(rest):
                fits |= completing.get(subset, set())
            others &= fits
            if not others:
                return False
    return bool(others)


def presolve(lines: Sequence[Sequence[frozenset[int]]], buy: frozenset[int] | None = None,
             deadline: float | None = None) -> Presolved:
    """Reduce the fewest-lines problem exactly and split it into independent components.

    Parameters
    ----------
    lines : sequence of sequences of frozenset of int
        Per network, each candidate's lines (every network has a candidate).
    buy : frozenset of int, optional
        Lines not in stock (without a stock: every line, the default).
    deadline : float, optional
        A ``time.perf_counter()`` instant; past it no further reduction is tried (those
        made so far hold).

    Returns
    -------
    Presolved
        The forced lines and the components left; the fewest lines (and then the fewest
        to buy) of the board are those of the forced lines plus each component's own.

    Examples
    --------
    Line 4 and line 5 dominate each other in the last network: 4 goes, 5 is forced.

    >>> p = presolve([[frozenset({0})], [frozenset({0, 1}), frozenset({2, 6})],
    ...               [frozenset({3, 4}), frozenset({3, 5})], [frozenset({7, 8}),
    ...               frozenset({8, 9}), frozenset({7, 9})]])
    >>> sorted(p.forced), [c.networks for c in p.components]
    ([0, 1, 3, 5], [(3,)])
    """
    everything = frozenset().union(*(c for pool in lines for c in pool))
    buy = everything if buy is None else buy
    forced: set[int] = set()
    pools = [(n, _minimal(pool)) for n, pool in enumerate(lines)]
    def late() -> bool:
        return deadline is not None and time.perf_counter() > deadline

    while True:
        pools = [(n, _minimal(c - forced for c in pool)) for n, pool in pools]
        pools = [(n, pool) for n, pool in pools if frozenset() not in pool]
        single = [next(iter(pool)) for _, pool in pools if len(pool) == 1]
        if single:
            forced.update(*single)
            continue
        if late():
            break
        kept = _drop_dominated_networks(pools)
        changed = len(kept) < len(pools)
        pools = kept
        live = frozenset().union(*(c for _, pool in pools for c in pool))
        completions = [_completions(pool) for _, pool in pools]
        for line in sorted(live):
            if late():
                break
            if _dominated_line(pools, completions, line, live, buy):
                for position, (n, pool) in enumerate(pools):
                    if any(line in c for c in pool):
                        pools[position] = (n, frozenset(c for c in pool if line not in c))
                        completions[position] = _completions(pools[position][1])
                live = live - {line}
                changed = True
        if not changed or late():
            break
    return Presolved(frozenset(forced), _components(pools))


def _components(pools: list[tuple[int, frozenset[frozenset[int]]]]) -> tuple[Component, ...]:
    parent: dict[int, int] = {}

    def root(line: int) -> int:
        while parent.setdefault(line, line) != line:
            parent[line] = parent[parent[line]]
            line = parent[line]
        return line

    for _, pool in pools:
        used = sorted(frozenset().union(*pool))
        for line in used[1:]:
            parent[root(line)] = root(used[0])
    groups: dict[int, list[tuple[int, frozenset[frozenset[int]]]]] = {}
    for network, pool in pools:
        groups.setdefault(root(min(frozenset().union(*pool))), []).append((network, pool))
    out = [Component(tuple(n for n, _ in group),
                     tuple(tuple(frozenset(c) for c in _order(pool)) for _, pool in group))
           for group in groups.values()]
    return tuple(sorted(out, key=lambda c: c.networks))


def disjoint_need(lines: Sequence[Sequence[frozenset[int]]]) -> int:
    """A lower bound on the lines of any cover: networks sharing no candidate line, summed.

    Networks whose candidates share no line with each other's need their lines apart,
    so the sum of their smallest needs bounds every cover from below.  The networks are
    taken greedily, the largest need first (ties: fewer lines over all candidates, then
    board order).

    Examples
    --------
    >>> disjoint_need([[frozenset({0, 1})], [frozenset({1, 2})], [frozenset({3, 4})]])
    4
    """
    order = sorted(range(len(lines)), key=lambda n: (
        -min((len(c) for c in lines[n]), default=0),
        len(frozenset().union(*lines[n])), n))
    taken: set[int] = set()
    total = 0
    for n in order:
        used = frozenset().union(*lines[n])
        if used & taken or not lines[n]:
            continue
        taken |= used
        total += min(len(c) for c in lines[n])
    return total
