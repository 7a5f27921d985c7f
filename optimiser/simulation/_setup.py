"""Set-up of a verification run: plant, schedule, starting state and switch searches.

Turns a :class:`~stowflow.search.solution.Design` and a :class:`~stowflow.cycle.duty.DutyCycle` into
the fixed data of one run (:func:`plant_for`), reads the loaded fraction of each step from the
design's schedule (:func:`schedule_fraction`), chooses the state the first cycle starts from
(:func:`start_oil`) and where the switch settings are searched (:func:`pressure_search`,
:func:`stroke_search`; the rule is in :mod:`stowflow.simulation.controllers`).
"""

from __future__ import annotations

import math

import numpy as np
from stowflow.cycle.duty import DutyCycle
from stowflow.errors import SettingsError
from stowflow.physics import gas
from stowflow.physics.thermal import charge_mass
from stowflow.physics.valves import MIN_BAND_STROKE, narrowest_band
from stowflow.search.settings import DesignSettings
from stowflow.search.solution import Design
from stowflow.simulation._integrator import MAX_VOLUME_STEP, GasCharge, Plant
from stowflow.simulation.controllers import HysteresisController, SwitchSearch
from stowflow.units import to_unit

__all__ = [
    "BALANCE_RTOL",
    "iso_oil",
    "lpm_text",
    "motor_limit",
    "plant_for",
    "pressure_search",
    "required",
    "schedule_fraction",
    "start_oil",
    "stroke_search",
]

#: Tolerance of the schedule's volume balance, fraction of the bank gas volume, [-].
BALANCE_RTOL = 1e-7
#: Highest pressure used to bound the smooth path, inside the nitrogen table, [Pa] (600 bar).
_P_TABLE_TOP = 600e5
#: Finest load-point step of the pressure switch's search, [Pa] (0.2 bar).
_PRESSURE_RESOLUTION = 0.2e5
#: Finest load-point step of the position switch's search, fraction of the stroke, [-].
_STROKE_RESOLUTION = 0.002


def lpm_text(q: float) -> str:
    """``"12.3 L/min"`` for a flow [m³/s]."""
    return f"{to_unit(q, 'L/min', 'flow'):.1f} L/min"


def required(cycle: DutyCycle, settings: DesignSettings) -> np.ndarray:
    """Required accumulator pressure per step: the cycle's plus the line loss, [Pa] abs."""
    if cycle.pressure is None:
        raise SettingsError(
            f"cycle '{cycle.name}' has no required pressure; give a pressure column or a "
            "minimum working pressure"
        )
    return np.asarray(cycle.pressure, float) + settings.line_loss


def plant_for(
    design: Design, cycle: DutyCycle, settings: DesignSettings, temperature: float
) -> Plant:
    """The fixed data of one run of a design with a bank at one temperature.

    Parameters
    ----------
    design : Design
        A feasible design with a bank.
    cycle : DutyCycle
        The cycle.
    settings : DesignSettings
        Gas model, time constant, line loss, ambient pressure.
    temperature : float
        Wall (ambient, oil) temperature, [K].

    Returns
    -------
    Plant
    """
    s = settings
    bank = design.bank
    Vg = bank.gas_volume
    mass = float(charge_mass(bank.precharge, Vg, s.gas_model))
    opt = bank.option
    stop = stroke = math.nan
    if opt.has_piston:
        stroke = bank.count * (opt.swept_volume or opt.nominal_volume)
        stop = bank.count * opt.swept_volume if opt.swept_volume else math.inf
    # Densest state evaluated on the smooth path: twice the highest pressure rating, coldest.
    p_top = min(2.0 * max(design.relief, opt.max_pressure), _P_TABLE_TOP)
    rho_cap = min(690.0, float(gas.density(p_top, min(temperature, s.t_min), s.gas_model)))
    cap = max(0.0, Vg - mass / rho_cap)
    # Substeps: the largest relative gas-volume change of a step at the densest working state.
    rho_work = float(gas.density(design.relief, min(temperature, s.t_min), s.gas_model))
    V_small = max(mass / rho_work, 1e-6 * Vg)
    rate = max(design.pump.flow, float(np.max(cycle.flow)))
    substeps = int(min(64, max(1, math.ceil(rate * cycle.dt / V_small / MAX_VOLUME_STEP))))
    return Plant(
        dt=cycle.dt,
        demand=np.asarray(cycle.flow, float),
        required=required(cycle, s),
        qp=design.pump.flow,
        T_wall=float(temperature),
        tau=float(s.time_constant),
        p_ambient=s.p_ambient,
        relief=float(design.relief),
        charge=GasCharge(s.gas_model, mass, Vg),
        stop=stop if math.isfinite(stop) else math.inf,
        stroke=stroke,
        cap=cap,
        substeps=substeps,
    )


