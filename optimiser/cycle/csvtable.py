"""Read a duty-cycle CSV into typed SI columns, keeping every row's line number.

This is the strict front door of :mod:`stowflow.cycle.duty`: bytes → text → lines → header →
numbers.  Every fault becomes one :class:`~stowflow.errors.CycleError` line that names the
file, the line (1-based, as an editor shows it), the column, what was found and what is
expected.  Nothing is clamped or guessed.

Accepted layout
---------------
* UTF-8 text (a BOM is allowed); ``#`` comment lines and blank lines anywhere.
* The first other line is the header.  The separator is the one of ``,`` ``;`` or TAB that
  the header uses (exactly one kind); fields may be quoted (``"clamp, close"``).
* Header cells are ``name [unit]``; names are case-insensitive: ``time`` or ``duration``,
  ``flow``, optional ``pressure`` (gauge) and ``label`` (no unit).
"""

from __future__ import annotations

import csv
import difflib
import re
from dataclasses import dataclass

import numpy as np
import pandas as pd
from stowflow.errors import CycleError, StowflowError, UnitsError
from stowflow.glossary import GLOSSARY
from stowflow.io.rawtext import NUMBER, check_digits
from stowflow.units import gauge_to_abs, parse_unit, to_unit

__all__ = [
    "KNOWN_COLUMNS",
    "Column",
    "RawTable",
    "check_option",
    "check_steps",
    "decode_bytes",
    "read_table",
    "utf8_text",
]

#: Column names a duty-cycle CSV may use, and the dimension of their unit (None: no unit).
KNOWN_COLUMNS: dict[str, str | None] = {
    "time": "time",
    "duration": "time",
    "flow": "flow",
    "pressure": "pressure",
    "label": None,
}

_UNIT_EXAMPLES = {
    "time": "s, ms or min",
    "flow": "L/min, L/s, m³/h or US gal/min",
    "pressure": "bar, psi, kPa or MPa (gauge)",
}

_SEPARATORS = {",": "','", ";": "';'", "\t": "TAB"}
_DECIMAL_COMMA = re.compile(r"[+-]?[0-9]+,[0-9]+")
_MISSING = {"nan", "na", "n/a", "null", "none", "-", "?", "#n/a"}
_INFINITE = {"inf", "+inf", "-inf", "infinity", "+infinity", "-infinity"}
_HEADER = re.compile(r"^(?P<name>[^\[\]]*?)\s*(?:\[(?P<unit>[^\[\]]*)\])?$")
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]")
_MAGIC = (
    (b"PK\x03\x04", "a ZIP container (an .xlsx or .ods workbook?)"),
    (b"\xd0\xcf\x11\xe0", "a legacy Office file (an .xls workbook?)"),
    (b"%PDF", "a PDF document"),
)


@dataclass(frozen=True)
class Column:
    """One header cell of a duty-cycle CSV.

    Attributes
    ----------
    key : str
        Normalised name: ``time``, ``duration``, ``flow``, ``pressure`` or ``label``.
    header : str
        The header cell as written (stripped).
    index : int
        Column number, 1-based, [-].
    unit : str
        Unit as written between the brackets ("" for ``label``).
    factor : float
        Multiply a value in ``unit`` by this to get SI, [SI/unit].
    """

    key: str
    header: str
    index: int
    unit: str
    factor: float


