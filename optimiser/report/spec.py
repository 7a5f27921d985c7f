"""What to buy: the procurement items of a design, and the commissioning precharge table.

Rendering only, like :mod:`stowflow.report.content` whose helpers it uses: every number comes
from the :class:`StudyResult`; the precharge at other temperatures comes from
:func:`stowflow.fill.precharge.precharge_table` and the category hint from
:func:`stowflow.physics.accumulator.pressure_equipment_category`.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
from stowflow.fill.precharge import precharge_table as isochore_table
from stowflow.physics.accumulator import pressure_equipment_category
from stowflow.report.bom import RULES, SpecItem, circuit_items, motor_details
from stowflow.report.content import (
    bar_delta,
    bar_g,
    fmt,
    kilowatts,
    litres,
    lpm,
    setpoints_bar,
)
from stowflow.units import T_REF, celsius_to_kelvin, kelvin_to_celsius, si_factor, to_unit

__all__ = ["SpecItem", "category_hint", "precharge_table", "spec_items"]

_PUMP_WORDS = {
    "fixed": "fixed-displacement",
    "pressure-compensated": "pressure-compensated",
    "load-sensing": "load-sensing",
}


def category_hint(result) -> tuple[str, str, float, float] | None:
    """Category hint of one accumulator of the bank: (category, note, PS bar, shell L)."""
    bank = result.design.bank
    if bank is None:
        return None
    opt = bank.option
    # The nominal volume is the shell: the gas volume at precharge of the separator types, the
    # vessel of gas-over-oil (its gas fills only a share: Bank.gas_volume).
    shell_l = litres(opt.nominal_volume)
    ps = float(bar_g(opt.max_pressure, result))
    cat, note = pressure_equipment_category(ps, shell_l)
    return cat, note, ps, shell_l


def spec_items(result) -> list[SpecItem]:
    """The procurement line items of a feasible design (empty when infeasible)."""
    d = result.design
    if not d.feasible:
        return []
    items: list[SpecItem] = []
    if d.bank is not None:
        items.append(_accumulator_item(result))
    items += [_pump_item(result), _motor_item(result), _relief_item(result)]
    if d.bank is not None:
        items += [_switch_item(result), _unloading_item(result), _safety_block(result)]
    return items + circuit_items(result)


def _accumulator_item(result) -> SpecItem:
    """The bank: type, size, count, PS, precharge and the pressure-equipment hint."""
    d, s = result.design, result.settings
    bank, opt = d.bank, d.bank.option
    t_lo, t_hi = kelvin_to_celsius(s.t_min), kelvin_to_celsius(s.t_max)
    cat, _, ps, shell_l = category_hint(result)
    p0 = bar_g(bank.precharge, result)
    details = [
        ("type", opt.type),
        (
            "nominal volume (gas volume at precharge)"
            if bank.gas_volume >= bank.count * opt.nominal_volume
            else "nominal volume (vessel; residual oil stays in it)",
            fmt(litres(opt.nominal_volume), "g", "L"),
        ),
        ("count", f"{bank.count}"),
        ("total gas volume", fmt(litres(bank.gas_volume), "g", "L")),
        ("maximum allowable pressure PS", fmt(ps, ".0f", "bar")),
        ("precharge at 20 °C", fmt(p0, ".1f", "bar")),
        ("precharge gas", "nitrogen only (never air or oxygen)"),
        (
            "working pressure window",
            f"{bar_g(d.p_min, result):.1f} … {bar_g(d.p_max, result):.1f} bar",
        ),
        ("fluid", "the machine's hydraulic oil; state type and grade on the order"),
        ("operating temperature", f"{t_lo:.0f} … {t_hi:.0f} °C"),
        (
            "pressure-equipment category hint",
            f"{cat} (PS·V = {ps * shell_l:,.0f} bar·L per vessel, shell {shell_l:.3g} L)",
        ),
    ]
    if opt.bore > 0:
        details.insert(2, ("piston bore", fmt(to_unit(opt.bore, "mm", "length"), "g", "mm")))
    if opt.swept_volume:
        details.insert(3, ("swept volume", fmt(litres(opt.swept_volume), "g", "L")))
    return SpecItem(
        "accumulator",
        f"{opt.type} accumulator {litres(opt.nominal_volume):g} L, PS {ps:.0f} bar, "
        f"precharge {p0:.1f} bar nitrogen at 20 °C",
        bank.count,
        opt.price,
        f"catalogue: {opt.name}; category hint {cat} (from memory: check Directive "
        "2014/68/EU and local codes)",
        tuple(details),
        RULES["accumulator"],
    )


def _pump_item(result) -> SpecItem:
    """The catalogue pump: control, displacement, speed, flow, pressure, efficiencies."""
    pump = result.design.pump
    disp = to_unit(pump.displacement, "cm3", "displacement")
    rpm = to_unit(pump.speed, "rpm", "speed")
    return SpecItem(
        "pump",
        f"{_PUMP_WORDS.get(pump.control, pump.control)} pump {disp:g} cm³/rev at {rpm:g} "
        f"rpm, {lpm(pump.flow):.1f} L/min, "
        f"max {bar_g(pump.max_pressure, result):.0f} bar",
        1,
        pump.price,
        f"catalogue: {pump.name}",
        (
            ("control", pump.control),
            ("displacement", fmt(disp, "g", "cm³/rev")),
            ("speed", fmt(rpm, "g", "rpm")),
            ("effective flow", fmt(lpm(pump.flow), ".1f", "L/min")),
            ("maximum pressure", fmt(bar_g(pump.max_pressure, result), ".0f", "bar")),
            ("volumetric efficiency", fmt(100 * pump.volumetric_efficiency, ".1f", "%")),
            ("overall efficiency", fmt(100 * pump.overall_efficiency, ".1f", "%")),
        ),
        RULES["pump"],
    )


def _motor_item(result) -> SpecItem:
    """The catalogue motor: rated power, efficiency and its class."""
    motor = result.design.motor
    cls = motor.efficiency_class or "not stated"
    return SpecItem(
        "motor",
        f"electric motor {kilowatts(motor.rated_power):g} kW, "
        + (f"{motor.efficiency_class}, " if motor.efficiency_class else "")
        + f"efficiency {100 * motor.efficiency:.1f} %",
        1,
        motor.price,
        f"catalogue: {motor.name}",
        (
            ("rated power", fmt(kilowatts(motor.rated_power), "g", "kW")),
            ("efficiency at rated load", fmt(100 * motor.efficiency, ".1f", "%")),
            ("efficiency class", cls),
            *motor_details(result),
        ),
        RULES["motor"],
    )


def _relief_item(result) -> SpecItem:
    """The relief valve at the design's setting, for the full pump flow."""
    d = result.design
    flow = lpm(d.pump.flow)
    relief = bar_g(d.relief, result)
    guard = ""
    if d.bank is not None:
        ps = bar_g(d.bank.option.max_pressure, result)
        guard = f" (at or below the accumulator's PS {ps:.0f} bar)"
    return SpecItem(
        "relief valve",
        f"pressure relief valve set to {relief:.0f} bar{guard}, for {flow:.1f} L/min",
        1,
        None,
        "not in the catalogue: to be quoted",
        (
            ("cracking pressure setting", fmt(relief, ".0f", "bar")),
            ("flow capacity at least", fmt(flow, ".1f", "L/min")),
            ("protects", "pump line and accumulator bank" if d.bank else "pump line"),
        ),
        RULES["relief valve"],
    )


