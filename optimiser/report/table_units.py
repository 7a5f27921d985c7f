"""Tables in the unit system of ``--units``, converted at the last step.

The commands (and the report's HTML tables) build their tables in metric words (a unit
column of "bar gauge", "L", "°C"; a header "p0(T) [bar]").  Under another unit system
:func:`table_in_system` converts, before printing:

* a cell whose row's unit cell is a metric unit: the number (or each number of a range
  "10 … 50", "207.5 – 252.0") in the chosen unit, and the unit cell with it;
* a column whose header ends in a metric unit in brackets: each number in it, and the header;
* any other text (titles, reasons, headers): each "number unit" in it
  (:func:`stowflow.report.display_units.in_system_text`).

Cells in the chosen system's own units pass unchanged, so a command that already converted
(``check``, ``precharge``, ``design``) is not converted twice.  Gauge bar and bar differences
scale alike; °C is a temperature.
"""

from __future__ import annotations

import re
from collections.abc import Sequence

from stowflow.io.numbers import METRIC, current_system, display_value, number, unit_label
from stowflow.report.display_units import METRIC_WORDS, in_system_text
from stowflow.units import celsius_to_kelvin

__all__ = ["table_in_system"]

#: Metric unit text → (kind, SI of one unit, suffix kept after the new unit).
_UNITS: dict[str, tuple[str, float, str]] = {
    **{word: (kind, one, "") for word, (kind, one) in METRIC_WORDS.items()},
    "bar gauge": (*METRIC_WORDS["bar"], " gauge"),
    "°C": ("temperature", 1.0, ""),
}

_NUMBER = re.compile(r"-?\d[\d,]*(?:\.\d+)?")
# a cell of numbers only: one, or a range "3.0 … 15.4", "207.5 – 252.0"
_NUMBERS = re.compile(r"-?\d[\d,]*(?:\.\d+)?(?:\s*[…–]\s*-?\d[\d,]*(?:\.\d+)?)?")
_HEADER = re.compile(r"^(.*)\[(bar|bar gauge|L|L/min|kW|cm³/rev|°C)\]\s*$")


def _si(value: float, unit: str) -> float:
    if unit == "°C":
        return celsius_to_kelvin(value)
    return value * _UNITS[unit][1]


def _number_cell(cell: str, unit: str) -> str:
    """Each number of ``cell`` (metric ``unit``) in the chosen unit; other text kept."""
    kind = _UNITS[unit][0]
    du = current_system().unit(kind)

    def convert(m: re.Match) -> str:
        v = display_value(_si(float(m.group(0).replace(",", "")), unit), kind)
        return number(v, du.digits, max_decimals=du.max_decimals, trim=du.trim)

    return _NUMBER.sub(convert, cell)


def _unit_text(unit: str) -> str:
    kind, _one, suffix = _UNITS[unit]
    return unit_label(kind) + suffix


def table_in_system(
    rows: list[list[str]], headers: Sequence[str], *, texts: bool = True
) -> tuple[list[list[str]], list[str]]:
    """``rows`` and ``headers`` in the unit system in force (unchanged under metric).

    Parameters
    ----------
    rows : list of list of str
        The table's cells, metric.
    headers : sequence of str
        Its headers; ``("quantity", "value", "unit")`` marks a table with a unit column.
    texts : bool
        Convert the other text cells too (False: they were converted already, as the
        report's escaped cells are).

    Returns
    -------
    tuple
        The rows and headers to print.
    """
    headers = list(headers)
    if current_system() is METRIC:
        return rows, headers
    unit_col = headers.index("unit") if "unit" in headers else None
    col_units = {}
    for i, h in enumerate(headers):
        m = _HEADER.match(h)
        if m:
            col_units[i] = m.group(2)
            headers[i] = f"{in_system_text(m.group(1))}[{_unit_text(m.group(2))}]"
        elif texts:
            headers[i] = in_system_text(h)
    out = []
    for r in rows:
        r = list(r)
        unit = r[unit_col] if unit_col is not None and unit_col < len(r) else None
        for i, cell in enumerate(r):
            if i == unit_col:
                continue
            if unit in _UNITS and i == 1:
                r[i] = _number_cell(cell, unit)
            elif i in col_units and _NUMBERS.fullmatch(cell.strip() or "x"):
                r[i] = _number_cell(cell, col_units[i])
            elif texts:
                r[i] = in_system_text(cell)
        if unit in _UNITS:
            r[unit_col] = _unit_text(unit)
        out.append(r)
    return out, headers
