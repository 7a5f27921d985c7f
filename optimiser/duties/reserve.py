"""Emergency reserve: an accumulator that brings the machine to a safe state when the pump fails.

The accumulator is charged to the charge pressure :math:`p_c` (the lowest pressure at which the
pump may fail: the pressure switch's cut-in point, not the relief setting) and isolated.  The
sequence it must survive, for every temperature T of the range:

1. **charge, settled**: the gas holds :math:`p_c` at T (charging is slow or followed by a rest,
   so heat exchange brings the gas to ambient);
2. **stand-by**: the circuit leaks :math:`Q_L` for the stand-by time :math:`t_{sb}`; this is slow,
   so the gas expands **isothermally** at T;
3. **safe-state motions**, one after the other: motion i draws :math:`\\Delta V_i + Q_L t_i` and
   must end at or above its minimum pressure :math:`p_{min,i}`.  The motions are fast, so by
   default the gas expands **adiabatically** (isentropically on the real-gas equation of state)
   and gets no heat back between motions.

Per unit mass of nitrogen (:math:`v = V/m`), with :math:`m = \\rho(p_{0,ref}, 293.15\\,K)\\,V_0`:

.. math::
    v_c = 1/\\rho(p_c, T), \\quad v_s = v_c + \\frac{Q_L t_{sb}}{m}, \\quad
    v_i = v_s + \\frac{1}{m}\\sum_{j \\le i} (\\Delta V_j + Q_L t_j), \\quad
    s(v_i, T_i) = s(v_s, T)

and the motion is met when :math:`p(v_i, T_i) \\ge p_{min,i}` and :math:`v_i \\le v_0` (oil is
left).  Every pressure rises with m, so the least gas volume is found by a bracketed root search
(Brent) on the smallest margin; the worst temperature of the range sets V0.

Which process governs: the adiabatic one.  An expanding gas that has no time to take up heat
cools, and its pressure falls faster than Boyle's law says, so it needs the larger gas volume.
It applies while a motion is short against the gas's thermal time constant (about 1–10 s for
litre-size units, from memory; :data:`stowflow.physics.thermal.DEFAULT_TIME_CONSTANT`).  Isothermal
expansion is the limit for slow motions, and what the long stand-by does; both volumes are
reported.

References
----------
.. [1] Y. A. Çengel, M. A. Boles, *Thermodynamics: An Engineering Approach*, 8th ed.,
   McGraw-Hill (2015), ISBN 978-0-07-339817-4 (isothermal, isentropic, polytropic relations).
.. [2] A. Esposito, *Fluid Power with Applications*, 7th ed., Pearson (2009),
   ISBN 978-0-13-513690-4, accumulator chapter (Boyle's-law sizing).
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
from stowflow.duties.motions import Motion
from stowflow.duties.sizing import _temperature_grid
from stowflow.errors import SizingError
from stowflow.physics.gas import (
    KAPPA,
    density,
    parse_process,
    precharge_at,
    pressure_from_density,
    temperature_from_density,
)
from stowflow.physics.nitrogen import fields_rhoT, isentrope_T_at_rho
from stowflow.physics.thermal import DEFAULT_TIME_CONSTANT
from stowflow.units import P_AMBIENT, T_REF, bar_gauge, gauge_to_abs, to_unit

__all__ = ["ReserveResult", "reserve_pressures", "size_reserve"]

#: The root search on ln m stops at this step, [-]: V0 to 1e-12 relative.
_XTOL = 1e-12


@dataclass(frozen=True)
class ReserveResult:
    """Result of :func:`size_reserve`.

    Attributes
    ----------
    motions : tuple of Motion
        The safe-state motions.
    charge_pressure : float
        Pressure the accumulator holds when the pump fails, absolute, [Pa].
    leakage : float
        Leakage flow of the isolated circuit, [m³/s].
    standby_time : float
        Time between the pump failing and the first motion, [s].
    process : Process
        Process of the motions (the stand-by is isothermal).
    model : str
        Gas model.
    T_min, T_max : float
        Temperature range, [K].
    precharge_ref : float
        Precharge at 20 °C, absolute, [Pa].
    precharge_by_rule : bool
        True when the type's rule set the precharge.
    acc_type : str
        Accumulator type.
    required_gas_volume : float
        Gas volume V0 that meets every motion at every temperature, [m³].
    worst_temperature : float
        Temperature that needs the largest V0, [K].
    isothermal_gas_volume : float
        V0 if the motions were isothermal (slow motions), [m³].
    adiabatic_gas_volume : float
        V0 if the motions were adiabatic (fast motions), [m³].
    per_temperature : pandas.DataFrame
        ``temperature [°C]``, ``precharge [bar]``, ``gas_volume [L]`` per temperature.
    states : pandas.DataFrame
        Pressures after the stand-by and each motion at the worst temperature.
    limits : dict
        Type limits, shell volume and category hint (see ``type_report``).
    notes : tuple of str
        Remarks (which process governs and why, flow of each motion).
    """

    motions: tuple[Motion, ...]
    charge_pressure: float
    leakage: float
    standby_time: float
    process: object
    model: str
    T_min: float
    T_max: float
    precharge_ref: float
    precharge_by_rule: bool
    acc_type: str
    required_gas_volume: float
    worst_temperature: float
    isothermal_gas_volume: float
    adiabatic_gas_volume: float
    per_temperature: pd.DataFrame = field(repr=False)
    states: pd.DataFrame = field(repr=False)
    limits: dict = field(repr=False)
    notes: tuple[str, ...] = ()

    def as_dict(self) -> dict:
        """JSON-ready result in trade units (bar gauge, L, °C, s)."""
        return {
            "schema": "stowflow.reserve/1",
            "duty": "reserve",
            "gas_model": self.model,
            "process": str(self.process),
            "standby_process": "isothermal",
            "temperature_c": {"min": celsius(self.T_min), "max": celsius(self.T_max)},
            "charge_pressure_bar": bar_gauge(self.charge_pressure),
            "leakage_lpm": float(to_unit(self.leakage, "L/min", "flow")),
            "standby_time_s": self.standby_time,
            "accumulator_type": self.acc_type,
            "precharge_bar_at_20c": bar_gauge(self.precharge_ref),
            "precharge_by_rule": self.precharge_by_rule,
            "required_gas_volume_l": litre(self.required_gas_volume),
            "worst_temperature_c": celsius(self.worst_temperature),
            "gas_volume_if_adiabatic_l": litre(self.adiabatic_gas_volume),
            "gas_volume_if_isothermal_l": litre(self.isothermal_gas_volume),
            "states": self.states.to_dict(orient="records"),
            "per_temperature": self.per_temperature.to_dict(orient="records"),
            "limits": self.limits,
            "notes": list(self.notes),
            "safety": list(SAFETY),
        }


def _draws(motions, leakage) -> np.ndarray:
    """Cumulative oil drawn by the end of each motion, leakage included, [m³]."""
    return np.cumsum([m.volume + leakage * m.time for m in motions])


def _states(mass, rho0, T, p_c, standby_leak, cum, proc, model):
    """Pressure [Pa], gas temperature [K] and specific volume [m³/kg] after each motion.

    Index 0 is the end of the stand-by; 1… the motions.
    """
    v_c = 1.0 / density(p_c, T, model)
    v_s = v_c + standby_leak / mass
    v = np.concatenate(([v_s], v_s + cum / mass))
    rho_s = 1.0 / v_s
    p_s = float(pressure_from_density(rho_s, T, model))
    if proc.kind == "isothermal":
        return np.asarray(pressure_from_density(1.0 / v, T, model)), np.full(v.shape, T), v
    if proc.kind == "polytropic" or model == "ideal":
        p = p_s * (v_s / v) ** proc.n
        if model == "ideal":
            return p, T * (v_s / v) ** (proc.n - 1.0), v
        return p, np.asarray(temperature_from_density(1.0 / v, p, "real"), dtype=float), v
    s_s = fields_rhoT(np.atleast_1d(rho_s), np.atleast_1d(T), "table", ("s",))[0]
    t_gas = isentrope_T_at_rho(1.0 / v, s_s, T * (v_s / v) ** (KAPPA - 1.0), "table")
    return np.asarray(pressure_from_density(1.0 / v, t_gas, model)), t_gas, v


def _margin(log_m, rho0, T, p_c, standby_leak, cum, p_min, proc, model) -> float:
    """Smallest relative margin over the motions, [-]; ≥ 0 when every motion is met."""
    p, _, v = _states(math.exp(log_m), rho0, T, p_c, standby_leak, cum, proc, model)
    v0 = 1.0 / rho0
    return float(min(np.min((p[1:] - p_min) / p_min), np.min((v0 - v) / v0)))


def _least_mass(rho0, T, p_c, standby_leak, cum, p_min, proc, model) -> float:
    """Least nitrogen mass that meets every motion at temperature T, [kg]."""
    from scipy.optimize import brentq  # here: scipy is slow to import and rarely needed

    rho_c = float(density(p_c, T, model))
    rho_min = np.asarray(density(p_min, T, model), dtype=float)
    # Isothermal lower bound: (leak + draw_i) ≤ m (1/ρ(p_min,i) − 1/ρ_c).
    m_lo = float(np.max((standby_leak + cum) / (1.0 / rho_min - 1.0 / rho_c)))
    args = (rho0, T, p_c, standby_leak, cum, p_min, proc, model)
    lo = math.log(m_lo) - 1e-9
    if _margin(lo, *args) >= 0.0:  # the isothermal bound is met already (isothermal process)
        return math.exp(brentq(_margin, lo - 1.0, lo, args=args, xtol=_XTOL))
    hi = lo + math.log(2.0)
    for _ in range(80):
        if _margin(hi, *args) >= 0.0:
            return math.exp(brentq(_margin, lo, hi, args=args, xtol=_XTOL))
        lo, hi = hi, hi + math.log(2.0)
    raise SizingError(  # pragma: no cover - p_c > every p_min guarantees a bracket
        f"no gas volume meets the motions at {celsius(T):.4g} °C"
    )


def _validate(motions, p_c, leakage, standby_time, T_min, T_max) -> None:
    if not motions:
        raise SizingError("an emergency reserve needs at least one motion")
    if not (math.isfinite(p_c) and p_c > gauge_to_abs(0.0)):
        raise SizingError(f"charge pressure must be above ambient; got {bar_gauge(p_c):g} bar")
    check_positive("leakage", leakage, float(to_unit(leakage, "L/min", "flow")), "L/min", zero=True)
    check_positive("stand-by time", standby_time, standby_time, "s", zero=True)
    for m in motions:
        if not m.min_pressure < p_c:
            raise SizingError(
                f"motion '{m.name}' needs {bar_gauge(m.min_pressure):g} bar, not below the charge "
                f"pressure {bar_gauge(p_c):g} bar (gauge): no accumulator can deliver it"
            )
    if not (0 < T_min <= T_max and math.isfinite(T_max)):
        raise SizingError(
            f"temperature range {celsius(T_min):g} … {celsius(T_max):g} °C is not a range"
        )


def reserve_pressures(
    gas_volume: float,
    precharge: float,
    motions,
    charge_pressure: float,
    T: float,
    *,
    leakage: float = 0.0,
    standby_time: float = 0.0,
    process="adiabatic",
    model: str = "real",
) -> pd.DataFrame:
    """Pressures after the stand-by and after each motion for a given accumulator.

    Parameters
    ----------
    gas_volume : float
        Gas volume V0, [m³].
    precharge : float
        Precharge at 20 °C, absolute, [Pa].
    motions : sequence of Motion
        The safe-state motions in order.
    charge_pressure : float
        Pressure when the pump fails, absolute, [Pa].
    T : float
        Ambient (settled gas) temperature, [K].
    leakage : float
        Leakage flow, [m³/s].
    standby_time : float
        Stand-by time before the first motion, [s].
    process : Process or str
        Process of the motions.
    model : {"real", "ideal"}
        Gas model.

    Returns
    -------
    pandas.DataFrame
        One row for the stand-by, then one per motion: ``step``, ``draw [L]``,
        ``min_pressure [bar]``, ``pressure [bar]``, ``margin [bar]``,
        ``gas_temperature [°C]``, ``oil_left [L]``, ``mean_flow [L/min]`` (pressures gauge).
    """
    proc = parse_process(process)
    _validate(motions, charge_pressure, leakage, standby_time, T, T)
    check_positive("gas volume", gas_volume, litre(gas_volume), "L")
    rho0 = float(density(precharge, T_REF, model))
    if not precharge_at(precharge, T, model) < charge_pressure:
        raise SizingError(
            f"at {celsius(T):.4g} °C the precharge reaches the charge pressure; no oil is stored"
        )
    mass = rho0 * gas_volume
    cum = _draws(motions, leakage)
    p, t_gas, v = _states(mass, rho0, T, charge_pressure, leakage * standby_time, cum, proc, model)
    oil_left = np.maximum(gas_volume - mass * v, 0.0)
    rows = [
        {
            "step": "after stand-by",
            "draw [L]": litre(leakage * standby_time),
            "min_pressure [bar]": float("nan"),
            "pressure [bar]": bar_gauge(p[0]),
            "margin [bar]": float("nan"),
            "gas_temperature [°C]": celsius(t_gas[0]),
            "oil_left [L]": litre(oil_left[0]),
            "mean_flow [L/min]": float(to_unit(leakage, "L/min", "flow")),
        }
    ]
    for k, m in enumerate(motions, 1):
        empty = mass * v[k] > gas_volume * (1 + 1e-12)
        rows.append(
            {
                "step": m.name,
                "draw [L]": litre(m.volume + leakage * m.time),
                "min_pressure [bar]": bar_gauge(m.min_pressure),
                "pressure [bar]": float("nan") if empty else bar_gauge(p[k]),
                "margin [bar]": (
                    float("nan") if empty else bar_gauge(p[k]) - bar_gauge(m.min_pressure)
                ),
                "gas_temperature [°C]": celsius(t_gas[k]),
                "oil_left [L]": litre(oil_left[k]),
                "mean_flow [L/min]": (
                    float(to_unit(m.volume / m.time, "L/min", "flow")) if m.time > 0 else math.inf
                ),
            }
        )
    return pd.DataFrame(rows)


def _sized(motions, p_c, leakage, standby_time, p0_ref, proc, model, ts):
    rho0 = float(density(p0_ref, T_REF, model))
    cum = _draws(motions, leakage)
    p_min = np.array([m.min_pressure for m in motions])
    v0 = []
    for T in ts:
        p0_T = float(precharge_at(p0_ref, T, model))
        if not p0_T < p_c:
            raise SizingError(
                f"at {celsius(T):.4g} °C the precharge {bar_gauge(p0_T):.4g} bar reaches the "
                f"charge pressure {bar_gauge(p_c):.4g} bar, so no oil is stored; lower the "
                "precharge"
            )
        mass = _least_mass(rho0, T, p_c, leakage * standby_time, cum, p_min, proc, model)
        v0.append(mass / rho0)
    return np.array(v0)


def _sized_by_process(args: tuple, proc, model: str, ts) -> tuple[np.ndarray, ...]:
    """V0 per temperature [m³] for ``proc``, and for the adiabatic and isothermal processes.

    ``args`` is ``(motions, charge pressure, leakage, stand-by time, precharge)`` as for
    :func:`_sized`; a process already asked for is not sized twice.
    """
    need = _sized(*args, proc, model, ts)
    adiabatic = (
        need if proc.kind == "adiabatic" else _sized(*args, parse_process("adiabatic"), model, ts)
    )
    isothermal = (
        need if proc.kind == "isothermal" else _sized(*args, parse_process("isothermal"), model, ts)
    )
    return need, adiabatic, isothermal


def _lowest_pressure(v0, motions, p_c, leakage, standby_time, p0_ref, proc, model, ts) -> float:
    """Lowest pressure [Pa] the accumulator of gas volume ``v0`` [m³] reaches at any T in ts."""
    rho0 = float(density(p0_ref, T_REF, model))
    cum = _draws(motions, leakage)
    return min(
        float(_states(rho0 * v0, rho0, t, p_c, leakage * standby_time, cum, proc, model)[0][-1])
        for t in ts
    )


def _per_temperature(ts, p0_ref: float, model: str, need) -> pd.DataFrame:
    """Precharge and V0 at each temperature (trade units), :class:`ReserveResult`'s table."""
    return pd.DataFrame(
        {
            "temperature [°C]": [celsius(t) for t in ts],
            "precharge [bar]": [bar_gauge(float(precharge_at(p0_ref, t, model))) for t in ts],
            "gas_volume [L]": [litre(x) for x in need],
        }
    )


