"""The Dask client the studies run on: a local cluster by default, or a given scheduler.

A local cluster has one single-threaded worker process per core (the design search and the
verification hold the GIL, so threads would not run in parallel), listens on the loopback
only, has no dashboard and quiet logs.  ``scheduler="tcp://HOST:PORT"`` connects to a
running ``dask scheduler`` instead; its workers must have the same stowflow installed.
"""

from __future__ import annotations

import contextlib
import logging
import os
from collections.abc import Iterator

from stowflow.errors import SettingsError

__all__ = ["CONNECT_TIMEOUT", "local_workers", "open_client"]

#: How long to wait for a given scheduler to answer, [s].
CONNECT_TIMEOUT = 20.0


def local_workers(tasks: int | None = None) -> int:
    """Workers of a local cluster: one per core the process may use, at most one per task.

    Parameters
    ----------
    tasks : int, optional
        Number of tasks to run, [-] (None: no cap).

    Returns
    -------
    int
        Worker processes, [-] (at least 1).
    """
    try:
        cores = len(os.sched_getaffinity(0))
    except AttributeError:  # pragma: no cover - not Linux
        cores = os.cpu_count() or 1
    if tasks is not None:
        cores = min(cores, max(int(tasks), 1))
    return max(cores, 1)


@contextlib.contextmanager
def open_client(
    scheduler: str | None = None, *, workers: int | None = None, tasks: int | None = None
) -> Iterator:
    """A Dask client for the duration of a ``with`` block.

    Parameters
    ----------
    scheduler : str, optional
        Address of a running scheduler (``tcp://HOST:PORT``); None starts a local cluster.
    workers : int, optional
        Worker processes of the local cluster, [-] (default :func:`local_workers`).
    tasks : int, optional
        Number of tasks, [-]: a local cluster starts no more workers than that.

    Yields
    ------
    distributed.Client

    Raises
    ------
    SettingsError
        The scheduler address is not ``tcp://HOST:PORT`` or does not answer.
    """
    from distributed import Client, LocalCluster

    if scheduler is not None:
        if not scheduler.startswith(("tcp://", "tls://")) or ":" not in scheduler[6:]:
            raise SettingsError(
                f"--scheduler: {scheduler!r}; expected a scheduler address tcp://HOST:PORT"
            )
        try:
            client = Client(scheduler, timeout=CONNECT_TIMEOUT, set_as_default=False)
        except (OSError, TimeoutError) as exc:
            raise SettingsError(
                f"--scheduler {scheduler}: no Dask scheduler answered within "
                f"{CONNECT_TIMEOUT:g} s ({type(exc).__name__})"
            ) from None
        with client:
            yield client
        return
    n = workers if workers is not None else local_workers(tasks)
    if n < 1:
        raise SettingsError(f"--workers: {n}; expected a whole number ≥ 1")
    cluster = LocalCluster(
        n_workers=n,
        threads_per_worker=1,
        processes=True,
        host="127.0.0.1",
        dashboard_address=None,
        # The scheduler serves a few HTTP routes even without its dashboard, on 8787 unless
        # told otherwise: a free port on the loopback, so that a busy 8787 is never tried.
        scheduler_kwargs={"dashboard": False, "dashboard_address": "127.0.0.1:0"},
        silence_logs=logging.ERROR,
    )
    with cluster, Client(cluster, set_as_default=False) as client:
        yield client
