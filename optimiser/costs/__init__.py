"""Costs: capex, energy, total cost of ownership and payback against the pump-only supplies.

* :mod:`~stowflow.costs.comparison`: :class:`CostSettings`, :func:`compare` → :class:`Comparison`;
* :mod:`~stowflow.costs.finance`: the pure money functions (annuity, payback, motor input).
"""

from __future__ import annotations

from stowflow.costs.comparison import (
    OPTION_KEYS,
    Comparison,
    CostSettings,
    OptionCost,
    Payback,
    compare,
)

__all__ = ["OPTION_KEYS", "Comparison", "CostSettings", "OptionCost", "Payback", "compare"]
