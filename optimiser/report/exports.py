"""Machine-readable exports: ``design.json``, ``schedule.csv`` and ``spec.csv``.

The keys and columns follow DESIGN.md "Outputs (contract)": pressures in bar **gauge**,
volumes in L, flows in L/min, power in kW, time in s, energy in kWh.  ``spec.csv`` is safe to
open in a spreadsheet: text cells that start with ``= + - @``, a tab or a carriage return are
prefixed with a single quote (OWASP, "CSV Injection"), and every text cell is quoted.
"""

from __future__ import annotations

import csv
import io
import json
import math

import numpy as np
import pandas as pd
from stowflow.cycle.duty import summarize
from stowflow.errors import StowflowError
from stowflow.io.jsonable import to_jsonable
from stowflow.physics.gas import parse_process
from stowflow.report import content, spec
from stowflow.report.display_units import display_units_record, in_system_text
from stowflow.report.objective import objective_record
from stowflow.units import kelvin_to_celsius, to_unit
from stowflow.version import __version__

__all__ = [
    "SCHEDULE_COLUMNS",
    "SCHEMA",
    "design_json",
    "design_record",
    "neutralise",
    "schedule_csv",
    "schedule_frame",
    "schedule_header",
    "spec_csv",
    "spec_rows",
    "traces_frame",
]

#: Schema tag of design.json.
SCHEMA = "stowflow.design/1"

#: The contract columns of schedule.csv, in order (extra columns follow).
SCHEDULE_COLUMNS: tuple[str, ...] = (
    "time [s]",
    "demand [L/min]",
    "pump_loaded",
    "pump_flow [L/min]",
    "accumulator_oil [L]",
    "pressure [bar]",
    "required_pressure [bar]",
)

# First characters a spreadsheet may read as a formula (OWASP CSV Injection), with their
# full-width forms, which some spreadsheets fold to the ASCII ones.
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r", "\n", "＝", "＋", "－", "＠")


def _num(x, digits: int | None = None):
    """A finite float (rounded to ``digits`` decimals) or None."""
    if x is None:
        return None
    x = float(x)
    if not math.isfinite(x):
        return None
    return round(x, digits) if digits is not None else x


def _kwh(j) -> float | None:
    return _num(to_unit(j, "kWh", "energy") if j is not None else None, 3)


def _process(label: str) -> tuple[str, float | None]:
    try:
        p = parse_process(label)
    except StowflowError:
        return str(label), None
    return p.kind, _num(p.n, 4)


def design_record(result) -> dict:
    """The content of ``design.json``: the contract keys of DESIGN.md and more.

    Parameters
    ----------
    result : StudyResult
        A study's result (feasible or not, verified or not).

    Returns
    -------
    dict
        JSON-ready (no NaN: missing numbers are None).  Pressures bar gauge, volumes L, flows
        L/min, power kW, energy kWh, time s, prices in ``costs.currency``.
    """
    d, s = result.design, result.settings
    kind, n = _process(d.process)
    # The key order is the file's: sections filled in later keep their place.
    rec: dict = {
        "schema": SCHEMA,
        "status": d.status,
        "mip_gap": _num(d.mip_gap),
        "reason": d.reason,
        "gas_model": s.gas_model,
        "process": kind,
        "polytropic_index": n,
        "temperature_c": {
            "min": _num(kelvin_to_celsius(s.t_min), 3),
            "max": _num(kelvin_to_celsius(s.t_max), 3),
            "precharge_reference": 20.0,
        },
        "accumulator": _accumulator_record(result),
        "pump": None,
        "motor": None,
        "setpoints": _setpoints_record(result),
        "baseline": _baseline_record(result, _strongest_kind(result)),
        "verification": _verification_record(result),
        "costs": _costs_record(result),
    }
    if d.feasible:
        rec["pump"] = _pump_record(d.pump, result)
        rec["motor"] = _motor_record(d.motor)
        rec["relief_bar"] = _num(content.bar_g(d.relief, result), 3)
        # schedule.csv's loaded share of each step is of this flow (the worn pump's).
        rec["schedule_pump_flow_lpm"] = _num(to_unit(d.planned_flow, "L/min", "flow"), 6)
        # "timed": pump_loaded is the load command (with the cut-out); "plan": pump_flow is.
        rec["schedule_kind"] = "timed" if d.schedule_timed else "plan"
        rec["installed_power_kw"] = _num(to_unit(d.installed_power, "kW", "power"), 6)
    rec |= _power_records(result)
    design_option = result.comparison.option("design")
    rec["energy_breakdown"] = _breakdown_record(design_option, result)
    rec["heat_load_kw"] = _num(to_unit(design_option.heat_load, "kW", "power"), 4)
    rec["search"] = _search_record(d)
    rec["objective"] = objective_record(result)
    rec["attempts"] = [
        {
            "extra_pressure_max_bar": _num(to_unit(a.extra_pressure_max, "bar", "pressure"), 3),
            "status": a.status,
            "passed": a.passed,
            "min_margin_bar": _num(to_unit(a.min_margin, "bar", "pressure"), 3),
        }
        for a in result.attempts
    ]
    rec["name"] = result.name
    rec["cycle"] = summarize(result.cycle).as_dict()
    rec["settings"] = s.as_dict()
    rec["notes"] = content.notes(result)
    rec["safety"] = [*list(content.SAFETY_CAUTIONS), content.DISCLAIMER]
    rec["generator"] = f"stowflow {__version__}"
    shown = display_units_record(result)  # only under --units other than metric
    if shown is not None:
        rec["display_units"] = shown
    return to_jsonable(rec)