def schedule_fraction(design: Design, cycle: DutyCycle) -> np.ndarray | None:
    """Loaded fraction of each step from the design's schedule (None when it has none).

    ``pump_flow`` is what the pump puts into the pressure line and ``spill`` what leaves it
    over the relief valve at a full store; the stored oil of the schedule must follow
    ``pump_flow − spill − demand``, which is checked.  The fraction is ``pump_flow`` over the
    flow the schedule was planned with (:attr:`~stowflow.search.solution.Design.planned_flow`,
    the worn pump's): the share of each step the pump is loaded, which the simulator applies
    to the pump flow of its run (catalogue or worn); its own relief valve takes the spill.

    Parameters
    ----------
    design : Design
        The design.
    cycle : DutyCycle
        The cycle the schedule was made for.

    Returns
    -------
    numpy.ndarray or None
        Fraction of each step the pump is loaded, in [0, 1], [-].

    Raises
    ------
    SettingsError
        The schedule does not fit the cycle or its volumes do not balance.
    """
    sch = design.schedule
    if sch is None or sch.empty:
        return None
    n, dt = cycle.n_steps, cycle.dt
    if len(sch) != n:
        raise SettingsError(
            f"design schedule has {len(sch)} steps but cycle '{cycle.name}' has {n}"
        )
    qp = design.planned_flow  # the fraction is of the flow the schedule was planned with
    pf = sch["pump_flow [m³/s]"].to_numpy(float)
    spill = sch["spill [m³/s]"].to_numpy(float) if "spill [m³/s]" in sch else np.zeros(n)
    oil = sch["accumulator_oil [m³]"].to_numpy(float)
    d = np.asarray(cycle.flow, float)
    step = oil - np.roll(oil, 1)
    tol = BALANCE_RTOL * max(design.bank.gas_volume, float(np.max(np.abs(oil))))
    # The balance is oil change = (pump_flow − spill − demand)·Δt; a hand-edited design may
    # leave the spill out of it.
    if not any(float(np.max(np.abs(step - (into - d) * dt))) <= tol for into in (pf - spill, pf)):
        resid = step - (pf - spill - d) * dt
        i = int(np.argmax(np.abs(resid)))
        raise SettingsError(
            f"design schedule does not fit cycle '{cycle.name}': at t = {i * dt:.4g} s the "
            f"stored oil changes by {to_unit(step[i], 'L', 'volume'):.4g} L but pump flow "
            f"minus demand gives {to_unit(step[i] - resid[i], 'L', 'volume'):.4g} L"
        )
    # The pump puts pump_flow into the line; whatever a full store cannot take goes over the
    # relief valve, which the simulator models itself.
    f = pf / qp
    if np.any(f < -1e-9) or np.any(f > 1 + 1e-9):
        i = int(np.argmax((f < -1e-9) | (f > 1 + 1e-9)))
        raise SettingsError(
            f"design schedule: pump delivers {lpm_text(pf[i])} at t = {i * dt:.4g} s, "
            f"outside 0 … {lpm_text(qp)}"
        )
    f = np.clip(f, 0.0, 1.0)
    return np.where(f > 1.0 - 1e-9, 1.0, np.where(f < 1e-9, 0.0, f))  # round-off only


def iso_oil(design: Design, settings: DesignSettings, p: float, T: float) -> float:
    """Stored oil at pressure p with the gas at rest at temperature T (isotherm), [m³]."""
    b = design.bank
    frac = gas.oil_fraction(p, b.precharge, T, "isothermal", settings.gas_model)
    return float(frac) * b.gas_volume


def start_oil(design: Design, settings: DesignSettings, plant: Plant, ctrl) -> float:
    """Stored oil at the first cycle start, [m³].

    The schedule starts where the design's schedule starts; a switch starts just unloaded
    with the store full (its unload point reached with the gas at the wall temperature),
    which is on or near its periodic orbit.
    """
    if isinstance(ctrl, HysteresisController):
        if ctrl.signal == "stroke":
            return ctrl.off * plant.stroke
        return min(iso_oil(design, settings, ctrl.off, plant.T_wall), 0.999 * plant.stop)
    sch = design.schedule
    if sch is not None and not sch.empty:
        return float(sch["accumulator_oil [m³]"].iloc[-1])
    return iso_oil(design, settings, design.p_max, settings.t_max)


def motor_limit(design: Design, settings: DesignSettings) -> float:
    """Highest pressure at which the motor covers the loaded pump's shaft power, [Pa]."""
    pump = design.pump
    return settings.p_ambient + design.motor.rated_power * pump.overall_efficiency / pump.flow


def pressure_search(design: Design, settings: DesignSettings, plant: Plant) -> SwitchSearch:
    """Unload at the design's maximum working pressure, capped by the motor and the stroke."""
    s = settings
    off = min(design.p_max, motor_limit(design, s))
    if math.isfinite(plant.stop):  # trip before the piston's end stop, gas cold and at rest
        frac = min(0.98 * plant.stop / plant.volume, 0.999)
        off = min(
            off,
            float(
                gas.pressure_at_oil_fraction(
                    frac, design.bank.precharge, s.t_min, "isothermal", s.gas_model
                )
            ),
        )
    lowest = float(np.max(plant.required))
    band = max(float(s.switch_band(off)), float(narrowest_band(off - s.p_ambient)))
    highest = off - band
    return SwitchSearch(
        off, min(lowest, highest), highest, max(_PRESSURE_RESOLUTION, (highest - lowest) / 32)
    )


def stroke_search(design: Design, settings: DesignSettings, plant: Plant) -> SwitchSearch:
    """Unload at the oil of the unload pressure at the hottest temperature, gas at rest."""
    s = settings
    p_top = min(design.p_max, motor_limit(design, s))
    full = min(iso_oil(design, s, p_top, s.t_max), 0.98 * plant.stop)
    off = full / plant.stroke
    need = iso_oil(design, s, float(np.max(plant.required)), s.t_min) / plant.stroke
    highest = off - MIN_BAND_STROKE
    return SwitchSearch(off, min(need, highest), highest, _STROKE_RESOLUTION)
