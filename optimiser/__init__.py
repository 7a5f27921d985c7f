"""stowflow: least-installed-power hydraulic supply design with gas-loaded accumulators.

The notebook user's entry points are re-exported here; everything else lives in the modules
named after the data flow (cycle, catalogue, gas, accumulator, search, model, simulate, costs,
report, pipeline).
"""

from __future__ import annotations

from optimiser._deps import trim_pyomo_scipy_hook

__version__ = "0.1.0"

trim_pyomo_scipy_hook()

__all__ = ["__version__"]
