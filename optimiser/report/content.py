"""What the report says, in the trade's units: one place that the HTML and the exports read.

Nothing here computes physics.  Every number comes from the :class:`StudyResult` (design,
verification, comparison, settings); this module picks, converts (absolute SI → gauge bar, L,
L/min, kW, °C) and words it.  The commissioning table of precharge against temperature is
read from :func:`stowflow.physics.gas.precharge_at` and the category hint from
:func:`stowflow.physics.accumulator.pressure_equipment_category`.

Strings returned here are plain text; the HTML writer escapes them.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pandas as pd
from stowflow.costs.comparison import KIND_WORDS
from stowflow.io import numbers
from stowflow.physics.machines import ENERGY_PARTS
from stowflow.units import (
    bar_gauge,
    kelvin_to_celsius,
    to_unit,
)

__all__ = [
    "BREAKDOWN_LABELS",
    "DISCLAIMER",
    "SAFETY_CAUTIONS",
    "STAGES",
    "OperationFrames",
    "assumptions",
    "bar_delta",
    "bar_g",
    "breakdown_rows",
    "currency",
    "fmt",
    "glance",
    "key_figures",
    "kilowatts",
    "litres",
    "lpm",
    "money",
    "notes",
    "notes_by_stage",
    "operation_frames",
    "q",
    "reasons",
    "recommendation",
    "setpoints_bar",
    "status_line",
    "verification_rows",
    "years",
]

#: The cautions every report carries (DESIGN.md "Safety"; ISO 4413 as paraphrased there).
SAFETY_CAUTIONS: tuple[str, ...] = (
    "Precharge with nitrogen only, never with air or oxygen: oil mist in compressed air or "
    "oxygen can ignite or explode.",
    "Discharge the accumulator automatically, or isolate it positively, when the machine shuts "
    "down: it stays pressurised after the pump stops.",
    "Fit a relief valve set at or below the accumulator's maximum allowable pressure PS.",
    "Discharge before disassembly: vent the oil side to zero pressure and check it with a "
    "gauge before opening any line or fitting on the accumulator circuit.",
    'Mark the accumulator with its precharge pressure, "use only nitrogen" and "discharge '
    'prior to disassembly"; the machine and the circuit diagram warn that the system '
    "contains accumulators.",
    "Never weld, machine or heat the accumulator shell.",
)

#: What the report is and is not.
DISCLAIMER = (
    "This report is design support. A competent person must check it against the local codes "
    "and standards before anything is built or bought; it does not replace licensed "
    "engineering practice."
)

_DASH = "–"


def fmt(value, spec: str = ".3g", unit: str = "") -> str:
    """Format a number for display ("–" for None or NaN); ``unit`` follows with a space.

    ``spec`` is a format spec for ordinary magnitudes; a value it would print in exponent
    notation or wider than a column is shown by :func:`stowflow.io.numbers.number` instead
    (``1.2×10⁻³⁰⁰``).  New code uses :func:`q` (by kind of quantity).
    """
    if value is None:
        return _DASH
    try:
        v = float(value)
    except (TypeError, ValueError):
        return str(value)
    if not math.isfinite(v):
        return "never" if v == math.inf else _DASH
    text = format(v, spec)
    if "e" in text.lower() or len(text) > numbers.WIDTH:
        text = numbers.number(v)
    return f"{text} {unit}".rstrip() if unit else text


def q(value_si, kind: str, result=None, **kw) -> str:
    """An SI value as text in its display unit (:func:`stowflow.io.numbers.fmt`); gauge
    pressures use the study's ambient pressure when ``result`` is given."""
    if result is not None and kind == "pressure":
        kw.setdefault("p_ambient", result.settings.p_ambient)
    return numbers.fmt(value_si, kind, **kw)


def bar_g(p_abs, result) -> float | np.ndarray:
    """Absolute pressure [Pa] → gauge [bar] with the study's ambient pressure
    (:func:`stowflow.units.bar_gauge`)."""
    return bar_gauge(p_abs, result.settings.p_ambient)


def bar_delta(dp) -> float:
    """Pressure difference [Pa] → [bar] (no gauge shift)."""
    return to_unit(dp, "bar", "pressure")