def size_reserve(
    motions,
    charge_pressure: float,
    *,
    leakage: float = 0.0,
    standby_time: float = 0.0,
    precharge: float | None = None,
    process="adiabatic",
    model: str = "real",
    T_min: float = T_REF,
    T_max: float | None = None,
    acc_type: str = "bladder",
    max_allowable_pressure: float | None = None,
) -> ReserveResult:
    """Least gas volume that completes every safe-state motion after the pump fails.

    .. math::
        V_0 = \\max_T \\min\\{V : p_i(V, T) \\ge p_{min,i},\\ i = 1 \\ldots n\\}

    Parameters
    ----------
    motions : sequence of Motion
        The safe-state motions in the order they run.
    charge_pressure : float
        Pressure the accumulator holds when the pump fails, absolute, [Pa].
    leakage : float
        Leakage of the isolated circuit (valves, seals), [m³/s].
    standby_time : float
        Time the charge must be held before the motions, [s].
    precharge : float, optional
        Precharge at 20 °C, absolute, [Pa]; default the type's rule at the hottest
        temperature for the last motion's minimum pressure (the lowest the accumulator
        reaches is at the end of the last motion).
    process : Process or str
        Process of the motions: ``"adiabatic"`` (fast, default), ``"isothermal"`` or
        ``"polytropic:N"``.
    model : {"real", "ideal"}
        Gas model.
    T_min : float
        Lowest ambient temperature, [K].
    T_max : float, optional
        Highest ambient temperature, [K]; default ``T_min``.
    acc_type : str
        Accumulator type (precharge rule and limits).
    max_allowable_pressure : float, optional
        Vessel PS, absolute, [Pa], for the limit check and the category hint.

    Returns
    -------
    ReserveResult
        Gas volume, precharge and the pressure after each motion at the worst temperature.

    Raises
    ------
    SizingError
        Impossible input: a motion needs the charge pressure or more, negative leakage, a
        precharge at or above the charge pressure.
    """
    motions = tuple(motions)
    T_max = T_min if T_max is None else T_max
    _validate(motions, charge_pressure, leakage, standby_time, T_min, T_max)
    proc = parse_process(process)
    # Pressures only fall along the motions, so the lowest the accumulator reaches is at the
    # end of the last motion, at or above that motion's minimum: the precharge rule uses it.
    p_low = motions[-1].min_pressure
    p0_ref, by_rule = resolve_precharge(precharge, acc_type, p_low, T_max, model)
    ts = _temperature_grid(T_min, T_max)
    args = (motions, charge_pressure, leakage, standby_time, p0_ref)
    need, adiabatic, isothermal = _sized_by_process(args, proc, model, ts)
    k = int(np.argmax(need))
    v0, t_worst = float(need[k]), float(ts[k])
    states = reserve_pressures(
        v0,
        p0_ref,
        motions,
        charge_pressure,
        t_worst,
        leakage=leakage,
        standby_time=standby_time,
        process=proc,
        model=model,
    )
    per_t = _per_temperature(ts, p0_ref, model, need)
    # The separator rule is judged at the lowest pressure the sized accumulator reaches.
    p_reached = _lowest_pressure(v0, *args, proc, model, ts)
    limits = type_report(
        acc_type,
        p0_ref,
        p_reached,
        charge_pressure,
        T_min,
        T_max,
        v0,
        model,
        max_allowable_pressure,
    )
    return ReserveResult(
        motions=motions,
        charge_pressure=float(charge_pressure),
        leakage=float(leakage),
        standby_time=float(standby_time),
        process=proc,
        model=model,
        T_min=float(T_min),
        T_max=float(T_max),
        precharge_ref=p0_ref,
        precharge_by_rule=by_rule,
        acc_type=limits["type"],
        required_gas_volume=v0,
        worst_temperature=t_worst,
        isothermal_gas_volume=float(np.max(isothermal)),
        adiabatic_gas_volume=float(np.max(adiabatic)),
        per_temperature=per_t,
        states=states,
        limits=limits,
        notes=tuple(
            _notes(motions, proc, float(np.max(adiabatic)), float(np.max(isothermal)))
            + _precharge_hint(p_reached, motions[-1], by_rule)
        ),
    )


