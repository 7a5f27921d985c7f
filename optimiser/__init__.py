"""stowflow: least-installed-power hydraulic supply design with gas-loaded accumulators.

The notebook user's entry points are re-exported here; everything else lives in the modules
named after the data flow (cycle, catalogue, gas, accumulator, search, model, simulate, costs,
report, pipeline).
"""

from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["__version__"]