def _unloading_item(result) -> SpecItem:
    """The solenoid unloading valve for the pump flow at the standby pressure."""
    flow = lpm(result.design.pump.flow)
    return SpecItem(
        "unloading valve",
        f"solenoid unloading valve for {flow:.1f} L/min, standby at most "
        f"{bar_delta(result.settings.standby_pressure):.0f} bar",
        1,
        None,
        "not in the catalogue: to be quoted",
        (("flow", fmt(flow, ".1f", "L/min")),),
        RULES["unloading valve"],
    )


def _safety_block(result) -> SpecItem:
    """One shut-off and safety block per bank, rated for the accumulator's PS."""
    ps = bar_g(result.design.bank.option.max_pressure, result)
    return SpecItem(
        "accumulator safety block",
        "shut-off and safety block with automatic discharge valve at shutdown, safety valve "
        f"at or below {ps:.0f} bar and a pressure gauge port",
        1,
        None,
        "one per bank (common practice, no published source); not in the catalogue",
        (
            ("function", "isolate the bank, discharge it automatically at shutdown"),
            ("rated pressure at least", fmt(ps, ".0f", "bar")),
            ("safety valve set at or below", fmt(ps, ".0f", "bar")),
            ("gauge port", "to check 'discharged' before any work"),
        ),
        RULES["safety block"],
    )


