"""``stowflow serve``: the local web page, a thin shell like the command line.

Binds to loopback (127.0.0.1) by default: only this computer can open the page.  The page has
no authentication, so binding any other address needs ``--allow-remote`` and prints a warning.
"""

from __future__ import annotations

import argparse
import sys

from stowflow.errors import SettingsError
from stowflow.io.quantities import parse_duration, parse_whole

__all__ = ["register", "run"]

_EXAMPLE = """\
example:
  stowflow serve                    # then open http://127.0.0.1:8000/ in a browser
  stowflow serve --port 8100 --workers 2 --queue 4 --time-limit 120s

The page runs the same design as `stowflow design` and hands back the same report.html,
design.json, schedule.csv and spec.csv.  Uploads and results live in a temporary folder that
is removed when the server stops (Ctrl+C).
"""


def register(subparsers, common) -> None:
    """Add ``stowflow serve``."""
    p = subparsers.add_parser(
        "serve",
        parents=[common],
        help="run the local web page: upload a cycle, get the report",
        description=(
            "Serve a local web page where a duty-cycle CSV (and optionally a catalogue) can be "
            "dropped in; it runs the same design as `stowflow design` in worker processes and "
            "shows the report, with the exports to download."
        ),
        epilog=_EXAMPLE,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument(
        "--host",
        default="127.0.0.1",
        help="address to listen on (default 127.0.0.1: this computer only)",
    )
    p.add_argument("--port", default="8000", help="TCP port (default 8000)")
    p.add_argument(
        "--workers",
        default=None,
        help="designs running at once (default: half the CPU cores, at least 1)",
    )
    p.add_argument(
        "--queue",
        default="8",
        help="designs waiting for a worker; more are refused with 503 (default 8)",
    )
    p.add_argument(
        "--time-limit",
        default="60s",
        metavar="TIME",
        help="wall-clock limit of one design, with unit; a design still running then is "
        "stopped and the page says so (default 60s)",
    )
    p.add_argument(
        "--allow-remote",
        action="store_true",
        help="allow a --host other than loopback; the page has NO authentication",
    )
    p.set_defaults(func=run)


def config_from_args(args: argparse.Namespace):
    """Server configuration from parsed options (checked, one-line errors)."""
    from stowflow.web.app import ServerConfig, hosts_for, is_loopback

    time_limit = parse_duration(args.time_limit, "--time-limit", above=0.0)
    host = str(args.host).strip()
    loopback = is_loopback(host)
    if not loopback and not args.allow_remote:
        raise SettingsError(
            f"--host {host} is not a loopback address; the page has no authentication, so "
            "anyone who reaches it could run designs and read every result. Add "
            "--allow-remote to bind it anyway"
        )
    extra = (
        {}
        if args.workers is None
        else {"workers": parse_whole(args.workers, "--workers", at_least=1)}
    )
    extra["allowed_hosts"] = hosts_for(host)
    queue = parse_whole(args.queue, "--queue", at_least=0)
    return ServerConfig(queue=queue, time_limit=time_limit, **extra)


def run(args: argparse.Namespace) -> int:
    """Run ``stowflow serve`` until Ctrl+C."""
    import uvicorn
    from stowflow.web.app import create_app, is_loopback

    config = config_from_args(args)
    port = parse_whole(args.port, "--port", at_least=1, at_most=65535)
    host = str(args.host).strip()
    shown = f"[{host}]" if ":" in host else host
    print(f"stowflow serve: open http://{shown}:{port}/ in a browser (Ctrl+C stops)")
    if is_loopback(host):
        print(f"listening on {host} only: other computers cannot reach this page")
    else:
        print(
            f"WARNING: listening on {host}:{port} WITHOUT AUTHENTICATION: anyone who can reach "
            "this port can upload files, run designs and read every result",
            file=sys.stderr,
        )
    print(
        f"{config.workers} worker(s), {config.queue} waiting at most, "
        f"{config.time_limit:g} s per design at most",
        flush=True,
    )
    uvicorn.run(
        create_app(config),
        host=host,
        port=port,
        log_level="warning",
        server_header=False,
        timeout_graceful_shutdown=5,
    )
    return 0
