"""Nitrogen fill planning for commissioning, and the precharge to read at a measured temperature.

:func:`plan_fill` writes a step-by-step plan to fill an accumulator (and its back-up gas
bottles) to a precharge from delivered high-pressure bottles:

1. a direct **cascade**: each fresh bottle alone in turn, equalised and settled at the ambient
   temperature, with the pressure reached, what is left in each bottle, the warm reading right
   after the flow stops, and how many bottles a cascade needs (:mod:`~stowflow.fill.equalise`);
2. when the bottles cannot reach the target, the **options** with numbers: a gas booster of a
   given pressure ratio, or a piston accumulator used as a transfer pump
   (:mod:`~stowflow.fill.strokes`);
3. the **temperature correction**: filling warms the gas, so the plan says to re-check once it
   has cooled, gives the settled value at the filling temperature, and a table of the
   precharge to read at any measured temperature (:mod:`~stowflow.fill.precharge`).

Precharge is a mass of nitrogen: the target at 20 °C fixes :math:`m_t = \\rho(p_{0,ref},
293.15\\,K)\\, V`, and every step conserves the mass of nitrogen (real gas throughout, the
ideal gas as an option).

References
----------
.. [1] Y. A. Çengel, M. A. Boles, *Thermodynamics: An Engineering Approach*, 8th ed.,
   McGraw-Hill (2015), ISBN 978-0-07-339817-4 (mass and energy balances of rigid vessels).
.. [2] R. Span et al., J. Phys. Chem. Ref. Data 29(6), 1361-1433 (2000),
   doi:10.1063/1.1349047 (real-gas nitrogen).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import pandas as pd
from stowflow.errors import SizingError
from stowflow.fill.equalise import (
    MAX_BOTTLES,
    adiabatic_transfer,
    bottles_needed,
    cascade,
    pressure,
)
from stowflow.fill.precharge import precharge_table
from stowflow.fill.strokes import MAX_STROKES, MIN_YIELD, StrokePlan, stroke_transfer
from stowflow.physics.gas import density, precharge_at
from stowflow.units import P_AMBIENT, T_REF, bar_gauge, kelvin_to_celsius, to_unit

__all__ = [
    "FILL_SAFETY",
    "MAX_BOTTLES",
    "MAX_STROKES",
    "MIN_YIELD",
    "FillPlan",
    "StrokePlan",
    "adiabatic_transfer",
    "bottles_needed",
    "cascade",
    "plan_fill",
    "precharge_table",
    "stroke_transfer",
]

#: Cautions that every fill plan carries.
FILL_SAFETY: tuple[str, ...] = (
    "Fill with dry nitrogen only, never air or oxygen: oxygen with oil can ignite.",
    "Use a filling and charging device with a pressure regulator rated for the bottle "
    "pressure; never connect a bottle straight to an accumulator rated below it.",
    "Never fill from the oil side: the oil side is vented to zero pressure while the precharge "
    "is filled or checked.",
    "Use pressure-rated hoses and fittings, secure the bottles, and keep out of the line of "
    "hoses under pressure.",
    "Accumulators stay pressurised: discharge the oil side before maintenance.",
    "Follow the accumulator maker's instructions and local codes; filling is work for "
    "competent persons.",
)


@dataclass(frozen=True)
class FillPlan:
    """A nitrogen fill plan (SI; :meth:`as_dict` gives trade units).

    Attributes
    ----------
    volume : float
        Gas volume to fill, [m³].
    precharge_ref : float
        Target precharge at 20 °C, absolute, [Pa].
    T_fill : float
        Ambient temperature during the filling, [K].
    target_at_fill : float
        The settled target at the filling temperature, absolute, [Pa].
    bottle_pressure : float
        Pressure of a full supply bottle at the filling temperature, absolute, [Pa].
    steps : pandas.DataFrame
        The cascade (see :func:`cascade`).
    bottles_needed : int or None
        Fresh bottles a direct cascade needs, [-]; None: unreachable by equalisation.
    final_pressure : float
        Settled pressure after the cascade at the filling temperature, absolute, [Pa].
    reached : bool
        True when the cascade reaches the target.
    options : tuple of dict
        Booster and transfer-pump options when the cascade falls short.
    table : pandas.DataFrame
        Precharge to read at each temperature (:func:`precharge_table`).
    model : str
        Gas model.
    notes : tuple of str
        Instructions and remarks.
    """

    volume: float
    precharge_ref: float
    T_fill: float
    target_at_fill: float
    bottle_pressure: float
    steps: pd.DataFrame = field(repr=False)
    bottles_needed: int | None = None
    final_pressure: float = math.nan
    reached: bool = False
    options: tuple[dict, ...] = ()
    table: pd.DataFrame = field(default=None, repr=False)
    model: str = "real"
    notes: tuple[str, ...] = ()

    def as_dict(self) -> dict:
        """JSON-ready plan in trade units (bar gauge, L, kg, °C)."""
        return {
            "schema": "stowflow.fill/1",
            "gas_model": self.model,
            "volume_l": float(to_unit(self.volume, "L", "volume")),
            "target_precharge_bar_at_20c": bar_gauge(self.precharge_ref),
            "fill_temperature_c": float(kelvin_to_celsius(self.T_fill)),
            "target_at_fill_temperature_bar": bar_gauge(self.target_at_fill),
            "bottle_pressure_bar": bar_gauge(self.bottle_pressure),
            "thermal_assumption": "each equalisation settles at the ambient temperature "
            "(valve held open until the pressure stops changing); warm values: adiabatic, "
            "right after the flow stops",
            "steps": self.steps.to_dict(orient="records"),
            "bottles_used": len(self.steps),
            "bottles_needed_direct": self.bottles_needed,
            "final_pressure_bar": bar_gauge(self.final_pressure),
            "reached": self.reached,
            "options": list(self.options),
            "precharge_table": None if self.table is None else self.table.to_dict("records"),
            "notes": list(self.notes),
            "safety": list(FILL_SAFETY),
        }


def _check(name: str, value: float, shown: str, *, low: float = 0.0) -> None:
    if not (math.isfinite(value) and value > low):
        raise SizingError(f"{name} must be a finite value above {low:g}; got {shown}")


def plan_fill(
    volume: float,
    precharge: float,
    T_fill: float,
    bottles: int,
    bottle_volume: float,
    bottle_pressure: float,
    *,
    initial_pressure: float = P_AMBIENT,
    model: str = "real",
    booster: tuple[float, float] | None = None,
    transfer: tuple[float, float, float] | None = None,
    own_piston: bool = False,
    residual: float = P_AMBIENT,
    table_temperatures=None,
) -> FillPlan:
    """Step-by-step plan to fill a precharge from bottles, with booster or transfer-pump options.

    Parameters
    ----------
    volume : float
        Gas volume to fill (accumulator plus any back-up gas bottles), [m³].
    precharge : float
        Target precharge at 20 °C, absolute, [Pa].
    T_fill : float
        Ambient temperature during the filling, [K].
    bottles : int
        Number of supply bottles, [-].
    bottle_volume : float
        Water volume of one bottle, [m³].
    bottle_pressure : float
        Bottle pressure as read at the filling temperature, absolute, [Pa].
    initial_pressure : float
        Nitrogen pressure in the accumulator before filling, absolute, [Pa].
    model : {"real", "ideal"}
        Gas model.
    booster : tuple of (float, float), optional
        Gas booster: pressure ratio [-] and swept volume per stroke [m³].
    transfer : tuple of (float, float, float), optional
        Piston accumulator as transfer pump: gas volume [m³], oil pressure available
        (absolute) [Pa], dead gas volume at the end of the push [m³].
    own_piston : bool
        The transfer pump is the accumulator's own piston unit; the rest of ``volume`` is its
        back-up gas bottles.
    residual : float
        Pressure to leave in each bottle, absolute, [Pa] (common practice, no published
        source: never empty a bottle completely).
    table_temperatures : array_like, optional
        Temperatures for the precharge table, [K].

    Returns
    -------
    FillPlan
        The cascade, what is left in each bottle, and the options.

    Raises
    ------
    SizingError
        Impossible input: non-positive volumes or counts, target not above ambient, the
        accumulator already above the target.
    """
    _check_plan(volume, precharge, bottles, bottle_volume, bottle_pressure, initial_pressure)
    T = float(T_fill)
    target_mass = float(density(precharge, T_REF, model)) * volume
    m0 = float(density(initial_pressure, T, model)) * volume
    target_T = float(precharge_at(precharge, T, model))
    if m0 >= target_mass:
        raise SizingError(
            f"the accumulator already holds {bar_gauge(initial_pressure):.4g} bar at "
            f"{kelvin_to_celsius(T):.4g} °C, at or above the target {bar_gauge(target_T):.4g} bar "
            "there; vent it down to the target instead"
        )
    steps = cascade(volume, m0, target_mass, int(bottles), bottle_volume, bottle_pressure, T, model)
    m_end = float(steps["accumulator_mass_after [kg]"].iloc[-1]) if len(steps) else m0
    reached = m_end >= target_mass * (1 - 1e-12)
    need = bottles_needed(volume, m0, target_mass, bottle_volume, bottle_pressure, T, model)
    left = [float(density(bottle_pressure, T, model)) * bottle_volume] * int(bottles)
    for i, b in enumerate(steps.get("bottle_mass_after [kg]", [])):
        left[i] = float(b)
    options = []
    if not reached:
        rho_res = float(density(residual, T, model))
        args = (volume, m_end, target_mass, left, bottle_volume, rho_res, T, model)
        if booster is not None:
            options.append(_booster_option(booster, *args))
        if transfer is not None:
            options.append(_transfer_option(transfer, own_piston, *args))
    return FillPlan(
        volume=float(volume),
        precharge_ref=float(precharge),
        T_fill=T,
        target_at_fill=target_T,
        bottle_pressure=float(bottle_pressure),
        steps=steps,
        bottles_needed=need,
        final_pressure=pressure(m_end / volume, T, model),
        reached=bool(reached),
        options=tuple(options),
        table=None
        if table_temperatures is None
        else precharge_table(precharge, table_temperatures, model),
        model=model,
        notes=tuple(_notes(steps, reached, need, target_T, T, bottles)),
    )


def _check_plan(volume, precharge, bottles, bottle_volume, bottle_pressure, initial_pressure):
    """Refuse volumes, a bottle count or pressures that :func:`plan_fill` cannot plan with."""
    _check("gas volume", volume, f"{volume:g} m³")
    _check("bottle volume", bottle_volume, f"{bottle_volume:g} m³")
    if int(bottles) != bottles or bottles < 1:
        raise SizingError(f"number of bottles must be a whole number ≥ 1; got {bottles}")
    _check("target precharge", precharge, f"{bar_gauge(precharge):g} bar", low=P_AMBIENT)
    _check("bottle pressure", bottle_pressure, f"{bar_gauge(bottle_pressure):g} bar", low=P_AMBIENT)
    _check("initial pressure", initial_pressure, f"{bar_gauge(initial_pressure):g} bar")


def _booster_option(booster, volume, m_end, target_mass, left, V_b, rho_res, T, model):
    """The gas-booster option: a cylinder whose clearance stalls it at p_out = r·p_in."""
    ratio, swept = booster
    if not (ratio > 1 and swept > 0):
        raise SizingError(
            f"booster needs a pressure ratio > 1 and a stroke > 0; got {ratio:g}, {swept:g} m³"
        )
    v_dead = swept / (ratio - 1.0)  # the clearance that stalls at p_out = r·p_in
    sp = stroke_transfer(m_end, volume, target_mass, left, V_b, swept, v_dead, rho_residual=rho_res)
    label = f"gas booster 1:{ratio:g}, {to_unit(swept, 'L', 'volume'):g} L per stroke"
    return _option(sp, volume, volume, V_b, T, model, label)


def _transfer_option(transfer, own, volume, m_end, target_mass, left, V_b, rho_res, T, model):
    v_p, p_oil, v_dead = transfer
    if not (v_p > 0 and 0 <= v_dead < v_p and p_oil > P_AMBIENT):
        raise SizingError(
            "transfer pump needs a gas volume > 0, a dead volume below it and an oil pressure "
            "above ambient"
        )
    litres = to_unit(v_p, "L", "volume")
    if own:  # the piston unit pumps into its own back-up bottles (the rest of the volume)
        v_r = volume - v_p
        if not v_r > 0:
            raise SizingError(
                "with --own-piston the gas volume must exceed the piston unit's (the rest are "
                "its back-up bottles)"
            )
        rho = m_end / volume  # after the cascade the piston side holds its share
        start, cylinder = rho * v_r, rho * v_p
        label = f"own piston unit {litres:g} L as transfer pump into its back-up bottles"
    else:
        v_r, start, cylinder = volume, m_end, 0.0
        label = f"piston accumulator {litres:g} L as transfer pump"
    sp = stroke_transfer(
        start,
        v_r,
        target_mass,
        left,
        V_b,
        v_p - v_dead,
        v_dead,
        rho_limit=float(density(p_oil, T, model)),
        rho_residual=rho_res,
        m_cylinder=cylinder,
        count_cylinder=own,
        method="transfer pump",
    )
    label += f", oil pushed in at up to {bar_gauge(p_oil):.4g} bar"
    return _option(sp, v_r, volume, V_b, T, model, label, own)


def _option(sp: StrokePlan, v_receiver, v_total, v_bottle, T, model, label, own=False) -> dict:
    held = sp.receiver_mass + (sp.cylinder_mass if own else 0.0)
    return {
        "method": sp.method,
        "description": label,
        "strokes": sp.strokes,
        "strokes_per_bottle": list(sp.strokes_per_bottle),
        "reached": sp.reached,
        "final_pressure_bar": bar_gauge(pressure(held / v_total, T, model)),
        "receiver_pressure_bar": bar_gauge(pressure(sp.receiver_mass / v_receiver, T, model)),
        "bottles_left_bar": [bar_gauge(pressure(m / v_bottle, T, model)) for m in sp.bottle_masses],
        "stop_reason": sp.stop_reason,
    }


def _notes(steps, reached, need, target_T, T, bottles) -> list[str]:
    t_c = float(kelvin_to_celsius(T))
    notes = [
        "each step: open the bottle, wait until the pressure stops changing (the gas settles at "
        "ambient), read, close; the 'warm' value is what the gauge shows the moment the flow "
        "stops (while it stays open the cold bottle warms and pushes more gas in, so the settled "
        "value can be the higher one)",
    ]
    if reached:
        last = steps.iloc[-1]
        notes.append(
            f"on the last bottle stop at {last['warm [bar]']:.4g} bar while warm "
            f"({last['warm_temperature [°C]']:.3g} °C gas), close, let it cool, and re-check: "
            f"settled at {t_c:.3g} °C it must read {bar_gauge(target_T):.4g} bar; top up or vent "
            "to that value"
        )
    elif need is None:
        notes.append(
            "equalisation cannot reach the target: the bottles' pressure does not exceed it; use "
            "a booster or a transfer pump, or bottles of a higher pressure"
        )
    else:
        notes.append(
            f"equalisation needs {need} fresh bottles in all; {bottles} are not enough, or use "
            "a booster or a transfer pump for the rest"
        )
    notes.append(
        "read the precharge with the oil side at zero pressure; at another temperature compare "
        "with the precharge table, not with the 20 °C value"
    )
    return notes