def _accumulator_record(result) -> dict | None:
    """The bank in trade units with its category hint and precharge table (None without)."""
    d = result.design
    if not d.feasible or d.bank is None:
        return None
    b = d.bank
    bar = content.bar_g
    rec = {
        "type": b.type,
        "nominal_volume_l": _num(to_unit(b.option.nominal_volume, "L", "volume"), 6),
        "count": int(b.count),
        "total_gas_volume_l": _num(to_unit(b.gas_volume, "L", "volume"), 6),
        "precharge_bar_at_20c": _num(bar(b.precharge, result), 3),
        "min_pressure_bar": _num(bar(d.p_min, result), 3),
        "max_pressure_bar": _num(bar(d.p_max, result), 3),
        "max_allowable_pressure_bar": _num(bar(b.option.max_pressure, result), 3),
        "name": b.option.name,
        "unit_price": _num(b.option.price),
    }
    hint = spec.category_hint(result)
    if hint is not None:
        rec["pressure_equipment_category"] = {
            "category": hint[0],
            "shell_volume_l": _num(hint[3], 6),
            "note": hint[1],
        }
    table = spec.precharge_table(result)
    rec["precharge_table"] = [
        {"temperature_c": _num(t, 3), "precharge_bar": _num(p, 3)}
        for t, p in zip(table["temperature [°C]"], table["precharge [bar]"], strict=True)
    ]
    return rec


def _setpoints_record(result) -> dict:
    """The switch settings the verification derived, bar gauge / stroke fraction."""
    sp = content.setpoints_bar(result)
    rec = {
        "load_below_bar": _num(sp.get("load_below"), 3),
        "unload_above_bar": _num(sp.get("unload_above"), 3),
        "source": "time-domain verification" if sp else "not derived (no verification)",
    }
    for key in ("load_below_stroke", "unload_above_stroke"):
        if key in sp:
            rec[key] = _num(sp[key], 4)
    return rec


def _verification_record(result) -> dict:
    """The time-domain verdict with one row per controller run."""
    v = result.verification
    if v is None:
        return {"passed": None, "min_margin_bar": None}
    return {
        "passed": bool(v.passed),
        "min_margin_bar": _num(to_unit(v.min_margin, "bar", "pressure"), 3),
        "controller": v.controller,
        "reason": v.reason,
        "time_constant_s": _num(v.time_constant),
        "gas_model": v.gas_model,
        "elapsed_s": _num(v.elapsed, 3),
        "runs": [{k: _jsonnum(x) for k, x in r.items()} for r in content.verification_rows(result)],
        "notes": list(v.notes),
    }


