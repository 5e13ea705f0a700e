"""Monte Carlo shards on worker processes (synth.spread.shard_map): the same figures as one
process, little work kept in this process, tallies given back in shard order in waves."""

from __future__ import annotations

import pytest

import synth.spread.shard_map as shard_map
from synth.spread.analyse import analyse_spread
from synth.spread.monte_carlo import SHARD_SIZE
from tests.spread.test_monte_carlo import _divider, _figures


def _worker_calls(monkeypatch):
    """Counts the items sent to worker processes (and still runs them)."""
    sent = []
    real = shard_map.ordered_map

    def counting(function, items, jobs=1, **kwargs):
        items = list(items)
        sent.append((len(items), jobs))
        return real(function, items, jobs, **kwargs)

    monkeypatch.setattr(shard_map, "ordered_map", counting)
    return sent


def test_shards_on_two_processes_give_the_figures_of_one(monkeypatch):
    # 3 shards (the last one short), the two after the first sent to the workers in one
    # wave, one shard per item: merged in shard order, the figures are the same bits
    monkeypatch.setattr(shard_map, "PARALLEL_FROM_S", 0.0)
    monkeypatch.setattr(shard_map, "SHARDS_PER_ITEM", 1)
    monkeypatch.setattr(shard_map, "WAVE_ITEMS_PER_JOB", 1)
    sent = _worker_calls(monkeypatch)
    design, settings = _divider(2 * SHARD_SIZE + 777, keep_samples=True,
                                kept_samples=SHARD_SIZE + 5)
    one = analyse_spread(design, settings=settings)
    two = analyse_spread(design, settings=settings, map_shards=shard_map.process_shards(2))
    assert sent == [(2, 2)]
    assert two.shards == 3 and _figures(two) == _figures(one)
    sent.clear()
    alone = analyse_spread(design, settings=settings, map_shards=shard_map.process_shards(1))
    assert sent == [] and _figures(alone) == _figures(one)


def test_waves_keep_the_shard_order(monkeypatch):
    monkeypatch.setattr(shard_map, "PARALLEL_FROM_S", 0.0)
    monkeypatch.setattr(shard_map, "SHARDS_PER_ITEM", 2)
    monkeypatch.setattr(shard_map, "WAVE_ITEMS_PER_JOB", 1)
    sent = _worker_calls(monkeypatch)
    run = shard_map.process_shards(2)
    assert list(run(abs, [0, -1, -2, -3, -4, -5, -6])) == [0, 1, 2, 3, 4, 5, 6]
    # shards 1..6 in items of 2, waves of 1 item per worker: 2 waves of 2 items, then 1
    assert sent == [(2, 2), (1, 2)]


def test_little_work_stays_in_this_process(monkeypatch):
    sent = _worker_calls(monkeypatch)
    design, settings = _divider(2 * SHARD_SIZE)
    one = analyse_spread(design, settings=settings)
    two = analyse_spread(design, settings=settings, map_shards=shard_map.process_shards(2))
    # one shard left, a few hundredths of a second: below PARALLEL_FROM_S
    assert sent == [] and _figures(two) == _figures(one)


def test_one_process_or_one_shard_starts_nothing(monkeypatch):
    monkeypatch.setattr(shard_map, "PARALLEL_FROM_S", 0.0)
    sent = _worker_calls(monkeypatch)
    assert list(shard_map.process_shards(1)(abs, [-1, -2, -3])) == [1, 2, 3]
    assert list(shard_map.process_shards(4)(abs, [-7])) == [7]
    assert sent == []


@pytest.mark.parametrize("jobs", [0, -1, True, 1.5])
def test_a_bad_process_count_is_refused(jobs):
    with pytest.raises(ValueError, match="must be a whole number of processes"):
        shard_map.process_shards(jobs)


def test_a_fine_map_sends_one_shard_per_worker_and_wave(monkeypatch):
    # a run that may be told to stop sends its shards one per item, one item per worker
    # in a wave, so that a stop between waves holds back every shard not yet sent
    monkeypatch.setattr(shard_map, "PARALLEL_FROM_S", 0.0)
    waves = []
    real = shard_map.ordered_map

    def spying(function, items, jobs=1, **kwargs):
        items = list(items)
        waves.append(items)
        return real(function, items, jobs, **kwargs)

    monkeypatch.setattr(shard_map, "ordered_map", spying)
    tallies = shard_map.process_shards(2, fine=True)(abs, [0, -1, -2, -3, -4, -5, -6])
    assert [next(tallies) for _ in range(3)] == [0, 1, 2]
    assert waves == [[(-1,), (-2,)]]  # the first wave only, one shard an item
    tallies.close()
    assert waves == [[(-1,), (-2,)]]
    coarse = list(shard_map.process_shards(2)(abs, [0, -1, -2, -3, -4, -5, -6]))
    assert coarse == [0, 1, 2, 3, 4, 5, 6]
    assert waves[1] == [(-1, -2, -3, -4), (-5, -6)]