@dataclass(frozen=True)
class RawTable:
    """The data rows of a duty-cycle CSV, validated and converted to SI.

    Attributes
    ----------
    source : str
        File name or ``<memory>``/``<upload>``, for messages.
    form : str
        ``"phases"`` (a ``duration`` column) or ``"samples"`` (a ``time`` column).
    lines : numpy.ndarray
        Line number in the file of each data row, 1-based, [-].
    axis : numpy.ndarray
        Phase durations or sample time stamps, [s].
    flow : numpy.ndarray
        Demand flow per row, [m³/s].
    pressure : numpy.ndarray or None
        Required pressure per row, **gauge**, [Pa]; None without a pressure column.
    labels : tuple of str
        Label per row ("" where none).
    columns : dict of str to Column
        The header, by normalised name.
    """

    source: str
    form: str
    lines: np.ndarray
    axis: np.ndarray
    flow: np.ndarray
    pressure: np.ndarray | None
    labels: tuple[str, ...]
    columns: dict[str, Column]

    def where(self, key: str, row: int | None = None) -> str:
        """Message prefix naming the file, the line of data row ``row`` and column ``key``."""
        col = self.columns[key]
        line = f", line {int(self.lines[row])}" if row is not None else ""
        return f"{self.source}{line}, column {col.index} '{col.header}'"

    def frame(self, p_ambient: float) -> pd.DataFrame:
        """The rows as a DataFrame in SI with units in the column names.

        Parameters
        ----------
        p_ambient : float
            Ambient pressure for the gauge → absolute conversion, [Pa].

        Returns
        -------
        pandas.DataFrame
            ``line``; ``start [s]`` and ``duration [s]`` (phases) or ``time [s]`` (samples);
            ``flow [m³/s]``; ``pressure [Pa]`` (absolute, if given); ``label``.
        """
        columns: dict[str, object] = {"line": self.lines}
        if self.form == "phases":
            columns["start [s]"] = np.cumsum(self.axis) - self.axis
            columns["duration [s]"] = self.axis
        else:
            columns["time [s]"] = self.axis
        columns["flow [m³/s]"] = self.flow
        if self.pressure is not None:
            columns["pressure [Pa]"] = gauge_to_abs(self.pressure, p_ambient)
        columns["label"] = list(self.labels)
        return pd.DataFrame(columns)


def decode_bytes(data: bytes, source: str) -> str:
    """Check that ``data`` is UTF-8 text and decode it.

    Parameters
    ----------
    data : bytes
        File content.
    source : str
        File name for messages.

    Returns
    -------
    str
        The text, without a UTF-8 byte-order mark.

    Raises
    ------
    CycleError
        Empty, binary (NUL bytes, workbook or PDF signature), UTF-16, not UTF-8, or control
        characters.
    """
    if not data.strip():
        raise CycleError(
            f"{source}: empty file; expected a CSV with a header such as "
            "'duration [s], flow [L/min]' and at least one data row"
        )
    for magic, what in _MAGIC:
        if data.startswith(magic):
            raise CycleError(
                f"{source}: binary file, found {what}; expected a CSV text file "
                "(save or export the sheet as 'CSV UTF-8')"
            )
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        raise CycleError(f"{source}: found UTF-16 text; expected UTF-8 (save as 'CSV UTF-8')")
    nul = data.find(b"\x00")
    if nul >= 0:
        line = data.count(b"\n", 0, nul) + 1
        raise CycleError(
            f"{source}, line {line}: binary file, found a NUL byte at byte {nul}; "
            "expected a CSV text file"
        )
    text = utf8_text(data, source, CycleError, "UTF-8 (save the file as 'CSV UTF-8')")
    bad = _CONTROL.search(text)
    if bad:
        line = text.count("\n", 0, bad.start()) + 1
        raise CycleError(
            f"{source}, line {line}: binary or garbled text, found control character "
            f"U+{ord(bad.group()):04X}; expected plain CSV text"
        )
    return text


def utf8_text(data: bytes, source: str, error: type[StowflowError], expected: str) -> str:
    """Decode UTF-8 (a byte-order mark allowed), or raise ``error`` naming the line.

    Parameters
    ----------
    data : bytes
        File content.
    source : str
        File name for the message.
    error : type
        The :class:`~stowflow.errors.StowflowError` subclass to raise.
    expected : str
        What the message says is expected, e.g. ``"a UTF-8 TOML file"``.

    Returns
    -------
    str
        The decoded text.
    """
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        raise error(
            f"{source}, line {line}: not UTF-8 text, found byte 0x{data[exc.start]:02X}; "
            f"expected {expected}"
        ) from None


