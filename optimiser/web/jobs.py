"""The studies of one server: a bounded queue, a bounded pool of worker processes, a time limit.

Each design job runs in its **own process**, forked from a fork server that has already
imported and warmed the pipeline (``multiprocessing`` start method ``forkserver``, preload
:mod:`stowflow.web._preload`).  A process per job is what makes the hard time limit real: a
job still running after ``time_limit`` seconds is killed (SIGKILL), its folder removed, and
the study says so.  It also gives every job's memory back to the system when it ends.

Progress travels through one one-way pipe per job (``multiprocessing.Pipe``), not one queue
shared by all jobs: a job killed in the middle of a write can only spoil its own pipe.  The
server side is a single asyncio task, :meth:`JobManager.watch`, that every ``POLL_INTERVAL``
drains the pipes, ends jobs past their limit, notices dead ones and starts queued jobs on free
workers.  Everything that changes the job table runs on the event loop, so it needs no lock.

At most ``workers`` jobs run and at most ``queue`` wait; :meth:`JobManager.submit` raises
:class:`QueueFull` beyond that (the page answers 503 with Retry-After).  The table keeps the
last ``max_studies`` studies; older finished ones are deleted with their files.  On shutdown
every job is killed and the temporary folder removed.
"""

from __future__ import annotations

import asyncio
import contextlib
import math
import multiprocessing
import secrets
import shutil
import statistics
import sys
import tempfile
import time
import traceback
from collections import OrderedDict, deque
from collections.abc import Callable
from dataclasses import dataclass, field
from multiprocessing.connection import Connection
from pathlib import Path

import anyio
from stowflow.pipeline import Study
from stowflow.web._worker import run_job

__all__ = ["POLL_INTERVAL", "Job", "JobManager", "QueueFull"]

#: How often the watcher looks at the jobs, [s].
POLL_INTERVAL = 0.1
#: Job states that no longer change.
FINAL_STATES = ("done", "failed", "stopped")


class QueueFull(Exception):
    """Every worker is busy and the queue is full.

    Attributes
    ----------
    retry_after : int
        Suggested wait before trying again, [s].
    """

    def __init__(self, retry_after: int) -> None:
        super().__init__(f"all workers busy and the queue full; try again in {retry_after} s")
        self.retry_after = retry_after


@dataclass
class Job:
    """One study on this server.

    Attributes
    ----------
    id : str
        Server-made identifier (16 hexadecimal digits); the only name its folder ever has.
    name : str
        Study name (from the cycle).
    source : str
        What was uploaded (file name as text, for display).
    submitted : float
        Submission time, [s since the epoch].
    state : str
        ``queued``, ``running``, ``done``, ``failed`` (a refused input or a bug) or
        ``stopped`` (killed at the time limit, or at shutdown).
    fraction : float
        Progress of the pipeline, [-].
    label : str
        Current stage.
    message : str
        One-line reason of ``failed`` or ``stopped``.
    units : str
        Unit system of the report and its files ("metric", "us").
    summary : dict or None
        Status, reason, MIP gap [-], verification verdict and run time [s] of a ``done`` job.
    started, finished : float or None
        Monotonic clock at start and end, [s].
    """

    id: str
    name: str
    source: str
    submitted: float = field(default_factory=time.time)
    state: str = "queued"
    fraction: float = 0.0
    label: str = "waiting for a free worker"
    message: str = ""
    summary: dict | None = None
    started: float | None = None
    finished: float | None = None
    study: Study | None = field(default=None, repr=False)
    units: str = "metric"
    process: multiprocessing.process.BaseProcess | None = field(default=None, repr=False)
    conn: object | None = field(default=None, repr=False)

    @property
    def final(self) -> bool:
        """Whether the job has ended."""
        return self.state in FINAL_STATES

    @property
    def elapsed(self) -> float:
        """Run time so far, or in total once ended, [s]."""
        if self.started is None:
            return 0.0
        return (self.finished or time.monotonic()) - self.started