def kilowatts(w) -> float:
    """Power [W] → [kW]."""
    return to_unit(w, "kW", "power")


def litres(v) -> float:
    """Volume [m³] → [L]."""
    return to_unit(v, "L", "volume")


def lpm(q) -> float:
    """Flow [m³/s] → [L/min]."""
    return to_unit(q, "L/min", "flow")


def currency(result) -> str:
    """Currency label of every price: the cost settings', else the catalogue's."""
    return result.comparison.currency or result.catalogue.currency or "currency units"


def money(value, result, spec: str = ",.0f") -> str:
    """A price with its currency label (whole units, thousands grouped)."""
    del spec  # kept for callers; every price is shown in whole units
    return numbers.shown(value, "money", unit=currency(result))


def years(value) -> str:
    """A payback time in words ("under 1 month", "5 months", "2.3 years", "never")."""
    return numbers.years_words(value)


#: The parts of an energy breakdown in words, in the order the report stacks them.
BREAKDOWN_LABELS: dict[str, str] = dict(
    zip(
        ENERGY_PARTS,
        (
            "useful work at the consumer",
            "throttling to the consumer's pressure",
            "relief valve and compensator",
            "standby circulation",
            "gas heat loss in the accumulator",
            "pump losses",
            "motor losses",
            "drive losses",
        ),
        strict=True,
    )
)


# -- summary -------------------------------------------------------------------------------


def _bank_words(result) -> str:
    bank = result.design.bank
    n = bank.count
    units = numbers.plural(n, "accumulator")
    return (
        f"{n} × {q(bank.option.nominal_volume, 'volume')} {bank.type} {units} precharged to "
        f"{q(bank.precharge, 'pressure', result, digits=3)} at 20 °C"
    )


def _supply_words(o) -> str:
    """What a pump-only option buys, in words: its kind and its catalogue parts."""
    parts = " on ".join(o.components[:2])
    if len(o.components) > 2:
        parts += " with " + ", ".join(o.components[2:])
    return f"a pump-only {KIND_WORDS.get(o.key, o.label)} ({parts})"


def _capital(text: str) -> str:
    return text[:1].upper() + text[1:]


def recommendation(result) -> str:
    """The recommendation in one sentence, judged against the strongest alternative.

    The strongest alternative is the pump-only supply with the least total cost of ownership;
    when it costs less than the design over the horizon, the sentence recommends it instead.
    """
    d, c = result.design, result.comparison
    n = c.settings.years
    best = c.strongest
    why = d.reason or "no design was found"
    if not d.feasible and best is None:
        return f"No supply from this catalogue meets the cycle: {why}."
    if not d.feasible:
        return (
            f"The search found no design: {why}. {_capital(_supply_words(best))} would supply "
            f"the cycle at a total cost of {money(best.tco, result)} over {n} years."
        )
    pump = f"a {q(d.pump.displacement, 'displacement')} pump"
    motor = f"a {q(d.motor.rated_power, 'power')} motor"
    if d.bank is not None:
        head = f"Use {_bank_words(result)} with {pump} on {motor}"
        what = "the accumulator supply"
    else:
        head = f"Use {pump} on {motor} without an accumulator"
        what = "this supply"
    ref = c.reference
    if best is None or ref is None:
        return head + "; no pump-only supply from this catalogue could be priced against it."
    mine = c.option("design")
    if c.recommended != "design":
        return (
            f"{_capital(_supply_words(best))} costs less over {n} "
            f"years: {money(best.tco, result)} against {money(mine.tco, result)} for "
            f"{what}. Against it {what} {ref.note}. Use the pump-only supply; {what} is "
            "shown for comparison."
        )
    saved = ref.installed_power_saved
    if saved > 0:
        power = f"{q(saved, 'power')} less installed power than"
    elif saved < 0:
        power = f"{q(-saved, 'power')} more installed power than"
    else:
        power = "the same installed power as"
    return (
        f"{head}: {power} the strongest pump-only alternative, {_supply_words(best)}; against "
        f"it, {what} {ref.note}."
    )