def read_table(text: str, source: str, *, max_rows: int | None = None) -> RawTable:
    """Parse duty-cycle CSV text into a validated :class:`RawTable` (SI units).

    Parameters
    ----------
    text : str
        CSV text.
    source : str
        File name for messages.
    max_rows : int, optional
        Refuse more data rows than this (uploads), [-].

    Returns
    -------
    RawTable
        Validated rows; durations > 0 or times strictly increasing, flows ≥ 0.
    """
    content = _records(text)
    if not content:
        raise CycleError(
            f"{source}: empty file (only comments or blank lines); expected a header such as "
            "'duration [s], flow [L/min]' and at least one data row"
        )
    header_line, header_text = content[0]
    sep = _separator(header_text, source, header_line)
    cells = _split(header_text, sep, source, header_line)
    columns = _header(cells, source, header_line)
    rows = content[1:]
    if not rows:
        raise CycleError(
            f"{source}: no data rows after the header on line {header_line}; "
            "expected at least one row of numbers"
        )
    if max_rows is not None and len(rows) > max_rows:
        raise CycleError(
            f"{source}, line {rows[max_rows][0]}: too many rows, found {len(rows)}; "
            f"expected at most {max_rows} data rows"
        )
    form = "samples" if "time" in columns else "phases"
    axis_key = "time" if form == "samples" else "duration"
    width = len(cells)
    lines = np.array([n for n, _ in rows], dtype=int)
    fields: list[list[str]] = []
    for number, line in rows:
        row = _split(line, sep, source, number)
        if len(row) != width:
            hint = (
                " (a trailing separator counts as a field)" if line.rstrip().endswith(sep) else ""
            )
            raise CycleError(
                f"{source}, line {number}: found {len(row)} field{'s' * (len(row) != 1)}{hint}; "
                f"expected {width} "
                f"as in the header on line {header_line}"
            )
        fields.append(row)
    table = RawTable(source, form, lines, np.empty(0), np.empty(0), None, (), columns)
    axis = _numbers(table, fields, axis_key)
    flow = _numbers(table, fields, "flow")
    pressure = _numbers(table, fields, "pressure") if "pressure" in columns else None
    labels = (
        tuple(r[columns["label"].index - 1] for r in fields)
        if "label" in columns
        else ("",) * len(rows)
    )
    table = RawTable(source, form, lines, axis, flow, pressure, labels, columns)
    _check_axis(table)
    if not np.any(flow > 0):
        raise CycleError(
            f"{table.where('flow')}: every flow is 0; expected some demand > 0 in the cycle"
        )
    return table


def _records(text: str) -> list[tuple[int, str]]:
    """The header and data records with the line each starts on; comments and blanks dropped.

    A record is one line, unless a quoted field holds a line break (``"clamp,\nclose"``):
    then it runs on until the quote closes (an odd number of ``"`` leaves a field open).
    ``#`` starts a comment only at the start of a record.
    """
    lines = re.split(r"\r\n|\r|\n", text)
    out: list[tuple[int, str]] = []
    i = 0
    while i < len(lines):
        number, line = i + 1, lines[i]
        i += 1
        if not line.strip() or line.lstrip().startswith("#"):
            continue
        quotes = line.count('"')
        while quotes % 2 and i < len(lines):
            line += "\n" + lines[i]
            quotes += lines[i].count('"')
            i += 1
        out.append((number, line))
    return out


def _separator(line: str, source: str, number: int) -> str:
    found = [s for s in _SEPARATORS if s in line]
    if len(found) > 1:
        names = " and ".join(_SEPARATORS[s] for s in found)
        raise CycleError(
            f"{source}, line {number}: header mixes separators, found {names}; "
            "expected one kind (',' or ';')"
        )
    if not found:
        raise CycleError(
            f"{source}, line {number}: header has one column, found '{line.strip()[:60]}'; "
            "expected comma-separated columns such as 'duration [s], flow [L/min]'"
        )
    return found[0]


def _split(line: str, sep: str, source: str, number: int) -> list[str]:
    try:
        row = next(csv.reader([line], delimiter=sep, skipinitialspace=True, strict=True))
    except csv.Error as exc:
        raise CycleError(
            f"{source}, line {number}: cannot split the row ({exc}); expected fields "
            f"separated by {_SEPARATORS[sep]}, quotes balanced"
        ) from None
    return [cell.strip() for cell in row]


