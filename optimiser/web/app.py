"""The local web page: upload a duty cycle, watch the design run, read and download the report.

A thin shell over :func:`stowflow.pipeline.run` and :func:`stowflow.report.write_study`:
the form's text goes to the library's parsers (:mod:`stowflow.web.forms`), the design runs in
a worker process (:mod:`stowflow.web.jobs`), and the report and exports are the files the
command line writes.

Framework: Starlette (routing, templates, static files, test client), served by uvicorn,
python-multipart as the streaming form parser, Jinja2 for the pages.  FastAPI would add request
models, dependency injection and an OpenAPI schema; this page has no JSON API to describe and
validates nothing itself (the library's parsers do), so it adds nothing we need.

Routes
------
``GET /``                              upload form
``POST /studies``                      upload → 303 to the study (or the form with the error)
``GET /studies``                       the studies run in this server's life
``GET /studies/{id}``                  progress, then the result with the report inline
``GET /studies/{id}/status``           progress as JSON (the page polls it)
``GET /studies/{id}/report``           report.html for the page's iframe (sandboxed)
``GET /studies/{id}/files/{name}``     download; name ∈ report.html, design.json,
                                       schedule.csv, spec.csv
``GET /static/…``                      the page's CSS and JavaScript

The one state-changing request, ``POST /studies``, is refused (403, one line) unless its
``Origin`` header - or, without one, its ``Referer`` - names this very server: a page on
another site, or a sandboxed frame (``Origin: null``), cannot queue designs.  The pages send
``Referrer-Policy: same-origin`` so that the browser sends the real origin with the page's
own form.  Only the Host names of the bound address are answered (DNS rebinding).
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import ipaddress
import os
import re
import sys
import traceback
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from urllib.parse import urlsplit

import jinja2
from starlette.applications import Starlette
from starlette.concurrency import run_in_threadpool
from starlette.exceptions import HTTPException
from starlette.middleware import Middleware
from starlette.middleware.trustedhost import TrustedHostMiddleware
from starlette.requests import Request
from starlette.responses import FileResponse, JSONResponse, RedirectResponse, Response
from starlette.routing import Mount, Route
from starlette.staticfiles import StaticFiles
from starlette.templating import Jinja2Templates
from stowflow.catalogue import default_catalogue_path
from stowflow.errors import StowflowError, one_line
from stowflow.report import OUTPUTS
from stowflow.report.content import DISCLAIMER, SAFETY_CAUTIONS
from stowflow.version import __version__
from stowflow.web.forms import (
    CATALOGUE_FIELD,
    CYCLE_FIELD,
    DEMO_FIELD,
    FILE_FIELDS,
    TEXT_FIELDS,
    FormLimits,
    build_study,
    chosen_units,
    form_sections,
)
from stowflow.web.jobs import Job, JobManager, QueueFull
from stowflow.web.upload import UploadError, megabytes, read_form

__all__ = [
    "LOOPBACK_HOSTS",
    "ServerConfig",
    "create_app",
    "cross_site",
    "hosts_for",
    "is_loopback",
]

HERE = Path(__file__).resolve().parent
#: Host names a loopback-bound server answers to (others are refused: DNS rebinding).
LOOPBACK_HOSTS: tuple[str, ...] = ("127.0.0.1", "localhost", "::1", "[::1]")
#: Lines a cycle file may have beyond its data rows (header, comments, blank lines), [-].
EXTRA_LINES = 1_000
_ID = re.compile(r"[0-9a-f]{16}")

_MEDIA = {
    "report.html": "text/html; charset=utf-8",
    "design.json": "application/json",
    "schedule.csv": "text/csv; charset=utf-8",
    "spec.csv": "text/csv; charset=utf-8",
}
#: Our pages: our own script and style files only.
PAGE_CSP = (
    "default-src 'none'; script-src 'self'; style-src 'self'; img-src 'self' data:; "
    "connect-src 'self'; frame-src 'self'; form-action 'self'; base-uri 'none'; "
    "frame-ancestors 'none'"
)
#: The report: self-contained, its inline Plotly scripts run, but in a sandbox (an opaque
#: origin: no access to this page, its cookies or its requests), and it may fetch nothing.
REPORT_CSP = (
    "default-src 'none'; script-src 'unsafe-inline'; style-src 'unsafe-inline'; "
    "img-src data: blob:; font-src data:; base-uri 'none'; form-action 'none'; "
    "frame-ancestors 'self'; sandbox allow-scripts allow-downloads"
)


def is_loopback(host: str) -> bool:
    """Whether ``host`` (a name or an address) stays on this machine."""
    if host.strip("[]") == "localhost":
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False


def hosts_for(host: str) -> tuple[str, ...]:
    """The Host names a server bound to ``host`` answers to.

    A loopback address answers to the loopback names and to itself (``127.0.0.2`` too);
    any other address, which needs ``--allow-remote``, to any name (``("*",)``).
    """
    host = host.strip()
    if not is_loopback(host):
        return ("*",)
    bare = host.strip("[]")
    extra = (bare, f"[{bare}]") if ":" in bare else (bare,)
    return tuple(dict.fromkeys((*LOOPBACK_HOSTS, *extra)))


#: Default ports of the schemes, for comparing origins.
_PORTS = {"http": 80, "https": 443}


def _origin(url: str) -> tuple[str, str, int] | None:
    """(scheme, host, port) of a URL, or None when it has none (``null``, garbage)."""
    try:
        parts = urlsplit(url.strip())
        port = parts.port
    except ValueError:
        return None
    if parts.scheme not in _PORTS or not parts.hostname:
        return None
    return parts.scheme, parts.hostname.lower(), port or _PORTS[parts.scheme]


def cross_site(request: Request) -> str | None:
    """Why a state-changing request is refused as cross-site, or None when it is our own.

    The ``Origin`` header must name this server (scheme, host and port of the request's own
    URL); without an ``Origin``, the ``Referer`` must.  ``Origin: null`` (a sandboxed frame,
    a file) and a request with neither header are refused.
    """
    own = _origin(str(request.url))
    origin = request.headers.get("origin")
    if origin is not None:
        if origin.strip() == "null":
            return "form posted from an opaque origin (Origin: null); use this page's form"
        if _origin(origin) != own:
            return "form posted from another site; use this page's form"
        return None
    referer = request.headers.get("referer")
    if referer is None:
        return "form posted without Origin or Referer header; use this page's form"
    if _origin(referer) != own:
        return "form posted from another site; use this page's form"
    return None


def _default_workers() -> int:
    return max(1, (os.cpu_count() or 2) // 2)


@dataclass(frozen=True)
class ServerConfig:
    """Limits and sizes of one server.

    Attributes
    ----------
    workers : int
        Design jobs running at once, [-].
    queue : int
        Design jobs waiting for a worker, [-]; more get 503 with Retry-After.
    time_limit : float
        Wall-clock limit of one design job; past it the job is killed, [s].
    max_upload_bytes : int
        Most bytes of one upload (files and fields together), [B].
    max_rows : int
        Most data rows of a cycle, [-].
    max_studies : int
        Studies kept; older finished ones are deleted, [-].
    allowed_hosts : tuple of str
        Host header values answered (``("*",)`` for any).
    demo_cycle : pathlib.Path or None
        Cycle of the "try the demo cycle" button (default: the bundled forming press).
    warm_up : bool
        Whether the fork server fills the real-gas property caches before the first job (a
        few seconds once; then every real-gas job starts warm).  Off only saves time when
        the jobs use the ideal-gas model, as the tests do.
    job_target : callable or None
        What a worker process runs (default: the pipeline and the report,
        :func:`~stowflow.web._worker.run_job`); see :class:`~stowflow.web.jobs.JobManager`.
    """

    workers: int = field(default_factory=_default_workers)
    queue: int = 8
    time_limit: float = 60.0
    max_upload_bytes: int = 5_000_000
    max_rows: int = 20_000
    max_studies: int = 100
    allowed_hosts: tuple[str, ...] = LOOPBACK_HOSTS
    demo_cycle: Path | None = None
    warm_up: bool = True
    job_target: Callable | None = None

    @property
    def limits(self) -> FormLimits:
        """The limits the form quotes and enforces."""
        return FormLimits(max_rows=self.max_rows, job_time_limit=self.time_limit)


class SecurityHeaders:
    """ASGI middleware: security headers on every response, unless a route set its own."""

    def __init__(self, app) -> None:
        self.app = app

    async def __call__(self, scope, receive, send) -> None:
        if scope["type"] != "http":
            await self.app(scope, receive, send)
            return
        static = scope["path"].startswith("/static/")

        async def send_with_headers(message) -> None:
            if message["type"] == "http.response.start":
                headers = list(message.get("headers", []))
                present = {k.lower() for k, _ in headers}
                defaults = {
                    b"x-content-type-options": b"nosniff",
                    b"referrer-policy": b"same-origin",
                    b"cross-origin-opener-policy": b"same-origin",
                    b"cross-origin-resource-policy": b"same-origin",
                    b"content-security-policy": PAGE_CSP.encode(),
                    b"x-frame-options": b"DENY",
                    b"cache-control": b"no-cache" if static else b"no-store",
                }
                headers += [(k, v) for k, v in defaults.items() if k not in present]
                message = {**message, "headers": headers}
            await send(message)

        await self.app(scope, receive, send_with_headers)


def create_app(config: ServerConfig | None = None) -> Starlette:
    """Build the web application.

    Parameters
    ----------
    config : ServerConfig, optional
        Limits and sizes (defaults: loopback hosts, 5 MB, 20 000 rows, 60 s per design).

    Returns
    -------
    starlette.applications.Starlette
        The ASGI application; its lifespan starts the workers and, at shutdown, kills them
        and removes the temporary folder.
    """
    cfg = config or ServerConfig()
    manager = _job_manager(cfg)
    pages = _Pages(cfg, manager, _templates(cfg))
    return Starlette(
        routes=_routes(pages),
        middleware=_middleware(cfg),
        exception_handlers={HTTPException: pages.http_error, 500: pages.http_error},
        lifespan=_lifespan(manager),
    )


def _job_manager(cfg: ServerConfig) -> JobManager:
    """The queue and worker processes of one server (started by the lifespan)."""
    return JobManager(
        workers=cfg.workers,
        queue=cfg.queue,
        time_limit=cfg.time_limit,
        max_studies=cfg.max_studies,
        warm_up=cfg.warm_up,
        target=cfg.job_target,
    )


def _templates(cfg: ServerConfig) -> Jinja2Templates:
    """The pages' Jinja2 templates, autoescaped, with the server's limits as globals."""
    env = jinja2.Environment(
        loader=jinja2.FileSystemLoader(HERE / "templates"),
        autoescape=True,
        undefined=jinja2.StrictUndefined,
    )
    env.globals.update(
        version=__version__,
        cautions=SAFETY_CAUTIONS,
        disclaimer=DISCLAIMER,
        max_upload=megabytes(cfg.max_upload_bytes),
        max_rows=cfg.max_rows,
        time_limit=cfg.time_limit,
    )
    env.filters["clock"] = lambda t: _dt.datetime.fromtimestamp(t).strftime("%H:%M:%S")
    return Jinja2Templates(env=env)


def _routes(pages: _Pages) -> list:
    """The routes of the table at the top of this module."""
    return [
        Route("/", pages.index),
        Route("/studies", pages.submit, methods=["POST"]),
        Route("/studies", pages.studies),
        Route("/studies/{sid}", pages.study),
        Route("/studies/{sid}/status", pages.status),
        Route("/studies/{sid}/report", pages.report),
        Route("/studies/{sid}/files/{name}", pages.download),
        Mount("/static", StaticFiles(directory=HERE / "static"), name="static"),
    ]


def _middleware(cfg: ServerConfig) -> list[Middleware]:
    """Security headers on every response; unknown Host headers refused unless any is allowed."""
    middleware = [Middleware(SecurityHeaders)]
    if "*" not in cfg.allowed_hosts:
        middleware.append(Middleware(TrustedHostMiddleware, allowed_hosts=cfg.allowed_hosts))
    return middleware


def _lifespan(manager: JobManager):
    """Start the workers with the app; at shutdown kill them and remove the temporary folder."""

    @contextlib.asynccontextmanager
    async def lifespan(app: Starlette):
        await manager.start()
        app.state.manager = manager
        try:
            yield
        finally:
            await manager.stop()

    return lifespan


class _Pages:
    """The route handlers of one server and the page helpers they share.

    Parameters
    ----------
    cfg : ServerConfig
        The server's limits and sizes.
    manager : JobManager
        The server's design jobs.
    templates : starlette.templating.Jinja2Templates
        The pages' templates.
    """

    def __init__(self, cfg: ServerConfig, manager: JobManager, templates: Jinja2Templates):
        self.cfg = cfg
        self.manager = manager
        self.templates = templates
        self.limits = cfg.limits
        self.sections = form_sections(self.limits)
        self.demo_cycle = cfg.demo_cycle or default_catalogue_path().parent / "forming_press.csv"

    # ------------------------------------------------------------------ helpers
    def page(self, request: Request, name: str, status: int = 200, headers=None, **context):
        return self.templates.TemplateResponse(
            request, name, {"nav": name, **context}, status_code=status, headers=headers
        )

    def form_page(self, request: Request, *, error: str = "", values=None, status: int = 200, **kw):
        return self.page(
            request,
            "index.html",
            status,
            sections=self.sections,
            error=error,
            values=values or {},
            cycle_field=CYCLE_FIELD,
            catalogue_field=CATALOGUE_FIELD,
            demo_field=DEMO_FIELD,
            **kw,
        )

    def busy(self, request: Request, retry_after: int, values=None) -> Response:
        return self.form_page(
            request,
            error=(
                f"all {self.cfg.workers} worker(s) are busy and {self.cfg.queue} design(s) are "
                f"waiting; try again in about {retry_after} s"
            ),
            values=values,
            status=503,
            headers={"Retry-After": str(retry_after)},
        )

    def job_or_404(self, request: Request) -> Job:
        sid = request.path_params["sid"]
        job = self.manager.get(sid) if _ID.fullmatch(sid) else None
        if job is None:
            raise HTTPException(404, "no study with this id on this server")
        return job

    def file(self, job: Job, name: str) -> Path:
        path = self.manager.folder(job) / name
        if job.state != "done" or not path.is_file():
            raise HTTPException(404, "this study has no such file (yet)")
        return path

    # ------------------------------------------------------------------ routes
    async def index(self, request: Request) -> Response:
        return self.form_page(request)

    async def submit(self, request: Request) -> Response:
        refused = cross_site(request)
        if refused:
            raise HTTPException(403, refused)
        if self.manager.full():
            return self.busy(request, self.manager.retry_after())
        cfg = self.cfg
        try:
            form = await read_form(
                request.headers,
                request.stream(),
                max_bytes=cfg.max_upload_bytes,
                text_fields=TEXT_FIELDS,
                file_fields=FILE_FIELDS,
                max_lines={CYCLE_FIELD: (cfg.max_rows + EXTRA_LINES, cfg.max_rows)},
            )
        except UploadError as exc:
            return self.form_page(request, error=one_line(exc), status=exc.status)
        values = {k: v for k, v in form.fields.items() if k != DEMO_FIELD}
        try:
            study, source = await run_in_threadpool(build_study, form, self.limits, self.demo_cycle)
            units = chosen_units(form)
        except StowflowError as exc:
            return self.form_page(request, error=one_line(exc), values=values, status=422)
        except Exception as exc:  # a bad upload is a 4xx, never a 500; the trace is for us
            traceback.print_exc(file=sys.stderr)
            message = (
                f"the upload could not be read ({type(exc).__name__}); this is a bug in "
                "stowflow - please report it with the files"
            )
            return self.form_page(request, error=message, values=values, status=400)
        try:
            job = self.manager.submit(study, name=study.name or "study", source=source, units=units)
        except QueueFull as exc:
            return self.busy(request, exc.retry_after, values)
        return RedirectResponse(f"/studies/{job.id}", status_code=303)

    async def studies(self, request: Request) -> Response:
        jobs = list(reversed(self.manager.jobs.values()))
        return self.page(request, "studies.html", jobs=jobs, manager=self.manager)

    async def study(self, request: Request) -> Response:
        job = self.job_or_404(request)
        return self.page(
            request,
            "study.html",
            job=job,
            position=self.manager.queue_position(job),
            outputs=OUTPUTS,
        )

    async def status(self, request: Request) -> Response:
        job = self.job_or_404(request)
        return JSONResponse(
            {
                "id": job.id,
                "state": job.state,
                "fraction": round(job.fraction, 4),
                "label": job.label,
                "message": job.message,
                "queue_position": self.manager.queue_position(job),
                "elapsed_s": round(job.elapsed, 2),
                "summary": job.summary,
            }
        )

    async def report(self, request: Request) -> Response:
        job = self.job_or_404(request)
        return FileResponse(
            self.file(job, "report.html"),
            media_type=_MEDIA["report.html"],
            headers={"Content-Security-Policy": REPORT_CSP, "X-Frame-Options": "SAMEORIGIN"},
        )

    async def download(self, request: Request) -> Response:
        job = self.job_or_404(request)
        name = request.path_params["name"]
        if name not in OUTPUTS:
            raise HTTPException(404, f"no file of that name; the files are {', '.join(OUTPUTS)}")
        return FileResponse(
            self.file(job, name),
            media_type=_MEDIA[name],
            filename=f"{job.name}-{name}",
            headers={"Content-Security-Policy": REPORT_CSP},
        )

    async def http_error(self, request: Request, exc: Exception) -> Response:
        code = getattr(exc, "status_code", 500)
        detail = getattr(exc, "detail", "") if code != 500 else ""
        return self.page(
            request, "error.html", code, code=code, detail=detail or "something went wrong"
        )
