"""The Monte Carlo shrunk to fit a time: pilots time a sample on a fake clock, and the run
after them takes the samples that fit, never more than asked (no test reads the wall clock)."""

from __future__ import annotations

import itertools
import math

import pytest

from synth.spread.fit import PILOT_SAMPLES, fitted_run


class Work:
    """A run costing ``fixed_s`` plus ``per_sample_s`` a sample on its own clock."""

    def __init__(self, fixed_s, per_sample_s):
        self.now = 0.0
        self.fixed_s, self.per_sample_s = fixed_s, per_sample_s
        self.runs = []

    def clock(self):
        return self.now

    def __call__(self, samples, final):
        self.now += self.fixed_s + self.per_sample_s * samples
        self.runs.append((samples, final))
        return f"{samples} run"


@pytest.mark.parametrize(("fixed_s", "per_sample_s", "seconds"), [
    (0.02, 3e-7, 5.0), (0.2, 1e-5, 60.0), (0.0, 1e-3, 10.0), (1.0, 1e-6, 3.0)])
def test_a_shortened_run_ends_within_its_time_and_keeps_its_last_result(fixed_s, per_sample_s,
                                                                         seconds):
    work = Work(fixed_s, per_sample_s)
    result, samples = fitted_run(work, 10 ** 10, seconds, work.clock)
    assert work.now <= seconds  # the limit holds on the run's own clock
    assert result == f"{samples} run" and work.runs[-1][0] == samples
    assert PILOT_SAMPLES <= samples < 10 ** 10
    # only the last run may spread over processes; the pilots time this one
    assert [final for _, final in work.runs[:-1]] == [False] * (len(work.runs) - 1)
    # pilots grow tenfold at least, and the run fills most of its time when its fixed cost
    # is small beside it
    sizes = [n for n, _ in work.runs]
    assert sizes[0] == PILOT_SAMPLES and all(
        b >= 10 * a for a, b in itertools.pairwise(sizes[:-1]))
    if fixed_s * 10 < seconds:
        assert work.now >= 0.6 * seconds


def test_a_run_that_fits_runs_whole_and_few_samples_take_no_pilot():
    work = Work(0.01, 1e-6)
    assert fitted_run(work, 50_000, 10.0, work.clock) == ("50000 run", 50_000)
    assert work.runs == [(PILOT_SAMPLES, False), (50_000, True)]
    work = Work(0.01, 1e-6)
    assert fitted_run(work, PILOT_SAMPLES, 1e-9, work.clock) == (f"{PILOT_SAMPLES} run",
                                                                 PILOT_SAMPLES)
    assert fitted_run(work, 10 ** 9, math.inf, work.clock)[1] == 10 ** 9  # no limit


def test_no_time_runs_no_sample_and_too_little_keeps_the_pilot():
    work = Work(0.01, 1e-6)
    assert fitted_run(work, 10 ** 6, 0.0, work.clock) == ("0 run", 0)
    work = Work(1.0, 1e-6)  # the pilot alone takes the time
    assert fitted_run(work, 10 ** 6, 1.0, work.clock) == (f"{PILOT_SAMPLES} run",
                                                          PILOT_SAMPLES)
    assert len(work.runs) == 1


def test_the_reserve_is_kept_back_from_a_shortened_run_only():
    cut, reserved = Work(0.0, 1e-3), Work(0.0, 1e-3)
    _, samples = fitted_run(cut, 10 ** 6, 10.0, cut.clock)
    _, fewer = fitted_run(reserved, 10 ** 6, 10.0, reserved.clock, reserve_s=2.0)
    assert (samples, fewer) == (9_000, 7_000)  # 1 s of pilot, then 9 s or 9 - 2 s
    whole = Work(0.0, 1e-3)
    assert fitted_run(whole, 5_000, 10.0, whole.clock, reserve_s=2.0)[1] == 5_000