def _header(cells: list[str], source: str, number: int) -> dict[str, Column]:
    columns: dict[str, Column] = {}
    for index, cell in enumerate(cells, start=1):
        where = f"{source}, line {number}, column {index} '{cell}'"
        match = _HEADER.match(cell)
        if match is None:
            raise CycleError(f"{where}: cannot read the header cell; expected 'name [unit]'")
        name = re.sub(r"\s+", " ", match["name"]).lower()
        unit = (match["unit"] or "").strip()
        if not name:
            raise CycleError(f"{where}: column has no name; expected one of {_known()}")
        if name not in KNOWN_COLUMNS:
            raise CycleError(
                f"{where}: unknown column '{name}'{_hint(name)}; expected one of {_known()}"
            )
        if name in columns:
            raise CycleError(
                f"{where}: duplicate column '{name}' (also column {columns[name].index}); "
                "expected each column once"
            )
        dimension = KNOWN_COLUMNS[name]
        if dimension is None:
            if match["unit"] is not None:
                raise CycleError(
                    f"{where}: '{name}' takes no unit, found '[{unit}]'; expected '{name}'"
                )
            columns[name] = Column(name, cell, index, "", 1.0)
            continue
        if not unit:
            raise CycleError(
                f"{where}: no unit; expected it in brackets, e.g. '{name} "
                f"[{_UNIT_EXAMPLES[dimension].split(',')[0]}]'"
            )
        try:
            factor = parse_unit(unit, dimension, where=where)
        except UnitsError as exc:
            message = str(exc)
            if "expected" not in message:
                message += f"; expected a {dimension} unit such as {_UNIT_EXAMPLES[dimension]}"
            raise CycleError(message) from None
        columns[name] = Column(name, cell, index, unit, factor)
    where = f"{source}, line {number}"
    if "time" in columns and "duration" in columns:
        raise CycleError(
            f"{where}: both 'time' (column {columns['time'].index}) and 'duration' (column "
            f"{columns['duration'].index}); expected one: 'duration' for a phase table or "
            "'time' for a sample table"
        )
    if "time" not in columns and "duration" not in columns:
        raise CycleError(
            f"{where}: no 'duration' or 'time' column; expected 'duration [unit]' (phase table) "
            "or 'time [unit]' (sample table)"
        )
    if "flow" not in columns:
        raise CycleError(f"{where}: no 'flow' column; expected a column such as 'flow [L/min]'")
    return columns


def _known() -> str:
    return ", ".join(KNOWN_COLUMNS)


def _hint(name: str) -> str:
    base = re.sub(r"\s*\(.*\)\s*$", "", name)
    if base != name and base in KNOWN_COLUMNS:
        return f" (write the unit in square brackets: '{base} [unit]')"
    close = difflib.get_close_matches(name, list(KNOWN_COLUMNS), n=1, cutoff=0.6)
    return f" (did you mean '{close[0]}'?)" if close else ""


def _numbers(table: RawTable, fields: list[list[str]], key: str) -> np.ndarray:
    """Convert one column to SI floats, refusing empty, missing, non-numeric or absurd cells."""
    col = table.columns[key]
    values = np.empty(len(fields))
    for row, cells in enumerate(fields):
        cell = cells[col.index - 1]
        where = table.where(key, row)
        if not cell:
            raise CycleError(f"{where}: empty cell; expected a number in {col.unit}")
        if NUMBER.fullmatch(cell) is None:
            check_digits(cell, where, f"a number in {col.unit} written with 0-9", CycleError)
            raise CycleError(f"{where}: {_not_a_number(cell, col.unit)}")
        value = float(cell)
        if not np.isfinite(value):
            raise CycleError(
                f"{where}: not finite, found '{cell}'; expected a number in {col.unit}"
            )
        values[row] = value * col.factor
        _check_value(table, key, row, cell, values[row])
    return values


def _check_value(table: RawTable, key: str, row: int, cell: str, si: float) -> None:
    """Refuse negative and absurd values; the range comes from the glossary."""
    col = table.columns[key]
    where = table.where(key, row)
    term = GLOSSARY[key]
    shown = to_unit(si, term.unit, term.dimension)
    found = f"{cell} {col.unit}"
    if col.unit != term.unit:
        found += f" (= {shown:.4g} {term.unit})"
    if key == "duration" and si <= 0:
        raise CycleError(
            f"{where}: duration is not positive, found {found}; expected a duration > 0"
        )
    if key == "duration" and si < GLOSSARY["step"].plausible[0]:
        raise CycleError(
            f"{where}: duration too short, found {found}; expected at least "
            f"{GLOSSARY['step'].plausible[0]:g} s (check the unit)"
        )
    if key == "flow" and si < 0:
        raise CycleError(
            f"{where}: negative flow, found {found}; "
            "expected >= 0 (flow drawn from the pressure line)"
        )
    if key == "pressure" and si < 0:
        raise CycleError(
            f"{where}: negative required pressure, found {found}; expected >= 0 bar gauge"
        )
    if key == "time":
        shown = abs(shown)  # time stamps may start below 0 (pre-trigger samples)
    if shown > term.plausible[1]:
        raise CycleError(
            f"{where}: absurd {key}, found {found}; expected at most "
            f"{term.plausible[1]:g} {term.unit} (check the unit)"
        )