def _switch_item(result) -> SpecItem:
    """The load/unload control the verification recommends, with its settings."""
    s, v = result.settings, result.verification
    sp = setpoints_bar(result)
    standby = (
        "standby (unloaded) pressure at most",
        fmt(bar_delta(s.standby_pressure), ".0f", "bar"),
    )
    source = "settings from the time-domain verification; not in the catalogue"
    ctrl = v.controller if v is not None else None
    if ctrl == "position-switch" and "load_below_stroke" in sp:
        lo, hi = 100 * sp["load_below_stroke"], 100 * sp.get("unload_above_stroke", math.nan)
        details = [
            ("load the pump below piston stroke", fmt(lo, ".0f", "%")),
            ("unload the pump above piston stroke", fmt(hi, ".0f", "%")),
            standby,
        ]
        if "load_below" in sp:
            details.append(
                (
                    "pressure equivalent (reference)",
                    f"{sp['load_below']:.1f} … {sp.get('unload_above', math.nan):.1f} bar",
                )
            )
        desc = f"piston position switch: load below {lo:.0f} % stroke, unload above {hi:.0f} %"
        return SpecItem("position switch", desc, 1, None, source, tuple(details), RULES["switch"])
    if ctrl == "schedule":
        return SpecItem(
            "load/unload control",
            "timed load/unload of the pump following schedule.csv (machine control)",
            1,
            None,
            "the verification recommends the open-loop schedule; no switch settings",
            (standby,),
            "the verification found no switch band that holds; the schedule of the design "
            "search runs the pump",
        )
    if "load_below" in sp:
        details = [
            ("load the pump below", fmt(sp["load_below"], ".1f", "bar")),
            ("unload the pump above", fmt(sp.get("unload_above"), ".1f", "bar")),
            (
                "differential",
                fmt(sp.get("unload_above", math.nan) - sp["load_below"], ".1f", "bar"),
            ),
            standby,
        ]
        hi = sp.get("unload_above", math.nan)
        desc = (
            f"pressure switch or charging valve: load below {sp['load_below']:.1f} bar, unload "
            f"above {hi:.1f} bar (differential {hi - sp['load_below']:.1f} bar)"
        )
        return SpecItem("pressure switch", desc, 1, None, source, tuple(details), RULES["switch"])
    return SpecItem(
        "pressure switch",
        "pressure switch for load/unload (settings: run the verification)",
        1,
        None,
        "settings need the time-domain verification; not in the catalogue",
        (standby,),
        RULES["switch"],
    )


def precharge_table(result, step_c: float = 5.0, beyond_c: float = 10.0) -> pd.DataFrame | None:
    """Precharge to set at each temperature so that it is the design value at 20 °C.

    Real-gas (or ideal-gas, as the study) isochoric scaling by
    :func:`stowflow.fill.precharge.precharge_table` (built on
    :func:`stowflow.physics.gas.precharge_at`), every ``step_c`` from ``beyond_c`` below the coldest
    to ``beyond_c`` above the hottest operating temperature, 20 °C always included.

    Returns
    -------
    pandas.DataFrame or None
        ``temperature [°C]``, ``precharge [bar]`` (gauge), ``in_range`` (bool); None without an
        accumulator.
    """
    d, s = result.design, result.settings
    if not d.feasible or d.bank is None:
        return None
    lo = math.floor((kelvin_to_celsius(s.t_min) - beyond_c) / step_c) * step_c
    hi = math.ceil((kelvin_to_celsius(s.t_max) + beyond_c) / step_c) * step_c
    t_c = np.unique(np.append(np.arange(lo, hi + step_c / 2, step_c), kelvin_to_celsius(T_REF)))
    t_k = celsius_to_kelvin(t_c)
    table = isochore_table(d.bank.precharge, t_k, s.gas_model)
    p = table["precharge_absolute [bar]"].to_numpy() * si_factor("bar", "pressure")
    inside = (t_k >= s.t_min - 1e-9) & (t_k <= s.t_max + 1e-9)
    return pd.DataFrame(
        {"temperature [°C]": t_c, "precharge [bar]": bar_g(p, result), "in_range": inside}
    )
