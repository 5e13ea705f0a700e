"""The ordered process-pool map: items in order, the earliest failure, nothing started for
one process, and the refusal of a process count that is not one."""

from __future__ import annotations

import os
import os.path

import pytest

import synth.parallel as parallel
from synth.errors import DesignError


def test_one_process_starts_no_worker(monkeypatch):
    def no_pool(workers):
        raise AssertionError("a pool was started")

    monkeypatch.setattr(parallel, "_executor", no_pool)
    seen = []
    assert parallel.ordered_map(abs, [-3, 1, -2], jobs=1, done=seen.append) == [3, 1, 2]
    assert seen == [0, 1, 2]
    assert parallel.ordered_map(abs, [-5], jobs=4) == [5]  # one item: no worker either


def test_two_workers_give_the_items_back_in_order_and_the_earliest_failure(tmp_path,
                                                                           monkeypatch):
    seen = []
    numbers = [str(k) for k in range(40)]
    assert parallel.ordered_map(int, numbers, jobs=2, done=seen.append) == list(range(40))
    assert sorted(seen) == list(range(40))
    # the failure of the earliest item, as one process meets it, though a later one
    # fails first
    with pytest.raises(ValueError, match="'x'"):
        parallel.ordered_map(eval, ["sum(range(10 ** 7)) and int('x')", "int('y')"], jobs=2)
    # a relative path means to a worker what it means here
    monkeypatch.chdir(tmp_path)
    (tmp_path / "here.txt").write_text("", encoding="utf-8")
    assert parallel.ordered_map(os.path.isfile, ["here.txt", "gone.txt"], jobs=2) == [
        True, False]


@pytest.mark.parametrize("jobs", [0, -1, 2.0, True, None, "3"])
def test_a_process_count_that_is_not_a_whole_number_above_zero_is_refused(jobs):
    with pytest.raises(DesignError, match=r"jobs .* must be a whole number of processes"):
        parallel.ordered_map(abs, [1, 2], jobs=jobs)


def test_all_cores_by_default():
    assert parallel.resolve_jobs(None) == parallel.available_cores() == len(
        os.sched_getaffinity(0))
    assert parallel.resolve_jobs(3) == 3
    assert not parallel.in_worker()
