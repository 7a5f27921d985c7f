"""Reliability corpus: hostile inputs never crash, hang or give a wrong kind of answer.

The corpus (tests/_hostile.py, generated from invented data with a fixed seed) covers the four
file kinds of the command line - the duty-cycle CSV, the catalogue TOML, design.json and
schedule.csv - and the web page's upload form.  For each input the promise is:

* the command line ends with exit code 2 and one line on stderr that names the hostile
  file, or with a valid result (0; or 1, a design that does not exist or fails its
  verification, said so on stdout) - never exit 1 with an internal error, never a traceback;
* the web form answers 303 (accepted) or a 4xx with a one-line error - never a 500;
* nothing hangs: each case must end within :data:`HANG_S` (a guard against a hang, not a
  speed test: the cases take well under a second each).

Internal checks of the shell (no outside source); the physics is tested elsewhere.
"""

from __future__ import annotations

import contextlib
import html
import re
import signal

import pytest
from _hostile import cli_cases, web_cases
from _web_server import quick_job, same_origin
from starlette.testclient import TestClient
from stowflow.web import ServerConfig, create_app

#: Longest a case may run before it counts as a hang, [s] (the budget of the simulation stops
#: a stiff plant after a few seconds; this only keeps a regression from hanging the suite).
HANG_S = 120
#: Address of the test client (a loopback host the server answers to).
BASE = "http://127.0.0.1:8000"

CLI_CASES = cli_cases()
WEB_CASES = web_cases()


def _ids(names) -> list[str]:
    return [f"{i:03d}-{n.encode('ascii', 'backslashreplace').decode()[:40]}" for i, n in names]


class Hang(Exception):
    """A case ran past :data:`HANG_S`."""


@contextlib.contextmanager
def deadline(seconds: float):
    """Raise :class:`Hang` in the main thread after ``seconds`` (SIGALRM)."""

    def ring(signum, frame):
        raise Hang(f"still running after {seconds:g} s")

    previous = signal.signal(signal.SIGALRM, ring)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)


def test_corpus_size_and_kinds():
    kinds = {}
    for case in CLI_CASES:
        kinds[case.kind] = kinds.get(case.kind, 0) + 1
    assert len(CLI_CASES) + len(WEB_CASES) >= 300
    assert set(kinds) == {"cycle", "catalogue", "design", "schedule"}
    assert min(kinds.values()) >= 30 and len(WEB_CASES) >= 30


@pytest.mark.parametrize(
    "case", CLI_CASES, ids=_ids((i, f"{c.kind}-{c.name}") for i, c in enumerate(CLI_CASES))
)
def test_command_line_refuses_cleanly_or_answers(case, tmp_path, run_cli):
    argv, name = case.build(tmp_path)
    with deadline(HANG_S):
        code, out, err = run_cli(*argv)
    assert "internal error" not in err and "Traceback" not in err, err
    assert code in (0, 1, 2), (code, err)
    if code == 2:
        lines = err.splitlines()
        assert len(lines) == 1, err
        assert lines[0].startswith("stowflow: error: ") and name in lines[0], lines[0]
    elif code == 1:
        assert err == "", err
        assert re.search(r"status\s+infeasible|FAILED", out), out[-500:]


@pytest.fixture(scope="module")
def web_client():
    """A server whose jobs end at once: the form's checks are under test, not the design."""
    config = ServerConfig(
        workers=1, queue=1000, time_limit=60.0, max_studies=1000, warm_up=False,
        job_target=quick_job,
    )  # fmt: skip
    with TestClient(create_app(config), base_url=BASE, headers=same_origin(BASE)) as c:
        yield c


@pytest.mark.parametrize("case", WEB_CASES, ids=_ids((i, c.name) for i, c in enumerate(WEB_CASES)))
def test_upload_form_refuses_cleanly_or_accepts(case, web_client):
    files = {**case.files, **{k: (None, v) for k, v in case.fields.items()}}
    with deadline(HANG_S):
        r = web_client.post("/studies", files=files, follow_redirects=False)
    assert r.status_code in (303, 400, 413, 415, 422), (r.status_code, r.text[:500])
    assert "Traceback" not in r.text and 'File "' not in r.text
    if r.status_code != 303:
        m = re.search(r'id="error"><strong>[^<]*</strong>(.*?)</div>', r.text, re.S)
        assert m, r.text[:500]
        message = html.unescape(m.group(1)).strip()
        assert message and "\n" not in message, message
        assert "bug in stowflow" not in message, message