def _power_records(result) -> dict:
    """Lower bound of the installed power, the objective's levels and the pump-only
    alternatives."""
    d = result.design
    lb = d.lower_bound_power
    return {
        "lower_bound_power_kw": _num(to_unit(lb, "kW", "power"), 4),
        "installed_to_lower_bound_ratio": (
            _num(d.installed_power / lb, 4) if d.feasible and lb > 0 else None
        ),
        "levels": {
            "installed_power_kw": _num(
                to_unit(d.levels.get("installed_power [W]", math.nan), "kW", "power"), 6
            ),
            "capex": _num(d.levels.get("capex")),
            "energy_per_cycle_kj": _num(
                to_unit(d.levels.get("energy_per_cycle [J]", math.nan), "kJ", "energy"), 4
            ),
        },
        "baselines": [_baseline_record(result, o.key) for o in result.comparison.alternatives],
    }


def _search_record(d) -> dict:
    """What the search did and how long it took, [s]."""
    st = d.stats
    return {
        "candidates": st.candidates,
        "families_solved": st.families_solved,
        "block": st.block,
        "screen_time_s": _num(st.screen_time, 4),
        "build_time_s": _num(st.build_time, 4),
        "solve_time_s": _num(st.solve_time, 4),
        "total_time_s": _num(st.total_time, 4),
        "best_bound_kj": _num(to_unit(d.best_bound, "kJ", "energy"), 4),
    }


def _jsonnum(x):
    if isinstance(x, float | np.floating):
        return _num(x, 6)
    return x


def _pump_record(pump, result) -> dict:
    """A catalogue pump in trade units (cm³/rev, rpm, L/min, bar gauge)."""
    return {
        "displacement_cm3": _num(to_unit(pump.displacement, "cm3", "displacement"), 6),
        "speed_rpm": _num(to_unit(pump.speed, "rpm", "speed"), 6),
        "flow_lpm": _num(to_unit(pump.flow, "L/min", "flow"), 4),
        "max_pressure_bar": _num(content.bar_g(pump.max_pressure, result), 3),
        "volumetric_efficiency": pump.volumetric_efficiency,
        "overall_efficiency": pump.overall_efficiency,
        "control": pump.control,
        "name": pump.name,
    }


def _motor_record(motor) -> dict:
    """A catalogue motor in trade units (kW)."""
    return {
        "rated_kw": _num(to_unit(motor.rated_power, "kW", "power"), 6),
        "efficiency": motor.efficiency,
        "efficiency_class": motor.efficiency_class,
        "name": motor.name,
    }


def _strongest_kind(result) -> str:
    """The kind the headline compares against: the least-TCO alternative, else the first."""
    c = result.comparison
    best = c.strongest
    return best.key if best is not None else c.alternatives[0].key


def _breakdown_record(o, result) -> dict | None:
    """Where an option's energy goes: per cycle [kJ] and per year [kWh]."""
    b = o.breakdown
    if not o.feasible or b is None:
        return None
    per_year = result.comparison.cycles_per_year
    return {
        "per_cycle_kj": {k: _num(to_unit(v, "kJ", "energy"), 4) for k, v in b.parts.items()},
        "per_year_kwh": {k: _kwh(v * per_year) for k, v in b.parts.items()},
        "electrical_per_cycle_kj": _num(to_unit(b.electrical, "kJ", "energy"), 4),
        "electrical_per_year_kwh": _kwh(b.electrical * per_year),
        "parts_sum_per_cycle_kj": _num(to_unit(b.total, "kJ", "energy"), 4),
        "source": o.energy_source,
    }


def _verdict_record(p) -> dict | None:
    """The design against one alternative: the verdict, its words and its numbers."""
    if p is None:
        return None
    return {
        "code": p.verdict,
        "note": p.note,
        "pays_back": bool(p.pays_off),
        "installed_power_saved_kw": _num(to_unit(p.installed_power_saved, "kW", "power"), 6),
        "extra_capex": _num(p.extra_capex, 2),
        "savings_per_year": _num(p.savings_per_year, 2),
        "energy_saved_per_year_kwh": _kwh(p.energy_saved_per_year),
        "tco_saving": _num(p.tco_saving, 2),
        "simple_payback_years": _num(p.simple_years, 3),
        "discounted_payback_years": _num(p.discounted_years, 3),
    }


