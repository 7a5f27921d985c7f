"""Command-line shell: ``stowflow <command> ...`` and ``python -m stowflow <command> ...``.

The shell only parses options, calls the library and prints.  Each command lives in its own
module in this package with two functions: ``register(subparsers, common)`` that adds its
parser, and ``run(args) -> int`` that does the work.  Errors the user can cause
(:class:`stowflow.errors.StowflowError`) become one line on stderr and exit code 2.
"""

from __future__ import annotations

import argparse
import gc
import importlib
import re
import sys

from stowflow.errors import StowflowError
from stowflow.version import __version__

__all__ = ["COMMANDS", "build_parser", "join_dash_values", "main"]

#: Command modules, in the order ``stowflow --help`` lists them.
COMMANDS: tuple[str, ...] = (
    "demo",
    "design",
    "check",
    "simulate",
    "size",
    "fill",
    "precharge",
    "serve",
)

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
        module = importlib.import_module(f"stowflow.cli.{name.replace('-', '_')}")
        module.register(sub, common)
    return parser


#: A value that argparse would take for an option: '-' then a digit ("-20..60", "-5bar").
_DASH_VALUE = re.compile(r"^-\.?\d")


def _value_options(parser: argparse.ArgumentParser) -> set[str]:
    """Option strings of ``parser`` and its subcommands that take a value."""
    found: set[str] = set()
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for sub in action.choices.values():
                found |= _value_options(sub)
        elif action.option_strings and action.nargs != 0:
            found.update(action.option_strings)
    return found


def join_dash_values(argv: list[str], parser: argparse.ArgumentParser) -> list[str]:
    """Join an option and a value that starts with '-' and a digit into ``--opt=value``.

    argparse reads ``--temperature -20..60`` as two options and refuses it ("expected one
    argument"); ``--temperature=-20..60`` it reads as meant.  Only options that take a value
    are joined, and nothing after ``--``.
    """
    takes_value = _value_options(parser)
    out: list[str] = []
    i = 0
    while i < len(argv):
        token = argv[i]
        if token == "--":
            return out + argv[i:]
        nxt = argv[i + 1] if i + 1 < len(argv) else None
        if token in takes_value and nxt is not None and _DASH_VALUE.match(nxt):
            out.append(f"{token}={nxt}")
            i += 2
        else:
            out.append(token)
            i += 1
    return out


def main(argv: list[str] | None = None) -> int:
    """Run the command line; return the process exit code."""
    argv = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser()
    argv = join_dash_values(argv, parser)
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


def entry() -> int:
    """The ``stowflow`` program: :func:`main`, then leave the heap to the process's exit.

    The process ends right after the command, so the interpreter's last garbage collection
    over everything the design built (Pyomo's model, the report's figures) only costs time:
    about 0.25 s of a 5 s design (tests/benchmarks/bench_design.py).  ``gc.freeze`` moves
    it out of the collector's reach; files are closed by then and exit handlers still run.
    """
    code = main()
    gc.freeze()
    return code


if __name__ == "__main__":  # pragma: no cover
    sys.exit(entry())
