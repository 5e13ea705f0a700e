"""Work spread over processes: a deterministic, ordered map on a pool of worker processes.

Every parallel job of rnsynth (the search's slices, Monte Carlo shards, a board's
networks) goes through :func:`ordered_map`: the results come back in the order of the
items, whatever order the workers finish in, so a caller that combines them in that
order gets the same answer with any number of processes.  ``jobs=1`` runs every item
in the calling process and starts nothing.

The workers are started by a fork server (spawn where there is none), never by a bare
fork of a process that may hold threads (CP-SAT's, BLAS's): the work function and its
items must be picklable, and the work function a module-level name.  One pool is kept
for the life of the process and reused by later calls with the same number of
workers; a worker ignores interrupts (the calling process handles them and stops
the workers), runs each item in the caller's current folder with the caller's
warning filters, and never starts a pool itself (a nested map runs in the worker).
"""

from __future__ import annotations

__all__ = ["available_cores", "check_jobs", "in_worker", "ordered_map", "resolve_jobs"]

import multiprocessing
import os
import signal
import warnings
from collections.abc import Callable, Iterable
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from typing import Any, TypeVar

from synth.errors import DesignError

T = TypeVar("T")
R = TypeVar("R")

_PRELOAD = ["synth.synthesis", "synth.search.parallel"]
"""Modules the fork server imports once, so that each worker starts without importing
numpy and the library again."""

_in_worker = False
_pool: ProcessPoolExecutor | None = None
_pool_size = 0


def available_cores() -> int:
    """Cores this process may run on (its CPU affinity; the CPU count where unknown).

    Examples
    --------
    >>> available_cores() >= 1
    True
    """
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):  # no affinity on this platform
        return os.cpu_count() or 1


def check_jobs(jobs: object, name: str = "jobs") -> int:
    """``jobs`` when it is a whole number of processes, 1 or more; else a one-line refusal.

    Parameters
    ----------
    jobs : object
        The number asked for.
    name : str
        How the caller names it in the message (``"--jobs"`` on the command line).

    Raises
    ------
    DesignError
        For 0, a negative number, a bool or anything not an integer.

    Examples
    --------
    >>> check_jobs(2)
    2
    >>> check_jobs(0)
    Traceback (most recent call last):
    ...
    synth.errors.DesignError: jobs 0 must be a whole number of processes, 1 or more (1 runs \
everything in this process)
    """
    if isinstance(jobs, bool) or not isinstance(jobs, int) or jobs < 1:
        raise DesignError(f"{name} {jobs!r} must be a whole number of processes, 1 or more "
                          "(1 runs everything in this process)")
    return jobs


def resolve_jobs(jobs: int | None) -> int:
    """The processes to use: ``jobs`` checked, or every available core when None."""
    return available_cores() if jobs is None else check_jobs(jobs)


def in_worker() -> bool:
    """True inside a worker process of :func:`ordered_map` (where maps run in-process)."""
    return _in_worker


def _start_worker() -> None:
    global _in_worker
    _in_worker = True
    # the calling process handles an interrupt and stops the workers
    signal.signal(signal.SIGINT, signal.SIG_IGN)


def _call(function: Callable[[T], R], item: T, filters: list[Any], folder: str) -> R:
    """Run one item in a worker with the caller's warning filters and current folder (a
    relative path in an item means what it means to the caller)."""
    if os.getcwd() != folder:
        os.chdir(folder)
    with warnings.catch_warnings():
        warnings.filters[:] = filters  # type: ignore[index]  # a list at run time
        return function(item)


def _context() -> Any:
    methods = multiprocessing.get_all_start_methods()
    if "forkserver" in methods:
        context = multiprocessing.get_context("forkserver")
        context.set_forkserver_preload(_PRELOAD)
        return context
    return multiprocessing.get_context("spawn")


def _executor(workers: int) -> ProcessPoolExecutor:
    """The process's pool of ``workers`` workers (started on first use, then reused)."""
    global _pool, _pool_size
    if _pool is not None and _pool_size != workers:
        _pool.shutdown(wait=True)
        _pool = None
    if _pool is None:
        _pool = ProcessPoolExecutor(max_workers=workers, mp_context=_context(),
                                    initializer=_start_worker)
        _pool_size = workers
    return _pool


def _abandon(pool: ProcessPoolExecutor) -> None:
    """Stop a pool whose caller gave up (an interrupt, a failed item): its workers end now."""
    global _pool
    # the executor offers no way to stop running items: end its processes
    for process in list((getattr(pool, "_processes", None) or {}).values()):
        process.terminate()
    pool.shutdown(wait=False, cancel_futures=True)
    if _pool is pool:
        _pool = None


def ordered_map(function: Callable[[T], R], items: Iterable[T], jobs: int = 1, *,
                done: Callable[[int], None] | None = None) -> list[R]:
    """``[function(item) for item in items]``, spread over up to ``jobs`` processes.

    Parameters
    ----------
    function : callable
        A module-level function (picklable), called once per item.
    items : iterable
        Picklable work items.
    jobs : int
        Most processes to use; 1 (or a single item, or a call from inside a worker)
        runs every item in this process, in order.
    done : callable, optional
        Called in this process with an item's position as each item finishes (in the
        order they finish), e.g. to show progress.

    Returns
    -------
    list
        The results in the order of ``items``, whatever order they finished in.

    Raises
    ------
    Exception
        The first failure (in the order of the items) of any item, as raised by
        ``function``; the other items are then cancelled.

    Examples
    --------
    >>> ordered_map(abs, [-2, 3, -1], jobs=1)
    [2, 3, 1]
    """
    jobs = check_jobs(jobs)
    work = list(items)
    if jobs == 1 or len(work) <= 1 or _in_worker:
        results = []
        for position, item in enumerate(work):
            results.append(function(item))
            if done is not None:
                done(position)
        return results
    pool = _executor(min(jobs, len(work)))
    filters = list(warnings.filters)
    try:
        folder = os.getcwd()
        futures = [pool.submit(_call, function, item, filters, folder) for item in work]
        position_of: dict[Future[R], int] = {f: k for k, f in enumerate(futures)}
        pending = set(futures)
        while pending:
            finished, pending = wait(pending, return_when=FIRST_COMPLETED)
            failed = [position_of[f] for f in finished if f.exception() is not None]
            if failed:
                # the earliest failure in the order of the items, as one process raises it
                wait(futures[: min(failed)])
                first = next(f for f in futures if f.done() and f.exception() is not None)
                raise _failure(first)
            if done is not None:
                for position in sorted(position_of[f] for f in finished):
                    done(position)
        return [f.result() for f in futures]
    except BaseException:
        _abandon(pool)
        raise


def _failure(future: Future[Any]) -> BaseException:
    error = future.exception()
    assert error is not None
    return error
