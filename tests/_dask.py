"""A real Dask cluster for the tests: ``dask scheduler`` and workers as separate processes on
127.0.0.1, on free ports, always stopped (also when a test fails)."""

from __future__ import annotations

import contextlib
import os
import socket
import subprocess
import sys
from collections.abc import Iterator
from pathlib import Path

#: Seconds to wait for the scheduler and the workers to come up.
START_TIMEOUT = 90.0
#: Options of the scheduler and of each worker (no dashboard; one single-threaded process).
QUIET = ("--no-dashboard", "--no-show")
ONE_THREAD = ("--nthreads", "1", "--nworkers", "1", "--no-dashboard")


def free_port() -> int:
    """A TCP port on 127.0.0.1 that nothing listens on now."""
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


def _stop(procs: list[subprocess.Popen]) -> None:
    for p in reversed(procs):
        if p.poll() is None:
            p.terminate()
    for p in reversed(procs):
        try:
            p.wait(timeout=20)
        except subprocess.TimeoutExpired:
            p.kill()
            p.wait(timeout=10)


@contextlib.contextmanager
def dask_processes(workers: int = 2, cwd: Path | None = None) -> Iterator[str]:
    """Start ``dask scheduler`` and ``workers`` × ``dask worker`` (one thread each); yield the
    scheduler's address; stop them all on the way out."""
    from distributed import Client

    dask = Path(sys.executable).with_name("dask")
    port = free_port()
    address = f"tcp://127.0.0.1:{port}"
    env = {**os.environ, "DASK_DISTRIBUTED__LOGGING__DISTRIBUTED": "error"}
    quiet = {"stdout": subprocess.DEVNULL, "stderr": subprocess.DEVNULL, "env": env, "cwd": cwd}
    procs: list[subprocess.Popen] = []
    try:
        procs.append(
            subprocess.Popen(
                [str(dask), "scheduler", "--host", "127.0.0.1", "--port", str(port), *QUIET],
                **quiet,
            )
        )
        for _ in range(workers):
            procs.append(
                subprocess.Popen(
                    [str(dask), "worker", address, "--host", "127.0.0.1", *ONE_THREAD],
                    **quiet,
                )
            )
        with Client(address, timeout=START_TIMEOUT, set_as_default=False) as client:
            client.wait_for_workers(workers, timeout=START_TIMEOUT)
        yield address
    finally:
        _stop(procs)
