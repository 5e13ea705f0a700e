"""Running independent tasks on a Dask distributed cluster (the optional ``cluster`` extra).

The cluster is Dask's: a scheduler at an address (``tcp://host:port``) and its workers,
each with rnsynth installed.  :func:`run_on_cluster` hands every task to the scheduler
and gathers the results in the order of the tasks; nothing here schedules work itself.
"""

from __future__ import annotations

__all__ = ["CONNECT_SECONDS", "run_on_cluster"]

from collections.abc import Callable, Sequence
from typing import Any, TypeVar

from synth.errors import DesignError

T = TypeVar("T")
R = TypeVar("R")

CONNECT_SECONDS = 10.0
"""How long to wait for a scheduler to answer before refusing its address."""


def _client(cluster: Any) -> tuple[Any, bool]:
    """A Dask client for ``cluster`` (an address or a client), and whether it is ours to close."""
    try:
        from distributed import Client
    except ImportError:
        raise DesignError("--cluster needs Dask distributed, which is not installed; "
                          "install it with pip install 'rnsynth[cluster]'") from None
    if isinstance(cluster, Client):
        return cluster, False
    if not isinstance(cluster, str) or not cluster.strip():
        raise DesignError(f"--cluster {cluster!r}: give a scheduler address such as "
                          "tcp://10.0.0.5:8786")
    try:
        # distributed's Client is untyped
        return Client(cluster.strip(), timeout=CONNECT_SECONDS), True  # type: ignore[no-untyped-call]
    except (OSError, TimeoutError, ValueError) as exc:
        reason = str(exc).splitlines()[0] if str(exc) else type(exc).__name__
        raise DesignError(f"--cluster {cluster}: cannot reach a Dask scheduler there "
                          f"({reason}); check the address and that the scheduler runs"
                          ) from None


def run_on_cluster(cluster: Any, job: Callable[[T], R], tasks: Sequence[T]) -> list[R]:
    """``[job(t) for t in tasks]``, each call run on a worker of the cluster.

    Parameters
    ----------
    cluster : str or distributed.Client
        The scheduler's address, or a connected client (left open).
    job : callable
        A module-level function (workers import it by name).
    tasks : sequence
        Picklable arguments, one call each.

    Returns
    -------
    list
        The results in the order of ``tasks``.

    Raises
    ------
    DesignError
        When Dask distributed is missing or the scheduler cannot be reached.
    """
    client, owned = _client(cluster)
    try:
        # pure=False: equal tasks are run each time, never merged by the scheduler
        futures = client.map(job, list(tasks), pure=False)
        return list(client.gather(futures))
    finally:
        if owned:
            client.close()
