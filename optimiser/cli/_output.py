"""Printing helpers shared by the commands: JSON to stdout, tables with units, progress."""

from __future__ import annotations

import json
import math
import sys
from collections.abc import Iterable, Sequence
from typing import Any

from stowflow.io.jsonable import to_jsonable
from stowflow.io.numbers import number

__all__ = ["fixed", "print_json", "print_table", "progress"]

#: Magnitude from which :func:`fixed` shows significant digits instead of fixed decimals, so
#: that no value (a ratio over a flow of 1e-300 L/min, say) is wider than a table cell.
FIXED_LIMIT = 1e9


def fixed(x: float, decimals: int = 1) -> str:
    """``x`` with ``decimals`` decimals, or with 4 significant digits from 1e9 up.

    Parameters
    ----------
    x : float
        The value, in the unit shown.
    decimals : int
        Decimals below :data:`FIXED_LIMIT`, [-].
    """
    x = float(x)
    if not math.isfinite(x) or abs(x) >= FIXED_LIMIT:
        return number(x, 4)  # ×10 form, never an "e" exponent
    return f"{x:.{decimals}f}"


def print_json(data: Any, stream=None) -> None:
    """Print ``data`` as indented JSON (UTF-8, no NaN)."""
    stream = stream or sys.stdout
    json.dump(to_jsonable(data), stream, indent=2, ensure_ascii=False, allow_nan=False)
    stream.write("\n")


def print_table(
    rows: Iterable[Sequence[Any]],
    *,
    title: str | None = None,
    headers: Sequence[str] = ("quantity", "value", "unit"),
    stream=None,
) -> None:
    """Print rows as an aligned table (rich when the output is a terminal, plain otherwise).

    Metric cells, headers and the title are shown in the unit system of ``--units``
    (:func:`stowflow.report.table_units.table_in_system`)."""
    from stowflow.report.display_units import in_system_text
    from stowflow.report.table_units import table_in_system

    rows = [[("" if c is None else str(c)) for c in r] for r in rows]
    rows, headers = table_in_system(rows, headers)
    title = None if title is None else in_system_text(title)
    stream = stream or sys.stdout
    try:
        from rich.console import Console
        from rich.table import Table
    except ImportError:  # pragma: no cover - rich is a dependency, but stay usable
        Console = None
    if Console is not None and getattr(stream, "isatty", lambda: False)():
        table = Table(title=title, show_lines=False)
        for i, h in enumerate(headers):
            table.add_column(h, justify="right" if i == 1 else "left")
        for r in rows:
            table.add_row(*r)
        Console(file=stream).print(table)
        return
    widths = [
        max(len(h), *(len(r[i]) for r in rows)) if rows else len(h) for i, h in enumerate(headers)
    ]
    if title:
        stream.write(f"{title}\n")
    line = "  ".join(h.ljust(w) for h, w in zip(headers, widths, strict=True))
    stream.write(line.rstrip() + "\n")
    stream.write("  ".join("-" * w for w in widths) + "\n")
    for r in rows:
        cells = [
            (c.rjust(w) if i == 1 else c.ljust(w))
            for i, (c, w) in enumerate(zip(r, widths, strict=True))
        ]
        stream.write("  ".join(cells).rstrip() + "\n")


class progress:
    """Progress on stderr for work that may take more than a second.

    ``with progress("searching designs", total=n) as step: ... step(k)``.  Silent when stderr
    is not a terminal unless ``force`` is set, so JSON on stdout stays clean.
    """

    def __init__(self, label: str, total: int | None = None, *, force: bool = False):
        self.label = label
        self.total = total
        self.enabled = force or sys.stderr.isatty()
        self._rich = None

    def __enter__(self):
        if self.enabled:
            try:
                from rich.progress import Progress

                self._rich = Progress(transient=True)
                self._rich.start()
                self._task = self._rich.add_task(self.label, total=self.total)
            except ImportError:  # pragma: no cover
                self._rich = None
        return self.update

    def update(
        self,
        completed: float | None = None,
        *,
        total: float | None = None,
        label: str | None = None,
    ) -> None:
        """Report progress: ``completed`` units of ``total``; a new ``label`` if given."""
        if self._rich is not None:
            kwargs = {}
            if completed is not None:
                kwargs["completed"] = completed
            if total is not None:
                kwargs["total"] = total
            if label is not None:
                kwargs["description"] = label
            self._rich.update(self._task, **kwargs)

    def __exit__(self, *exc) -> None:
        if self._rich is not None:
            self._rich.stop()
