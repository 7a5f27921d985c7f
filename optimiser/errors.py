"""The stowflow exception family.

Every error a user can cause is a :class:`StowflowError` (a :class:`ValueError`).  Its message is
one line that names where the problem is (file, row, column or key), what was found and what
was expected.  The CLI prints it on stderr and exits with code 2; no traceback unless
``--debug``.  An *infeasible design* is not an error: it is a result with status
``infeasible`` and a reason.
"""

from __future__ import annotations

__all__ = [
    "CatalogueError",
    "CycleError",
    "DesignFileError",
    "OutputError",
    "SettingsError",
    "SimulationError",
    "SizingError",
    "StowflowError",
    "UnitsError",
    "one_line",
]


class StowflowError(ValueError):
    """Base class of every error a user can cause with bad input."""


class UnitsError(StowflowError):
    """A unit is unknown, missing, or of the wrong dimension."""


class CycleError(StowflowError):
    """A duty-cycle file cannot be read as a cycle."""


class CatalogueError(StowflowError):
    """A component catalogue cannot be read or is inconsistent."""


class SizingError(StowflowError):
    """A sizing request is physically impossible (e.g. precharge above minimum pressure)."""


class SettingsError(StowflowError):
    """A design or cost setting is out of range or inconsistent with another."""


class DesignFileError(StowflowError):
    """A design JSON file (e.g. hand-edited for ``stowflow simulate``) is not usable."""


class SimulationError(StowflowError):
    """The time-domain simulation cannot carry a design (e.g. it exceeds its work budget)."""


class OutputError(StowflowError):
    """An output folder cannot be used or written (checked before the work starts)."""


def one_line(message: str) -> str:
    """``message`` on one line: line breaks (e.g. from a quoted CSV field) shown as ``\\n``."""
    return str(message).replace("\r\n", "\\n").replace("\n", "\\n").replace("\r", "\\n")
