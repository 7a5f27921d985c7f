"""``stowflow size``: gas volume and admissible accumulator types for one duty point.

The parser is built from option groups so that further duties can add their own group
(:func:`add_storage_options` holds the energy-storage inputs; :func:`add_condition_options`
the gas, process and temperature; :func:`add_output_options` PS and JSON).  :func:`run` turns
the arguments into SI values (:func:`storage_inputs`), sizes (:func:`size_storage`) and prints.
``--duty reserve|shock|thermal`` switches to the duties of :mod:`stowflow.duties`; their option
groups and output live in :mod:`stowflow.cli._size_duties`.
"""

from __future__ import annotations

import argparse

from stowflow.catalogue import ACCUMULATOR_TYPES
from stowflow.cli._common import MAX_ROWS
from stowflow.cli._output import print_json, print_table
from stowflow.cli._size_duties import add_duty_options, check_duty_options, run_duty
from stowflow.errors import SettingsError
from stowflow.io.numbers import number
from stowflow.io.quantities import (
    parse_gas_process,
    parse_pressure,
    parse_temperature_range,
    parse_temperature_step,
    parse_volume,
)
from stowflow.io.temperatures import check_bare_range
from stowflow.units import abs_to_gauge, to_unit

__all__ = [
    "add_condition_options",
    "add_output_options",
    "add_storage_options",
    "register",
    "run",
    "size_storage",
    "storage_inputs",
]

_EXAMPLE = """\
example:
  stowflow size --volume 5L --min-pressure 100bar --max-pressure 200bar \\
                --temperature 10..50 --ps 330bar
  stowflow size --volume 2827in3 --precharge 1200psi --min-pressure 1800psi \\
                --max-pressure 3000psi --absolute --process isothermal --gas ideal \\
                --temperature 20

  stowflow size --duty reserve --motion "close guard,1.2L,120bar,2s" \\
                --motion "retract press,3L,100bar,4s" --charge-pressure 180bar \\
                --leakage 0.05L/min --standby 10min --temperature 10..50
  stowflow size --duty reserve --motions duty_cycles/motions/motions_demo.csv \\
                --charge-pressure 180bar --precharge 84bar
  stowflow size --duty shock --pipe-length 20m --pipe-diameter 25mm --wall 3mm \\
                --velocity 4m/s --pressure 150bar --peak-limit 180bar --temperature 10..50
  stowflow size --duty thermal --oil-volume 20L --temperature 20..60 \\
                --start-pressure 50bar --pressure-limit 200bar --type diaphragm

Pressures are gauge unless --absolute is given; PS is always gauge (as on the nameplate).
The precharge is stated at 20 °C. Type limits are common practice, no published source.

Storage models the usual duty, the one `stowflow design` models: the pump charges the
accumulator slowly, so the gas reaches p2 at rest at the oil temperature (isothermal), and the
machine draws the oil fast, the gas following --process from p2 down to p1 (adiabatic by
default). Ideal gas, polytropic index n:  V0 = dV / ((p0/p2)·((p2/p1)^(1/n) − 1)).  This
needs more gas than compressing along the same adiabat from the precharge (about 16 % more
for 126 bar precharge, 140 → 210 bar): the gas at rest at p2 is cooler and smaller, so the
same expansion gives back less oil. --charge fast keeps that older model, both strokes along
--process from the precharge, for a charge as fast as the discharge.
Oil and steel defaults are from memory (see optimiser/duties/properties.py).
"""