def _precharge_hint(p_reached: float, last: Motion, by_rule: bool) -> list[str]:
    if not by_rule or not p_reached > last.min_pressure + 0.05 * (last.min_pressure - P_AMBIENT):
        return []
    return [
        f"the pressure never falls below {bar_gauge(p_reached):.4g} bar (an earlier motion "
        "governs); the precharge rule allows a higher precharge against that value, which "
        "needs less gas: try a higher --precharge and check the limits again"
    ]


def _notes(motions, proc, v_ad: float, v_iso: float) -> list[str]:
    tau = DEFAULT_TIME_CONSTANT
    times = [m.time for m in motions]
    notes = [
        f"governing process: adiabatic ({litre(v_ad):.4g} L against {litre(v_iso):.4g} L "
        "isothermal). A gas that expands faster than it can take up heat cools, so its pressure "
        "falls faster than Boyle's law says; the motions last "
        f"{min(times):.3g}–{max(times):.3g} s against a thermal time constant of about "
        f"{tau:g} s (1–10 s for litre-size units, from memory). Isothermal is the limit for "
        "slow motions; the stand-by leakage is taken as isothermal at ambient.",
        "the gas gets no heat back between motions (conservative); if motions are far apart, "
        "size each from its own settled state.",
    ]
    if proc.kind != "adiabatic":
        notes.append(
            f"sized with the {proc} process as asked; the adiabatic volume above is what fast "
            "motions need"
        )
    slow = [m.name for m in motions if m.time > 5 * tau]
    if slow:
        notes.append(
            "motions longer than 5 τ approach isothermal: " + ", ".join(slow) + " (the "
            "adiabatic sizing stays conservative for them)"
        )
    return notes
