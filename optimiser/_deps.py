"""Import-time settings of third-party packages, kept in one place.

Pyomo registers a hook that, as soon as scipy is imported by anyone (pint does), also imports
``scipy.stats``, ``scipy.spatial`` and ``scipy.integrate``: about half a second of start-up
that the design never uses (Pyomo's standard-form compiler needs ``scipy.sparse`` only).
:func:`trim_pyomo_scipy_hook` narrows that hook before scipy is first imported.  It changes
nothing when scipy is already loaded or when Pyomo's internals differ from what it expects;
the other scipy subpackages stay importable as usual.
"""

from __future__ import annotations

import sys

__all__ = ["trim_pyomo_scipy_hook"]


def _scipy_sparse_only(module, available) -> None:
    if available:
        import scipy.sparse  # noqa: F401 - what Pyomo's standard-form compiler uses


def trim_pyomo_scipy_hook() -> bool:
    """Make Pyomo's scipy hook import ``scipy.sparse`` only; True when it did."""
    if "scipy" in sys.modules:
        return False
    try:
        from pyomo.common import dependencies as deps
    except ImportError:  # pragma: no cover - pyomo is a dependency
        return False
    indicator = getattr(deps, "scipy_available", None)
    if getattr(indicator, "_callback", None) is not getattr(deps, "_finalize_scipy", None):
        return False
    indicator._callback = _scipy_sparse_only
    return True
