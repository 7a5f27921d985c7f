"""``stowflow simulate DESIGN.json CYCLE.csv``: verify a (possibly hand-edited) design again.

Reads the contract keys of ``design.json`` (schema ``stowflow.design/1``; pressures bar
gauge, volumes L, flows L/min, power kW), rebuilds the components - from the catalogue when a
row matches the numbers, otherwise from the JSON with stated defaults - and runs the
time-domain verification (:func:`stowflow.simulation.verify.verify`) at the coldest and the hottest
temperature.  Prints the verdict (table or ``--json``) and, with ``--out DIR``, writes
``simulation.csv``: one long table, one block of rows per controller × temperature (columns
``controller``, ``temperature [°C]`` and ``pump_flow_state``), and ``verification.json``.

Exit code 0 when the design passes, 1 when it fails verification (a result), 2 for bad input.
"""

from __future__ import annotations

import argparse
import json
import math
from dataclasses import replace
from pathlib import Path

from stowflow.catalogue import (
    default_catalogue_path,
    load_catalogue,
)
from stowflow.cli._output import fixed, print_json, print_table
from stowflow.cycle.duty import load_cycle
from stowflow.errors import CycleError, DesignFileError, SettingsError, StowflowError
from stowflow.io.designfile import load_design, read_setpoints
from stowflow.io.numbers import number
from stowflow.io.quantities import (
    parse_duration,
    parse_pressure_difference,
    parse_temperature_range,
)
from stowflow.report.display_units import in_system_text
from stowflow.report.exports import traces_frame
from stowflow.report.folder import SIMULATION_OUTPUTS, check_out_dir, write_set
from stowflow.search.settings import DesignSettings
from stowflow.simulation.verify import CONTROLLERS, verify
from stowflow.units import kelvin_to_celsius, to_unit

__all__ = ["SCHEMA", "register", "run"]

#: Schema tag of the ``--json`` output and of verification.json.
SCHEMA = "stowflow.simulate/1"

_EPILOG = """examples:
  stowflow simulate reports/press/design.json duty_cycles/forming_press.csv
  stowflow simulate design.json cycle.csv --controller pressure-switch --out sim/
  stowflow simulate design.json cycle.csv --temperature 0..60 --time-constant 2s --json

A schedule.csv beside design.json (same export) is used for the schedule controller."""


