"""``stowflow serve``: the local web page, driven through Starlette's test client.

The designs here run for real, in the server's worker processes, on a three-phase cycle
(invented, like all demo data) with the ideal-gas model and one accumulator type, so each takes
a few seconds.  These tests check the shell: what the page accepts and refuses, that a refusal
is one line without a traceback, that a finished study hands back the four files, the queue,
the time limit and the loopback rule.  The physics is tested elsewhere.
"""

from __future__ import annotations

import asyncio
import csv
import html
import io
import json
import re
import time
from dataclasses import replace
from pathlib import Path

import pytest
from _web_server import FAST, TINY, same_origin, slow_job, upload, wait_final
from markupsafe import escape
from starlette.testclient import TestClient
from stowflow.catalogue import default_catalogue_path
from stowflow.cli.serve import config_from_args
from stowflow.errors import SettingsError
from stowflow.report import OUTPUTS
from stowflow.web import ServerConfig, create_app, is_loopback
from stowflow.web.app import hosts_for
from stowflow.web.forms import FormLimits, study_name
from stowflow.web.jobs import Job, JobManager, QueueFull
from stowflow.web.upload import UploadError, read_form

#: The test client's address: a loopback host, so the server's host check lets it in.
BASE = "http://127.0.0.1:8000"
#: Seconds a small design may take on a busy two-core machine before the test gives up.
DESIGN_WAIT_S = 90.0
#: The same cycle with hostile labels: spreadsheet formulas and markup.
HOSTILE = (
    "duration [s], flow [L/min], pressure [bar], label\n"
    '2, 60, 150, "=HYPERLINK(""http://example.invalid"",""x"")"\n'
    "3, 0, 120, @SUM(A1:A9)\n"
    "5, 0, 20, <script>alert(1)</script>\n"
)
#: Cells a spreadsheet would run as a formula.
FORMULA_START = ("=", "+", "-", "@")


def _error(page: str) -> str:
    """The one-line error a form page shows, unescaped."""
    m = re.search(r'id="error"><strong>[^<]*</strong>(.*?)</div>', page, re.S)
    assert m, "the page shows no error box"
    return html.unescape(m.group(1)).strip()


def _assert_one_line_error(response, status: int, pattern: str) -> None:
    assert response.status_code == status, response.text[:500]
    message = _error(response.text)
    assert "\n" not in message
    assert re.search(pattern, message), message
    assert "Traceback" not in response.text and 'File "' not in response.text


