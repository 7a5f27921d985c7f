"""Command-line shell: ``stowflow <command> ...`` and ``python -m stowflow <command> ...``.

The shell only parses options, calls the library and prints.  Each command lives in its own
module in this package with two functions: ``register(subparsers, common)`` that adds its
parser, and ``run(args) -> int`` that does the work.  Errors the user can cause
(:class:`stowflow.errors.StowflowError`) become one line on stderr and exit code 2; exit
code 1 is left to results (no design exists, a design fails its verification); Ctrl+C is one
line and exit code 130, wherever it comes (start-up included).
"""

from __future__ import annotations

import argparse
import gc
import importlib
import re
import signal
import sys

from stowflow.errors import StowflowError, one_line
from stowflow.version import __version__

__all__ = ["COMMANDS", "build_parser", "join_dash_values", "main"]

#: Command modules, in the order ``stowflow --help`` lists them.
COMMANDS: tuple[str, ...] = (
    "demo",
    "design",
    "batch",
    "explore",
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
    # --debug is taken before the command and after it.  The commands' copy has no default,
    # so that it never overwrites the value given before the command (argparse copies a
    # subparser's defaults over the main parser's).
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument(
        "--debug",
        action="store_true",
        default=argparse.SUPPRESS,
        help="show the full traceback on errors",
    )
    common.add_argument(
        "--units",
        choices=("metric", "us"),  # stowflow.io.numbers.SYSTEMS (a test keeps them equal)
        default="metric",
        help="units of the output: metric (bar, L, L/min, kW, °C; the default) or us (psi, "
        "US gal, gpm, hp beside kW, °F); inputs take any unit they carry",
    )
    parser = argparse.ArgumentParser(prog="stowflow", description=_DESCRIPTION)
    parser.add_argument("--debug", action="store_true", help="show the full traceback on errors")
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


def _interrupted() -> int:
    """Ctrl+C: one line on stderr, exit code 130 (128 + SIGINT)."""
    try:
        print("stowflow: interrupted", file=sys.stderr)
    except (KeyboardInterrupt, OSError):  # pragma: no cover - a second Ctrl+C, a closed stderr
        pass
    return 130


def main(argv: list[str] | None = None) -> int:
    """Run the command line; return the process exit code.

    Exit codes: 0 success; 1 a result that is not a success (no design exists, a design
    fails its verification); 2 bad input (one line on stderr naming the file, key or line
    and the limit); 130 interrupted (Ctrl+C).
    """
    debug = False
    try:
        argv = list(sys.argv[1:] if argv is None else argv)
        debug = "--debug" in argv[: argv.index("--")] if "--" in argv else "--debug" in argv
        parser = build_parser()  # imports every command: the slow part of the start-up
        argv = join_dash_values(argv, parser)
        args = parser.parse_args(argv)
        debug = bool(getattr(args, "debug", False))
        # Imported here, not at the top: numpy comes with it, and the Ctrl+C handling of
        # entry() must be in place before the slow imports start.
        from stowflow.io.numbers import using

        with using(getattr(args, "units", None) or "metric"):
            return int(args.func(args) or 0)
    except StowflowError as exc:
        if debug:
            raise
        print(f"stowflow: error: {one_line(exc)}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        return _interrupted()
    except BrokenPipeError:  # e.g. `stowflow check x.csv --json | head`
        return 0
    except Exception as exc:
        if _from_interrupt(exc):
            return _interrupted()
        if debug:
            raise
        print(
            f"stowflow: internal error ({type(exc).__name__}: {one_line(exc)}); "
            "this is a bug - rerun with --debug and report the traceback",
            file=sys.stderr,
        )
        return 1


def _from_interrupt(exc: BaseException) -> bool:
    """Whether a Ctrl+C caused ``exc``: some code turns a KeyboardInterrupt into another
    error (Python itself, when it lands while a class is being created: "Error calling
    __set_name__"), keeping it as the cause or the context."""
    seen: set[int] = set()
    while exc is not None and id(exc) not in seen:
        if isinstance(exc, KeyboardInterrupt):
            return True
        seen.add(id(exc))
        exc = exc.__cause__ or exc.__context__
    return False


#: Set when a Ctrl+C was swallowed where Python cannot raise it (an "unraisable" exception,
#: e.g. inside the import system's module-lock callback): the command then ends as
#: interrupted after it finishes.
_swallowed: list[bool] = []


def _unraisable(info) -> None:
    """``sys.unraisablehook``: a swallowed Ctrl+C is remembered, not printed; anything else
    goes to Python's own hook."""
    if isinstance(info.exc_value, KeyboardInterrupt):
        _swallowed.append(True)
        return
    sys.__unraisablehook__(info)


def entry() -> int:
    """The ``stowflow`` program: :func:`main`, then leave the heap to the process's exit.

    Ctrl+C is caught from here on (Python raises it as KeyboardInterrupt; the interpreter's
    own start-up and the import of this small module come before and are out of reach), and
    a second Ctrl+C while the process ends stops it without a traceback.

    The process ends right after the command, so the interpreter's last garbage collection
    over everything the design built (Pyomo's model, the report's figures) only costs time:
    about 0.25 s of a 5 s design (tests/benchmarks/bench_design.py).  ``gc.freeze`` moves
    it out of the collector's reach; files are closed by then and exit handlers still run.
    """
    try:
        sys.unraisablehook = _unraisable
        signal.signal(signal.SIGINT, signal.default_int_handler)
        code = main()
    except KeyboardInterrupt:  # between the handler's installation and main's own
        code = _interrupted()
    if _swallowed and code != 130:  # the command finished (its files as one set)
        code = _interrupted()
    signal.signal(signal.SIGINT, signal.SIG_DFL)  # a second Ctrl+C now ends the process quietly
    gc.freeze()
    return code


if __name__ == "__main__":  # pragma: no cover
    sys.exit(entry())
