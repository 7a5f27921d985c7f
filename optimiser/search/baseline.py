"""Pump-only supplies from the same catalogue: the baselines an accumulator must beat.

Both are sized for the peak flow with the same wear margin on the pump's flow as the design
(``DesignSettings.flow_margin``).

(a) **Fixed pump with relief.**  A fixed-displacement pump sized for the peak flow runs loaded
all the time; whatever the machine does not take flows over the relief valve, set above the
highest required pressure.  The motor covers the pump's shaft power at the relief setting.

(b) **Pressure-compensated pump.**  A variable pump sized for the peak flow holds its
compensator setting (just above the highest required pressure) and delivers only what the
machine draws.  The motor covers the shaft power at full flow and that setting.  Energy per
step: flow delivered at the compensator pressure over the overall efficiency, plus the
standby loss at zero stroke, taken as the shaft power of the pump's leakage at the compensator
pressure, :math:`(1-\\eta_v) Q_{max}\\,p/\\eta_o` (our own simple loss model, stated in the
report).
"""

from __future__ import annotations

import math

import numpy as np
from stowflow.catalogue import Catalogue, MotorOption
from stowflow.search.settings import DesignSettings
from stowflow.search.solution import Baseline
from stowflow.units import BAR, LPM, bar_text

__all__ = ["compensated_baseline", "fixed_baseline", "smallest_motor"]


def smallest_motor(catalogue: Catalogue, shaft_power: float) -> MotorOption | None:
    """Smallest (then cheapest) motor whose rating covers ``shaft_power`` [W]."""
    fits = [m for m in catalogue.motors if m.rated_power >= shaft_power * (1 - 1e-12)]
    if not fits:
        return None
    return min(fits, key=lambda m: (m.rated_power, m.price))


def _least_drive(pumps, catalogue: Catalogue, gauge: float):
    """Pump and motor with the least rated power, then the least price, for pumps working
    at ``gauge`` [Pa] at full flow: (pump, motor, shaft power [W]) or None."""
    best = None
    for pump in sorted(pumps, key=lambda p: (p.flow, p.price)):
        shaft = pump.flow * gauge / pump.overall_efficiency
        motor = smallest_motor(catalogue, shaft)
        if motor is None:
            continue
        key = (motor.rated_power, pump.price + motor.price)
        if best is None or key < best[0]:
            best = (key, pump, motor, shaft)
    return None if best is None else best[1:]


def fixed_baseline(
    demand: np.ndarray,
    p_required: np.ndarray,
    dt: float,
    catalogue: Catalogue,
    settings: DesignSettings,
) -> Baseline:
    """Pump-only supply (a): fixed pump for the peak flow, excess over the relief valve.

    Parameters
    ----------
    demand : numpy.ndarray
        Demand per step, [m³/s].
    p_required : numpy.ndarray
        Required pressure per step with line loss, absolute, [Pa].
    dt : float
        Step length, [s].
    catalogue : Catalogue
        Components.
    settings : DesignSettings
        Relief margin, ambient pressure.

    Returns
    -------
    Baseline
    """
    s = settings
    peak = float(demand.max())
    p_sys = float(p_required.max())
    relief = s.relief_setting(p_sys)
    worn = 1.0 - s.flow_margin
    pumps = [
        p
        for p in catalogue.pumps
        if p.flow * worn >= peak * (1 - 1e-12) and p.max_pressure >= relief
    ]
    if not pumps:
        return Baseline(
            "fixed",
            None,
            None,
            relief,
            math.nan,
            reason=f"no pump in the catalogue delivers the peak flow "
            f"{peak / LPM:.1f} L/min at {bar_text(relief, s.p_ambient, '.0f')}",
        )
    best = _least_drive(pumps, catalogue, relief - s.p_ambient)
    if best is None:
        return Baseline(
            "fixed",
            None,
            None,
            relief,
            math.nan,
            reason="no motor in the catalogue drives a pump for the peak flow at "
            f"{bar_text(relief, s.p_ambient, '.0f')}",
        )
    pump, motor, shaft = best
    # Always loaded at the relief setting: constant shaft power.
    energy = shaft / motor.efficiency * demand.size * dt
    return Baseline("fixed", pump, motor, relief, energy, shaft_power_peak=shaft)


def compensated_baseline(
    demand: np.ndarray,
    p_required: np.ndarray,
    dt: float,
    catalogue: Catalogue,
    settings: DesignSettings,
) -> Baseline:
    """Pump-only supply (b): pressure-compensated variable pump for the peak flow.

    Parameters are as for :func:`fixed_baseline`.  Only catalogue pumps with
    ``control = "pressure-compensated"`` qualify.

    Returns
    -------
    Baseline
    """
    s = settings
    peak = float(demand.max())
    p_set = float(p_required.max())
    g = p_set - s.p_ambient
    pumps = [
        p
        for p in catalogue.pumps
        if getattr(p, "control", "fixed") == "pressure-compensated"
        and p.flow * (1.0 - s.flow_margin) >= peak * (1 - 1e-12)
        and p.max_pressure >= s.relief_setting(p_set)
    ]
    if not pumps:
        return Baseline(
            "compensated",
            None,
            None,
            p_set,
            math.nan,
            reason="no pressure-compensated pump in the catalogue delivers the peak "
            f"flow {peak / LPM:.1f} L/min at {g / BAR:.0f} bar",
        )
    best = _least_drive(pumps, catalogue, g)
    if best is None:
        return Baseline(
            "compensated",
            None,
            None,
            p_set,
            math.nan,
            reason="no motor in the catalogue drives a compensated pump for the "
            f"peak flow at {g / BAR:.0f} bar",
        )
    pump, motor, shaft_full = best
    leak = (1.0 - pump.volumetric_efficiency) * pump.flow / max(pump.volumetric_efficiency, 1e-9)
    shaft = (demand + leak) * g / pump.overall_efficiency
    energy = float(np.sum(shaft) * dt) / motor.efficiency
    return Baseline("compensated", pump, motor, p_set, energy, shaft_power_peak=shaft_full)
