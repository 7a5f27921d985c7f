"""``stowflow precharge``: the precharge a gauge should read at each measured temperature.

The precharge is stated at 20 °C; filled or checked at another temperature, the gauge reads
the pressure on the gas's isochore (:func:`stowflow.fill.precharge_table`).  The table is for
checks on site: read the temperature of the accumulator shell, then compare.
"""

from __future__ import annotations

import argparse

import pandas as pd
from stowflow.cli._common import allow_negative_ranges, temperatures
from stowflow.cli._output import print_json, print_table
from stowflow.errors import SettingsError
from stowflow.io.numbers import METRIC, current_system, display_value, fmt, number, unit_label
from stowflow.io.quantities import parse_pressure
from stowflow.units import BAR, P_AMBIENT, celsius_to_kelvin

__all__ = ["PRECHARGE_NOTES", "register", "run"]

#: What every precharge table says with it.
PRECHARGE_NOTES: tuple[str, ...] = (
    "Read the precharge with the oil side vented to zero pressure, after the gas has settled "
    "at the measured temperature (not right after filling or running).",
    "Nitrogen only, never air or oxygen; use a charging device with a regulator and "
    "pressure-rated hoses; never fill from the oil side.",
    "Design support only: a competent person checks the work against local codes and the "
    "maker's instructions.",
)

_EXAMPLE = """\
example:
  stowflow precharge 90bar --temperature -10..50 --step 5
  stowflow precharge 1300psi --temperature 0..40 --step 10 --gas ideal --json
  stowflow precharge 1900psi --units us --temperature 50degF..120degF --step 5

The precharge is gauge unless --absolute is given, stated at 20 °C.
"""


def register(subparsers, common: argparse.ArgumentParser) -> argparse.ArgumentParser:
    """Add the ``precharge`` command to ``subparsers`` and return its parser."""
    parser = subparsers.add_parser(
        "precharge",
        parents=[common],
        help="precharge to read at each temperature, for checks on site",
        description=(
            "Table of the nitrogen precharge a gauge reads at each temperature when the "
            "precharge stated at 20 °C is right (real-gas isochore, Span et al. 2000; ideal "
            "gas p·T/293.15 K as an option)."
        ),
        epilog=_EXAMPLE,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("precharge", metavar="P", help="precharge at 20 °C, with unit (90bar)")
    parser.add_argument(
        "--temperature",
        default="-10..50",
        metavar="T..T",
        help="temperature range, °C unless a unit is given: -10..50, 14degF..122degF "
        "(default -10..50)",
    )
    parser.add_argument(
        "--step", default="5", metavar="K", help="step in kelvin (= °C), or 9degF; default 5"
    )
    parser.add_argument("--gas", default="real", choices=("real", "ideal"), help="gas model")
    parser.add_argument(
        "--absolute", action="store_true", help="the precharge given is absolute (default gauge)"
    )
    parser.add_argument("--json", action="store_true", help="print the table as JSON")
    allow_negative_ranges(parser)
    parser.set_defaults(func=run)
    return parser


def _in_system(table):
    """The table (°C, bar gauge, bar absolute) in the unit system in force."""
    if current_system() is METRIC:
        return table
    t, gauge, absolute = (table[c].to_numpy(dtype=float) for c in table.columns)
    return pd.DataFrame(
        {
            f"temperature [{unit_label('temperature')}]": [
                display_value(celsius_to_kelvin(v), "temperature") for v in t
            ],
            f"gauge [{unit_label('pressure')}]": [
                display_value(v * BAR + P_AMBIENT, "pressure") for v in gauge
            ],
            f"absolute [{unit_label('pressure_absolute')}]": [
                display_value(v * BAR, "pressure_absolute") for v in absolute
            ],
        }
    )


def run(args: argparse.Namespace) -> int:
    """Print the table (or JSON); return the exit code."""
    from stowflow.fill import precharge_table

    p_abs = parse_pressure(args.precharge, "precharge", absolute=args.absolute)
    if not p_abs > P_AMBIENT:
        kind = "absolute" if args.absolute else "gauge"
        raise SettingsError(
            f"precharge: '{args.precharge.strip()}' is not above ambient; expected a "
            f"precharge > {(P_AMBIENT if args.absolute else 0.0) / 1e5:g} bar {kind}, "
            "e.g. 90bar"
        )
    ts = temperatures(args.temperature, args.step)
    table = precharge_table(p_abs, ts, args.gas)
    p20 = float(precharge_table(p_abs, [celsius_to_kelvin(20.0)], args.gas).iloc[0, 1])
    shown = _in_system(table)
    if args.json:
        data = {
            "schema": "stowflow.precharge/1",
            "gas_model": args.gas,
            "precharge_bar_at_20c": p20,
            "rows": table.to_dict(orient="records"),
            "notes": list(PRECHARGE_NOTES),
        }
        if current_system() is not METRIC:  # the metric keys stay; the chosen units beside
            data["display_units"] = {
                "system": current_system().name,
                "rows": shown.to_dict(orient="records"),
            }
        print_json(data)
        return 0
    rows = [[number(v, 4, max_decimals=3, trim=True) for v in r] for r in shown.to_numpy()]
    print_table(
        rows,
        headers=("temperature [°C]", "gauge [bar]", "absolute [bar]")
        if current_system() is METRIC
        else tuple(shown.columns),
        title=f"precharge {p20:.4g} bar gauge at 20 °C, {args.gas} gas: what to read"
        if current_system() is METRIC
        else (
            f"precharge {fmt(p20 * BAR + P_AMBIENT, 'pressure', digits=4)} gauge at "
            f"{fmt(celsius_to_kelvin(20.0), 'temperature')}, {args.gas} gas: what to read"
        ),
    )
    print()
    for note in PRECHARGE_NOTES:
        print(note)
    return 0
