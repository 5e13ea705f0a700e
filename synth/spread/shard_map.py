"""Monte Carlo shards on worker processes, when the work pays for starting them.

:func:`process_shards` gives a :data:`synth.spread.monte_carlo.ShardMap` that runs the
first shard in this process, times it, and sends the others to up to ``jobs`` worker
processes (:func:`synth.parallel.ordered_map`) only when the shards left would take at
least :data:`PARALLEL_FROM_S` seconds in this process.  The tallies come back in shard
order, in waves of a bounded number of shards, and the caller merges them in that order
as they come: the figures are the same bits whatever ``jobs`` is, and memory holds at
most one wave of tallies whatever the sample count.
"""

from __future__ import annotations

__all__ = [
    "PARALLEL_FROM_S", "POOL_START_S", "SHARDS_PER_ITEM", "WAVE_ITEMS_PER_JOB", "process_shards",
]

import time
from collections.abc import Callable, Iterable, Iterator
from functools import partial

from synth.parallel import check_jobs, in_worker, ordered_map
from synth.spread.monte_carlo import ShardMap
from synth.spread.tally import SampleTally

PARALLEL_FROM_S = 1.0
"""Seconds of shard work left (timed on the first shard, in this process) from which the
shards go to worker processes.  Measured on a 2-core machine: a pool of 2 workers starts
in about 0.45 s (its fork server importing numpy and the library), after which each shard
costs what it costs here; with 2 workers the work left must then exceed about twice the
start-up, 0.9 s, to come out ahead (a divider: 0.04 s a shard of 2^18 samples, so about
25 shards, 6.5e6 samples).  A pool already started by the search costs nothing more, but
1 s keeps small runs in this process either way."""

POOL_START_S = 1.0
"""Seconds a time-limited Monte Carlo keeps back when it may go to worker processes
(:func:`synth.spread.fit.fitted_run`'s ``reserve_s``): the pool's start-up and the first
pickling of the work, which its in-process pilots do not time.  Measured on a 2-core
machine: 0.45 s idle, 1.6 s with 6 processes wanting its 2 cores (a time limit then
still holds to within a few tenths of a second)."""

SHARDS_PER_ITEM = 4
"""Shards a worker runs per item it is sent: the work (design and evaluator) is pickled
once per item, and a short last item evens out the workers' loads."""

WAVE_ITEMS_PER_JOB = 4
"""Items sent per worker in one wave: a wave's tallies are all that is held at once."""


def _run_shards(function: Callable[[int], SampleTally], shards: tuple[int, ...]
                ) -> list[SampleTally]:
    """The tallies of ``shards``, in their order (one worker's item)."""
    return [function(shard) for shard in shards]


def _waves(function: Callable[[int], SampleTally], shards: list[int], jobs: int,
           fine: bool = False) -> Iterator[SampleTally]:
    per_item = 1 if fine else SHARDS_PER_ITEM
    items = [tuple(shards[k:k + per_item]) for k in range(0, len(shards), per_item)]
    wave = (1 if fine else WAVE_ITEMS_PER_JOB) * jobs
    run = partial(_run_shards, function)
    for first in range(0, len(items), wave):
        for tallies in ordered_map(run, items[first:first + wave], jobs):
            yield from tallies


def process_shards(jobs: int, *, fine: bool = False) -> ShardMap:
    """A shard map over up to ``jobs`` processes (the shards in this one when they are few).

    Parameters
    ----------
    jobs : int
        Most processes; 1 runs every shard here, as ``map`` does.
    fine : bool
        One shard per item and one item per worker in each wave, for a run that may be
        told to stop (a time limit): the next wave is sent only when the caller asks for
        more, so a stop takes effect within about one shard's time, not one coarse wave's.

    Returns
    -------
    ShardMap
        Takes the shard work and the shard numbers; yields the tallies in shard order.

    Examples
    --------
    >>> shard_map = process_shards(2)
    >>> list(shard_map(abs, [-1, -2]))  # little work: run here, in order
    [1, 2]
    """
    jobs = check_jobs(jobs)

    def shard_map(function: Callable[[int], SampleTally], shards: Iterable[int]
                  ) -> Iterator[SampleTally]:
        numbers = list(shards)
        if jobs == 1 or len(numbers) < 2 or in_worker():
            yield from map(function, numbers)
            return
        began = time.perf_counter()
        yield function(numbers[0])
        left = (time.perf_counter() - began) * (len(numbers) - 1)
        if left < PARALLEL_FROM_S:
            yield from map(function, numbers[1:])
            return
        yield from _waves(function, numbers[1:], jobs, fine)

    return shard_map
