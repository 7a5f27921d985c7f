"""Command-line shell: ``stowflow <command> ...`` and ``python -m optimiser <command> ...``.

The shell only parses options, calls the library and prints.  Each command lives in its own
module in this package with two functions: ``register(subparsers, common)`` that adds its
parser, and ``run(args) -> int`` that does the work.  Errors the user can cause
(:class:`optimiser.errors.StowflowError`) become one line on stderr and exit code 2.
"""

from __future__ import annotations

import argparse
import importlib
import sys

from optimiser import __version__
from optimiser.errors import StowflowError

__all__ = ["COMMANDS", "build_parser", "main"]

#: Command modules, in the order ``stowflow --help`` lists them.
COMMANDS: tuple[str, ...] = ("demo", "design", "check", "simulate", "size", "fill", "precharge")

_DESCRIPTION = (
    "stowflow designs the least-installed-power hydraulic supply for a machine's duty cycle: "
    "pump, motor and gas-loaded accumulator, with a verified load/unload schedule and a "
    "procurement report. Results are design support; a competent person checks them against "
    "local codes and standards."
)


def build_parser() -> argparse.ArgumentParser:
    """Build the argument parser with every registered command."""
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--debug", action="store_true", help="show the full traceback on errors")
    parser = argparse.ArgumentParser(prog="stowflow", description=_DESCRIPTION, parents=[common])
    parser.add_argument("--version", action="version", version=f"stowflow {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True
    for name in COMMANDS:
        module = importlib.import_module(f"optimiser.cli.{name.replace('-', '_')}")
        module.register(sub, common)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run the command line; return the process exit code."""
    argv = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser()
    args = parser.parse_args(argv)
    debug = bool(getattr(args, "debug", False))
    try:
        return int(args.func(args) or 0)
    except StowflowError as exc:
        if debug:
            raise
        print(f"stowflow: error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("stowflow: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # e.g. `stowflow check x.csv --json | head`
        return 0
    except Exception as exc:
        if debug:
            raise
        print(
            f"stowflow: internal error ({type(exc).__name__}: {exc}); "
            "this is a bug - rerun with --debug and report the traceback",
            file=sys.stderr,
        )
        return 1


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