@pytest.fixture(scope="module")
def demo_cycle(tmp_path_factory) -> Path:
    path = tmp_path_factory.mktemp("web") / "tiny_press.csv"
    path.write_text(TINY, encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def client(demo_cycle):
    """One server for the module: one worker, two waiting, a small row limit."""
    app = create_app(
        ServerConfig(
            workers=1,
            queue=2,
            time_limit=60.0,
            max_rows=200,
            demo_cycle=demo_cycle,
            warm_up=False,  # ideal gas only: no real-gas caches to fill
        )
    )
    with TestClient(app, base_url=BASE, headers=same_origin(BASE)) as c:
        yield c


# -- the pages -----------------------------------------------------------------------------
def test_form_page_has_the_main_settings_and_the_demo_button(client):
    r = client.get("/")
    assert r.status_code == 200
    page = r.text
    for label in (
        "Operating temperature range",
        "Machine cycles per hour",
        "Cycle time (start to start)",
        "Operating hours per year",
        "Energy price",
        "Nitrogen model",
        "Gas process",
        "Component catalogue (TOML, optional)",
        "Try the demo cycle",
    ):
        assert label in page, label
    assert 'enctype="multipart/form-data"' in page
    assert "5 MB" in page and "200 data rows" in page
    assert "Safety cautions" in page


def test_pages_carry_security_headers(client):
    r = client.get("/")
    csp = r.headers["content-security-policy"]
    assert "default-src 'none'" in csp and "frame-ancestors 'none'" in csp
    assert r.headers["x-content-type-options"] == "nosniff"
    assert r.headers["x-frame-options"] == "DENY"
    assert r.headers["cache-control"] == "no-store"


def test_unknown_study_is_a_page_not_a_trace(client):
    for path in ("/studies/0123456789abcdef", "/studies/../../etc/passwd", "/studies/x/status"):
        r = client.get(path)
        assert r.status_code == 404
        assert "Traceback" not in r.text


def test_other_host_header_is_refused(client):
    # A loopback server answers loopback names only (DNS rebinding).
    assert client.get("/", headers={"host": "attacker.example"}).status_code == 400


def _post_demo(client, headers):
    """The demo button's post with exactly these Origin/Referer headers (others removed)."""
    request = client.build_request("POST", "/studies", files={"use_demo": (None, "1")})
    for name in ("origin", "referer"):
        request.headers.pop(name, None)
    request.headers.update(headers)
    return client.send(request, follow_redirects=False)


@pytest.mark.parametrize(
    ("headers", "pattern"),
    [
        ({"origin": "http://attacker.example"}, r"form posted from another site"),
        ({"origin": "null"}, r"form posted from an opaque origin \(Origin: null\)"),
        ({}, r"form posted without Origin or Referer header"),
        ({"referer": "http://attacker.example/page"}, r"form posted from another site"),
        ({"origin": "http://127.0.0.1:8001"}, r"form posted from another site"),  # port
        ({"origin": "https://127.0.0.1:8000"}, r"form posted from another site"),  # scheme
    ],
)
def test_cross_site_posts_are_refused(client, headers, pattern):
    # Cross-site request forgery: a page elsewhere, or a sandboxed frame (Origin: null), must
    # not queue designs on this server and fill its queue for the real user.
    before = len(client.app.state.manager.jobs)
    r = _post_demo(client, headers)
    assert r.status_code == 403
    assert re.search(pattern, r.text)
    assert "Traceback" not in r.text
    assert len(client.app.state.manager.jobs) == before


def test_same_origin_referer_alone_is_accepted(client):
    # A browser that sends no Origin but a Referer of this page (older browsers) may post.
    r = _post_demo(client, {"referer": f"{BASE}/"})
    assert r.status_code in (303, 503), r.text[:300]
    if r.status_code == 303:
        wait_final(client, r.headers["location"], DESIGN_WAIT_S)


def test_pages_ask_the_browser_to_send_their_origin(client):
    # The page's own form must carry its origin: "no-referrer" would make it "null".
    assert client.get("/").headers["referrer-policy"] == "same-origin"


# -- a design end to end ---------------------------------------------------------------------
def test_demo_button_runs_a_study_with_all_four_downloads(client):
    r = client.post(
        "/studies", files={"use_demo": (None, "1"), **{k: (None, v) for k, v in FAST.items()}},
        follow_redirects=False,
    )  # fmt: skip
    assert r.status_code == 303
    location = r.headers["location"]
    assert re.fullmatch(r"/studies/[0-9a-f]{16}", location)
    page = client.get(location).text  # the progress view, or already the result
    assert "tiny_press.csv (demo)" in page
    status = wait_final(client, location, DESIGN_WAIT_S)
    assert status["state"] == "done", status
    assert status["summary"]["status"] in ("optimal", "feasible")
    assert status["fraction"] == 1.0
    assert set(status) >= {"state", "fraction", "label", "elapsed_s", "queue_position"}
    json.dumps(status, allow_nan=False)

    page = client.get(location).text
    assert 'id="verdict"' in page and 'id="report"' in page
    # the report's recommendation and key figures, above the embedded report
    summary = status["summary"]
    assert summary["recommendation"] and summary["figures"]
    assert str(escape(summary["recommendation"])) in page
    assert page.index('id="recommendation"') < page.index('id="report"')
    for label, text in summary["figures"]:
        assert f"<dt>{escape(label)}</dt><dd>{escape(text)}</dd>" in page
    for name in OUTPUTS:
        assert f"{location}/files/{name}" in page
        r = client.get(f"{location}/files/{name}")
        assert r.status_code == 200, name
        assert f'filename="demo-{name}"' in r.headers["content-disposition"]
        assert r.content, name
    design = client.get(f"{location}/files/design.json").json()
    assert design["schema"] == "stowflow.design/1"
    assert design["status"] == status["summary"]["status"]
    assert design["gas_model"] == "ideal"
    assert design["accumulator"]["type"] == "bladder"
    lines = client.get(f"{location}/files/schedule.csv").text.splitlines()
    header = next(line for line in lines if not line.startswith("#"))
    assert header.startswith("time [s],demand [L/min],pump_loaded")

    # The report for the page's frame: sandboxed, may fetch nothing.
    r = client.get(f"{location}/report")
    assert r.status_code == 200 and r.headers["content-type"].startswith("text/html")
    assert "sandbox allow-scripts" in r.headers["content-security-policy"]
    assert "<html" in r.text[:500].lower()
    assert r.content == client.get(f"{location}/files/report.html").content

    listing = client.get("/studies").text
    assert location in listing and "demo" in listing
    assert client.get(f"{location}/files/secrets.txt").status_code == 404


def test_hostile_names_and_formula_cells_stay_inert(client):
    r = upload(client, HOSTILE, name="../../etc/<img src=x onerror=alert(1)>=1+2.csv")
    assert r.status_code == 303, _error(r.text)
    location = r.headers["location"]
    page = client.get(location).text
    assert "<img src=x" not in page and "&lt;img src=x onerror=alert(1)&gt;=1+2.csv" in page
    assert "../" not in re.search(r"<code>(.*?)</code>", page).group(1)
    status = wait_final(client, location, DESIGN_WAIT_S)
    assert status["state"] == "done", status

    manager = client.app.state.manager
    job = manager.get(location.rsplit("/", 1)[1])
    assert job.name == study_name("<img src=x onerror=alert(1)>=1+2.csv")
    # The server names every folder and file itself: nothing else is written.
    folder = manager.folder(job)
    assert folder.parent == manager.root and folder.name == job.id
    assert sorted(p.name for p in folder.iterdir()) == sorted(OUTPUTS)

    for name in ("spec.csv", "schedule.csv"):
        text = client.get(f"{location}/files/{name}").text
        comments = [line for line in text.splitlines() if line.startswith("#")]
        # schedule.csv's comment lines: no cell of theirs may start a formula either.
        cells_c = [c for line in csv.reader(comments) for c in line]
        assert not [c for c in cells_c if c.startswith(FORMULA_START)], name
        text = "\n".join(line for line in text.splitlines() if not line.startswith("#"))
        rows = list(csv.DictReader(io.StringIO(text)))
        assert rows, name
        cells = [v for row in rows for k, v in row.items() if k in ("label", "item", "notes")]
        cells += [v for row in rows for v in row.values() if v and not _is_number(v)]
        assert not [c for c in cells if c.startswith(FORMULA_START)], name
    labels = [row["label"] for row in csv.DictReader(io.StringIO(text))]
    assert "'=HYPERLINK" in "".join(labels) and "'@SUM(A1:A9)" in labels


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


# -- refused input: one line, no traceback ---------------------------------------------------
@pytest.mark.parametrize(
    ("name", "data", "status", "pattern"),
    [
        ("empty.csv", b"", 422, r"^empty\.csv: empty file; expected a CSV"),
        ("noise.csv", bytes(range(256)) * 8, 422, r"binary file, found a NUL byte"),
        ("plot.png", b"\x89PNG\r\n\x1a\n" + bytes(64), 422, r"^plot\.png, line \d+: binary file"),
        ("cycle.json", b'{"flow": [1, 2]}', 422, r"^cycle\.json, line 1"),
        ("cycle.csv", "duration [s], flow\n1, 2\n".encode("utf-16"), 422, r"UTF-16"),
        ("cycle.csv", b"duration [s], flow [L/min]\n1, -5\n", 422, r"line 2.*flow"),
        ("cycle.csv", b"duration [s], flow [L/min]\n1, =1+2\n", 422, r"not a number.*'=1\+2'"),
        (
            "code.csv",
            b"__import__('os').system('touch /tmp/stowflow-pwned')\n",
            422,
            r"header has one column",
        ),
        (
            "passwd",
            b"root:x:0:0:root:/root:/bin/bash\ndaemon:x:1:1::/usr/sbin:/usr/sbin/nologin\n",
            422,
            r"^passwd, line 1: header has one column",
        ),
    ],
    ids=["empty", "binary", "png", "json", "utf16", "negative", "formula", "code", "passwd"],
)
def test_bad_cycle_files_get_one_line(client, name, data, status, pattern):
    _assert_one_line_error(upload(client, data, name=name), status, pattern)
    assert not Path("/tmp/stowflow-pwned").exists()


def test_path_in_file_name_is_only_text(client):
    r = upload(client, b"", name="../../../../etc/passwd")
    _assert_one_line_error(r, 422, r"^passwd: empty file")
    r = upload(client, b"", name="C:\\Windows\\win.ini")
    _assert_one_line_error(r, 422, r"^win\.ini: empty file")


def test_too_many_rows(client):
    rows = "".join(f"0.1, {i % 50}, 100\n" for i in range(201))
    r = upload(client, "duration [s], flow [L/min], pressure [bar]\n" + rows)
    _assert_one_line_error(r, 422, r"too many rows.*at most 200 data rows")


def test_too_many_lines_stops_while_streaming(client):
    r = upload(client, "duration [s], flow [L/min]\n" + "\n" * 5000)
    _assert_one_line_error(r, 413, r"too many lines.*at most 200 data rows")


def test_upload_over_5_mb_is_refused(client):
    r = upload(client, b"duration [s], flow [L/min]\n" + b"1, 1\n" * 1_100_000)
    _assert_one_line_error(r, 413, r"^upload too large: more than 5 MB")


@pytest.mark.parametrize(
    ("fields", "message"),
    [
        (
            {"d_temperature": "50..10"},
            "--temperature: '50..10' runs from hot to cold; expected the colder end first, "
            "10..50 (°C)",
        ),
        (
            {"c_energy_price": "cheap"},
            "--energy-price: 'cheap' is not a price per energy unit; expected a price ≥ 0 per "
            "energy unit, e.g. 0.25/kWh or 0.11 EUR/kWh",
        ),
        (
            {"c_cycles_per_hour": "120", "c_cycle_time": "40s"},
            "--cycles-per-hour '120' and --cycle-time '40s' both given; expected one of them",
        ),
        ({"d_gas": "air"}, "--gas: 'air' is not a choice here; expected ideal or real"),
        (
            {"d_time_limit": "1h"},
            "--time-limit: '1h' is longer than this server's limit of 60 s per design (stowflow "
            "serve --time-limit); expected a time limit of one schedule solve ≤ 60 s, e.g. 6s",
        ),
        (
            {"d_min_loaded_dwell": "-1s"},
            "--min-loaded-dwell: '-1s' is below 0 s; expected a time ≥ 0 s with its unit, e.g. 1s",
        ),
        (
            {"min_pressure": "120"},
            "--min-pressure: '120' has no unit; expected a pressure ≥ 0 bar with its unit, "
            "e.g. 100bar",
        ),
        (
            {"step": "٥s"},
            "--step: '٥s' has a digit other than 0-9 ('٥', U+0665); expected a time > 0 s with "
            "its unit, e.g. 1s",
        ),
    ],
    ids=["temperature", "price", "both-rates", "gas", "time-limit", "dwell", "unit", "digits"],
)
def test_bad_settings_get_one_line_and_keep_the_values(client, fields, message):
    r = upload(client, TINY, **fields)
    _assert_one_line_error(r, 422, f"^{re.escape(message)}$")
    for value in fields.values():
        assert html.escape(value) in r.text  # typed values survive the refusal


def test_bad_catalogue_gets_one_line(client):
    files = {
        "cycle": ("cycle.csv", TINY, "text/csv"),
        "catalogue": ("parts.toml", b"[[pump]]\nspeed_rpm = 'fast'\n"),
    }
    r = client.post("/studies", files=files, follow_redirects=False)
    _assert_one_line_error(r, 422, r"^parts\.toml, line \d+, \[\[pump\]\]")
    files["catalogue"] = ("parts.toml", b"\xff\xfe\x00\x01")
    r = client.post("/studies", files=files, follow_redirects=False)
    _assert_one_line_error(r, 422, r"^parts\.toml")


BAD_LIMIT = "\n[limits.bladder]\nmax_pressure_ratio = -3\n"


def test_catalogue_limits_are_checked_at_upload(client):
    # Regression: a [limits.*] mistake was accepted at upload and failed later in the worker.
    bundled = default_catalogue_path().read_text(encoding="utf-8")
    files = {
        "cycle": ("cycle.csv", TINY, "text/csv"),
        "catalogue": ("parts.toml", bundled + BAD_LIMIT),
    }
    r = client.post("/studies", files=files, follow_redirects=False)
    _assert_one_line_error(r, 422, r"^parts\.toml: \[limits\.bladder\] max_pressure_ratio = -3")
    files["catalogue"] = ("deep.toml", "x = " + "[" * 5000 + "]" * 5000 + "\n")
    r = client.post("/studies", files=files, follow_redirects=False)
    _assert_one_line_error(r, 422, r"^deep\.toml, line 1: arrays, tables or objects nested")


def test_no_file_and_not_a_form(client):
    r = client.post("/studies", files={"d_gas": (None, "ideal")}, follow_redirects=False)
    _assert_one_line_error(r, 422, r"no duty-cycle file chosen")
    r = client.post("/studies", data={"cycle": "x"}, follow_redirects=False)
    _assert_one_line_error(r, 415, r"expected a form upload \(multipart/form-data\)")
    r = client.post("/studies", files={"shell": (None, "rm -rf /")}, follow_redirects=False)
    _assert_one_line_error(r, 400, r"unknown form field 'shell'")


# -- streaming limits, below the page ----------------------------------------------------------
BOUNDARY = "stowflowtestboundary"
HEADERS = {"content-type": f"multipart/form-data; boundary={BOUNDARY}"}
HEAD = (
    f"--{BOUNDARY}\r\n"
    'Content-Disposition: form-data; name="cycle"; filename="big.csv"\r\n'
    "Content-Type: text/csv\r\n\r\n"
    "duration [s], flow [L/min]\r\n"
).encode()


def _read(chunks, **kw):
    consumed = []

    async def stream():
        for chunk in chunks:
            consumed.append(len(chunk))
            yield chunk

    async def go():
        return await read_form(HEADERS, stream(), text_fields=(), file_fields=("cycle",), **kw)

    try:
        asyncio.run(go())
    except UploadError as exc:
        return exc, sum(consumed)
    raise AssertionError("the upload was accepted")


def test_byte_limit_stops_reading_at_the_limit():
    chunk = b"1, 10\r\n" * 9000  # 63 kB
    total = 50_000_000
    exc, consumed = _read(
        (HEAD if i == 0 else chunk for i in range(total // len(chunk))), max_bytes=5_000_000
    )
    assert exc.status == 413 and str(exc).startswith("upload too large")
    assert consumed <= 5_000_000 + len(chunk)  # not one chunk more than needed


def test_line_limit_stops_reading_early():
    chunk = b"1, 10\r\n" * 1000
    exc, consumed = _read(
        (HEAD if i == 0 else chunk for i in range(10_000)),
        max_bytes=10**9,
        max_lines={"cycle": (2_000, 1_000)},
    )
    assert exc.status == 413 and "too many lines, more than 2000" in str(exc)
    assert consumed < 4 * len(chunk)


def test_declared_length_over_the_limit_is_refused_unread():
    headers = {**HEADERS, "content-length": "6000000"}

    async def stream():
        raise AssertionError("the body was read")
        yield b""

    with pytest.raises(UploadError, match=r"^upload too large"):
        asyncio.run(
            read_form(
                headers, stream(), max_bytes=5_000_000, text_fields=(), file_fields=("cycle",)
            )
        )


# -- the queue and the time limit --------------------------------------------------------------
def test_queue_full_gives_503_with_retry_after_and_time_limit_is_honest(client):
    """One worker, no queue, 1.5 s per design, and a job that waits on purpose.

    The job is :func:`_web_server.slow_job`, not a real design: whether a real design ends
    inside 1.5 s depends on the machine (on a fast one the demo does), and the limit must be
    tested on every machine.
    """
    app = create_app(
        ServerConfig(workers=1, queue=0, time_limit=1.5, warm_up=False, job_target=slow_job)
    )
    with TestClient(app, base_url=BASE, headers=same_origin(BASE)) as c:
        r = c.post("/studies", files={"use_demo": (None, "1")}, follow_redirects=False)
        assert r.status_code == 303
        first = r.headers["location"]
        deadline = time.monotonic() + DESIGN_WAIT_S
        while c.get(f"{first}/status").json()["state"] == "queued":
            assert time.monotonic() < deadline
            time.sleep(0.05)
        r = c.post("/studies", files={"use_demo": (None, "1")}, follow_redirects=False)
        assert r.status_code == 503
        assert int(r.headers["retry-after"]) >= 1
        _assert_one_line_error(r, 503, r"worker\(s\) are busy.*try again in about \d+ s")

        status = wait_final(c, first, DESIGN_WAIT_S)
        assert status["state"] == "stopped"
        assert re.match(
            r"stopped: the design ran longer than this server's limit of 1\.5 s per design "
            r"and was ended, without a result",
            status["message"],
        )
        page = c.get(first).text
        assert "Stopped:" in page and "without a result" in page
        assert c.get(f"{first}/files/report.html").status_code == 404
        # The place is free again.
        r = c.post("/studies", files={"use_demo": (None, "1")}, follow_redirects=False)
        assert r.status_code == 303


def test_a_burst_never_gets_more_than_workers_plus_queue_accepted():
    # Jobs waiting for the watcher's next look already hold a place.
    manager = JobManager(workers=1, queue=1, time_limit=1.0, max_studies=10)
    manager.submit(None, name="a", source="a.csv")
    manager.submit(None, name="b", source="b.csv")
    with pytest.raises(QueueFull) as info:
        manager.submit(None, name="c", source="c.csv")
    assert info.value.retry_after >= 1


def test_best_found_is_said_so(client):
    """A design stopped by the solve's time limit is shown as the best found, with its gap."""
    manager = client.app.state.manager
    job = Job(id="feedfacefeedface", name="late", source="late.csv", state="done")
    job.summary = {"status": "feasible", "reason": None, "mip_gap": 0.042, "verified": True,
                   "seconds": 12.0}  # fmt: skip
    manager.jobs[job.id] = job
    try:
        page = client.get(f"/studies/{job.id}").text
        assert "Best design found within the time limit" in page
        assert "schedule within 4.2 % of the best possible" in page
        job.summary = {**job.summary, "mip_gap": None}
        assert "best possible schedule not known" in client.get(f"/studies/{job.id}").text
    finally:
        del manager.jobs[job.id]


def test_solve_time_limit_fits_the_job_limit():
    limits = FormLimits(max_rows=10, job_time_limit=60.0)
    assert 0 < limits.solve_time_limit <= 60.0 / 5
    assert FormLimits(max_rows=10, job_time_limit=1e6).solve_time_limit == 60.0


# -- stowflow serve: loopback by default ------------------------------------------------------
def test_loopback_names():
    for host in ("127.0.0.1", "127.0.0.2", "::1", "[::1]", "localhost"):
        assert is_loopback(host), host
    for host in ("0.0.0.0", "::", "192.168.1.10", "example.com", ""):
        assert not is_loopback(host), host


def test_serve_binds_loopback_by_default(run_cli, monkeypatch):
    seen = {}
    monkeypatch.setattr("uvicorn.run", lambda app, **kw: seen.update(kw))
    code, out, err = run_cli("serve", "--port", "8765")
    assert code == 0 and err == ""
    assert seen["host"] == "127.0.0.1" and seen["port"] == 8765
    assert "http://127.0.0.1:8765/" in out
    assert "listening on 127.0.0.1 only: other computers cannot reach this page" in out


def test_serve_elsewhere_needs_allow_remote(run_cli, monkeypatch):
    monkeypatch.setattr("uvicorn.run", lambda app, **kw: None)
    code, out, err = run_cli("serve", "--host", "0.0.0.0")
    assert code == 2 and out == ""
    assert err.count("\n") == 1
    assert "not a loopback address; the page has no authentication" in err
    assert "--allow-remote" in err

    code, out, err = run_cli("serve", "--host", "0.0.0.0", "--allow-remote")
    assert code == 0
    assert "WARNING: listening on 0.0.0.0:8000 WITHOUT AUTHENTICATION" in err


def test_serve_options_are_checked(run_cli):
    for args, pattern in [
        (
            ("--port", "70000"),
            "--port: '70000' is above 65535; expected a whole number from 1 to 65535",
        ),
        (
            ("--workers", "two"),
            "--workers: 'two' is not a whole number; expected a whole number ≥ 1",
        ),
        (
            ("--time-limit", "0s"),
            "--time-limit: '0s' is not above 0 s; expected a time > 0 s with its unit, e.g. 1s",
        ),
        (
            ("--time-limit", "60"),
            "--time-limit: '60' has no unit; expected a time > 0 s with its unit, e.g. 1s",
        ),
    ]:
        code, _, err = run_cli("serve", *args)
        assert code == 2, args
        assert err == f"stowflow: error: {pattern}\n"


def test_host_names_follow_the_bound_address():
    # Regression: --host 127.0.0.2 started, then answered every request with 400.
    import argparse

    args = argparse.Namespace(
        host="127.0.0.2", allow_remote=False, workers=None, queue="8", time_limit="60s"
    )
    config = config_from_args(args)
    assert "127.0.0.2" in config.allowed_hosts and "attacker.example" not in config.allowed_hosts
    app = create_app(replace(config, workers=1, warm_up=False))
    with TestClient(app, base_url="http://127.0.0.2:8000") as c:
        assert c.get("/").status_code == 200
        assert c.get("/", headers={"host": "attacker.example"}).status_code == 400
    assert {"::1", "[::1]"} <= set(hosts_for("::1"))
    assert hosts_for("0.0.0.0") == ("*",)


def test_allow_remote_answers_any_host_name():
    import argparse

    args = argparse.Namespace(
        host="0.0.0.0", allow_remote=True, workers=None, queue="8", time_limit="60s"
    )
    assert config_from_args(args).allowed_hosts == ("*",)
    args.allow_remote = False
    with pytest.raises(SettingsError, match="not a loopback address"):
        config_from_args(args)