def status_line(result) -> str:
    """Design status with MIP gap, reason and the verification verdict."""
    d, v = result.design, result.verification
    parts = [f"status {d.status}"]
    if d.feasible:
        gap = d.mip_gap
        parts.append(
            f"schedule MIP gap {numbers.shown(gap, 'percent', digits=2)}"
            if math.isfinite(gap)
            else "schedule MIP gap unknown (greedy schedule kept)"
        )
    if d.reason:
        parts.append(f"reason: {d.reason}")
    if v is None:
        parts.append("time-domain verification not run (quasi-static figures)")
    else:
        verdict = "passed" if v.passed else "failed"
        parts.append(
            f"time-domain verification {verdict} with the {v.controller} controller, least "
            f"margin {q(v.min_margin, 'pressure_difference')}"
        )
    return "; ".join(parts)


def key_figures(result) -> list[dict]:
    """Per option: label, installed kW, capex, energy per year, cost per year, TCO."""
    c = result.comparison
    rows = []
    for o in c.options:
        rows.append(
            {
                "key": o.key,
                "label": o.label,
                "feasible": o.feasible,
                "reason": o.reason,
                "installed_kw": kilowatts(o.installed_power),
                "capex": o.capex,
                "energy_mwh": to_unit(o.energy_per_year, "MWh", "energy"),
                "energy_cost": o.energy_cost_per_year,
                "tco": o.tco,
                "mean_kw": kilowatts(o.mean_power),
                "motor_load": o.motor_load,
                "energy_source": o.energy_source,
                "components": list(o.components),
                "heat_load_kw": kilowatts(o.heat_load),
            }
        )
    return rows


def breakdown_rows(result) -> list[dict]:
    """Per priced option with a breakdown: key, label, the parts per year [MWh], the
    electrical energy per year [MWh] and the heat load [kW]."""
    c = result.comparison
    rows = []
    for o in c.options:
        if not o.feasible or o.breakdown is None:
            continue
        per_year = c.cycles_per_year
        rows.append(
            {
                "key": o.key,
                "label": o.label,
                "parts_mwh": {
                    k: to_unit(v * per_year, "MWh", "energy") for k, v in o.breakdown.parts.items()
                },
                "electrical_mwh": to_unit(o.breakdown.electrical * per_year, "MWh", "energy"),
                "heat_load_kw": kilowatts(o.heat_load),
            }
        )
    return rows


# -- operation -----------------------------------------------------------------------------


@dataclass(frozen=True)
class OperationFrames:
    """The design at work, in trade units, at the coldest and the hottest temperature.

    Attributes
    ----------
    source : str
        ``"verification"`` (time-domain traces) or ``"schedule"`` (quasi-static).
    controller : str
        Controller the traces belong to.
    frames : dict of str to pandas.DataFrame
        ``"cold"`` and ``"hot"``: ``time [s]``, ``pressure [bar]``, ``required_pressure
        [bar]``, ``margin [bar]``, ``accumulator_oil [L]``, ``pump_loaded [-]``,
        ``relief_flow [L/min]`` (flow over the relief valve).
    temperatures : dict of str to float
        ``"cold"``/``"hot"`` temperature, [°C].
    """

    source: str
    controller: str
    frames: dict
    temperatures: dict


def _frame(result, table: pd.DataFrame, pressure, relief_flow) -> pd.DataFrame:
    """One temperature's traces in trade units from a trace or schedule table (SI)."""
    p = bar_g(np.asarray(pressure, dtype=float), result)
    req = bar_g(table["required_pressure [Pa]"].to_numpy(), result)
    return pd.DataFrame(
        {
            "time [s]": table.index.to_numpy(dtype=float),
            "pressure [bar]": p,
            "required_pressure [bar]": req,
            "margin [bar]": p - req,
            "accumulator_oil [L]": litres(table["accumulator_oil [m³]"].to_numpy()),
            "pump_loaded [-]": table["pump_loaded [-]"].to_numpy(dtype=float),
            "relief_flow [L/min]": lpm(np.asarray(relief_flow, dtype=float)),
        }
    )


