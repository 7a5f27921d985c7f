"""stowflow: least-installed-power hydraulic supply design with gas-loaded accumulators.

The subpackages follow the data flow: :mod:`~stowflow.physics` (nitrogen, heat exchange,
accumulator types, valves), :mod:`~stowflow.cycle` (the duty-cycle CSV and its grid),
:mod:`~stowflow.catalogue`, :mod:`~stowflow.search` (the design search and the schedule MILP),
:mod:`~stowflow.simulation` (the time-domain verification), :mod:`~stowflow.costs`,
:mod:`~stowflow.report`, then :mod:`~stowflow.pipeline` on top; :mod:`~stowflow.cli` and
:mod:`~stowflow.web` are thin shells over it.
"""

from __future__ import annotations

from stowflow._deps import trim_pyomo_scipy_hook
from stowflow.version import __version__

trim_pyomo_scipy_hook()

__all__ = ["__version__"]
