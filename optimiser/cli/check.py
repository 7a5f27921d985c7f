"""``stowflow check CYCLE.csv``: read a duty cycle and print its summary.

The first thing to run on a new cycle: it validates the file (one clear line per fault,
exit code 2) and prints the numbers that show whether an accumulator pays off - peak against
mean demand, the volume per cycle, the pressures and the hydraulic power.
"""

from __future__ import annotations

import argparse
import re
import textwrap

from stowflow.cli._common import step_limit
from stowflow.cli._output import print_json, print_table
from stowflow.cycle.duty import DEFAULT_MAX_STEPS, STEP_MAX_STEPS, load_cycle, summarize
from stowflow.io.numbers import METRIC, current_system, display_value, number, unit_label
from stowflow.io.quantities import parse_duration, parse_pressure_difference
from stowflow.report.display_units import METRIC_WORDS

__all__ = ["display_units", "register", "run"]

#: Version tag of the ``--json`` output.
SCHEMA = "stowflow.check/1"

_EPILOG = """examples:
  stowflow check duty_cycles/forming_press.csv
  stowflow check my_cycle.csv --min-pressure 100bar --step 10ms
  stowflow check my_cycle.csv --json > summary.json

The CSV has the unit in brackets in each header: a phase table
'duration [s], flow [L/min], pressure [bar], label' or a sample table
'time [s], flow [L/min], pressure [bar], label'. Pressures are gauge."""

# (key of CycleSummary.as_dict(), shown name, unit, format)
_ROWS = (
    ("form", "form", "", "{}"),
    ("duration_s", "cycle duration", "s", "{:.6g}"),
    ("steps", "time steps", "-", "{}"),
    ("step_s", "step", "s", "{:.6g}"),
    ("grid", "grid", "", "{}"),
    ("peak_flow_lpm", "peak demand (input)", "L/min", "{:.4g}"),
    ("peak_step_flow_lpm", "peak demand (largest step)", "L/min", "{:.4g}"),
    ("mean_flow_lpm", "mean demand", "L/min", "{:.4g}"),
    ("rms_flow_lpm", "RMS demand", "L/min", "{:.4g}"),
    ("mean_to_peak_ratio", "mean / peak demand", "-", "{:.3f}"),
    ("volume_per_cycle_l", "volume per cycle", "L", "{:.4g}"),
    ("peak_required_pressure_bar", "peak required pressure (gauge)", "bar", "{:.4g}"),
    ("min_required_pressure_bar", "lowest required pressure (gauge)", "bar", "{:.4g}"),
    ("peak_hydraulic_power_kw", "peak hydraulic power", "kW", "{:.4g}"),
    ("mean_hydraulic_power_kw", "mean hydraulic power", "kW", "{:.4g}"),
    ("pump_only_flow_lpm", "pump-only supply: flow", "L/min", "{:.4g}"),
    ("pump_only_hydraulic_power_kw", "pump-only supply: hydraulic power", "kW", "{:.4g}"),
)

#: Metric units of the summary's rows that are shown in the unit system in force
#: (``--units``), by the one table of metric words (gauge bar scales as a difference).
_KINDS = {unit: METRIC_WORDS[unit] for unit in ("L/min", "L", "bar", "kW")}


def _in_system(key: str, unit: str, value) -> tuple[object, str]:
    """A summary value in metric ``unit`` → (value, unit) in the unit system in force."""
    if unit not in _KINDS or value is None or current_system() is METRIC:
        return value, unit
    kind, one = _KINDS[unit]
    return display_value(float(value) * one, kind), unit_label(kind)


def display_units(summary: dict) -> dict:
    """The summary's quantities in the unit system in force: ``{key: {"value", "unit"}}``."""
    out = {}
    for key, _shown, unit, _fmt in _ROWS:
        if unit in _KINDS and summary.get(key) is not None:
            value, label = _in_system(key, unit, summary[key])
            out[key] = {"value": value, "unit": label}
    return out


def _show(spec: str, value) -> str:
    """A summary value by its row's format: ``{:.Ng}`` as N significant digits and ``{:.Nf}``
    as N decimals, through :func:`stowflow.io.numbers.number` (no exponent notation)."""
    m = re.fullmatch(r"\{:\.(\d)([gf])\}", spec)
    if m is None:
        return spec.format(value)
    n = int(m.group(1))
    if m.group(2) == "f":
        return number(value, n + 1, max_decimals=n)
    return number(value, n, max_decimals=n - 1, trim=True)


def register(subparsers, common: argparse.ArgumentParser) -> None:
    """Add the ``check`` command to the CLI parser."""
    parser = subparsers.add_parser(
        "check",
        parents=[common],
        help="validate a duty-cycle CSV and print its summary",
        description=textwrap.fill(
            "Read a duty-cycle CSV (phase or sample table, units in the header, pressures "
            "gauge), put it on a uniform time grid and print peak and mean demand, volume per "
            "cycle, required pressures and hydraulic power. Bad input gives one line naming "
            "the file, line and column, and exit code 2.",
            width=78,
        ),
        epilog=_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("cycle", metavar="CYCLE.csv", help="duty-cycle CSV file")
    parser.add_argument("--json", action="store_true", help="print the summary as JSON")
    parser.add_argument(
        "--step",
        metavar="TIME",
        help="time step instead of the automatic one, e.g. 10ms; must divide the cycle",
    )
    parser.add_argument(
        "--min-pressure",
        metavar="PRESSURE",
        help="minimum working pressure (gauge), e.g. 100bar; needed when the CSV has no "
        "pressure column, otherwise each step requires at least this",
    )
    parser.add_argument(
        "--max-steps",
        metavar="N",
        help=f"largest number of time steps (default {DEFAULT_MAX_STEPS} for the automatic "
        f"grid, {STEP_MAX_STEPS} with --step)",
    )
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Read the cycle, print its summary; return the exit code (0)."""
    step = None if args.step is None else parse_duration(args.step, "--step", above=0.0)
    min_pressure = None
    if args.min_pressure is not None:  # gauge, as the user means it
        min_pressure = parse_pressure_difference(args.min_pressure, "--min-pressure")
    max_steps = step_limit(args.max_steps, args.step)
    cycle = load_cycle(args.cycle, step=step, min_pressure=min_pressure, max_steps=max_steps)
    summary = summarize(cycle).as_dict()
    if args.json:
        extra = {}
        if current_system() is not METRIC:  # the metric keys stay; the chosen units beside
            extra = {"display_units": {"system": current_system().name, **display_units(summary)}}
        print_json({"schema": SCHEMA, **summary, **extra})
        return 0
    rows = []
    for key, shown, unit, fmt in _ROWS:
        metric_value, metric_unit = summary[key], unit
        value, unit = _in_system(key, unit, metric_value)
        if unit != metric_unit and metric_unit == "kW" and value is not None:
            unit = f"{unit} ({_show(fmt, metric_value)} kW)"  # hp beside kW
        rows.append((shown, "n/a" if value is None else _show(fmt, value), unit))
    print_table(rows, title=f"duty cycle '{summary['name']}' ({summary['source']})")
    for note in summary["notes"]:
        print(f"note: {note}")
    return 0