def _baseline_record(result, kind: str) -> dict:
    """One pump-only alternative: what to buy, what it costs, its verdict and energy."""
    b = next((b for b in result.design.baselines if b.kind == kind), None)
    c = result.comparison
    o = c.option(kind)
    rec = {
        "kind": kind,
        "label": o.label,
        "feasible": o.feasible,
        "reason": o.reason,
        "components": list(o.components),
        "pump": {"flow_lpm": None},
        "motor": {"rated_kw": None},
        "drive": None,
        "installed_power_kw": _num(to_unit(o.installed_power, "kW", "power"), 6),
        "capex": _num(o.capex, 2),
        "energy_per_year_kwh": _kwh(o.energy_per_year),
        "energy_cost_per_year": _num(o.energy_cost_per_year, 2),
        "tco": _num(o.tco, 2),
        "mean_power_kw": _num(to_unit(o.mean_power, "kW", "power"), 4),
        "verdict": _verdict_record(c.payback(kind)),
        "energy_breakdown": _breakdown_record(o, result),
        "heat_load_kw": _num(to_unit(o.heat_load, "kW", "power"), 4),
        "notes": list(o.notes),
    }
    if b is not None and b.pump is not None and b.motor is not None:
        rec["pump"] = _pump_record(b.pump, result)
        rec["motor"] = _motor_record(b.motor)
        if b.drive is not None:
            rec["drive"] = {
                "rated_kw": _num(to_unit(b.drive.rated_power, "kW", "power"), 6),
                "efficiency": b.drive.efficiency,
                "name": b.drive.name,
            }
        rec["pressure_bar"] = _num(content.bar_g(b.pressure, result), 3)
    return rec


def _costs_record(result) -> dict:
    c = result.comparison
    d = c.option("design")
    best = c.option(_strongest_kind(result))
    ref = c.reference
    options = {}
    for o in c.options:
        options[o.key] = {
            "label": o.label,
            "feasible": o.feasible,
            "reason": o.reason,
            "installed_power_kw": _num(to_unit(o.installed_power, "kW", "power"), 6),
            "component_price": _num(o.component_price, 2),
            "capex": _num(o.capex, 2),
            "energy_per_cycle_kj": _num(to_unit(o.energy_per_cycle, "kJ", "energy"), 4),
            "energy_source": o.energy_source or None,
            "energy_per_year_kwh": _kwh(o.energy_per_year),
            "energy_cost_per_year": _num(o.energy_cost_per_year, 2),
            "tco": _num(o.tco, 2),
            "mean_power_kw": _num(to_unit(o.mean_power, "kW", "power"), 4),
            "motor_load": _num(o.motor_load, 4),
            "components": list(o.components),
            "heat_load_kw": _num(to_unit(o.heat_load, "kW", "power"), 4),
        }
    paybacks = {p.baseline: _verdict_record(p) for p in c.paybacks}
    return {
        "capex": _num(d.capex, 2),
        "energy_per_year": _kwh(d.energy_per_year),
        "baseline_capex": _num(best.capex, 2),
        "baseline_energy_per_year": _kwh(best.energy_per_year),
        "currency": content.currency(result),
        "energy_unit": "kWh",
        "energy_cost_per_year": _num(d.energy_cost_per_year, 2),
        "baseline_energy_cost_per_year": _num(best.energy_cost_per_year, 2),
        "tco": _num(d.tco, 2),
        "baseline_tco": _num(best.tco, 2),
        "payback_years": None if ref is None else _num(ref.simple_years, 3),
        "discounted_payback_years": None if ref is None else _num(ref.discounted_years, 3),
        "payback_against": None if c.strongest is None else c.strongest.key,
        "verdict": None if ref is None else ref.verdict,
        "verdict_note": None if ref is None else ref.note,
        "pays_back": None if ref is None else bool(ref.pays_off),
        "recommended": c.recommended,
        "settings": c.settings.as_dict() | {"currency": content.currency(result)},
        "cycle_time_s": _num(c.cycle_time),
        "cycles_per_year": _num(c.cycles_per_year, 3),
        "options": options,
        "paybacks": paybacks,
        "notes": list(c.notes),
    }


