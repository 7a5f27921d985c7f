"""Duty cycles: the CSV reader, validation and the uniform time grid.

* :mod:`~stowflow.cycle.duty`: :class:`DutyCycle`, :func:`load_cycle` and the summary;
* :mod:`~stowflow.cycle.csvtable`: the CSV table reader (also used by other text inputs);
* private: ``_grid``, the exact demand signal and its resampling onto the grid.
"""

from __future__ import annotations

from stowflow.cycle.duty import (
    DEFAULT_MAX_STEPS,
    FORMS,
    GRIDS,
    CycleSummary,
    DutyCycle,
    cycle_from_arrays,
    load_cycle,
    parse_cycle_bytes,
    parse_cycle_text,
    summarize,
)

__all__ = [
    "DEFAULT_MAX_STEPS",
    "FORMS",
    "GRIDS",
    "CycleSummary",
    "DutyCycle",
    "cycle_from_arrays",
    "load_cycle",
    "parse_cycle_bytes",
    "parse_cycle_text",
    "summarize",
]
