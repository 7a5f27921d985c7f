"""The safe-state motions of an emergency reserve and their small CSV format.

A motions CSV lists what the machine must still do from the accumulator alone when the pump
fails, one motion a row, units in brackets in the header (parsed with :mod:`stowflow.units`,
any compatible unit), pressures **gauge**::

    # comment lines start with '#'
    motion, volume [L], min_pressure [bar], time [s]
    close guard, 1.2, 120, 2
    retract press, 3.0, 100, 4

* ``motion``: what the motion does (text, no unit);
* ``volume``: oil the motion draws from the accumulator;
* ``min_pressure``: pressure the motion still needs at its end;
* ``time``: how long it takes (the circuit leaks meanwhile).

On the command line a motion is ``NAME,VOLUME,MIN_PRESSURE,TIME``, e.g.
``"close guard,1.2L,120bar,2s"`` (read by the command with the option parsers of
:mod:`stowflow.io.quantities`).
"""

from __future__ import annotations

import csv
import math
from dataclasses import dataclass
from pathlib import Path

from stowflow.cycle.csvtable import utf8_text
from stowflow.duties._common import check_positive, litre
from stowflow.errors import SettingsError, SizingError, StowflowError
from stowflow.units import bar_gauge, gauge_to_abs, parse_unit

__all__ = ["MOTION_COLUMNS", "Motion", "read_motions"]

#: Columns of a motions CSV and the dimension of their unit (None: no unit).
MOTION_COLUMNS: dict[str, str | None] = {
    "motion": None,
    "volume": "volume",
    "min_pressure": "pressure",
    "time": "time",
}


@dataclass(frozen=True)
class Motion:
    """One safe-state motion the machine must complete from the accumulator alone.

    Attributes
    ----------
    name : str
        What the motion does, e.g. "close guard".
    volume : float
        Oil volume the motion draws, [m³].
    min_pressure : float
        Pressure needed at the end of the motion, absolute, [Pa].
    time : float
        Time the motion takes (leakage runs on meanwhile), [s].
    """

    name: str
    volume: float
    min_pressure: float
    time: float

    def __post_init__(self) -> None:
        check_positive(f"motion '{self.name}' volume", self.volume, litre(self.volume), "L")
        check_positive(f"motion '{self.name}' time", self.time, self.time, "s", zero=True)
        if not (math.isfinite(self.min_pressure) and self.min_pressure > gauge_to_abs(0.0)):
            raise SizingError(
                f"motion '{self.name}' minimum pressure must be above ambient; got "
                f"{bar_gauge(self.min_pressure):g} bar"
            )


def read_motions(path: str | Path) -> tuple[Motion, ...]:
    """Read a motions CSV: ``motion, volume [L], min_pressure [bar], time [s]``.

    Units go in brackets and may be any compatible unit (mL, US gal; psi, MPa; ms, min);
    pressures are **gauge**.  ``#`` lines and blank lines are skipped.

    Parameters
    ----------
    path : str or Path
        The CSV file.

    Returns
    -------
    tuple of Motion
        The motions in file order.

    Raises
    ------
    SettingsError
        Unreadable file, missing or unknown column, bad number or unit; the message names the
        file, line and column.
    """
    path = Path(path)
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise SettingsError(f"{path}: cannot read the motions file ({exc.strerror})") from None
    text = utf8_text(data, str(path), SettingsError, "a UTF-8 motions CSV")
    rows = [
        (n, r)
        for n, r in enumerate(csv.reader(text.splitlines(), skipinitialspace=True), 1)
        if r and "".join(r).strip() and not r[0].lstrip().startswith("#")
    ]
    if not rows:
        raise SettingsError(f"{path}: no header; expected {_expected()}")
    line, header = rows[0]
    columns = _motion_header(header, path, line)
    motions = []
    for line, cells in rows[1:]:
        if len(cells) != len(header):
            raise SettingsError(
                f"{path}, line {line}: {len(cells)} fields, the header has {len(header)}"
            )
        values = {}
        for key, (idx, factor) in columns.items():
            cell = cells[idx].strip()
            if factor is None:
                values[key] = cell
                continue
            try:
                values[key] = float(cell) * factor
            except ValueError:
                raise SettingsError(
                    f"{path}, line {line}, column '{header[idx].strip()}': '{cell}' is not a number"
                ) from None
        try:
            motions.append(
                Motion(
                    values["motion"] or f"motion {len(motions) + 1}",
                    values["volume"],
                    gauge_to_abs(values["min_pressure"]),
                    values["time"],
                )
            )
        except StowflowError as exc:
            raise type(exc)(f"{path}, line {line}: {exc}") from None
    if not motions:
        raise SettingsError(f"{path}: no motions below the header")
    return tuple(motions)


def _expected() -> str:
    return "motion, volume [L], min_pressure [bar], time [s]"


def _motion_header(header: list[str], path: Path, line: int) -> dict:
    columns: dict[str, tuple[int, float | None]] = {}
    for idx, cell in enumerate(header):
        name, _, rest = cell.strip().partition("[")
        key = "_".join(name.strip().lower().split())
        if key not in MOTION_COLUMNS:
            raise SettingsError(
                f"{path}, line {line}: unknown column '{cell.strip()}'; expected {_expected()}"
            )
        if key in columns:
            raise SettingsError(f"{path}, line {line}: column '{key}' appears twice")
        dim = MOTION_COLUMNS[key]
        unit = rest.rstrip().removesuffix("]").strip()
        if dim is None:
            columns[key] = (idx, None)
            continue
        where = f"{path}, line {line}, column '{cell.strip()}'"
        columns[key] = (idx, parse_unit(unit, dim, where=where))
    missing = [k for k in MOTION_COLUMNS if k not in columns]
    if missing:
        raise SettingsError(
            f"{path}, line {line}: missing column(s) {', '.join(missing)}; expected {_expected()}"
        )
    return columns
