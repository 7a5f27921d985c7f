"""Costs: capex, energy, total cost of ownership and payback against the pump-only supplies.

* :mod:`~stowflow.costs.comparison`: :class:`CostSettings`, :func:`compare` → :class:`Comparison`;
* :mod:`~stowflow.costs.energy`: the designed supply's energy and its parts, read from the
  verification's runs;
* :mod:`~stowflow.costs.finance`: the pure money functions (annuity, payback, motor input) and
  the verdict in words.
"""

from __future__ import annotations

from stowflow.costs.comparison import (
    KIND_WORDS,
    OPTION_KEYS,
    OPTION_LABELS,
    Comparison,
    CostSettings,
    OptionCost,
    Payback,
    compare,
)
from stowflow.costs.finance import VERDICTS, payback_words, verdict

__all__ = [
    "KIND_WORDS",
    "OPTION_KEYS",
    "OPTION_LABELS",
    "VERDICTS",
    "Comparison",
    "CostSettings",
    "OptionCost",
    "Payback",
    "compare",
    "payback_words",
    "verdict",
]