class JobManager:
    """Queue, workers and table of studies.

    Parameters
    ----------
    workers : int
        Most jobs running at once, [-].
    queue : int
        Most jobs waiting, [-].
    time_limit : float
        Wall-clock limit of one job, [s].
    max_studies : int
        Most studies kept (older finished ones are deleted), [-].
    warm_up : bool
        Whether the fork server also fills the real-gas property caches (else it only imports
        the pipeline).  The fork server is one per process: the first manager's choice holds.
    target : callable, optional
        What a worker process runs, called as ``target(conn, study, out_dir)`` (default
        :func:`~stowflow.web._worker.run_job`).  It must be importable by name, as the fork
        server unpickles it; the tests pass one that is slow on purpose, so that the time
        limit is tested without depending on how fast this machine designs.
    """

    def __init__(
        self,
        *,
        workers: int,
        queue: int,
        time_limit: float,
        max_studies: int,
        warm_up: bool = True,
        target: Callable[[Connection, Study | None, str], None] | None = None,
    ) -> None:
        self.workers, self.queue_size = workers, queue
        self.target = target or run_job
        self.time_limit, self.max_studies = time_limit, max_studies
        self.jobs: OrderedDict[str, Job] = OrderedDict()
        self.pending: deque[str] = deque()
        self.root: Path | None = None
        self._ctx = multiprocessing.get_context("forkserver")
        self._ctx.set_forkserver_preload(
            ["stowflow.web._preload" if warm_up else "stowflow.web._worker"]
        )
        self._durations: deque[float] = deque(maxlen=20)
        self._task: asyncio.Task | None = None
        self._warming: asyncio.Task | None = None
        self._ended: list[multiprocessing.process.BaseProcess] = []
        # Process starts under way in a thread; stop() lets them finish before it kills.
        self._starting: set[asyncio.Future] = set()

    # -- lifecycle ------------------------------------------------------------------------
    async def start(self) -> None:
        """Make the temporary folder, start the fork server (in the background) and watch."""
        self.root = Path(tempfile.mkdtemp(prefix="stowflow-serve-"))
        self._task = asyncio.create_task(self.watch())
        # The fork server imports and warms the pipeline (a few seconds): start it now, in a
        # thread, so the first upload does not wait for it.
        self._warming = asyncio.create_task(anyio.to_thread.run_sync(self._start_forkserver))

    def _start_forkserver(self) -> None:
        from multiprocessing import forkserver

        forkserver.ensure_running()

    async def stop(self) -> None:
        """Kill every job, forget the queue and remove the temporary folder."""
        if self._task is not None:
            self._task.cancel()
            with contextlib.suppress(asyncio.CancelledError):
                await self._task
        if self._warming is not None:
            with contextlib.suppress(Exception):
                await self._warming
        if self._starting:  # a start cut short by the shutdown: let it end, then kill it
            await asyncio.wait(set(self._starting), timeout=30.0)
        self.pending.clear()
        for job in self.jobs.values():
            if job.state == "running":
                self._kill(job, "stopped: the server shut down while this design ran")
            elif job.state == "queued":
                self._end(job, "stopped", "stopped: the server shut down before this design ran")
        for proc in self._ended:
            if proc.pid is None:  # never started: nothing to join
                continue
            proc.join(timeout=5.0)
            if proc.is_alive():
                proc.kill()
                proc.join(timeout=5.0)
        self._reap()
        if self.root is not None:
            shutil.rmtree(self.root, ignore_errors=True)

    # -- requests -------------------------------------------------------------------------
    @property
    def running(self) -> int:
        """Jobs running now, [-]."""
        return sum(1 for j in self.jobs.values() if j.state == "running")

    def full(self) -> bool:
        """Whether a new job would be refused: every worker and every queue place taken.

        A job waiting while a worker is free (until the watcher's next look) takes a worker's
        place, so a burst of uploads never gets more than ``workers + queue`` accepted.
        """
        return len(self.pending) + self.running >= self.workers + self.queue_size

    def retry_after(self) -> int:
        """Estimated wait until a place frees up, [s] (at least 1)."""
        typical = statistics.median(self._durations) if self._durations else 5.0
        waiting = len(self.pending) / max(self.workers, 1)
        return max(1, math.ceil(typical * (1.0 + waiting) / max(self.workers, 1)))

    def submit(self, study: Study, *, name: str, source: str, units: str = "metric") -> Job:
        """Queue a study (its report in ``units``); raise :class:`QueueFull` when there is no
        room."""
        if self.full():
            raise QueueFull(self.retry_after())
        job = Job(id=secrets.token_hex(8), name=name, source=source, study=study, units=units)
        self.jobs[job.id] = job
        self.pending.append(job.id)
        self._evict()
        return job

    def get(self, job_id: str) -> Job | None:
        """The job with this id, or None."""
        return self.jobs.get(job_id)

    def folder(self, job: Job) -> Path:
        """The job's folder (server-made name)."""
        assert self.root is not None
        return self.root / job.id

    def queue_position(self, job: Job) -> int | None:
        """1 for the next job to start; None when not queued."""
        try:
            return self.pending.index(job.id) + 1
        except ValueError:
            return None

    # -- the watcher ----------------------------------------------------------------------
    async def watch(self) -> None:
        """Drain progress, enforce the time limit, start queued jobs; forever."""
        while True:
            try:
                await self._step()
            except Exception:  # a bug here must not stop every later job: log it, go on
                traceback.print_exc(file=sys.stderr)
            await asyncio.sleep(POLL_INTERVAL)

    async def _step(self) -> None:
        for job in list(self.jobs.values()):
            if job.state == "running":
                self._poll(job)
        self._reap()
        while self.pending and self.running < self.workers:
            job = self.jobs.get(self.pending.popleft())
            if job is not None and job.state == "queued":
                await self._launch(job)

    async def _launch(self, job: Job) -> None:
        reader, writer = self._ctx.Pipe(duplex=False)
        out = self.folder(job)
        out.mkdir()
        # the unit system travels only when it is not the default, so a target that knows
        # nothing of units (a test's stand-in) still runs
        extra = {} if job.units == "metric" else {"kwargs": {"units": job.units}}
        proc = self._ctx.Process(
            target=self.target,
            args=(writer, job.study, str(out)),
            name=f"stowflow-job-{job.id}",
            **extra,
        )
        job.state, job.label = "running", "starting a worker"
        job.process, job.conn, job.study = proc, reader, None
        # The first start waits for the fork server's warm-up; the clock starts after it.  The
        # start runs on in its thread when the server shuts down meanwhile (stop() waits for
        # it), and our end of the pipe is closed only once the worker holds its own.
        start = asyncio.get_running_loop().run_in_executor(None, proc.start)
        self._starting.add(start)
        start.add_done_callback(self._starting.discard)
        start.add_done_callback(lambda _: writer.close())
        try:
            await asyncio.shield(start)
            job.started = time.monotonic()
        except Exception as exc:  # the machine refused a process (or a bad __main__)
            job.process = None  # never started: nothing to join
            first = str(exc).strip().splitlines()[0] if str(exc).strip() else ""
            self._end(
                job, "failed", f"could not start a worker process ({type(exc).__name__}: {first})"
            )
            traceback.print_exc(file=sys.stderr)

    def _poll(self, job: Job) -> None:
        conn, proc = job.conn, job.process
        assert conn is not None and proc is not None
        try:
            while not job.final and conn.poll():
                self._message(job, conn.recv())
        except (EOFError, OSError):
            pass  # the worker has closed its end; its exit code tells the rest
        if job.final:
            return
        if not proc.is_alive():
            self._end(
                job,
                "failed",
                f"the worker process ended without a result (exit code {proc.exitcode}); the "
                "machine may have run out of memory",
            )
        elif job.elapsed > self.time_limit:
            self._kill(
                job,
                f"stopped: the design ran longer than this server's limit of "
                f"{self.time_limit:g} s per design and was ended, without a result; try a "
                "shorter time limit of one schedule solve, a coarser time step, fewer "
                "accumulator types, or start the server with a longer --time-limit",
            )

    def _message(self, job: Job, msg: tuple) -> None:
        kind = msg[0]
        if kind == "progress":
            job.fraction, job.label = float(msg[1]), str(msg[2])
        elif kind == "done":
            job.summary = dict(msg[1])
            job.fraction, job.label = 1.0, "done"
            self._end(job, "done", "")
            self._durations.append(job.elapsed)
        elif kind == "error":
            self._end(job, "failed", str(msg[1]))
        else:
            self._end(
                job,
                "failed",
                f"internal error ({msg[1]}); this is a bug - the server's log has the details",
            )

    def _kill(self, job: Job, message: str) -> None:
        proc = job.process
        if proc is not None and proc.is_alive():
            proc.kill()
            proc.join(timeout=5.0)
        self._end(job, "stopped", message)
        shutil.rmtree(self.folder(job), ignore_errors=True)

    def _end(self, job: Job, state: str, message: str) -> None:
        job.state, job.message = state, message
        if job.started is not None and job.finished is None:
            job.finished = time.monotonic()
        if job.conn is not None:
            with contextlib.suppress(OSError):
                job.conn.close()
        job.conn, job.study = None, None
        if state != "done" and self.root is not None:
            shutil.rmtree(self.folder(job), ignore_errors=True)
        if job.process is not None:
            self._ended.append(job.process)  # joined by _reap once it has exited
            job.process = None
        self._reap()

    def _reap(self) -> None:
        """Join and release the processes of ended jobs that have exited (never blocks)."""
        alive = []
        for proc in self._ended:
            if proc.pid is None:  # never started (its start failed): nothing to join
                continue
            if proc.is_alive():
                alive.append(proc)
            else:
                proc.join(timeout=0)
                proc.close()
        self._ended = alive

    def _evict(self) -> None:
        """Delete the oldest finished studies beyond ``max_studies``."""
        excess = len(self.jobs) - self.max_studies
        for job_id in [j.id for j in self.jobs.values() if j.final][: max(excess, 0)]:
            job = self.jobs.pop(job_id)
            if self.root is not None:
                shutil.rmtree(self.folder(job), ignore_errors=True)