def operation_frames(result) -> OperationFrames | None:
    """Traces of the design at work; None for an infeasible design."""
    d, v, s = result.design, result.verification, result.settings
    if not d.feasible or d.schedule is None or d.schedule.empty:
        return None
    frames, temps = {}, {}
    if v is not None and v.runs:
        for which in ("cold", "hot"):
            run = v.run(v.controller, which)
            if run is None:
                continue
            tr = run.trace
            frames[which] = _frame(result, tr, tr["pressure [Pa]"], tr["relief_flow [m³/s]"])
            temps[which] = kelvin_to_celsius(run.temperature)
        if frames:
            return OperationFrames("verification", v.controller, frames, temps)
    sch = d.schedule
    for which, col, t in (
        ("cold", "pressure_cold [Pa]", s.t_min),
        ("hot", "pressure_hot [Pa]", s.t_max),
    ):
        frames[which] = _frame(result, sch, sch[col], sch["spill [m³/s]"])
        temps[which] = kelvin_to_celsius(t)
    return OperationFrames("schedule", "schedule", frames, temps)


def setpoints_bar(result) -> dict:
    """Switch settings from the verification, gauge [bar] and stroke fractions [-]."""
    v = result.verification
    if v is None or not v.setpoints:
        return {}
    out = {}
    for key, value in v.setpoints.items():
        if value is None or not np.isfinite(value):
            continue
        if key.endswith("_stroke"):
            out[key] = float(value)
        else:
            out[key] = float(bar_g(value, result))
    return out


def verification_rows(result) -> list[dict]:
    """Every simulated controller × temperature × pump flow, in trade units."""
    v = result.verification
    if v is None:
        return []
    rows = []
    for r in v.runs:
        rows.append(
            {
                "controller": r.controller,
                "recommended": r.controller == v.controller,
                "temperature_c": kelvin_to_celsius(r.temperature),
                "pump_flow": "worn" if r.worn else "catalogue",
                "pump_flow_lpm": to_unit(float(r.trace["pump_flow [m³/s]"].max()), "L/min", "flow")
                if r.trace is not None and len(r.trace)
                else None,
                "passed": bool(r.passed),
                "min_margin_bar": bar_delta(r.min_margin),
                "min_margin_time_s": r.min_margin_time,
                "peak_pressure_bar": bar_g(r.peak_pressure, result),
                "gas_temperature_min_c": kelvin_to_celsius(r.gas_temperature_min),
                "gas_temperature_max_c": kelvin_to_celsius(r.gas_temperature_max),
                "energy_per_cycle_kj": to_unit(r.energy_per_cycle, "kJ", "energy"),
                "load_events_per_hour": r.load_events_per_hour,
                "relief_volume_l": litres(r.relief_volume),
                "cycles_to_steady": r.cycles_to_steady,
                "periodic": bool(r.periodic),
                "reason": r.reason,
            }
        )
    return rows


# -- assumptions ---------------------------------------------------------------------------


