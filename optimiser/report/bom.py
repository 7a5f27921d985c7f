"""The bill of materials beyond the catalogue: one procurement item per part of the circuit.

Rendering only: the sizes come from :func:`stowflow.costs.circuit.circuit_sizes` (each rule and
its source is stated there and repeated in the item's ``rule``); the heat load from the cost
comparison's energy account.  :class:`SpecItem` lives here so that :mod:`stowflow.report.spec`
(the catalogue items and the precharge table) and this module share it without a circle.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from stowflow.costs import circuit as cc
from stowflow.report.content import bar_delta, bar_g, fmt, kilowatts, litres, lpm
from stowflow.units import kelvin_to_celsius

__all__ = ["RULES", "SpecItem", "circuit", "circuit_items", "motor_details"]

#: The sizing rule of each catalogue item, as stated in the specification.
RULES: dict[str, str] = {
    "accumulator": (
        "count, size and precharge from the design search (least installed power first, then "
        "capex, then energy); category hint from PS × shell volume"
    ),
    "pump": "from the design search: its flow less the wear margin meets the cycle",
    "motor": (
        "from the design search: drives the pump at full flow at the relief setting "
        "(common practice) or at the working pressure, as set"
    ),
    "relief valve": (
        "set above the unload pressure by the relief margin (common practice, no published "
        "source), at or below the accumulator's PS; passes the full pump flow"
    ),
    "switch": (
        "settings from the time-domain verification; differential at least the switch "
        "differential setting (about 10 % of the cut-out pressure: common practice, from "
        "memory)"
    ),
    "unloading valve": "passes the full pump flow at the standby pressure",
    "safety block": (
        "one per bank, rated at least the accumulator's PS (common practice, no published "
        "source); a safety valve set at or below PS"
    ),
}


@dataclass(frozen=True)
class SpecItem:
    """One procurement item.

    Attributes
    ----------
    item : str
        Short name (accumulator, pump, motor, ...).
    description : str
        What to buy, one line.
    quantity : int
        Units to buy, [-].
    unit_price : float or None
        Catalogue price of one unit (None: not in the catalogue, to be quoted), [currency].
    notes : str
        Catalogue name and remarks.
    details : tuple of (str, str)
        Property and value (with unit) for the item's table.
    rule : str
        How it was sized, with the source or "common practice" / "from memory".
    """

    item: str
    description: str
    quantity: int
    unit_price: float | None
    notes: str
    details: tuple[tuple[str, str], ...]
    rule: str = ""

    @property
    def total(self) -> float | None:
        """Quantity × unit price, [currency] (None when not priced)."""
        return None if self.unit_price is None else self.quantity * self.unit_price


_QUOTE = "not in the catalogue: to be quoted"


def circuit(result) -> cc.CircuitSizes | None:
    """The circuit's sizes of a feasible design (None when infeasible)."""
    d = result.design
    if not d.feasible or d.pump is None:
        return None
    heat = math.nan
    comp = getattr(result, "comparison", None)
    if comp is not None:
        try:
            heat = float(comp.option("design").heat_load)
        except (KeyError, StopIteration, AttributeError):
            heat = math.nan
    return cc.circuit_sizes(d, result.settings, result.cycle, heat)


def motor_details(result) -> tuple[tuple[str, str], ...]:
    """Supply voltage, frequency, poles and synchronous speed of the motor (from settings)."""
    s = result.settings
    sync = 120.0 * s.motor_frequency / s.motor_poles
    return (
        ("supply", f"{s.motor_voltage:g} V, {s.motor_frequency:g} Hz, three-phase"),
        ("poles", f"{s.motor_poles:d} (synchronous speed {sync:g} rpm)"),
    )


def _tube(line: cc.Line) -> str:
    if not math.isfinite(line.outside):
        return "larger than the listed tubes: use parallel lines or a pipe"
    return (
        f"{line.outside * 1e3:g} × {line.wall * 1e3:g} mm tube (bore "
        f"{line.bore * 1e3:.1f} mm, {line.velocity:.1f} m/s, rated {bar_delta(line.rating):.0f} "
        "bar by Barlow)"
    )


def _line_item(line: cc.Line) -> SpecItem:
    what = {
        "suction line": "tank to pump inlet",
        "pump line": "pump to non-return valve and accumulators",
        "pressure line": "supply to the machine",
        "return line": "machine and valves to the return filter and tank",
    }[line.name]
    src = (
        "common practice, no published source"
        if line.name == "return line"
        else "within Esposito, Fluid Power with Applications, 2009 (from memory)"
    )
    return SpecItem(
        line.name,
        f"{line.name} ({what}): {_tube(line).split(' (')[0]}",
        1,
        None,
        "length and fittings from the layout; " + _QUOTE,
        (
            ("flow", fmt(lpm(line.flow), ".1f", "L/min")),
            ("velocity limit", fmt(line.velocity_limit, ".1f", "m/s")),
            ("least bore", fmt(line.least_bore * 1e3, ".1f", "mm")),
            ("design pressure", fmt(bar_delta(line.pressure), ".0f", "bar")),
            ("tube (EN 10305-4 sizes, from memory)", _tube(line)),
        ),
        f"bore d = √(4Q/(πv)) at v ≤ {line.velocity_limit:g} m/s ({src}); smallest listed "
        "tube with that bore whose Barlow rating (E235, 1.5 on yield, from memory) reaches "
        "the design pressure",
    )


