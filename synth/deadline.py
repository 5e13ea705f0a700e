"""A wall-clock deadline shared by every stage of one command, and a record of what it cut.

A command given ``--time-limit`` builds one :class:`Deadline` when it starts
and hands it to every stage (search, re-check, spread, the limit-cost
search, the BOM's networks).  Each stage asks how long is left, shortens
its own work to fit, and records a :class:`Cut` saying what it shortened
and by how much, so that the reports can say what the limit cost.

No numeric library is imported here: the command line builds a deadline
before it loads numpy.
"""

from __future__ import annotations

__all__ = ["Cut", "Deadline", "command_start", "process_age_s"]

import math
import os
import time
from collections.abc import Callable
from dataclasses import dataclass


@dataclass(frozen=True)
class Cut:
    """One piece of work the time limit shortened or skipped.

    Attributes
    ----------
    stage : str
        The stage cut: ``"search"``, ``"relaxed search"``, ``"ranking"``, ``"re-check"``,
        ``"spread"``, ``"Monte Carlo"``, ``"limit-cost search"``, ``"front"``
        or ``"network NAME"``.
    note : str
        What was cut and by how much, in words (one clause).
    asked : int or None
        How much of the stage's work was asked for (samples, candidates).
    done : int or None
        How much of it ran.
    """

    stage: str
    note: str
    asked: int | None = None
    done: int | None = None

    def __str__(self) -> str:
        return f"{self.stage}: {self.note}"


class Deadline:
    """A wall-clock limit for a whole command, from ``start``, and the cuts it caused.

    Parameters
    ----------
    limit_s : float, optional
        Seconds the command may take; None is no limit (nothing is ever cut).
    start : float, optional
        The start, on ``clock``'s scale (now by default).
    clock : callable
        Seconds of a monotonic clock (:func:`time.perf_counter` by default).

    Examples
    --------
    >>> d = Deadline(None)
    >>> d.remaining(), d.expired(), d.budget(0.5)
    (inf, False, None)
    >>> d = Deadline(10.0, start=0.0, clock=lambda: 4.0)
    >>> d.elapsed(), d.remaining(), d.budget(0.5)
    (4.0, 6.0, 3.0)
    >>> d.cut("Monte Carlo", "100,000 samples asked, 2,000 run", asked=100_000, done=2_000)
    >>> [str(c) for c in d.cuts]
    ['Monte Carlo: 100,000 samples asked, 2,000 run']
    >>> d.reserve(5.0)
    >>> d.remaining(), d.expired()
    (1.0, False)
    """

    def __init__(self, limit_s: float | None, *, start: float | None = None,
                 clock: Callable[[], float] = time.perf_counter):
        self.limit_s = limit_s
        self.clock = clock
        self.start = clock() if start is None else start
        self._cuts: list[Cut] = []
        self._reserved = 0.0

    @property
    def limited(self) -> bool:
        """True when there is a limit at all."""
        return self.limit_s is not None

    def elapsed(self) -> float:
        """Seconds since the start."""
        return self.clock() - self.start

    def remaining(self) -> float:
        """Seconds left for the work still to come, the time reserved kept aside (0 once
        expired; infinite without a limit)."""
        if self.limit_s is None:
            return math.inf
        return max(self.limit_s - self._reserved - self.elapsed(), 0.0)

    def expired(self) -> bool:
        """True once the limit, less the time reserved, has passed."""
        return self.limit_s is not None and self.elapsed() >= self.limit_s - self._reserved

    def reserve(self, seconds: float) -> None:
        """Keep ``seconds`` more of the limit for the command's last step (showing what was
        found): every stage after this sees that much less time left."""
        self._reserved += max(seconds, 0.0)

    @property
    def reserved_s(self) -> float:
        """Seconds of the limit kept for the command's last step (see :meth:`reserve`)."""
        return self._reserved

    def budget(self, share: float = 1.0) -> float | None:
        """Seconds a stage may take: ``share`` of what is left (None without a limit)."""
        if self.limit_s is None:
            return None
        return self.remaining() * share

    def cut(self, stage: str, note: str, asked: int | None = None,
            done: int | None = None) -> None:
        """Record that ``stage`` was shortened (see :class:`Cut`)."""
        self._cuts.append(Cut(stage, note, asked, done))

    @property
    def cuts(self) -> tuple[Cut, ...]:
        """Every cut recorded, in order."""
        return tuple(self._cuts)


def process_age_s() -> float:
    """Seconds since this process started (0 where the system does not say).

    A command's time limit counts from the moment the user started it, the
    interpreter's start-up and imports included.  Linux gives the start in
    ``/proc/self/stat`` (field 22, clock ticks after boot) beside the time
    since boot in ``/proc/uptime`` (proc(5)).

    Examples
    --------
    >>> 0.0 <= process_age_s() < 3600.0
    True
    """
    try:
        with open("/proc/self/stat", encoding="ascii") as stat:
            fields = stat.read().rsplit(")", 1)[1].split()
        with open("/proc/uptime", encoding="ascii") as uptime:
            since_boot = float(uptime.read().split()[0])
        started = int(fields[19]) / os.sysconf("SC_CLK_TCK")
    except (OSError, ValueError, IndexError):
        return 0.0
    return max(since_boot - started, 0.0)


FRESH_PROCESS_S = 5.0
"""A process younger than this is taken to be the command itself (its start-up counts)."""


def command_start(clock: Callable[[], float] = time.perf_counter) -> float:
    """When the running command started, on ``clock``'s scale: the process's start for a
    process younger than :data:`FRESH_PROCESS_S` (a command run from a shell), else now (a
    command run inside a longer-lived process, such as a test or a notebook)."""
    age = process_age_s()
    return clock() - (age if age < FRESH_PROCESS_S else 0.0)
