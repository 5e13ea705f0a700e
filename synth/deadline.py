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

__all__ = ["Cut", "Deadline"]

import math
import time
from collections.abc import Callable
from dataclasses import dataclass


@dataclass(frozen=True)
class Cut:
    """One piece of work the time limit shortened or skipped.

    Attributes
    ----------
    stage : str
        The stage cut: ``"search"``, ``"relaxed search"``, ``"re-check"``,
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
    """

    def __init__(self, limit_s: float | None, *, start: float | None = None,
                 clock: Callable[[], float] = time.perf_counter):
        self.limit_s = limit_s
        self.clock = clock
        self.start = clock() if start is None else start
        self._cuts: list[Cut] = []

    @property
    def limited(self) -> bool:
        """True when there is a limit at all."""
        return self.limit_s is not None

    def elapsed(self) -> float:
        """Seconds since the start."""
        return self.clock() - self.start

    def remaining(self) -> float:
        """Seconds left (0 once expired; infinite without a limit)."""
        if self.limit_s is None:
            return math.inf
        return max(self.limit_s - self.elapsed(), 0.0)

    def expired(self) -> bool:
        """True once the limit has passed."""
        return self.limit_s is not None and self.elapsed() >= self.limit_s

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