def circuit_items(result) -> list[SpecItem]:
    """The circuit's items beyond the catalogue: non-return valve, gauge, cooler, tank,
    return filter and lines (empty when infeasible)."""
    sz = circuit(result)
    if sz is None:
        return []
    d = result.design
    q = lpm(sz.check_valve_flow)
    relief = bar_g(d.relief, result)
    p_work = bar_g(d.p_max, result)
    items = []
    if d.bank is not None:
        items.append(
            SpecItem(
                "non-return valve",
                f"non-return (check) valve for {q:.1f} L/min, rated at least {relief:.0f} bar",
                1,
                None,
                _QUOTE,
                (
                    ("flow", fmt(q, ".1f", "L/min")),
                    ("pressure rating at least", fmt(relief, ".0f", "bar")),
                    ("cracking pressure", "about 0.5 bar (common practice)"),
                    ("place", "between the pump/unloading valve and the accumulators"),
                ),
                "passes the full pump flow and holds the relief setting; keeps the bank from "
                "draining back through the unloaded pump (common practice, no published source)",
            )
        )
    gauge = bar_delta(sz.gauge_range)
    items.append(
        SpecItem(
            "pressure gauge",
            f"pressure gauge 0 … {gauge:g} bar, glycerine-filled, with isolating valve",
            1,
            None,
            _QUOTE,
            (
                ("range", f"0 … {gauge:g} bar"),
                ("highest working pressure", fmt(p_work, ".1f", "bar")),
            ),
            f"full scale the next EN 837-1 range (from memory) at or above {cc.GAUGE_FACTOR:g} × "
            "the highest working (unload) pressure (common practice, no published source)",
        )
    )
    heat_kw = kilowatts(sz.heat_load)
    if math.isfinite(heat_kw):
        cooler_desc = (
            f"oil cooler for {kilowatts(sz.cooler_capacity):.1f} kW at "
            f"{kelvin_to_celsius(result.settings.t_max):.0f} °C oil"
        )
        cooler_details = (
            ("mean heat into the oil", fmt(heat_kw, ".2f", "kW")),
            ("cooling capacity at least", fmt(kilowatts(sz.cooler_capacity), ".2f", "kW")),
            ("oil flow through it up to", fmt(lpm(sz.filter_flow), ".0f", "L/min")),
        )
    else:
        cooler_desc = "oil cooler: heat load not computed (run the comparison)"
        cooler_details = (("mean heat into the oil", "not computed"),)
    items.append(
        SpecItem(
            "cooler",
            cooler_desc,
            1,
            None,
            "in the return line; " + _QUOTE,
            cooler_details,
            "heat load from the energy account (throttling, relief, standby and pump losses "
            f"heat the oil) × {cc.COOLER_MARGIN:g} (common practice, no published source); "
            "the tank's own heat loss is ignored",
        )
    )
    items.append(
        SpecItem(
            "tank",
            f"oil tank, usable volume {litres(sz.tank_volume):g} L",
            1,
            None,
            _QUOTE,
            (
                ("usable volume", fmt(litres(sz.tank_volume), "g", "L")),
                ("by the rule", fmt(litres(sz.tank_least), ".0f", "L")),
                ("of which the bank's oil at unload", fmt(litres(sz.bank_oil), ".1f", "L")),
            ),
            f"{cc.TANK_MINUTES:g} min of pump flow (common practice, no published source) plus "
            "all the oil the bank holds at the unload pressure (Boyle, at 20 °C), which the "
            "safety block returns at every shutdown; rounded up to the R10 series (ISO 3)",
        )
    )
    items.append(
        SpecItem(
            "return filter",
            f"return filter for {lpm(sz.filter_flow):.0f} L/min",
            1,
            None,
            "fineness from the valves' cleanliness class; " + _QUOTE,
            (
                ("flow", fmt(lpm(sz.filter_flow), ".0f", "L/min")),
                ("peak consumer flow", fmt(lpm(sz.peak_demand), ".1f", "L/min")),
            ),
            "the consumer's peak flow (pump plus the accumulators' discharge peak) plus the pump "
            "flow the unloading valve returns at the same time; a cylinder's area ratio raises "
            "it further (common practice, no published source)",
        )
    )
    items += [_line_item(line) for line in sz.lines]
    return items
