"""Thermal expansion: a blocked-in oil volume heats up, and the accumulator that takes the growth.

A closed circuit (valves shut, a cylinder held) of oil volume V warms from :math:`T_1` to
:math:`T_2`.  The oil grows faster than the steel around it:

.. math:: \\Delta V = V\\, (\\beta_{oil} - \\beta_{pipe})\\, (T_2 - T_1),
          \\qquad \\beta_{pipe} = 3\\alpha_{steel}

(linear in ΔT: the coefficients are nearly constant over a few tens of kelvin).  Without an
accumulator the oil can only compress, and the pressure rises by

.. math:: \\Delta p = K\\, \\frac{\\Delta V}{V}

(about 11 bar per kelvin for mineral oil in steel with the defaults; rigid container, so the
conservative side).  With an accumulator the growth goes into the gas.  Heating is slow, so
the gas follows the oil's temperature (isothermal at each temperature, on the isochore of the
precharge):

.. math::
    V_0 = \\frac{\\Delta V}{f(p_{max}, T_2) - f(p_{start}, T_1)}, \\qquad
    f(p, T) = 1 - \\frac{\\rho(p_{0,ref}, 293.15\\,K)}{\\rho(p, T)}\\ (p > p_0(T))

where f is the stored-oil fraction of :func:`stowflow.physics.gas.oil_fraction`.  The oil's own
compression and the pipe's stretch under pressure are neglected in the sizing (they would add
room, so the volume errs on the safe side).

Coefficients (defaults in :mod:`stowflow.duties.properties`): mineral oil
:math:`\\beta_{oil}` = 7.0e-4 1/K, steel :math:`\\alpha` = 12e-6 1/K, K = 1.7 GPa, all from
memory.

References
----------
.. [1] API *Manual of Petroleum Measurement Standards*, Chapter 11.1 / ASTM D1250 (volume
   correction of lubricating oils; from memory).
.. [2] Y. A. Çengel, M. A. Boles, *Thermodynamics: An Engineering Approach*, 8th ed.,
   McGraw-Hill (2015), ISBN 978-0-07-339817-4 (thermal expansion, compressibility).
.. [3] R. Span et al., J. Phys. Chem. Ref. Data 29(6), 1361-1433 (2000),
   doi:10.1063/1.1349047 (real-gas nitrogen).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from stowflow.duties._common import (
    SAFETY,
    celsius,
    check_positive,
    litre,
    resolve_precharge,
    type_report,
)
from stowflow.duties.properties import (
    OIL_BULK_MODULUS,
    OIL_EXPANSION,
    SOURCES,
    STEEL_EXPANSION,
)
from stowflow.errors import SizingError
from stowflow.physics.gas import ISOTHERMAL, oil_fraction, precharge_at, pressure_at_oil_fraction
from stowflow.units import BAR, P_AMBIENT, bar_gauge

__all__ = [
    "ThermalResult",
    "blocked_pressure_rise",
    "expansion_volume",
    "size_thermal",
]

#: Rows of the pressure-versus-temperature table, [-].
N_ROWS = 9


def expansion_volume(
    oil_volume,
    T1,
    T2,
    oil_expansion: float = OIL_EXPANSION,
    container_expansion: float = 3.0 * STEEL_EXPANSION,
):
    """Net growth of a blocked-in oil volume heated from T1 to T2.

    .. math:: \\Delta V = V\\, (\\beta_{oil} - \\beta_{c})\\, (T_2 - T_1)

    Parameters
    ----------
    oil_volume : array_like
        Blocked-in oil volume at T1, [m³].
    T1, T2 : array_like
        Start and end temperature, [K].
    oil_expansion : float
        Volumetric expansion coefficient of the oil, [1/K].
    container_expansion : float
        Volumetric expansion coefficient of the pipes and bores, [1/K] (steel: 3α).

    Returns
    -------
    float or numpy.ndarray
        Volume the oil needs beyond the container's growth, [m³].
    """
    dv = (
        np.asarray(oil_volume, dtype=float)
        * (oil_expansion - container_expansion)
        * (np.asarray(T2, dtype=float) - np.asarray(T1, dtype=float))
    )
    return float(dv) if np.ndim(dv) == 0 else dv


def blocked_pressure_rise(oil_volume, delta_volume, bulk_modulus: float = OIL_BULK_MODULUS):
    """Pressure rise of a blocked-in oil volume that cannot grow, :math:`\\Delta p = K \\Delta V/V`.

    Parameters
    ----------
    oil_volume : array_like
        Blocked-in oil volume, [m³].
    delta_volume : array_like
        Growth the oil would need, [m³].
    bulk_modulus : float
        Oil bulk modulus, [Pa].

    Returns
    -------
    float or numpy.ndarray
        Pressure rise, [Pa] (linear compressibility: a rigid container, constant K).
    """
    dp = bulk_modulus * np.asarray(delta_volume, dtype=float) / np.asarray(oil_volume, dtype=float)
    return float(dp) if np.ndim(dp) == 0 else dp


@dataclass(frozen=True)
class ThermalResult:
    """Result of :func:`size_thermal`.

    Attributes
    ----------
    oil_volume : float
        Blocked-in oil volume at T1, [m³].
    T1, T2 : float
        Start and end temperature, [K].
    p_start, p_limit : float
        Pressure when blocked in (at T1) and the limit, absolute, [Pa].
    oil_expansion, container_expansion : float
        Volumetric expansion coefficients, [1/K].
    bulk_modulus : float
        Oil bulk modulus, [Pa].
    expansion : float
        Net growth of the oil, [m³].
    pressure_rise_without : float
        Pressure rise without an accumulator, [Pa].
    precharge_ref : float
        Precharge at 20 °C, absolute, [Pa].
    precharge_by_rule : bool
        True when the type's rule set the precharge.
    required_gas_volume : float
        Gas volume V0, [m³].
    table : pandas.DataFrame
        Pressure with and without the accumulator from T1 to T2.
    limits : dict
        Type limits, shell volume and category hint.
    model : str
        Gas model.
    notes : tuple of str
        Remarks.
    """

    oil_volume: float
    T1: float
    T2: float
    p_start: float
    p_limit: float
    oil_expansion: float
    container_expansion: float
    bulk_modulus: float
    expansion: float
    pressure_rise_without: float
    precharge_ref: float
    precharge_by_rule: bool
    required_gas_volume: float
    table: pd.DataFrame = field(repr=False)
    limits: dict = field(default_factory=dict, repr=False)
    model: str = "real"
    notes: tuple[str, ...] = ()

    def as_dict(self) -> dict:
        """JSON-ready result in trade units (bar gauge, L, °C)."""
        return {
            "schema": "stowflow.thermal/1",
            "duty": "thermal",
            "gas_model": self.model,
            "process": "isothermal",
            "oil_volume_l": litre(self.oil_volume),
            "temperature_c": {"start": celsius(self.T1), "end": celsius(self.T2)},
            "start_pressure_bar": bar_gauge(self.p_start),
            "pressure_limit_bar": bar_gauge(self.p_limit),
            "oil_expansion_per_k": self.oil_expansion,
            "container_expansion_per_k": self.container_expansion,
            "bulk_modulus_gpa": self.bulk_modulus / 1e9,
            "expansion_l": litre(self.expansion),
            "pressure_rise_without_accumulator_bar": self.pressure_rise_without / BAR,
            "pressure_without_accumulator_bar": bar_gauge(
                self.p_start + self.pressure_rise_without
            ),
            "pressure_rise_per_kelvin_bar": self.pressure_rise_without / BAR / (self.T2 - self.T1),
            "precharge_bar_at_20c": bar_gauge(self.precharge_ref),
            "precharge_by_rule": self.precharge_by_rule,
            "required_gas_volume_l": litre(self.required_gas_volume),
            "table": self.table.to_dict(orient="records"),
            "limits": self.limits,
            "sources": {k: SOURCES[k] for k in ("oil_expansion", "steel_expansion")}
            | {"oil_bulk_modulus": SOURCES["oil_bulk_modulus"]},
            "notes": list(self.notes),
            "safety": list(SAFETY),
        }


def size_thermal(
    oil_volume: float,
    T1: float,
    T2: float,
    p_start: float,
    p_limit: float,
    *,
    precharge: float | None = None,
    model: str = "real",
    oil_expansion: float = OIL_EXPANSION,
    container_expansion: float = 3.0 * STEEL_EXPANSION,
    bulk_modulus: float = OIL_BULK_MODULUS,
    acc_type: str = "bladder",
    max_allowable_pressure: float | None = None,
) -> ThermalResult:
    """Accumulator that keeps a blocked-in, heating oil volume below a pressure limit.

    .. math::
        V_0 = \\frac{V(\\beta_{oil} - \\beta_c)(T_2 - T_1)}
                    {f(p_{max}, T_2) - f(p_{start}, T_1)}

    Parameters
    ----------
    oil_volume : float
        Blocked-in oil volume at T1, [m³].
    T1, T2 : float
        Temperature when blocked in and the highest it reaches, T2 > T1, [K].
    p_start : float
        Pressure when blocked in, absolute, [Pa].
    p_limit : float
        Pressure that must not be exceeded, absolute, [Pa].
    precharge : float, optional
        Precharge at 20 °C, absolute, [Pa]; default the type's rule for ``p_start`` at T1
        (below the start pressure the accumulator starts empty; give a precharge then).
    model : {"real", "ideal"}
        Gas model.
    oil_expansion, container_expansion : float
        Volumetric expansion coefficients of the oil and of the pipes, [1/K].
    bulk_modulus : float
        Oil bulk modulus for the pressure rise without an accumulator, [Pa].
    acc_type : str
        Accumulator type (precharge rule and limits).
    max_allowable_pressure : float, optional
        Vessel PS, absolute, [Pa].

    Returns
    -------
    ThermalResult
        Growth, pressure rise without an accumulator, and the accumulator.

    Raises
    ------
    SizingError
        Impossible input: T2 ≤ T1, limit not above the start pressure, container growing as
        fast as the oil, precharge at or above the limit.
    """
    _check_duty(
        oil_volume, T1, T2, p_start, p_limit, oil_expansion, container_expansion, bulk_modulus
    )
    dv = expansion_volume(oil_volume, T1, T2, oil_expansion, container_expansion)
    dp = blocked_pressure_rise(oil_volume, dv, bulk_modulus)
    p0_ref, by_rule = resolve_precharge(precharge, acc_type, p_start, T1, model)
    f1 = float(oil_fraction(p_start, p0_ref, T1, ISOTHERMAL, model))
    f2 = float(oil_fraction(p_limit, p0_ref, T2, ISOTHERMAL, model))
    if not f2 > f1:
        p0_hot = bar_gauge(float(precharge_at(p0_ref, T2, model)))
        raise SizingError(
            f"at {celsius(T2):.4g} °C the precharge {p0_hot:.4g} bar reaches the limit "
            f"{bar_gauge(p_limit):g} bar, so the accumulator takes up no oil; lower the precharge"
        )
    v0 = dv / (f2 - f1)
    ts = np.linspace(T1, T2, N_ROWS)
    grown = np.asarray(expansion_volume(oil_volume, T1, ts, oil_expansion, container_expansion))
    table = _pressure_table(ts, grown, oil_volume, bulk_modulus, p_start, p0_ref, f1, v0, model)
    limits = type_report(
        acc_type, p0_ref, p_start, p_limit, T1, T1, v0, model, max_allowable_pressure
    )
    return ThermalResult(
        oil_volume=float(oil_volume),
        T1=float(T1),
        T2=float(T2),
        p_start=float(p_start),
        p_limit=float(p_limit),
        oil_expansion=float(oil_expansion),
        container_expansion=float(container_expansion),
        bulk_modulus=float(bulk_modulus),
        expansion=float(dv),
        pressure_rise_without=float(dp),
        precharge_ref=p0_ref,
        precharge_by_rule=by_rule,
        required_gas_volume=float(v0),
        table=table,
        limits=limits,
        model=model,
        notes=tuple(_notes(p_start, p0_ref, T1, model)),
    )


def _check_duty(
    oil_volume, T1, T2, p_start, p_limit, oil_expansion, container_expansion, bulk_modulus
) -> None:
    """Refuse a volume, temperatures, pressures or coefficients :func:`size_thermal` cannot use."""
    check_positive("blocked-in oil volume", oil_volume, litre(oil_volume), "L")
    check_positive("oil expansion coefficient", oil_expansion, oil_expansion, "1/K")
    check_positive(
        "container expansion coefficient",
        container_expansion,
        container_expansion,
        "1/K",
        zero=True,
    )
    check_positive("bulk modulus", bulk_modulus, bulk_modulus / 1e9, "GPa")
    if not (math.isfinite(T2) and T2 > T1 > 0):
        raise SizingError(
            f"the oil must heat up: end temperature {celsius(T2):g} °C must exceed the start "
            f"{celsius(T1):g} °C"
        )
    if not (math.isfinite(p_start) and p_start >= P_AMBIENT):
        raise SizingError(
            f"start pressure must be at least ambient; got {bar_gauge(p_start):g} bar"
        )
    if not (math.isfinite(p_limit) and p_limit > p_start):
        raise SizingError(
            f"pressure limit {bar_gauge(p_limit):g} bar must exceed the start pressure "
            f"{bar_gauge(p_start):g} bar (gauge)"
        )
    if not oil_expansion > container_expansion:
        raise SizingError(
            f"the container expands ({container_expansion:g} 1/K) at least as fast as the oil "
            f"({oil_expansion:g} 1/K): no growth to absorb"
        )


def _pressure_table(
    ts, grown, oil_volume, bulk_modulus, p_start, p0_ref, f1, v0, model
) -> pd.DataFrame:
    """Pressure with and without the accumulator at the temperatures ``ts`` [K].

    ``grown`` is the oil's growth at each [m³], ``f1`` the oil fraction stored at the start
    [-], ``v0`` the gas volume [m³]; the rest as for :func:`size_thermal`.
    """
    s = np.clip(f1 + grown / v0, 0.0, 1.0 - 1e-12)
    p_with = np.asarray(pressure_at_oil_fraction(s, p0_ref, ts, ISOTHERMAL, model), dtype=float)
    # With the oil taken as incompressible, any growth goes into the gas (p ≥ p0(T)); before
    # any growth the pressure is the start pressure.
    p_with = np.where(s > 0.0, p_with, p_start)
    p0_T = np.asarray(precharge_at(p0_ref, ts, model), dtype=float)
    return pd.DataFrame(
        {
            "temperature [°C]": [celsius(t) for t in ts],
            "growth [L]": [litre(x) for x in grown],
            "pressure_with_accumulator [bar]": [bar_gauge(p) for p in p_with],
            "pressure_without_accumulator [bar]": [
                bar_gauge(p_start + x)
                for x in blocked_pressure_rise(oil_volume, grown, bulk_modulus)
            ],
            "precharge [bar]": [bar_gauge(p) for p in p0_T],
        }
    )


def _notes(p_start: float, p0_ref: float, T1: float, model: str) -> list[str]:
    notes = [
        "heating is slow: the gas follows the oil's temperature (isothermal at each "
        "temperature); the sizing neglects the oil's own compression and the pipe's stretch, "
        "which err on the safe side",
        "the pressure without an accumulator uses a rigid container and a constant bulk "
        "modulus; entrained air and hoses lower it, but trapped oil still reaches dangerous "
        "pressures within a few kelvin",
    ]
    if p_start < float(precharge_at(p0_ref, T1, model)):
        notes.append(
            "the precharge is above the start pressure: the accumulator starts empty and takes "
            "up oil once the pressure passes the precharge"
        )
    return notes
