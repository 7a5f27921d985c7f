"""Shock absorption: a fast valve closure on a moving oil column, and the accumulator that damps it.

Without an accumulator
----------------------
Closing a valve faster than the pressure wave's round trip :math:`2L/a` stops the column at
the valve against the oil's and the pipe's elasticity.  The pressure rise is Joukowsky's

.. math:: \\Delta p = \\rho\\, a\\, \\Delta v

with the wave speed of oil in an elastic thin-walled pipe (Korteweg):

.. math:: a = \\sqrt{\\frac{K/\\rho}{1 + c_1 \\dfrac{K D}{E e}}}

(K bulk modulus of the oil, D inner diameter, e wall thickness, E the wall's Young's modulus,
:math:`c_1` the constraint factor: 1 for a pipe free to move axially, as in Korteweg's
original; :math:`1-\\nu^2` anchored throughout; :math:`1-\\nu/2` anchored at the upstream end
only, Wylie & Streeter, from memory).  A slower closure, :math:`t_c > 2L/a`, lets the relief
wave come back first; Michaud's estimate is :math:`\\Delta p \\approx 2\\rho L \\Delta v / t_c`.

With an accumulator at the valve
--------------------------------
The column is treated as one rigid body (lumped) that an accumulator right at the valve
stops.  The upstream end holds the operating pressure :math:`p_1`, so the column's kinetic
energy plus the flow work the upstream pressure does go into the gas, compressed
adiabatically from :math:`p_1` (settled at T) to the peak :math:`p_2`:

.. math::
    \\tfrac12 \\rho A L v^2 = m\\,[\\,u(p_2, s_1) - u(p_1, T)\\,]
        - p_1\\, m\\,(v_{g,1} - v_{g,2})

(u specific internal energy, :math:`v_g = 1/\\rho_g` specific volume of the gas, the path an
isentrope on the real-gas equation of state).  For the ideal gas this is the closed form

.. math::
    \\tfrac12 \\rho A L v^2 = p_1 V_1 \\left[\\frac{(p_2/p_1)^{(\\kappa-1)/\\kappa} - 1}
        {\\kappa - 1} - 1 + (p_1/p_2)^{1/\\kappa}\\right]

The needed mass m fixes the gas volume at precharge, :math:`V_0 = m/\\rho(p_{0,ref}, 20\\,°C)`.
Oil compressibility and pipe stretch are neglected (they would absorb part of the energy,
so this errs on the safe side); the lumped model holds when the column stops in a time long
against :math:`2L/a` (both are reported).

References
----------
.. [1] N. Joukowsky, "Über den hydraulischen Stoss in Wasserleitungsröhren", Mémoires de
   l'Académie Impériale des Sciences de St.-Pétersbourg, 8th series, 9(5) (1900) (Russian
   original 1898); English translation by O. Simin, Proc. American Water Works Association
   24, 341-424 (1904) (from memory).
.. [2] D. J. Korteweg, "Ueber die Fortpflanzungsgeschwindigkeit des Schalles in elastischen
   Röhren", Annalen der Physik 241(12), 525-542 (1878), doi:10.1002/andp.18782411206 (from
   memory).
.. [3] E. B. Wylie, V. L. Streeter, *Fluid Transients in Systems*, Prentice Hall (1993),
   ISBN 0-13-322173-5 (wave speed with constraint factors; from memory).
.. [4] J. Michaud, "Coups de bélier dans les conduites. Étude des moyens employés pour en
   atténuer les effets", Bulletin de la Société Vaudoise des Ingénieurs et des Architectes 4
   (1878) (slow-closure estimate; from memory).
.. [5] Y. A. Çengel, M. A. Boles, *Thermodynamics: An Engineering Approach*, 8th ed.,
   McGraw-Hill (2015), ISBN 978-0-07-339817-4 (first law, isentropic relations).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

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
from stowflow.duties.properties import OIL_BULK_MODULUS, OIL_DENSITY, SOURCES, STEEL_MODULUS
from stowflow.duties.sizing import _temperature_grid
from stowflow.errors import SizingError
from stowflow.physics.gas import KAPPA, R_SPECIFIC, density, precharge_at
from stowflow.physics.nitrogen import fields_rhoT, isentrope_T_at_p
from stowflow.units import BAR, P_AMBIENT, T_REF, bar_gauge

__all__ = [
    "ShockResult",
    "column_energy",
    "gas_absorption",
    "size_shock",
    "surge_pressure",
    "wave_speed",
]

#: Accepted constraint factors c1, [-]: 1 − ν/2, 1 − ν² and 1 lie in here for any metal.
_CONSTRAINT_RANGE = (0.5, 1.25)


def wave_speed(
    bulk_modulus: float,
    density: float,
    diameter: float | None = None,
    wall: float | None = None,
    pipe_modulus: float = STEEL_MODULUS,
    constraint: float = 1.0,
) -> float:
    """Pressure-wave speed of a liquid in a thin-walled elastic pipe (Korteweg).

    .. math:: a = \\sqrt{\\frac{K/\\rho}{1 + c_1 K D / (E e)}}

    Parameters
    ----------
    bulk_modulus : float
        Bulk modulus of the liquid K, [Pa].
    density : float
        Density of the liquid ρ, [kg/m³].
    diameter : float, optional
        Inner diameter D, [m]; without it the pipe is rigid, :math:`a = \\sqrt{K/\\rho}`.
    wall : float, optional
        Wall thickness e, [m]; needed with ``diameter``.
    pipe_modulus : float
        Young's modulus of the wall E, [Pa] (default carbon steel, 210 GPa, from memory).
    constraint : float
        Constraint factor :math:`c_1`, [-] (1: free to move axially).

    Returns
    -------
    float
        Wave speed, [m/s].

    Notes
    -----
    Thin-walled pipes (D/e above about 20); thick walls and hoses need their own effective
    modulus.

    References
    ----------
    D. J. Korteweg, Annalen der Physik 241(12), 525-542 (1878),
    doi:10.1002/andp.18782411206; E. B. Wylie, V. L. Streeter, *Fluid Transients in Systems*,
    Prentice Hall (1993), ISBN 0-13-322173-5 (both from memory).
    """
    check_positive("bulk modulus", bulk_modulus, bulk_modulus / 1e9, "GPa")
    check_positive("oil density", density, density, "kg/m³")
    stiffness = 0.0
    if diameter is not None or wall is not None:
        if diameter is None or wall is None:
            raise SizingError("the pipe wall needs both the inner diameter and the thickness")
        check_positive("pipe inner diameter", diameter, diameter * 1e3, "mm")
        check_positive("pipe wall thickness", wall, wall * 1e3, "mm")
        check_positive("pipe modulus", pipe_modulus, pipe_modulus / 1e9, "GPa")
        if not _CONSTRAINT_RANGE[0] <= constraint <= _CONSTRAINT_RANGE[1]:
            raise SizingError(
                f"constraint factor c1 = {constraint:g} is outside {_CONSTRAINT_RANGE[0]:g}…"
                f"{_CONSTRAINT_RANGE[1]:g} (1: free to move; 1 − ν²: anchored throughout)"
            )
        stiffness = constraint * bulk_modulus * diameter / (pipe_modulus * wall)
    return math.sqrt(bulk_modulus / density / (1.0 + stiffness))


def surge_pressure(
    density: float,
    wave_speed: float,
    delta_v: float,
    length: float | None = None,
    closure_time: float = 0.0,
) -> float:
    """Pressure rise when a valve stops the flow: Joukowsky, or Michaud for slow closures.

    .. math::
        \\Delta p = \\rho a \\Delta v \\quad (t_c \\le 2L/a), \\qquad
        \\Delta p = \\frac{2 \\rho L \\Delta v}{t_c} \\quad (t_c > 2L/a)

    Parameters
    ----------
    density : float
        Liquid density, [kg/m³].
    wave_speed : float
        Wave speed a, [m/s].
    delta_v : float
        Velocity change, [m/s].
    length : float, optional
        Pipe length from the valve to the reflecting end, [m]; needed when
        ``closure_time`` > 0.
    closure_time : float
        Effective valve closure time, [s]; 0 is sudden.

    Returns
    -------
    float
        Pressure rise at the valve, [Pa].

    References
    ----------
    N. Joukowsky (1898/1900) and J. Michaud (1878), from memory (see the module references).
    """
    check_positive("velocity change", delta_v, delta_v, "m/s")
    check_positive("closure time", closure_time, closure_time, "s", zero=True)
    joukowsky = density * wave_speed * delta_v
    if closure_time == 0.0:
        return joukowsky
    if length is None:
        raise SizingError("a closure time needs the pipe length to compare it with 2L/a")
    if closure_time <= 2.0 * length / wave_speed:
        return joukowsky
    return 2.0 * density * length * delta_v / closure_time


def column_energy(density: float, area: float, length: float, velocity: float) -> float:
    """Kinetic energy of the oil column, :math:`E_k = \\tfrac12 \\rho A L v^2`.

    Parameters
    ----------
    density : float
        Oil density, [kg/m³].
    area : float
        Flow area of the pipe, [m²].
    length : float
        Column length, [m].
    velocity : float
        Flow velocity, [m/s].

    Returns
    -------
    float
        Kinetic energy, [J].
    """
    return 0.5 * density * area * length * velocity**2


def gas_absorption(p1, p2, T, model: str = "real") -> dict:
    """Energy a unit mass of nitrogen takes up when a column compresses it from p1 to p2.

    Adiabatic (isentropic) compression from the settled state :math:`(p_1, T)`, less the flow
    work of the constant upstream pressure :math:`p_1`:

    .. math:: e = u_2 - u_1 - p_1 \\left(\\frac{1}{\\rho_1} - \\frac{1}{\\rho_2}\\right)

    Parameters
    ----------
    p1 : array_like
        Operating pressure, absolute, [Pa].
    p2 : array_like
        Peak pressure, absolute, [Pa].
    T : array_like
        Gas temperature before the shock, [K].
    model : {"real", "ideal"}
        Gas model.

    Returns
    -------
    dict
        ``energy`` [J/kg], ``rho1`` and ``rho2`` [kg/m³], ``T2`` gas temperature at the
        peak [K] (numpy arrays).
    """
    p1, p2, T = (np.atleast_1d(np.asarray(a, dtype=float)) for a in (p1, p2, T))
    p1, p2, T = np.broadcast_arrays(p1, p2, T)
    rho1 = np.asarray(density(p1, T, model), dtype=float)
    if model == "ideal":
        ratio = p2 / p1
        T2 = T * ratio ** ((KAPPA - 1.0) / KAPPA)
        rho2 = rho1 * ratio ** (1.0 / KAPPA)
        du = R_SPECIFIC / (KAPPA - 1.0) * (T2 - T)
    else:
        s1, u1 = fields_rhoT(rho1, T, "table", ("s", "u"))
        T2 = isentrope_T_at_p(p2, s1, T * (p2 / p1) ** ((KAPPA - 1.0) / KAPPA), "table")
        rho2 = np.asarray(density(p2, T2, model), dtype=float)
        du = fields_rhoT(rho2, T2, "table", ("u",))[0] - u1
    return {"energy": du - p1 * (1.0 / rho1 - 1.0 / rho2), "rho1": rho1, "rho2": rho2, "T2": T2}


@dataclass(frozen=True)
class ShockResult:
    """Result of :func:`size_shock` (SI; :meth:`as_dict` gives trade units).

    Attributes
    ----------
    length, diameter, wall : float
        Pipe length, inner diameter and wall thickness, [m].
    velocity : float
        Flow velocity stopped by the valve, [m/s].
    p_operating, p_limit : float
        Operating pressure and allowed peak, absolute, [Pa].
    oil_density, bulk_modulus, pipe_modulus : float
        ρ [kg/m³], K [Pa], E [Pa].
    closure_time : float
        Valve closure time, [s].
    wave_speed, rigid_wave_speed : float
        Wave speed in the pipe and in a rigid pipe, [m/s].
    reflection_time : float
        Round trip of the wave 2L/a, [s].
    surge : float
        Pressure rise without an accumulator, [Pa].
    column_energy : float
        Kinetic energy of the column, [J].
    precharge_ref : float
        Precharge at 20 °C, absolute, [Pa].
    precharge_by_rule : bool
        True when the type's rule set the precharge.
    required_gas_volume : float
        Gas volume V0 that keeps the peak at the limit at every temperature, [m³].
    worst_temperature : float
        Temperature that needs the largest V0, [K].
    per_temperature : pandas.DataFrame
        Per temperature: precharge, gas volume at operating pressure, V0, oil taken up and
        gas temperature at the peak.
    stopping_time : float
        Quarter period of the column on the linearised gas spring at the worst temperature, [s].
    limits : dict
        Type limits, shell volume and category hint.
    model : str
        Gas model.
    notes : tuple of str
        Remarks.
    """

    length: float
    diameter: float
    wall: float
    velocity: float
    p_operating: float
    p_limit: float
    oil_density: float
    bulk_modulus: float
    pipe_modulus: float
    closure_time: float
    wave_speed: float
    rigid_wave_speed: float
    reflection_time: float
    surge: float
    column_energy: float
    precharge_ref: float
    precharge_by_rule: bool
    required_gas_volume: float
    worst_temperature: float
    per_temperature: pd.DataFrame = field(repr=False)
    stopping_time: float = math.nan
    limits: dict = field(default_factory=dict, repr=False)
    model: str = "real"
    notes: tuple[str, ...] = ()

    @property
    def needed(self) -> bool:
        """True when the peak without an accumulator exceeds the allowed peak."""
        return self.p_operating + self.surge > self.p_limit

    def as_dict(self) -> dict:
        """JSON-ready result in trade units (bar gauge, L, mm, m/s, ms, °C)."""
        return {
            "schema": "stowflow.shock/1",
            "duty": "shock",
            "gas_model": self.model,
            "process": "adiabatic",
            "pipe": {
                "length_m": self.length,
                "inner_diameter_mm": self.diameter * 1e3,
                "wall_mm": self.wall * 1e3,
                "modulus_gpa": self.pipe_modulus / 1e9,
            },
            "oil": {"density_kg_m3": self.oil_density, "bulk_modulus_gpa": self.bulk_modulus / 1e9},
            "velocity_m_s": self.velocity,
            "operating_pressure_bar": bar_gauge(self.p_operating),
            "allowed_peak_bar": bar_gauge(self.p_limit),
            "closure_time_s": self.closure_time,
            "wave_speed_m_s": self.wave_speed,
            "rigid_pipe_wave_speed_m_s": self.rigid_wave_speed,
            "reflection_time_ms": self.reflection_time * 1e3,
            "surge_without_accumulator_bar": self.surge / BAR,
            "peak_without_accumulator_bar": bar_gauge(self.p_operating + self.surge),
            "accumulator_needed": self.needed,
            "column_energy_j": self.column_energy,
            "precharge_bar_at_20c": bar_gauge(self.precharge_ref),
            "precharge_by_rule": self.precharge_by_rule,
            "required_gas_volume_l": litre(self.required_gas_volume),
            "worst_temperature_c": celsius(self.worst_temperature),
            "stopping_time_ms": self.stopping_time * 1e3,
            "per_temperature": self.per_temperature.to_dict(orient="records"),
            "limits": self.limits,
            "sources": {
                k: SOURCES[k] for k in ("oil_density", "oil_bulk_modulus", "steel_modulus")
            },
            "notes": list(self.notes),
            "safety": list(SAFETY),
        }


def size_shock(
    length: float,
    diameter: float,
    wall: float,
    velocity: float,
    p_operating: float,
    p_limit: float,
    *,
    oil_density: float = OIL_DENSITY,
    bulk_modulus: float = OIL_BULK_MODULUS,
    pipe_modulus: float = STEEL_MODULUS,
    constraint: float = 1.0,
    closure_time: float = 0.0,
    precharge: float | None = None,
    model: str = "real",
    T_min: float = T_REF,
    T_max: float | None = None,
    acc_type: str = "bladder",
    max_allowable_pressure: float | None = None,
) -> ShockResult:
    """Surge without an accumulator, and the accumulator that keeps the peak at a limit.

    .. math::
        V_0 = \\max_T \\frac{E_k}{e(p_1, p_2, T)\\, \\rho(p_{0,ref}, 293.15\\,K)}

    Parameters
    ----------
    length : float
        Length of the oil column (valve to the upstream pressure source), [m].
    diameter : float
        Inner diameter of the pipe, [m].
    wall : float
        Wall thickness, [m].
    velocity : float
        Flow velocity before the closure, [m/s].
    p_operating : float
        Operating pressure at the valve before the closure, absolute, [Pa].
    p_limit : float
        Allowed peak pressure, absolute, [Pa].
    oil_density : float
        Oil density, [kg/m³].
    bulk_modulus : float
        Oil bulk modulus, [Pa].
    pipe_modulus : float
        Young's modulus of the pipe wall, [Pa].
    constraint : float
        Korteweg constraint factor c1, [-].
    closure_time : float
        Valve closure time, [s]; 0 is sudden.
    precharge : float, optional
        Precharge at 20 °C, absolute, [Pa]; default the type's rule for the operating
        pressure at the hottest temperature.
    model : {"real", "ideal"}
        Gas model.
    T_min : float
        Lowest gas temperature, [K].
    T_max : float, optional
        Highest gas temperature, [K]; default ``T_min``.
    acc_type : str
        Accumulator type (precharge rule and limits).
    max_allowable_pressure : float, optional
        Vessel PS, absolute, [Pa].

    Returns
    -------
    ShockResult
        Wave speed, surge, and the accumulator.

    Raises
    ------
    SizingError
        Impossible input: allowed peak not above the operating pressure, non-positive
        dimensions or velocity, precharge at or above the operating pressure.
    """
    T_max = T_min if T_max is None else T_max
    _check_duty(length, velocity, p_operating, p_limit)
    a = wave_speed(bulk_modulus, oil_density, diameter, wall, pipe_modulus, constraint)
    a_rigid = wave_speed(bulk_modulus, oil_density)
    surge = surge_pressure(oil_density, a, velocity, length, closure_time)
    area = math.pi / 4.0 * diameter**2
    e_k = column_energy(oil_density, area, length, velocity)
    p0_ref, by_rule = resolve_precharge(precharge, acc_type, p_operating, T_max, model)
    ts = _temperature_grid(T_min, T_max)
    p0_T = _precharge_below(p0_ref, ts, model, p_operating)
    gas = gas_absorption(p_operating, p_limit, ts, model)
    mass = e_k / gas["energy"]
    v0 = mass / float(density(p0_ref, T_REF, model))
    k = int(np.argmax(v0))
    per_t = _per_temperature(ts, p0_T, mass, v0, gas)
    t_stop = _stopping_time(p_operating, area, oil_density, length, float(mass[k] / gas["rho1"][k]))
    v_req = float(v0[k])
    limits = type_report(
        acc_type, p0_ref, p_operating, p_limit, T_min, T_max, v_req, model, max_allowable_pressure
    )
    result = ShockResult(
        length=float(length),
        diameter=float(diameter),
        wall=float(wall),
        velocity=float(velocity),
        p_operating=float(p_operating),
        p_limit=float(p_limit),
        oil_density=float(oil_density),
        bulk_modulus=float(bulk_modulus),
        pipe_modulus=float(pipe_modulus),
        closure_time=float(closure_time),
        wave_speed=a,
        rigid_wave_speed=a_rigid,
        reflection_time=2.0 * length / a,
        surge=surge,
        column_energy=e_k,
        precharge_ref=p0_ref,
        precharge_by_rule=by_rule,
        required_gas_volume=v_req,
        worst_temperature=float(ts[k]),
        per_temperature=per_t,
        stopping_time=t_stop,
        limits=limits,
        model=model,
    )
    return _with_notes(result)


def _check_duty(length: float, velocity: float, p_operating: float, p_limit: float) -> None:
    """Refuse a column or pressures that :func:`size_shock` cannot size for."""
    check_positive("pipe length", length, length, "m")
    check_positive("flow velocity", velocity, velocity, "m/s")
    if not (math.isfinite(p_operating) and p_operating > P_AMBIENT):
        raise SizingError(
            f"operating pressure must be above ambient; got {bar_gauge(p_operating):g} bar"
        )
    if not (math.isfinite(p_limit) and p_limit > p_operating):
        raise SizingError(
            f"allowed peak {bar_gauge(p_limit):g} bar must exceed the operating pressure "
            f"{bar_gauge(p_operating):g} bar (gauge)"
        )


def _precharge_below(p0_ref: float, ts: np.ndarray, model: str, p_operating: float) -> np.ndarray:
    """Precharge at each temperature [Pa]; SizingError where it reaches the operating pressure."""
    p0_T = np.atleast_1d(precharge_at(p0_ref, ts, model))
    if not np.all(p0_T < p_operating):
        t_bad = float(ts[np.argmax(p0_T >= p_operating)])
        raise SizingError(
            f"at {celsius(t_bad):.4g} °C the precharge reaches the operating pressure "
            f"{bar_gauge(p_operating):g} bar, so the accumulator is empty; lower the precharge"
        )
    return p0_T


def _per_temperature(ts, p0_T, mass, v0, gas: dict) -> pd.DataFrame:
    """The per-temperature table of :class:`ShockResult` (trade units)."""
    v1 = mass / gas["rho1"]
    return pd.DataFrame(
        {
            "temperature [°C]": [celsius(t) for t in ts],
            "precharge [bar]": [bar_gauge(p) for p in p0_T],
            "gas_volume_at_operating_pressure [L]": [litre(x) for x in v1],
            "gas_volume [L]": [litre(x) for x in v0],
            "oil_taken_up [L]": [litre(x) for x in mass * (1 / gas["rho1"] - 1 / gas["rho2"])],
            "gas_temperature_at_peak [°C]": [celsius(t) for t in gas["T2"]],
        }
    )


def _stopping_time(
    p_operating: float, area: float, oil_density: float, length: float, v1: float
) -> float:
    """Quarter period of the column on the linearised gas spring, [s].

    ω² = κ p1 A / (ρ L V1), with V1 the gas volume at the operating pressure [m³].
    """
    omega = math.sqrt(KAPPA * p_operating * area / (oil_density * length * v1))
    return math.pi / (2.0 * omega)


def _with_notes(r: ShockResult) -> ShockResult:
    notes = []
    if not r.needed:
        notes.append(
            f"the peak without an accumulator, {bar_gauge(r.p_operating + r.surge):.4g} bar, is "
            f"already below the allowed {bar_gauge(r.p_limit):.4g} bar: no shock accumulator is "
            "needed; the volume is shown for comparison"
        )
    if r.closure_time > r.reflection_time:
        notes.append(
            f"closure {r.closure_time:g} s is slower than 2L/a = {r.reflection_time * 1e3:.3g} ms: "
            "the surge is Michaud's estimate 2ρLv/t_c, not the full Joukowsky rise"
        )
    if r.stopping_time < 2.0 * r.reflection_time:
        notes.append(
            f"the column stops in about {r.stopping_time * 1e3:.3g} ms, not long against "
            f"2L/a = {r.reflection_time * 1e3:.3g} ms: the rigid-column energy balance is a "
            "rough estimate here; analyse the transient (method of characteristics)"
        )
    notes.append(
        "place the accumulator right at the valve with a short, wide connection; the "
        "connecting line's own inertia and the separator's response time are not modelled"
    )
    notes.append(
        "the pressure rise assumes no cavitation and no reflection at tees or diameter changes"
        " (Joukowsky's rise can be exceeded there)"
    )
    return replace(r, notes=tuple(notes))
