"""Accumulator duties beyond energy storage: emergency reserve, shock absorption, thermal expansion.

Each duty is a pure function of SI inputs that returns a frozen result with an ``as_dict()``
in trade units; ``stowflow size --duty reserve|shock|thermal`` is the shell over them.

* :mod:`~stowflow.duties.reserve`: the safe-state motions after a pump failure
  (:func:`size_reserve`), with the motions format of :mod:`~stowflow.duties.motions`;
* :mod:`~stowflow.duties.shock`: Joukowsky surge with Korteweg's wave speed, and the
  accumulator that keeps the peak at a limit (:func:`size_shock`);
* :mod:`~stowflow.duties.thermal_expansion`: a blocked-in oil volume that heats up
  (:func:`size_thermal`);
* :mod:`~stowflow.duties.properties`: oil and pipe defaults with their sources.
"""

from __future__ import annotations

from stowflow.duties.motions import Motion, read_motions
from stowflow.duties.reserve import ReserveResult, reserve_pressures, size_reserve
from stowflow.duties.shock import (
    ShockResult,
    column_energy,
    gas_absorption,
    size_shock,
    surge_pressure,
    wave_speed,
)
from stowflow.duties.thermal_expansion import (
    ThermalResult,
    blocked_pressure_rise,
    expansion_volume,
    size_thermal,
)

__all__ = [
    "Motion",
    "ReserveResult",
    "ShockResult",
    "ThermalResult",
    "blocked_pressure_rise",
    "column_energy",
    "expansion_volume",
    "gas_absorption",
    "read_motions",
    "reserve_pressures",
    "size_reserve",
    "size_shock",
    "size_thermal",
    "surge_pressure",
    "wave_speed",
]