def design_json(result) -> str:
    """``design.json`` as text (UTF-8, indented, no NaN)."""
    return json.dumps(design_record(result), indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def schedule_header(result) -> list[str]:
    """The comment lines at the top of ``schedule.csv``: what the schedule is, which pump
    flow it was planned for and which temperature each pressure column is for."""
    d, s, v = result.design, result.settings, result.verification
    t_lo, t_hi = (f"{kelvin_to_celsius(T):g} °C" for T in (s.t_min, s.t_max))
    sch = d.schedule
    # One text per line for a spreadsheet too: the name loses what would split or quote it.
    name = "".join(" " if ch in ',;"\t\r\n' else ch for ch in str(result.name))
    lines = [f"stowflow {__version__} load schedule for {name!r}"]
    if not d.feasible:
        return [*lines, "no design: the schedule columns are empty"]
    if sch is None or sch.empty:
        return [
            *lines,
            "no timed load schedule held at both temperature ends with a new and a worn pump: "
            "the schedule columns are empty; run the pump on the pressure switch "
            "(design.json setpoints)",
        ]
    runs = [r for r in (v.runs if v is not None else ()) if r.controller == "schedule"]
    cut = next((r.setpoints["cut_out"] for r in runs if "cut_out" in r.setpoints), None)
    if d.bank is None:
        lines.append("pump-only supply: the pump stays loaded; the relief valve holds the pressure")
    elif not d.schedule_timed:
        lines.append(
            "the schedule model's plan (pump_flow: what the pump delivers in each step); not a "
            "timed schedule proved in the time domain"
            + ("" if runs else " (the design was not verified)")
        )
    elif cut is None:
        lines.append(
            "the pump stays loaded (pump_loaded 1); the relief valve takes what the full "
            "accumulator cannot"
        )
    else:
        lines.append(
            "load the pump where pump_loaded is 1 and unload it where it is 0, or earlier at the "
            f"cut-out {content.bar_g(cut, result):.1f} bar (the pressure switch's unload "
            "setting); after a cut-out the pump stays unloaded until the next step where "
            "pump_loaded turns 1"
        )
    planned = to_unit(d.planned_flow, "L/min", "flow")
    if d.bank is not None and d.planned_flow < d.pump.flow * (1 - 1e-9):
        lines.append(
            f"planned for the worn pump, {planned:.2f} L/min (catalogue "
            f"{to_unit(d.pump.flow, 'L/min', 'flow'):.2f} L/min less the "
            f"{s.flow_margin:.0%} flow margin); a new pump reaches the cut-out sooner"
        )
    worn = " with the worn pump" if d.bank is not None and s.flow_margin > 0 else ""
    if sch.attrs.get("source") == "simulation":
        lines.append(
            f"pump_flow, accumulator_oil and relief_flow are simulated at {t_lo}{worn}; "
            f"pressure and pressure_cold too, pressure_hot at {t_hi}{worn}"
        )
    else:
        lines.append(
            f"pump_flow, accumulator_oil and relief_flow are the quasi-static plan{worn}; its "
            f"pressure and pressure_cold are at {t_lo}, pressure_hot at {t_hi}"
        )
    if runs:
        worst = min(r.min_margin for r in runs)
        verdict = "passes" if all(r.passed for r in runs) else "FAILS"
        lines.append(
            f"verified at {t_lo} and {t_hi} with catalogue and worn pump flow: {verdict}, least "
            f"pressure margin {to_unit(worst, 'bar', 'pressure'):.2f} bar (design.json "
            "verification)"
        )
    return lines


def schedule_csv(result) -> str:
    """``schedule.csv`` as text: ``#`` comment lines (:func:`schedule_header`), then the
    table of :func:`schedule_frame`."""
    head = "".join(f"# {line}\n" for line in schedule_header(result))
    return head + schedule_frame(result).to_csv(index=False, lineterminator="\n", na_rep="")


def schedule_frame(result) -> pd.DataFrame:
    """``schedule.csv`` as a table: one row per time step of the cycle grid.

    Returns
    -------
    pandas.DataFrame
        The contract columns (:data:`SCHEDULE_COLUMNS`; ``pressure [bar]`` is the quasi-static
        accumulator pressure at the coldest temperature, where the margin is least) followed
        by ``pressure_cold [bar]``, ``pressure_hot [bar]``, ``relief_flow [L/min]`` (flow over
        the relief valve, the design's ``spill``), ``consumer_pressure [bar]``
        (the cycle's requirement without the line-loss allowance) and ``label``.  Without a
        design the design columns are empty.
    """
    cyc = result.cycle.to_frame()
    sch = result.design.schedule
    n = result.cycle.n_steps
    out = pd.DataFrame({"time [s]": cyc.index.to_numpy(dtype=float)})
    out["demand [L/min]"] = cyc["flow [L/min]"].to_numpy()
    if sch is not None and not sch.empty and len(sch) == n:
        bar = content.bar_g
        out["pump_loaded"] = sch["pump_loaded [-]"].to_numpy().astype(int)
        out["pump_flow [L/min]"] = to_unit(sch["pump_flow [m³/s]"].to_numpy(), "L/min", "flow")
        out["accumulator_oil [L]"] = to_unit(sch["accumulator_oil [m³]"].to_numpy(), "L", "volume")
        out["pressure [bar]"] = bar(sch["pressure_cold [Pa]"].to_numpy(), result)
        out["required_pressure [bar]"] = bar(sch["required_pressure [Pa]"].to_numpy(), result)
        out["pressure_cold [bar]"] = out["pressure [bar]"]
        out["pressure_hot [bar]"] = bar(sch["pressure_hot [Pa]"].to_numpy(), result)
        out["relief_flow [L/min]"] = to_unit(sch["spill [m³/s]"].to_numpy(), "L/min", "flow")
    else:
        for col in SCHEDULE_COLUMNS[2:]:
            out[col] = pd.array([pd.NA] * n, dtype="Int64" if col == "pump_loaded" else "Float64")
        out["required_pressure [bar]"] = cyc["required_pressure [bar]"].to_numpy()
    out["consumer_pressure [bar]"] = cyc["required_pressure [bar]"].to_numpy()
    # Round away binary noise (0.15000000000000002 s): µs, µbar, µL are far below any use.
    for col in out.columns:
        if out[col].dtype.kind == "f":
            out[col] = out[col].round(9 if col == "time [s]" else 6)
    # '#' opens a comment for readers of the file's header (pandas' comment="#"): written as
    # the full-width sign in labels.
    out["label"] = [
        neutralise(x.replace("#", "＃") if isinstance(x, str) else x) for x in cyc["label"]
    ]
    return out


def traces_frame(verification, p_ambient: float) -> pd.DataFrame:
    """Every simulated run's steady-state cycle in trade units, one block of rows per run.

    Parameters
    ----------
    verification : Verification
        A time-domain verification (:func:`stowflow.simulation.verify.verify`).
    p_ambient : float
        Ambient pressure for absolute → gauge, [Pa].

    Returns
    -------
    pandas.DataFrame
        The columns of ``simulation.csv`` (``stowflow simulate --out``): ``controller``,
        ``temperature [°C]`` (the run's), ``pump_flow_state`` (``catalogue`` or ``worn``),
        ``time [s]`` (step start), ``pressure [bar]``,
        ``pressure_min [bar]``, ``required_pressure [bar]`` (gauge, line loss included),
        ``gas_temperature [°C]``, ``accumulator_oil [L]``, ``pump_loaded`` (loaded fraction of
        the step, [-]), ``pump_flow [L/min]``, ``relief_flow [L/min]``, ``demand [L/min]``,
        ``bank_flow [L/min]`` (positive out of the bank).
    """
    blocks = []
    for r in verification.runs:
        tr = r.trace

        def bar(col: str, tr=tr) -> np.ndarray:
            return to_unit(tr[col].to_numpy() - p_ambient, "bar", "pressure")

        def lpm(col: str, tr=tr) -> np.ndarray:
            return to_unit(tr[col].to_numpy(), "L/min", "flow")

        blocks.append(
            pd.DataFrame(
                {
                    "controller": r.controller,
                    "temperature [°C]": round(kelvin_to_celsius(r.temperature), 3),
                    "pump_flow_state": "worn" if r.worn else "catalogue",
                    "time [s]": tr.index.to_numpy(float),
                    "pressure [bar]": bar("pressure [Pa]"),
                    "pressure_min [bar]": bar("pressure_min [Pa]"),
                    "required_pressure [bar]": bar("required_pressure [Pa]"),
                    "gas_temperature [°C]": kelvin_to_celsius(tr["gas_temperature [K]"].to_numpy()),
                    "accumulator_oil [L]": to_unit(
                        tr["accumulator_oil [m³]"].to_numpy(), "L", "volume"
                    ),
                    "pump_loaded": tr["pump_loaded [-]"].to_numpy(),
                    "pump_flow [L/min]": lpm("pump_flow [m³/s]"),
                    "relief_flow [L/min]": lpm("relief_flow [m³/s]"),
                    "demand [L/min]": lpm("demand [m³/s]"),
                    "bank_flow [L/min]": lpm("bank_flow [m³/s]"),
                }
            )
        )
    if not blocks:
        return pd.DataFrame()
    return pd.concat(blocks, ignore_index=True)


def neutralise(cell):
    """Make a text cell inert in a spreadsheet (OWASP CSV Injection guidance).

    A string that starts with ``=``, ``+``, ``-``, ``@``, a tab, a carriage return or a line
    feed (or their full-width forms) gets a leading single quote; numbers and None pass.
    """
    if isinstance(cell, str) and cell.startswith(_FORMULA_START):
        return "'" + cell
    return cell


def spec_rows(result) -> list[dict]:
    """The procurement line items of ``spec.csv``, one dict per row (cells not yet neutralised).

    Columns: ``item``, ``description``, ``quantity [-]``, ``unit_price [CUR]``, ``total [CUR]``,
    ``notes`` and ``sizing_rule``, with CUR the currency label.  Unpriced items have empty
    prices; an installation line appears when the installation factor is not 1, and a last
    line gives the total of the priced lines (the capex of the comparison).
    """
    cur = content.currency(result)
    up, tot = f"unit_price [{cur}]", f"total [{cur}]"
    rows = []
    items = spec.spec_items(result)
    if not items:
        rows.append(
            {
                "item": "no design",
                "description": result.design.reason or "no design was found",
                "quantity [-]": 0,
                up: None,
                tot: None,
                "notes": f"study: {result.name}",
                "sizing_rule": "",
            }
        )
        return rows
    for it in items:
        rows.append(
            {
                "item": it.item,
                "description": in_system_text(it.description),
                "quantity [-]": it.quantity,
                up: it.unit_price,
                tot: it.total,
                "notes": in_system_text(it.notes),
                "sizing_rule": in_system_text(it.rule),
            }
        )
    o = result.comparison.option("design")
    factor = result.comparison.settings.installation_factor
    if factor != 1.0 and o.feasible:
        rows.append(
            {
                "item": "installation",
                "description": f"installation allowance: factor {factor:g} on component prices",
                "quantity [-]": 1,
                up: o.capex - o.component_price,
                tot: o.capex - o.component_price,
                "notes": "cost setting, not a quote",
                "sizing_rule": "",
            }
        )
    rows.append(
        {
            "item": "total",
            "description": "total of the priced lines (capex of this design)",
            "quantity [-]": None,
            up: None,
            tot: o.capex if o.feasible else None,
            "notes": f"study: {result.name}; unpriced lines to be quoted",
            "sizing_rule": "",
        }
    )
    return rows


def spec_csv(result) -> str:
    """``spec.csv`` as text: every text cell quoted and neutralised, UTF-8."""
    rows = spec_rows(result)
    buf = io.StringIO()
    w = csv.writer(buf, quoting=csv.QUOTE_NONNUMERIC, lineterminator="\n")
    header = list(rows[0])
    w.writerow([neutralise(h) for h in header])
    for r in rows:
        cells = []
        for h in header:
            x = r[h]
            if isinstance(x, float) and not math.isfinite(x):
                x = None
            cells.append("" if x is None else neutralise(x))
        w.writerow(cells)
    return buf.getvalue()
