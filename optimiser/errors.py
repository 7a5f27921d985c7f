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
    "SettingsError",
    "SizingError",
    "StowflowError",
    "UnitsError",
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