def assumptions(result) -> list[tuple[str, str]]:
    """The assumptions and sources behind the numbers, as (topic, statement)."""
    d, s, v, c = result.design, result.settings, result.verification, result.comparison
    cs = c.settings
    gas_text = (
        "real nitrogen: R. Span et al., J. Phys. Chem. Ref. Data 29(6) (2000), via CoolProp"
        if s.gas_model == "real"
        else "ideal gas"
    )
    tau = v.time_constant if v is not None else s.time_constant
    rows = [
        ("gas model", gas_text),
        ("gas process (sizing)", f"{d.process} (setting '{s.process}')"),
        (
            "thermal time constant",
            f"{tau:g} s (Pourmovahed & Otis, ASME JDSMC 112(1) 1990; litre-size charges about "
            "1–10 s, from memory)",
        ),
        (
            "temperatures",
            f"{kelvin_to_celsius(s.t_min):.0f} … {kelvin_to_celsius(s.t_max):.0f} °C; precharge "
            "stated at 20 °C",
        ),
        (
            "ambient pressure",
            f"{bar_delta(s.p_ambient):.5g} bar absolute; all pressures shown are gauge",
        ),
        (
            "line-loss allowance",
            f"{bar_delta(s.line_loss):g} bar added to every required pressure (common practice, "
            "no published source)",
        ),
        (
            "relief margin",
            f"{100 * s.relief_margin:g} % of the unload pressure, at least "
            f"{bar_delta(s.relief_margin_min):g} bar (common practice, no published source)",
        ),
        (
            "standby pressure",
            f"{bar_delta(s.standby_pressure):g} bar while the pump is unloaded (common practice, "
            "no published source)",
        ),
        (
            "dwell limits",
            f"pump stays loaded ≥ {s.min_loaded_dwell:g} s and unloaded ≥ "
            f"{s.min_unloaded_dwell:g} s; at most "
            f"{fmt(s.max_load_events_per_hour, 'g')} load events per hour (common practice, no "
            "published source)",
        ),
        (
            "accumulator type limits",
            "pressure ratio, precharge rule and flow limits per type: common practice, no "
            "published source (editable in the catalogue)",
        ),
    ]
    if d.feasible:
        rows.append(
            (
                "efficiencies",
                f"pump overall {100 * d.pump.overall_efficiency:.1f} %, volumetric "
                f"{100 * d.pump.volumetric_efficiency:.1f} %; motor "
                f"{100 * d.motor.efficiency:.1f} % "
                f"({d.motor.efficiency_class or 'class not stated'}), from the catalogue, at "
                "rated pressure and load",
            )
        )
    rows.append(
        (
            "part-load efficiencies",
            "pump: leakage in proportion to pressure, friction torque in proportion to the "
            "ideal torque, drag torque in proportion to speed (the loss structure of W. E. "
            "Wilson, Trans. ASME 71, 1949, from memory), through the catalogue's efficiencies "
            "at the rated pressure, 30 % of the torque loss pressure-independent (from "
            "memory); motor: constant losses (36 % of the rated losses) plus load losses "
            "growing with the square of the torque (IEC 60034-2-1 summation of losses; peak "
            "efficiency at 75 % load as the U.S. DOE fact sheet 'Determining Electric Motor "
            "Load and Efficiency' says); drive: 25 % of its rated losses constant, the rest in "
            "proportion to current (from memory); catalogue points override each curve",
        )
    )
    rows += [
        (
            "energy and money",
            f"{cs.energy_price_per_kwh:.4g} {currency(result)}/kWh, "
            f"{to_unit(cs.operating_time, 'h', 'time'):,.0f} h/year, "
            f"{c.cycles_per_year:,.0f} cycles/year, {cs.years} years at "
            f"{100 * cs.discount_rate:.1f} % discount, installation factor "
            f"{cs.installation_factor:g}",
        ),
        (
            "prices",
            "prices are the user's catalogue prices; in the demo catalogue they are "
            "placeholders, not quotes",
        ),
        (
            "pressure-equipment category",
            "EU Directive 2014/68/EU, Annex II (group 2 gases) from memory: check the directive "
            "and local codes",
        ),
        (
            "finance",
            "present value of an annuity and payback (Brealey, Myers & Allen, Principles of "
            "Corporate Finance, McGraw-Hill)",
        ),
    ]
    return rows


def notes(result) -> list[str]:
    """Every note the stages left for the reader, in order: cycle, design, check, costs."""
    out = list(result.cycle.notes) + list(result.design.notes) + list(result.design.stats.notes)
    if result.verification is not None:
        out += list(result.verification.notes)
    out += list(result.comparison.notes)
    seen, unique = set(), []
    for n in out:
        if n not in seen:
            seen.add(n)
            unique.append(n)
    return unique


# -- why this design, at a glance -----------------------------------------------------------


def _design_words(result) -> str:
    """The design in a few words: its accumulators (if any), pump and motor."""
    d = result.design
    head = f"{_bank_words(result)}, " if d.bank is not None else "no accumulator, "
    return (
        f"{head}a {q(d.pump.displacement, 'displacement')} pump on a "
        f"{q(d.motor.rated_power, 'power')} motor"
    )


def _alternative_words(a) -> str:
    """A point of the search's power–capex trade-off in words."""
    if a.option is None:
        acc = "no accumulator"
    else:
        acc = (
            f"{a.count} × {q(a.option.nominal_volume, 'volume')} {a.option.type} "
            f"{numbers.plural(a.count, 'accumulator')}"
        )
    return f"{acc} with a {q(a.pump.displacement, 'displacement')} pump"


