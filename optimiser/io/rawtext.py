"""Rules for raw input text that every reader shares: digits, size, nesting depth.

A base module (it imports only :mod:`stowflow.errors`), so that the cycle CSV reader, the
catalogue, ``design.json`` and ``schedule.csv`` readers and the option parsers apply the same
rules before they parse anything:

* numbers are written with the ASCII digits 0-9 (:data:`NUMBER`, :func:`check_digits`):
  full-width or Arabic-Indic digits, which Python's ``float`` would read, are refused;
* a file is read only when it is not larger than its kind's limit (:func:`read_limited`);
* TOML and JSON text is refused when its arrays, tables or objects nest deeper than
  :data:`MAX_DEPTH` (:func:`check_nesting`), before the recursive parsers of the standard
  library see it (5,000 nested ``[`` would otherwise end in a ``RecursionError``).

The limits are our own choice (common practice, no published source): far above what a
catalogue, a ``design.json`` or a cycle ever needs, far below what exhausts memory or the
parser's recursion.
"""

from __future__ import annotations

import os
import re
from pathlib import Path

from stowflow.errors import SettingsError, StowflowError

__all__ = [
    "MAX_BYTES",
    "MAX_DEPTH",
    "NUMBER",
    "check_digits",
    "check_nesting",
    "read_limited",
]

#: A number: optional sign, ASCII digits with an optional point, optional exponent.  No
#: ``nan``, ``inf`` or ``1_000``.
NUMBER = re.compile(r"[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")

#: Deepest nesting of arrays, tables or objects a TOML or JSON input may have, [-]
#: (a catalogue needs 2, a design.json 5).
MAX_DEPTH = 32

#: Largest file of each kind read, [B].
MAX_BYTES: dict[str, int] = {
    "cycle": 64_000_000,
    "catalogue": 8_000_000,
    "design": 64_000_000,
    "schedule": 64_000_000,
    "overrides": 8_000_000,
}


def check_digits(
    text: str, option: str, expected: str, error: type[StowflowError] = SettingsError
) -> None:
    """Refuse decimal digits other than ASCII 0-9 (full-width, Arabic-Indic, ...).

    Parameters
    ----------
    text : str
        The text as typed.
    option : str
        Where the text comes from as the user sees it, e.g. ``"--volume"`` or
        ``"cycle.csv, line 3, column 2 'flow [L/min]'"``.
    expected : str
        What is expected there, for the message.
    error : type
        The :class:`~stowflow.errors.StowflowError` subclass to raise (default: a setting's).

    Raises
    ------
    StowflowError
        The text has such a digit (the message names it and its code point).
    """
    for ch in str(text):
        if ch.isdecimal() and not ch.isascii():
            raise error(
                f"{option}: '{str(text).strip()[:40]}' has a digit other than 0-9 ('{ch}', "
                f"U+{ord(ch):04X}); expected {expected}"
            )


def read_limited(path: str | Path, kind: str, error: type[StowflowError], expected: str) -> bytes:
    """The bytes of a file of one kind, refused when missing, a folder or too large.

    Parameters
    ----------
    path : str or Path
        The file.
    kind : str
        Key of :data:`MAX_BYTES`.
    error : type
        The :class:`~stowflow.errors.StowflowError` subclass to raise.
    expected : str
        What the file should be, for the message (``"a TOML catalogue file"``).

    Returns
    -------
    bytes
        The content.
    """
    path = Path(path)
    limit = MAX_BYTES[kind]
    try:
        size = os.stat(path).st_size
        if path.is_dir():
            raise error(f"{path}: is a folder; expected {expected}")
        if size > limit:
            raise error(
                f"{path}: file too large, found {size:,} bytes; expected at most {limit:,} "
                f"bytes for {expected}"
            )
        with open(path, "rb") as f:
            data = f.read(limit + 1)
    except FileNotFoundError:
        raise error(f"{path}: file not found; expected {expected}") from None
    except OSError as exc:
        raise error(
            f"{path}: cannot read the file ({exc.strerror or exc}); expected {expected}"
        ) from None
    if len(data) > limit:  # grew while read, or a special file that reports no size
        raise error(f"{path}: file too large; expected at most {limit:,} bytes for {expected}")
    return data


_SPECIAL = {
    "toml": re.compile(r"[\[\]{}\"'#]"),
    "json": re.compile(r'[\[\]{}"]'),
}


def _string_end(text: str, start: int, mark: str, escapes: bool, multiline: bool) -> int:
    """Index of the last character of the string that starts at ``start`` (after its quote).

    An unterminated string ends at its line's end (single-line) or at the text's end; the
    parser reports it afterwards.
    """
    j = start
    while True:
        k = text.find(mark, j)
        if not multiline:
            stop = text.find("\n", j)
            if stop >= 0 and (k < 0 or stop < k):
                return stop
        if k < 0:
            return len(text)
        if escapes:
            b = 0
            while k - 1 - b >= start and text[k - 1 - b] == "\\":
                b += 1
            if b % 2:
                j = k + 1
                continue
        return k + len(mark) - 1


def check_nesting(
    text: str, source: str, syntax: str, error: type[StowflowError], limit: int = MAX_DEPTH
) -> None:
    """Refuse TOML or JSON text whose brackets nest deeper than ``limit``, before parsing.

    Brackets inside strings and (TOML) comments do not count.  The scan is linear and never
    recursive; it does not check the syntax, which the parser does next.

    Parameters
    ----------
    text : str
        The text.
    source : str
        File name for the message.
    syntax : str
        ``"toml"`` or ``"json"``.
    error : type
        The :class:`~stowflow.errors.StowflowError` subclass to raise.
    limit : int
        Deepest nesting accepted, [-].

    Raises
    ------
    StowflowError
        Too deep (the message names the line).
    """
    toml = syntax == "toml"
    special = _SPECIAL[syntax]
    depth, i, n = 0, 0, len(text)
    while i < n:
        m = special.search(text, i)
        if m is None:
            return
        i = m.start()
        ch = text[i]
        if ch in "[{":
            depth += 1
            if depth > limit:
                line = text.count("\n", 0, i) + 1
                raise error(
                    f"{source}, line {line}: arrays, tables or objects nested more than {limit} "
                    f"deep; expected at most {limit} levels"
                )
        elif ch in "]}":
            depth = max(0, depth - 1)
        elif ch == "#":
            stop = text.find("\n", i)
            i = n if stop < 0 else stop
        elif toml and text.startswith(ch * 3, i):
            i = _string_end(text, i + 3, ch * 3, ch == '"', multiline=True)
        else:
            i = _string_end(text, i + 1, ch, ch == '"', multiline=False)
        i += 1
