"""Shared helpers of the web tests and the web benchmark: the real ``stowflow serve``, uploads.

* :func:`start_serve` / :func:`stop_serve`: ``python -m stowflow serve`` on a free loopback
  port in a subprocess, optionally with a private ``TMPDIR``; stopped with Ctrl+C (SIGINT).
* :func:`upload` / :func:`wait_final`: post a cycle through the form and follow the study;
  they take any ``httpx.Client`` (Starlette's ``TestClient`` is one).  A post carries the
  client's own address as its ``Origin`` (:func:`same_origin`), as the page's form does in a
  browser; the server refuses posts without it (cross-site request forgery).
* :func:`upload_burst`: many uploads at the same moment from threads; :func:`load_run`: a
  server, a burst, the accepted designs to their end, memory watched (test and benchmark).
* :func:`slow_job`: a worker job that is slow on purpose, for the time-limit tests;
  :func:`quick_job`: one that ends at once, for tests of what the form accepts.
* :class:`MemoryWatch`: the resident memory of a process and all its descendants (the fork
  server and the job processes), sampled from ``/proc`` (Linux).

The cycle here is invented; nothing here checks the physics.
"""

from __future__ import annotations

import contextlib
import os
import signal
import socket
import subprocess
import sys
import tempfile
import threading
import time
from dataclasses import dataclass
from pathlib import Path

import httpx

__all__ = [
    "FAST",
    "TINY",
    "Answer",
    "LoadRun",
    "MemoryWatch",
    "Served",
    "free_port",
    "load_run",
    "percentile",
    "quick_job",
    "same_origin",
    "slow_job",
    "start_serve",
    "stop_serve",
    "upload",
    "upload_burst",
    "wait_final",
]

#: Seconds for the server to answer its first connection, [s].
START_S = 30.0
#: Seconds for the server to stop after Ctrl+C, [s].
STOP_S = 30.0
#: Settings that keep the test designs small: ideal gas, bladder accumulators only.
FAST = {"d_gas": "ideal", "d_types": "bladder"}
#: Invented three-phase cycle: press, hold, return.
TINY = (
    "duration [s], flow [L/min], pressure [bar], label\n"
    "2, 60, 150, press\n"
    "3, 0, 120, hold\n"
    "5, 0, 20, return\n"
)
#: How long :func:`slow_job` waits before it gives up by itself, [s]: far past any time limit
#: a test sets, and still bounded, so a server that failed to end it does not hang the suite.
SLOW_JOB_S = 120.0

#: Job states that still change (the rest are final, as in :mod:`stowflow.web.jobs`).
_RUNNING = ("queued", "running")


def slow_job(conn, study, out_dir: str) -> None:
    """A worker job that is slow on purpose: one progress message, then it waits.

    The server's time limit must end it.  A test of the limit that ran a real design instead
    would depend on this machine's speed: a fast machine finishes the design inside the limit.
    The fork server finds this function by name, so it lives in an importable module.
    """
    conn.send(("progress", 0.01, "waiting on purpose (test)"))
    time.sleep(SLOW_JOB_S)
    conn.send(("error", f"slow_job was not ended within {SLOW_JOB_S:g} s"))


def quick_job(conn, study, out_dir: str) -> None:
    """A worker job that ends at once without a design (the form's checks are under test)."""
    with contextlib.suppress(OSError):  # the server may have shut down meanwhile
        conn.send(("done", {"status": "not run (test)", "reason": None, "verified": None}))
        conn.close()


def free_port() -> int:
    """A TCP port free on the loopback address now."""
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@dataclass
class Served:
    """A running ``stowflow serve``.

    Attributes
    ----------
    proc : subprocess.Popen
        The server process.
    port : int
        Its loopback TCP port.
    url : str
        Its address, ``http://127.0.0.1:<port>``.
    tmpdir : pathlib.Path or None
        Its private ``TMPDIR`` (None: the caller's).
    log : typing.IO
        Its stdout and stderr together (a file, so a chatty server never blocks on a pipe).
    """

    proc: subprocess.Popen
    port: int
    url: str
    tmpdir: Path | None
    log: object

    def output(self) -> str:
        """What the server has printed so far."""
        self.log.seek(0)
        return self.log.read().decode("utf-8", "replace")


