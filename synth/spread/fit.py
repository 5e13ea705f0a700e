"""A Monte Carlo shrunk to fit a time: pilot runs time a sample, then the samples that fit run.

:func:`fitted_run` serves every time-limited Monte Carlo (``rnsynth design`` and
``rnsynth check`` with ``--time-limit``): a run of any sample count, up to
``synth.cli.options.MAX_SAMPLES``, ends within its time whatever was asked, and says
how many samples it ran.
"""

from __future__ import annotations

__all__ = ["PILOT_SAMPLES", "PROBE_SHARE", "fitted_run"]

import math
import time
from collections.abc import Callable
from typing import TypeVar

R = TypeVar("R")

PILOT_SAMPLES = 1000
"""Samples of the first pilot run, which measures a sample's cost (an overestimate: the
pilot's whole time over its samples, the analysis's fixed cost, its worst case, included)."""

PROBE_SHARE = 0.25
"""Most of the time left that a further pilot may take, by the last pilot's estimate.  The
first pilot's fixed cost makes its estimate of a sample many times too high when many
samples fit (a small network: 25 ms for 1,000 samples, then 0.3 µs a sample); further
pilots, each of at least ten times as many samples, measure it again with the fixed cost
spread thinner, so the run fills most of its time instead of a small part of it."""


def fitted_run(run: Callable[[int, bool], R], asked: int, seconds: float,
               clock: Callable[[], float] = time.perf_counter, *,
               reserve_s: float = 0.0) -> tuple[R, int]:
    """``run(asked, True)``, or ``run`` with the most samples that fit ``seconds``.

    Parameters
    ----------
    run : callable
        ``run(samples, final)`` analyses with ``samples`` Monte Carlo samples; ``final``
        is False for a pilot run (which should run in this process, so that it times one
        process) and True for the run whose result is kept as the whole run.
    asked : int
        Samples asked for.
    seconds : float
        Time the whole call may take, s (``inf``: no limit; 0 or less: no samples).
    clock : callable
        Seconds of a monotonic clock.
    reserve_s : float
        Seconds kept back from a shortened final run, which the pilots do not time:
        starting worker processes for it (:data:`synth.spread.shard_map.POOL_START_S`).

    Returns
    -------
    result
        The result kept: the last run's.
    samples : int
        Its sample count: ``asked``, or fewer when they would not have fitted.

    Notes
    -----
    A pilot of :data:`PILOT_SAMPLES` samples gives a first cost per sample.  While at
    least ten times as many samples as the last pilot ran fit in :data:`PROBE_SHARE` of
    the time left by that cost, a pilot of that many samples measures it again (its
    whole time over its samples: still an overestimate, by the fixed cost shared over
    more samples).  Every pilot but the last took at most a tenth of that share, as its
    estimate was ten times too high.  The samples that fit in the time left by the last
    estimate then run, at most ``asked``; when no more fit than a pilot ran, that
    pilot's result is kept.  A pilot that reaches ``asked`` is the run itself.  Every
    estimate is high, so the run ends within ``seconds`` unless the machine slows down
    meanwhile.

    Examples
    --------
    A run that takes 0.2 s to start and 10 µs a sample, by a clock it moves on, asked
    for 1e9 samples in 60 s: pilots of 1,000, 71,178 and 1,149,080 samples, then
    4,638,016 samples, 59.4 s in all:

    >>> now = [0.0]
    >>> def run(samples, final):
    ...     now[0] += 0.2 + 1e-5 * samples
    ...     return f"{samples:,} samples"
    >>> fitted_run(run, 10 ** 9, 60.0, clock=lambda: now[0])
    ('4,638,016 samples', 4638016)
    >>> round(now[0], 1)
    59.4
    >>> fitted_run(run, 500, 60.0, clock=lambda: now[0])  # few samples: no pilot
    ('500 samples', 500)
    """
    if asked <= PILOT_SAMPLES or math.isinf(seconds):
        return run(asked, True), asked
    if seconds <= 0:
        return run(0, True), 0
    began = clock()
    kept, ran = run(PILOT_SAMPLES, False), PILOT_SAMPLES
    per_sample = max(clock() - began, 1e-9) / PILOT_SAMPLES
    while True:
        probe = int(PROBE_SHARE * max(seconds - (clock() - began), 0.0) / per_sample)
        if probe >= asked:
            return run(asked, True), asked
        if probe < 10 * ran:
            break
        probe_began = clock()
        kept, ran = run(probe, False), probe
        per_sample = max(clock() - probe_began, 1e-9) / probe
    fit = int(max(seconds - (clock() - began), 0.0) / per_sample)
    if fit < asked:
        fit = int(max(seconds - reserve_s - (clock() - began), 0.0) / per_sample)
    if fit >= asked:
        return run(asked, True), asked
    if fit <= ran:
        return kept, ran
    return run(fit, True), fit