def register(subparsers, common: argparse.ArgumentParser) -> None:
    """Add ``stowflow simulate``."""
    p = subparsers.add_parser(
        "simulate",
        parents=[common],
        help="verify a design.json in the time domain (real nitrogen, heat exchange)",
        description=(
            "Simulate a design (design.json, possibly edited by hand) on a duty cycle at the "
            "coldest and hottest temperature, cycle after cycle to the periodic steady "
            "state, with real-gas nitrogen, heat exchange through the thermal time "
            "constant, discharge limits and the relief valve; print the verdict. Exit code "
            "0: passes, 1: fails verification, 2: bad input."
        ),
        epilog=_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("design", metavar="DESIGN.json", help="design file (schema stowflow.design/1)")
    p.add_argument("cycle", metavar="CYCLE.csv", help="duty-cycle CSV the design is for")
    p.add_argument(
        "--controller",
        choices=CONTROLLERS,
        action="append",
        help="controller to simulate (repeatable; default: all that apply)",
    )
    p.add_argument(
        "--out",
        metavar="DIR",
        help="write simulation.csv and verification.json here (default: print only)",
    )
    p.add_argument("--json", action="store_true", help="print the verdict as JSON")
    p.add_argument(
        "--time-constant",
        metavar="TIME",
        help="thermal time constant of the gas, e.g. 5s (default 5 s, from memory)",
    )
    p.add_argument(
        "--temperature",
        metavar="RANGE",
        help="operating temperatures in °C, e.g. 10..50 (default: the design's)",
    )
    p.add_argument(
        "--gas", choices=("real", "ideal"), help="nitrogen model (default: the design's)"
    )
    p.add_argument(
        "--catalogue",
        metavar="FILE",
        help="catalogue to find the components in (default: the bundled one)",
    )
    p.add_argument(
        "--schedule",
        metavar="CSV",
        help="schedule.csv for the schedule controller (default: beside DESIGN.json)",
    )
    p.add_argument(
        "--min-pressure",
        metavar="PRESSURE",
        help="minimum working pressure, gauge, for a cycle without a pressure column",
    )
    p.set_defaults(func=run)


# --------------------------------------------------------------------------- output
def _record(v, pa: float, notes: list[str]) -> dict:
    """The verdict as JSON-ready dict (bar gauge, °C, kJ, L)."""

    def bar_g(p):
        return None if not math.isfinite(p) else round(to_unit(p - pa, "bar", "pressure"), 3)

    sp = {}
    for k, x in v.setpoints.items():
        if k.endswith("_stroke"):
            sp[k] = round(x, 4)
        else:
            sp[k + "_bar"] = bar_g(x)
    runs = []
    for r in v.runs:
        runs.append(
            {
                "controller": r.controller,
                "temperature_c": round(kelvin_to_celsius(r.temperature), 3),
                "pump_flow": "worn" if r.worn else "catalogue",
                "passed": r.passed,
                "reason": r.reason,
                "failures": list(r.failures),
                "min_margin_bar": round(to_unit(r.min_margin, "bar", "pressure"), 3),
                "min_margin_time_s": r.min_margin_time,
                "peak_pressure_bar": bar_g(r.peak_pressure),
                "gas_temperature_min_c": round(kelvin_to_celsius(r.gas_temperature_min), 2)
                if math.isfinite(r.gas_temperature_min)
                else None,
                "gas_temperature_max_c": round(kelvin_to_celsius(r.gas_temperature_max), 2)
                if math.isfinite(r.gas_temperature_max)
                else None,
                "energy_per_cycle_kj": round(to_unit(r.energy_per_cycle, "kJ", "energy"), 4),
                "load_events_per_hour": round(r.load_events_per_hour, 2),
                "relief_volume_l": round(to_unit(r.relief_volume, "L", "volume"), 5),
                "cycles_to_steady": r.cycles_to_steady,
                "periodic": r.periodic,
                "period_cycles": r.period_cycles,
            }
        )
    return {
        "schema": SCHEMA,
        "passed": v.passed,
        "controller": v.controller,
        "reason": v.reason,
        "min_margin_bar": round(to_unit(v.min_margin, "bar", "pressure"), 3),
        "setpoints": sp,
        "time_constant_s": v.time_constant,
        "gas_model": v.gas_model,
        "elapsed_s": round(v.elapsed, 3),
        "runs": runs,
        "notes": notes + list(v.notes),
    }


def _named(path: Path, exc: StowflowError) -> StowflowError:
    """The error with the design file's name in front, unless it starts with it already."""
    text = str(exc)
    if text.startswith(f"{path}:"):
        return exc
    return type(exc)(f"{path}: {text}")


def run(args: argparse.Namespace) -> int:
    """Run ``stowflow simulate``: 0 passes, 1 fails verification (bad input raises → 2)."""
    cat_path = Path(args.catalogue) if args.catalogue else default_catalogue_path()
    catalogue = load_catalogue(cat_path)
    min_p = None
    if args.min_pressure:
        min_p = parse_pressure_difference(args.min_pressure, "--min-pressure")
    cycle = load_cycle(args.cycle, min_pressure=min_p)
    if cycle.pressure is None:
        raise CycleError(
            f"{args.cycle}: no pressure column; expected a column such as 'pressure [bar]' or "
            "the option --min-pressure, e.g. --min-pressure 120bar"
        )
    settings = DesignSettings()
    design_path = Path(args.design)
    sched = Path(args.schedule) if args.schedule else design_path.with_name("schedule.csv")
    design, settings, notes = load_design(
        design_path, catalogue, settings, sched, cycle, schedule_required=bool(args.schedule)
    )
    changes = {}
    if args.time_constant:
        tau = parse_duration(args.time_constant, "--time-constant", above=0.0)
        changes["--time-constant"] = {"time_constant": tau}
    if args.temperature:
        t_min, t_max = parse_temperature_range(args.temperature, "--temperature")
        changes["--temperature"] = {"t_min": t_min, "t_max": t_max}
    if args.gas:
        changes["--gas"] = {"gas_model": args.gas}
    for option, change in changes.items():
        try:
            settings = settings.with_(**change)
        except StowflowError as exc:
            text = str(exc).removeprefix("design settings: ")
            raise SettingsError(f"{option}: {text}") from None
    controllers = tuple(dict.fromkeys(args.controller or CONTROLLERS))
    if controllers == ("schedule",) and design.bank is not None and design.schedule.empty:
        why = next((n for n in notes if n.endswith("schedule controller skipped")), "")
        why = why.removeprefix(f"{sched}: ").removesuffix("; schedule controller skipped")
        raise DesignFileError(
            f"{sched}: no usable schedule.csv for the schedule controller"
            + (f" ({why})" if why else " (file not found)")
        )
    bank = design.bank
    if args.controller and "position-switch" in controllers and bank is not None:
        if not bank.option.has_piston:
            raise SettingsError(
                f"{design_path}: --controller position-switch needs a piston accumulator "
                f"(it switches on the piston's position); this design has a {bank.type}"
            )
    given = read_setpoints(design_path, settings.p_ambient)
    if args.out:
        check_out_dir(args.out, "--out", SIMULATION_OUTPUTS)
    try:
        v = verify(design, cycle, settings, controllers=controllers, setpoints=given or None)
    except StowflowError as exc:
        raise _named(design_path, exc) from exc
    if any(n.endswith("schedule controller skipped") for n in notes):
        # The reader already said why the schedule is missing; the library's general
        # "carries no schedule" would contradict it.
        kept = tuple(n for n in v.notes if not n.startswith("the design carries no schedule"))
        v = replace(v, notes=kept)
    pa = settings.p_ambient
    record = _record(v, pa, notes)
    if args.out:
        texts = {
            "simulation.csv": traces_frame(v, pa).to_csv(
                index=False, float_format="%.6g", lineterminator="\n"
            ),
            "verification.json": json.dumps(record, indent=2, ensure_ascii=False, allow_nan=False)
            + "\n",
        }
        write_set(args.out, {name: texts[name] for name in SIMULATION_OUTPUTS}, "--out")
    if args.json:
        print_json(record)
    else:
        _print(v, record, args.out)
    return 0 if v.passed else 1


def _print(v, record: dict, out) -> None:
    """The verdict as a table with units, then settings, reason and notes."""
    rows = []
    for r in record["runs"]:
        t = (
            f"{fixed(r['gas_temperature_min_c'])} … {fixed(r['gas_temperature_max_c'])}"
            if r["gas_temperature_min_c"] is not None
            else "-"
        )
        rows.append(
            (
                r["controller"],
                fixed(r["temperature_c"], 0),
                r["pump_flow"],
                "pass" if r["passed"] else "FAIL",
                fixed(r["min_margin_bar"], 2),
                fixed(r["peak_pressure_bar"]) if r["peak_pressure_bar"] is not None else "-",
                t,
                fixed(r["energy_per_cycle_kj"]),
                fixed(r["load_events_per_hour"], 0),
                number(r["relief_volume_l"], 3, max_decimals=3, trim=True),
                str(r["cycles_to_steady"]),
            )
        )
    print_table(
        rows,
        title=f"stowflow simulate: {'PASSED' if v.passed else 'FAILED'} "
        f"(recommended: {v.controller})",
        headers=(
            "controller",
            "T [°C]",
            "pump flow",
            "verdict",
            "margin [bar]",
            "peak [bar]",
            "gas T [°C]",
            "energy [kJ/cycle]",
            "loads [1/h]",
            "relief [L/cycle]",
            "cycles",
        ),
    )
    sp = record["setpoints"]
    if "load_below_bar" in sp:
        print(
            in_system_text(
                f"pressure switch: load below {fixed(sp['load_below_bar'])} bar, unload above "
                f"{fixed(sp['unload_above_bar'])} bar (gauge)"
            )
        )
    if "load_below_stroke" in sp:
        print(
            f"position switch: load below {sp['load_below_stroke']:.3f}, unload above "
            f"{sp['unload_above_stroke']:.3f} of the stroke"
        )
    if v.reason:
        print(f"reason: {in_system_text(v.reason)}")
    for n in record["notes"]:
        print(f"note: {in_system_text(n)}")
    if out:
        print(f"simulation.csv, verification.json: {out}")