def start_serve(*options: str, tmpdir: Path | None = None, start_s: float = START_S) -> Served:
    """Start ``python -m stowflow serve --port <free> OPTIONS`` and wait for it to listen.

    Parameters
    ----------
    *options : str
        More options of ``stowflow serve`` (``--workers``, ``--queue``, ...).
    tmpdir : pathlib.Path, optional
        Private temporary folder of the server (its ``TMPDIR``).
    start_s : float
        Longest wait for the first connection, [s].

    Raises
    ------
    RuntimeError
        The server ended or did not listen in time (the message holds its output).
    """
    port = free_port()
    env = dict(os.environ)
    if tmpdir is not None:
        env["TMPDIR"] = str(tmpdir)
    log = tempfile.TemporaryFile()
    cmd = [sys.executable, "-m", "stowflow", "serve", "--port", str(port), *options]
    proc = subprocess.Popen(cmd, stdout=log, stderr=subprocess.STDOUT, env=env)
    served = Served(proc, port, f"http://127.0.0.1:{port}", tmpdir, log)
    deadline = time.monotonic() + start_s
    while True:
        try:
            with socket.create_connection(("127.0.0.1", port), timeout=0.5):
                return served
        except OSError:
            if proc.poll() is not None or time.monotonic() > deadline:
                proc.kill()
                proc.wait()
                raise RuntimeError(f"stowflow serve did not start:\n{served.output()}") from None
            time.sleep(0.1)


def stop_serve(served: Served, stop_s: float = STOP_S) -> str:
    """Stop the server with Ctrl+C (SIGINT); return all it printed.

    Raises
    ------
    RuntimeError
        It was still running ``stop_s`` seconds later (it is then killed).
    """
    served.proc.send_signal(signal.SIGINT)
    try:
        served.proc.wait(timeout=stop_s)
    except subprocess.TimeoutExpired:
        served.proc.kill()
        served.proc.wait()
        raise RuntimeError(f"stowflow serve did not stop on Ctrl+C:\n{served.output()}") from None
    try:
        return served.output()
    finally:
        served.log.close()


def same_origin(client_or_url: httpx.Client | str) -> dict[str, str]:
    """The ``Origin`` header a browser sends with the page's own form: the server's address."""
    url = client_or_url if isinstance(client_or_url, str) else str(client_or_url.base_url)
    return {"origin": url.rstrip("/")}


def upload(
    client: httpx.Client, data: bytes | str, name: str = "cycle.csv", **fields: str
) -> httpx.Response:
    """Post a cycle file through the form, with :data:`FAST` and ``fields``; no redirects."""
    files = {"cycle": (name, data, "text/csv")}
    files.update({k: (None, v) for k, v in {**FAST, **fields}.items()})
    return client.post("/studies", files=files, headers=same_origin(client), follow_redirects=False)


def wait_final(client: httpx.Client, location: str, timeout: float) -> dict:
    """Poll ``<location>/status`` until the study has ended; return its last status.

    Raises
    ------
    AssertionError
        Still queued or running after ``timeout`` seconds.
    """
    deadline = time.monotonic() + timeout
    while True:
        status = client.get(f"{location}/status").json()
        if status["state"] not in _RUNNING:
            return status
        if time.monotonic() > deadline:
            raise AssertionError(f"{location} still running after {timeout} s: {status}")
        time.sleep(0.1)


@dataclass(frozen=True)
class Answer:
    """One request of a burst: status code (0: no answer), Retry-After, Location, latency."""

    status: int
    retry_after: str | None
    location: str | None
    seconds: float
    error: str = ""


