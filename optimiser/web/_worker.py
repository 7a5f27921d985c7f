"""What runs inside a job's worker process: the pipeline, the report files, progress messages.

The server's fork server imports :mod:`stowflow.web._preload` once before it forks any job
(see :mod:`stowflow.web.jobs`): that loads this module with the pipeline and the report and
calls :func:`warm_up` to fill the nitrogen property caches, so each job starts warm in a
fraction of a second.  A job talks to the server through one pipe with small tuples:

* ``("progress", fraction [-], label)`` while the pipeline runs (at most every 0.2 s, and at
  every change of stage);
* then one of ``("done", summary)``, ``("error", message)`` for a
  :class:`~stowflow.errors.StowflowError` (one line, as the CLI prints it) or
  ``("crash", message)`` for a bug (the traceback goes to the server's stderr).
"""

from __future__ import annotations

import math
import sys
import time
import traceback
from multiprocessing.connection import Connection

from stowflow.errors import StowflowError
from stowflow.io.numbers import using
from stowflow.physics.gas import density
from stowflow.pipeline import Study, run
from stowflow.report import write_study
from stowflow.report.content import glance, recommendation

__all__ = ["PROGRESS_INTERVAL", "run_job", "warm_up"]

#: Least time between two progress messages of the same stage, [s].
PROGRESS_INTERVAL = 0.2


def warm_up() -> None:
    """Fill the real-gas property caches once (about 2 s), before any job is forked."""
    density(2.0e7, 293.15, "real", method="direct")


def _finite(x) -> float | None:
    """A float for JSON: None for a missing, infinite or NaN value."""
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


def run_job(conn: Connection, study: Study, out_dir: str, units: str = "metric") -> None:
    """Run one study and write its report and exports to ``out_dir``; report on ``conn``.

    Parameters
    ----------
    conn : multiprocessing.connection.Connection
        Write end of the job's pipe.
    study : Study
        The study, cycle and catalogue already parsed.
    out_dir : str
        The study's folder (server-made, inside the server's temporary folder).
    units : str
        Unit system of the report, its files and the figures sent back ("metric", "us").
    """
    with using(units):
        _run_job(conn, study, out_dir)


def _run_job(conn: Connection, study: Study, out_dir: str) -> None:
    """The body of :func:`run_job`, in the unit system in force."""
    last = {"t": -math.inf, "label": None}

    def progress(fraction: float, label: str) -> None:
        now = time.monotonic()
        if label != last["label"] or now - last["t"] >= PROGRESS_INTERVAL:
            last["t"], last["label"] = now, label
            conn.send(("progress", float(fraction), str(label)))

    try:
        t0 = time.perf_counter()
        result = run(study, progress=progress)
        progress(1.0, "writing the report")
        write_study(result, out_dir)
        d, v = result.design, result.verification
        conn.send(
            (
                "done",
                {
                    "status": d.status,
                    "reason": d.reason,
                    "mip_gap": _finite(d.mip_gap),
                    "verified": None if v is None else bool(v.passed),
                    "seconds": _finite(time.perf_counter() - t0),
                    # the report's own words and figures, shown above the embedded report
                    "recommendation": recommendation(result),
                    "figures": [[label, text] for label, text in glance(result)],
                },
            )
        )
    except StowflowError as exc:
        conn.send(("error", str(exc)))
    except Exception as exc:
        traceback.print_exc(file=sys.stderr)
        conn.send(("crash", f"{type(exc).__name__}: {exc}"))
    finally:
        conn.close()
