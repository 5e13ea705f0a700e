"""The command's deadline: time left, expiry, shares of what is left, and the cuts recorded.

A fake clock makes every figure exact; no test here measures real time.
"""

from __future__ import annotations

import math

import synth.deadline as deadline_module
from synth.deadline import Cut, Deadline, command_start, process_age_s


class Clock:
    def __init__(self, now=0.0):
        self.now = now

    def __call__(self):
        return self.now


def test_without_a_limit_nothing_expires_and_no_budget_is_set():
    clock = Clock()
    d = Deadline(None, clock=clock)
    clock.now = 1e9
    assert not d.limited and not d.expired()
    assert d.remaining() == math.inf and d.budget(0.3) is None
    assert d.elapsed() == 1e9


def test_remaining_counts_down_from_the_start_and_stops_at_zero():
    clock = Clock(100.0)
    d = Deadline(5.0, clock=clock)
    assert d.start == 100.0 and d.remaining() == 5.0 and not d.expired()
    clock.now = 103.0
    assert d.elapsed() == 3.0 and d.remaining() == 2.0 and d.budget(0.25) == 0.5
    clock.now = 105.0
    assert d.expired() and d.remaining() == 0.0
    clock.now = 200.0
    assert d.remaining() == 0.0 and d.budget(0.7) == 0.0


def test_a_deadline_started_in_the_past_is_already_expired():
    d = Deadline(1.0, start=-10.0, clock=Clock(0.0))
    assert d.expired() and d.remaining() == 0.0


def test_cuts_are_kept_in_order_with_their_counts():
    d = Deadline(1.0, clock=Clock())
    assert d.cuts == ()
    d.cut("search", "stopped")
    d.cut("Monte Carlo", "100,000 samples asked, 4,000 run", asked=100_000, done=4_000)
    assert d.cuts == (Cut("search", "stopped"),
                      Cut("Monte Carlo", "100,000 samples asked, 4,000 run", 100_000, 4_000))
    assert str(d.cuts[1]) == "Monte Carlo: 100,000 samples asked, 4,000 run"


def test_a_young_process_counts_its_start_up_an_old_one_counts_from_now(monkeypatch):
    clock = Clock(50.0)
    monkeypatch.setattr(deadline_module, "process_age_s", lambda: 1.5)
    assert command_start(clock) == 48.5
    monkeypatch.setattr(deadline_module, "process_age_s", lambda: 600.0)
    assert command_start(clock) == 50.0


def test_the_process_age_is_a_plain_number_of_seconds():
    age = process_age_s()
    assert math.isfinite(age) and age >= 0.0


def test_time_reserved_for_the_last_step_is_kept_from_every_later_stage():
    clock = Clock(0.0)
    d = Deadline(10.0, clock=clock)
    d.reserve(3.0)
    d.reserve(-1.0)  # nothing is given back
    clock.now = 4.0
    assert d.reserved_s == 3.0 and d.remaining() == 3.0 and d.budget(0.5) == 1.5
    clock.now = 7.0
    assert d.expired() and d.remaining() == 0.0