def upload_burst(
    url: str, n: int, data: bytes | str | None, *, timeout: float = 60.0, **fields: str
) -> list[Answer]:
    """``n`` threads post the same upload at the same moment (one connection each).

    Parameters
    ----------
    url : str
        The server.
    n : int
        Simultaneous uploads, [-].
    data : bytes or str or None
        The cycle file (None: no file, e.g. with ``use_demo="1"``).
    timeout : float
        Per request, [s].
    **fields : str
        Form fields, on top of :data:`FAST` when a file is sent.

    Returns
    -------
    list of Answer
        In completion order; a connection error is ``status 0`` with its text.
    """
    answers: list[Answer] = []
    lock = threading.Lock()
    start = threading.Barrier(n)

    def client() -> None:
        with httpx.Client(base_url=url, timeout=timeout, headers=same_origin(url)) as c:
            start.wait()
            t0 = time.perf_counter()
            try:
                if data is None:
                    form = {k: (None, v) for k, v in fields.items()}
                    r = c.post("/studies", files=form, follow_redirects=False)
                else:
                    r = upload(c, data, "burst.csv", **fields)
            except httpx.HTTPError as exc:
                a = Answer(0, None, None, time.perf_counter() - t0, f"{type(exc).__name__}: {exc}")
            else:
                h = r.headers
                a = Answer(
                    r.status_code, h.get("retry-after"), h.get("location"), time.perf_counter() - t0
                )
        with lock:
            answers.append(a)

    threads = [threading.Thread(target=client) for _ in range(n)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    return answers


def percentile(values: list[float], q: float) -> float:
    """The ``q`` quantile (0..1) of ``values``, nearest rank."""
    values = sorted(values)
    return values[min(len(values) - 1, round(q * (len(values) - 1)))]


def _status_kib(pid: int) -> dict[str, int]:
    """VmRSS and VmHWM of a process, [KiB] (empty once it has ended)."""
    out = {}
    try:
        with open(f"/proc/{pid}/status", encoding="ascii", errors="replace") as f:
            for line in f:
                if line.startswith(("VmRSS:", "VmHWM:")):
                    key, value = line.split(":", 1)
                    out[key] = int(value.split()[0])
    except OSError:
        pass
    return out


def _tree(root: int) -> list[int]:
    """``root`` and all its living descendants (from the parent ids in /proc/*/stat)."""
    parent: dict[int, int] = {}
    for entry in os.scandir("/proc"):
        if not entry.name.isdigit():
            continue
        try:
            with open(f"/proc/{entry.name}/stat", encoding="ascii", errors="replace") as f:
                # "pid (comm) state ppid ...": comm may hold spaces and parentheses.
                parent[int(entry.name)] = int(f.read().rsplit(")", 1)[1].split()[1])
        except (OSError, IndexError, ValueError):
            continue
    tree, todo = [], [root]
    while todo:
        pid = todo.pop()
        tree.append(pid)
        todo += [child for child, p in parent.items() if p == pid]
    return tree


class MemoryWatch(threading.Thread):
    """Sample the resident memory of a process tree until :meth:`stop`.

    Attributes
    ----------
    peak_total_mib : float
        Highest sum of VmRSS over the tree at one sample, [MiB].
    peak_process_mib : float
        Highest VmHWM (peak resident set) of any one process of the tree, [MiB]; the kernel
        keeps it, so a short-lived peak between samples still counts.
    processes : int
        Processes seen in the tree, [-].
    """

    def __init__(self, pid: int, interval: float = 0.05) -> None:
        super().__init__(daemon=True)
        self.pid, self.interval = pid, interval
        self.peak_total_mib = self.peak_process_mib = 0.0
        self._seen: set[int] = set()
        self._halt = threading.Event()

    @property
    def processes(self) -> int:
        return len(self._seen)

    def sample(self) -> None:
        """One look at the tree."""
        total = 0
        for pid in _tree(self.pid):
            kib = _status_kib(pid)
            if kib:
                self._seen.add(pid)
                total += kib.get("VmRSS", 0)
                self.peak_process_mib = max(self.peak_process_mib, kib.get("VmHWM", 0) / 1024)
        self.peak_total_mib = max(self.peak_total_mib, total / 1024)

    def run(self) -> None:
        while not self._halt.is_set():
            self.sample()
            self._halt.wait(self.interval)

    def stop(self) -> None:
        """Take a last sample and end the thread."""
        self._halt.set()
        self.join()
        self.sample()


@dataclass(frozen=True)
class LoadRun:
    """What :func:`load_run` saw.

    Attributes
    ----------
    answers : list of Answer
        One per upload of the burst.
    finals : list of dict
        Last status of every accepted study, once it had ended.
    form_status : int
        Status of ``GET /`` after the burst and the designs.
    peak_total_mib, peak_process_mib : float
        See :class:`MemoryWatch`, [MiB].
    processes : int
        Processes seen in the server's tree, [-].
    output : str
        All the server printed, to its end.
    left : list of str
        What was left in the server's TMPDIR after it stopped.
    """

    answers: list[Answer]
    finals: list[dict]
    form_status: int
    peak_total_mib: float
    peak_process_mib: float
    processes: int
    output: str
    left: list[str]

    @property
    def accepted(self) -> list[Answer]:
        return [a for a in self.answers if a.status == 303]

    @property
    def refused(self) -> list[Answer]:
        return [a for a in self.answers if a.status == 503]


def load_run(
    tmpdir: Path, clients: int, *, workers: int, queue: int, finish_s: float, **fields: str
) -> LoadRun:
    """Start a server, fire ``clients`` uploads of :data:`TINY` at once, let the accepted finish.

    The server runs with ``--workers``, ``--queue`` and ``--time-limit 60s`` and ``tmpdir`` as
    its TMPDIR, watched by a :class:`MemoryWatch`; it is stopped with Ctrl+C at the end, also
    when a step fails.  ``fields`` go with every upload.
    """
    served = start_serve(
        *("--workers", str(workers), "--queue", str(queue), "--time-limit", "60s"), tmpdir=tmpdir
    )
    watch = MemoryWatch(served.proc.pid)
    watch.start()
    try:
        answers = upload_burst(served.url, clients, TINY, **fields)
        with httpx.Client(base_url=served.url, timeout=30) as client:
            locations = [a.location for a in answers if a.status == 303 and a.location]
            finals = [wait_final(client, loc, finish_s) for loc in locations]
            form_status = client.get("/").status_code
    finally:
        watch.stop()
        output = stop_serve(served)
    return LoadRun(
        answers=answers,
        finals=finals,
        form_status=form_status,
        peak_total_mib=watch.peak_total_mib,
        peak_process_mib=watch.peak_process_mib,
        processes=watch.processes,
        output=output,
        left=sorted(p.name for p in tmpdir.iterdir()),
    )