def register(subparsers, common: argparse.ArgumentParser) -> argparse.ArgumentParser:
    """Add the ``size`` command to ``subparsers`` and return its parser."""
    parser = subparsers.add_parser(
        "size",
        parents=[common],
        help="size an accumulator for one oil volume and pressure window",
        description=(
            "Gas volume (nominal size) that exchanges an oil volume between two working "
            "pressures at the worst temperature of the range, with the precharge at 20 °C, the "
            "oil stored at each temperature and the accumulator types that meet their limits. "
            "With --duty: an emergency reserve for safe-state motions after a pump failure "
            "(reserve), damping a valve-closure surge (shock), or the expansion of a "
            "blocked-in oil volume (thermal)."
        ),
        epilog=_EXAMPLE,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    add_storage_options(parser)
    add_condition_options(parser)
    add_output_options(parser)
    add_duty_options(parser)
    parser.set_defaults(func=run)
    return parser


def add_storage_options(parser: argparse.ArgumentParser) -> None:
    """Options of the energy-storage duty: oil volume and pressure window."""
    g = parser.add_argument_group("energy storage (--duty storage, the default)")
    g.add_argument(
        "--volume",
        metavar="VOL",
        help="oil volume to exchange, with unit (5L, 2827in3, 1.3gal); required",
    )
    g.add_argument(
        "--min-pressure",
        metavar="P",
        help="minimum working pressure p1, with unit (100bar, 1800psi); required",
    )
    g.add_argument(
        "--max-pressure", metavar="P", help="maximum working pressure p2, with unit; required"
    )
    g.add_argument(
        "--precharge",
        metavar="P",
        help="nitrogen precharge p0 at 20 °C (every duty); default: each type's rule "
        "(0.9·p1 for bladder/diaphragm, p1 − 5 bar for piston types) at the "
        "hottest temperature",
    )
    g.add_argument(
        "--absolute", action="store_true", help="the pressures given are absolute (default: gauge)"
    )


def add_condition_options(parser: argparse.ArgumentParser) -> None:
    """Options of the gas: process, model and temperature range."""
    g = parser.add_argument_group("gas")
    g.add_argument(
        "--process",
        metavar="PROC",
        help="storage, reserve: the process of the discharge: isothermal | adiabatic | "
        "polytropic:N (default adiabatic: a fast discharge of a gas at rest; storage charges "
        "it slowly, isothermal, unless --charge fast)",
    )
    g.add_argument(
        "--charge",
        choices=("slow", "fast"),
        help="storage: slow (default: the pump charges the gas to p2 at rest at the oil "
        "temperature, the usual duty and the one `stowflow design` models) or fast (the "
        "charge follows --process from the precharge like the discharge)",
    )
    g.add_argument(
        "--gas",
        default="real",
        choices=("real", "ideal"),
        help="nitrogen model: real (Span et al. 2000 EOS) or ideal (default real)",
    )
    g.add_argument(
        "--temperature",
        default="20",
        metavar="T[..T]",
        help="operating temperature range in °C, e.g. 10..50 or -20..60 (default 20); "
        "thermal: heating from T1 to T2",
    )
    g.add_argument(
        "--step",
        default="5",
        metavar="K",
        help="storage: step of the per-temperature table in kelvin (= °C), default 5",
    )


def add_output_options(parser: argparse.ArgumentParser) -> None:
    """Options of the output: PS for the category hint and JSON."""
    g = parser.add_argument_group("output")
    g.add_argument(
        "--ps",
        metavar="P",
        help="maximum allowable pressure PS of the vessel, gauge, for the limit "
        "check and the pressure-equipment category hint (e.g. 330bar)",
    )
    g.add_argument("--json", action="store_true", help="print the result as JSON")


def storage_inputs(args: argparse.Namespace) -> dict:
    """SI keyword arguments for :func:`stowflow.duties.sizing.size_accumulator` from the options."""

    def pressure(text: str, option: str) -> float:
        return parse_pressure(text, option, absolute=args.absolute)

    t_min, t_max = parse_temperature_range(args.temperature, "--temperature")
    check_bare_range(args.temperature, t_max, ACCUMULATOR_TYPES, "--temperature")
    kwargs = {
        "oil_volume": parse_volume(args.volume, "--volume"),
        "p_min": pressure(args.min_pressure, "--min-pressure"),
        "p_max": pressure(args.max_pressure, "--max-pressure"),
        "precharge": None if args.precharge is None else pressure(args.precharge, "--precharge"),
        "process": (
            "adiabatic"
            if args.process is None
            else parse_gas_process(args.process, "--process", allow_auto=False)
        ),
        "model": args.gas,
        "T_min": t_min,
        "T_max": t_max,
        "charge": args.charge or "slow",
        "temperature_step": _table_step(args, t_min, t_max),
    }
    if args.ps is not None:
        kwargs["max_allowable_pressure"] = parse_pressure(args.ps, "--ps")
    return kwargs


def _table_step(args: argparse.Namespace, t_min: float, t_max: float) -> float:
    """The per-temperature table's step from ``--step``, [K], held to at most
    :data:`~stowflow.cli._common.MAX_ROWS` rows."""
    step = parse_temperature_step(getattr(args, "step", None) or "5", "--step")
    rows = int((t_max - t_min) / step + 1e-9) + 1
    if rows > MAX_ROWS:
        raise SettingsError(
            f"--step: '{args.step}' gives {rows} rows from --temperature "
            f"'{args.temperature}'; expected a step that gives at most {MAX_ROWS} rows"
        )
    return step


def size_storage(args: argparse.Namespace):
    """Energy-storage sizing for the parsed options (a :class:`SizingResult`)."""
    from stowflow.duties.sizing import size_accumulator

    return size_accumulator(**storage_inputs(args))


def run(args: argparse.Namespace) -> int:
    """Size, then print a table (or JSON with ``--json``); return the exit code."""
    check_duty_options(args)
    if args.duty != "storage":
        return run_duty(args)
    result = size_storage(args)
    data = result.as_dict()
    if args.json:
        print_json(data)
        return 0
    _print_human(result, data)
    return 0


#: How the human table names the charge.
_CHARGE_TEXT = {"slow": "slow (isothermal)", "fast": "fast (along the process)"}


def _fmt(x: float, digits: int = 4) -> str:
    return number(x, digits, max_decimals=3, trim=True)


def _print_human(result, data: dict) -> None:
    g = result.governing
    bar = lambda p: _fmt(to_unit(abs_to_gauge(p), "bar", "pressure"))  # noqa: E731
    rows = [
        ("oil volume to exchange", _fmt(data["oil_volume_l"]), "L"),
        ("minimum working pressure p1", bar(result.p_min), "bar gauge"),
        ("maximum working pressure p2", bar(result.p_max), "bar gauge"),
        (
            "gas model / charge / discharge",
            f"{data['gas_model']} / {_CHARGE_TEXT[result.charge]} / {result.process}",
            "",
        ),
        (
            "temperature range",
            f"{data['temperature_c']['min']:g} … {data['temperature_c']['max']:g}",
            "°C",
        ),
        ("governing type", g.type.value, ""),
        (
            "precharge at 20 °C" + (" (by rule)" if data["precharge_by_rule"] else ""),
            _fmt(data["precharge_bar_at_20c"]),
            "bar gauge",
        ),
        ("required gas volume V0 (worst case)", _fmt(data["required_gas_volume_l"]), "L"),
        ("worst temperature", _fmt(data["worst_temperature_c"]), "°C"),
        ("shell volume", _fmt(g.as_dict()["shell_volume_l"]), "L"),
    ]
    print_table(rows, title="stowflow size: energy storage")
    print()
    headers = (
        "T [°C]",
        "p0(T) [bar]",
        "oil at p1 [L]",
        "oil at p2 [L]",
        "exchange [L]",
        "V0 needed [L]",
        "gas T at p2 [°C]",
        "gas T at p1 [°C]",
    )
    keys = (
        "temperature_c",
        "precharge_bar",
        "oil_at_min_pressure_l",
        "oil_at_max_pressure_l",
        "oil_exchange_l",
        "required_gas_volume_l",
        "gas_temperature_at_max_pressure_c",
        "gas_temperature_at_min_pressure_c",
    )
    table = [[_fmt(r[k]) for k in keys] for r in data["temperatures"]]
    print_table(
        table,
        headers=headers,
        title=f"per temperature, V0 = {_fmt(data['required_gas_volume_l'])} L ({g.type.value})",
    )
    print()
    type_rows, notes = [], []
    for c in result.cases:
        d = c.as_dict()
        verdict = "yes" if c.admissible else "no: " + "; ".join(d["reasons"])
        v0, p0 = _fmt(d["required_gas_volume_l"]), _fmt(d["precharge_bar_at_20c"])
        type_rows.append((c.type.value, v0, p0, verdict))
        notes += [f"note ({c.type.value}): {n}" for n in d["notes"]]
    print_table(
        type_rows,
        headers=("type", "V0 [L]", "p0 at 20 °C [bar]", "admissible"),
        title="accumulator types (limits: common practice, no published source)",
    )
    for note in notes:
        print(note)
    pe = data["pressure_equipment"]
    if pe is not None:
        print()
        print(
            f"pressure-equipment category for one {_fmt(pe['volume_l'])} L vessel at PS "
            f"{_fmt(pe['ps_bar'])} bar: {pe['category']}"
        )
        print(f"  {pe['note']}")
    print()
    print(
        "Precharge with nitrogen only, never air or oxygen. Design support only: a competent "
        "person checks it against local codes and standards."
    )