def reasons(result) -> list[str]:
    """Why the recommended supply won, against the runner-ups, in sentences from the data.

    The search's order (least installed power, then least capex, then least energy), the
    designs that tied, the larger motors that would buy a cheaper supply (the search's
    power–capex trade-off) and the ranking of every priced supply by its total cost over the
    horizon.  Empty for an infeasible design without a priced alternative.
    """
    d, c = result.design, result.comparison
    search: list[str] = []
    if d.feasible:
        it = "The accumulator supply" if d.bank is not None else "The design"
        lb = d.lower_bound_power
        floor = (
            f" (no supply can install less than {q(lb, 'power')}: the cycle's mean hydraulic "
            "power over the best efficiencies in the catalogue)"
            if lb > 0
            else ""
        )
        search.append(
            f"{it} needs the least motor power of any supply from this catalogue that carries "
            f"the cycle: {q(d.installed_power, 'power')}{floor}."
        )
        if d.stats.ties > 1:
            search.append(
                f"{d.stats.ties} designs need that motor and cost the same to buy "
                f"({money(d.capex, result)}); this one uses the least energy per cycle."
            )
        else:
            search.append(
                "Of the supplies with that motor it costs the least to buy: "
                f"{money(d.capex, result)} for the components."
            )
        for a in d.alternatives[1:3]:
            search.append(
                f"A larger {q(a.installed_power, 'power')} motor would allow a cheaper supply, "
                f"{_alternative_words(a)}, for {money(a.capex, result)}; the search puts the "
                "least installed power first."
            )
    priced = sorted((o for o in c.options if o.feasible), key=lambda o: o.tco)
    costs: list[str] = []
    if len(priced) > 1:
        ranked = "; ".join(
            ("the accumulator supply" if o.key == "design" else KIND_WORDS.get(o.key, o.label))
            + f" {money(o.tco, result)}"
            for o in priced
        )
        costs.append(f"Total cost over {c.settings.years} years, least first: {ranked}.")
    # the deciding reason first: the search's order for the design, the cost for a pump-only
    return search + costs if c.recommended in (None, "design") else costs + search


def glance(result) -> list[tuple[str, str]]:
    """The key figures of the recommendation as (label, text with unit), for the summary and
    the web page's study view."""
    d, c, v = result.design, result.comparison, result.verification
    rows: list[tuple[str, str]] = []
    if d.feasible:  # without a design the recommendation sentence gives the reason
        rows.append(("installed motor power", q(d.installed_power, "power")))
        if d.bank is not None:
            rows.append(
                (
                    "accumulators",
                    f"{d.bank.count} × {q(d.bank.option.nominal_volume, 'volume')} {d.bank.type}",
                )
            )
            rows.append(
                (
                    "working window",
                    f"{q(d.p_min, 'pressure', result, unit=False)} … "
                    f"{q(d.p_max, 'pressure', result)}",
                )
            )
        rows.append(("relief valve setting", q(d.relief, "pressure", result, digits=3)))
        if v is not None:
            rows.append(
                (
                    "time-domain check",
                    f"{'passed' if v.passed else 'failed'}, least margin "
                    f"{q(v.min_margin, 'pressure_difference')}",
                )
            )
    mine = c.option("design")
    if mine is not None and mine.feasible:
        rows += [
            ("capex", money(mine.capex, result)),
            ("energy per year", numbers.fmt(mine.energy_per_year, "energy_per_year")),
            (f"total over {c.settings.years} years", money(mine.tco, result)),
        ]
    best = c.strongest
    if best is not None:
        rows.append(
            (
                f"strongest pump-only alternative over {c.settings.years} years",
                f"{KIND_WORDS.get(best.key, best.label)}: {money(best.tco, result)}",
            )
        )
    return rows


#: The stages whose notes the appendix lists, in the order they ran.
STAGES: tuple[str, ...] = ("cycle", "search", "verification", "costs")


def notes_by_stage(result) -> dict[str, list[str]]:
    """Every note the stages left, by stage (:data:`STAGES`), each note once."""
    d, v = result.design, result.verification
    raw = {
        "cycle": list(result.cycle.notes),
        "search": list(d.notes) + list(d.stats.notes),
        "verification": [] if v is None else list(v.notes),
        "costs": list(result.comparison.notes),
    }
    seen: set[str] = set()
    out: dict[str, list[str]] = {}
    for stage in STAGES:
        out[stage] = [n for n in raw[stage] if not (n in seen or seen.add(n))]
    return out