def _not_a_number(cell: str, unit: str) -> str:
    lowered = cell.lower()
    expected = f"expected a number in {unit}"
    if lowered in _MISSING:
        return f"missing value, found '{cell}'; {expected}"
    if lowered in _INFINITE:
        return f"not finite, found '{cell}'; {expected}"
    if _DECIMAL_COMMA.fullmatch(cell):
        return f"decimal comma, found '{cell}'; expected a decimal point: {cell.replace(',', '.')}"
    return f"not a number, found '{cell[:40]}'; {expected}"


def _check_axis(table: RawTable) -> None:
    """Samples: at least two, strictly increasing time stamps."""
    if table.form != "samples":
        return
    t = table.axis
    if t.size < 2:
        raise CycleError(
            f"{table.source}: a sample table needs at least 2 rows, found 1 (line "
            f"{int(table.lines[0])}); expected time stamps spanning one cycle"
        )
    step = np.diff(t)
    bad = np.flatnonzero(step <= 0)
    if bad.size:
        row = int(bad[0]) + 1
        col = table.columns["time"]
        previous = int(table.lines[row - 1])
        value = t[row] / col.factor
        if step[bad[0]] == 0:
            raise CycleError(
                f"{table.where('time', row)}: duplicate time, found {value:g} {col.unit} "
                f"(also on line {previous}); expected strictly increasing time stamps"
            )
        raise CycleError(
            f"{table.where('time', row)}: time not increasing, found {value:g} {col.unit} after "
            f"{t[row - 1] / col.factor:g} {col.unit} on line {previous}; expected strictly "
            "increasing time stamps"
        )


def check_option(where: str, what: str, value, key: str, *, allow_zero: bool = False) -> None:
    """Refuse a non-finite, negative (or zero) or absurd option value.

    Parameters
    ----------
    where : str
        Message prefix (file or cycle).
    what : str
        Option name for the message.
    value : float
        The value in SI units, [SI].
    key : str
        Glossary key whose unit and plausible range apply.
    allow_zero : bool
        Accept 0.
    """
    term = GLOSSARY[key]
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise CycleError(
            f"{where}: {what} {value!r}; expected a number in {term.si_unit}"
        ) from None
    shown = to_unit(number, term.unit, term.dimension) if np.isfinite(number) else number
    if not np.isfinite(number) or number < 0 or (number == 0 and not allow_zero):
        bound = ">= 0" if allow_zero else "> 0"
        raise CycleError(
            f"{where}: {what} is {shown:g} {term.unit}; expected a finite value {bound}"
        )
    low, high = term.plausible
    if shown > high or (0 < shown < low):
        raise CycleError(
            f"{where}: absurd {what}, found {shown:g} {term.unit}; expected "
            f"{max(low, 0):g} to {high:g} {term.unit}"
        )


def check_steps(where: str, what: str, values: np.ndarray, low: float, key: str) -> None:
    """Refuse non-finite, below-``low`` or absurd entries of a per-step array.

    Parameters
    ----------
    where : str
        Message prefix (file or cycle).
    what : str
        Array name for the message.
    values : numpy.ndarray
        The values in SI units, [SI].
    low : float
        Smallest accepted value, [SI].
    key : str
        Glossary key whose unit and plausible range apply.
    """
    term = GLOSSARY[key]
    bad = np.flatnonzero(~np.isfinite(values))
    if bad.size:
        raise CycleError(
            f"{where}, step {bad[0] + 1}, {what}: not finite, found {values[bad[0]]}; "
            "expected a number"
        )
    bad = np.flatnonzero(values < low)
    if bad.size:
        shown = to_unit(values[bad[0]], term.unit, term.dimension)
        raise CycleError(
            f"{where}, step {bad[0] + 1}, {what}: negative, found {shown:.6g} {term.unit}; "
            f"expected >= {low:g}"
        )
    shown = to_unit(values, term.unit, term.dimension)
    bad = np.flatnonzero(shown > term.plausible[1])
    if bad.size:
        raise CycleError(
            f"{where}, step {bad[0] + 1}, {what}: absurd, found {shown[bad[0]]:.6g} {term.unit}; "
            f"expected at most {term.plausible[1]:g} {term.unit}"
        )
