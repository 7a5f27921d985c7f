"""``stowflow fill``: a step-by-step plan to fill a nitrogen precharge from bottles on site.

Thin shell over :func:`stowflow.fill.plan_fill`: options to SI, the plan, a table or JSON.
"""

from __future__ import annotations

import argparse

from stowflow.cli._common import allow_negative_ranges, temperatures
from stowflow.cli._output import print_json, print_table
from stowflow.errors import SettingsError, SizingError
from stowflow.io.numbers import number
from stowflow.io.quantities import (
    parse_number,
    parse_pressure,
    parse_pressure_difference,
    parse_temperature,
    parse_volume,
    parse_whole,
)

__all__ = ["PRESSURES_TEXT", "register", "run"]

_EXAMPLE = """\
example:
  stowflow fill --volume 50L --precharge 180bar --ambient 15 \\
                --bottles 4 --bottle-volume 50L --bottle-pressure 200bar
  stowflow fill --volume 50L --precharge 250bar --ambient 15 \\
                --bottles 3 --bottle-volume 50L --bottle-pressure 200bar \\
                --booster-ratio 4 --booster-stroke 0.2L \\
                --transfer-volume 10L --oil-pressure 300bar --table 0..40

Pressures are gauge unless --absolute is given; the target is stated at 20 °C and the bottle
pressure as read at the filling temperature. Numbers in these examples are examples only.
"""


def register(subparsers, common: argparse.ArgumentParser) -> argparse.ArgumentParser:
    """Add the ``fill`` command to ``subparsers`` and return its parser."""
    parser = subparsers.add_parser(
        "fill",
        parents=[common],
        help="plan filling a nitrogen precharge from bottles (cascade, booster, transfer pump)",
        description=(
            "Step-by-step nitrogen fill plan: a direct cascade bottle by bottle (pressure "
            "reached, gas left in each bottle, bottles needed), the warm reading right after "
            "each fill and the settled value to re-check, and, when the bottles cannot reach "
            "the target, a gas booster or a piston accumulator used as a transfer pump. Real-gas "
            "nitrogen (Span et al. 2000) unless --gas ideal."
        ),
        epilog=_EXAMPLE,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    g = parser.add_argument_group("accumulator")
    g.add_argument(
        "--volume",
        required=True,
        metavar="VOL",
        help="gas volume to fill: accumulator plus any back-up gas bottles",
    )
    g.add_argument("--precharge", required=True, metavar="P", help="target precharge at 20 °C")
    g.add_argument(
        "--ambient",
        required=True,
        metavar="T",
        help="ambient temperature during filling, °C (e.g. 15)",
    )
    g.add_argument(
        "--initial",
        default="0bar",
        metavar="P",
        help="nitrogen pressure in the accumulator now (default 0bar gauge)",
    )
    g.add_argument("--ps", metavar="P", help="the accumulator's PS, gauge, to check the target")
    s = parser.add_argument_group("supply bottles")
    s.add_argument("--bottles", required=True, metavar="N", help="number of bottles")
    s.add_argument("--bottle-volume", required=True, metavar="VOL", help="water volume each")
    s.add_argument(
        "--bottle-pressure",
        required=True,
        metavar="P",
        help="bottle pressure as read at the filling temperature",
    )
    s.add_argument(
        "--residual",
        default="2bar",
        metavar="P",
        help="pressure to leave in each "
        "bottle (default 2bar gauge; common practice, no published source)",
    )
    o = parser.add_argument_group("when the bottles cannot reach the target")
    o.add_argument("--booster-ratio", metavar="R", help="gas booster pressure ratio")
    o.add_argument("--booster-stroke", metavar="VOL", help="gas booster swept volume per stroke")
    o.add_argument(
        "--transfer-volume",
        metavar="VOL",
        help="gas volume of a piston accumulator used as a transfer pump",
    )
    o.add_argument(
        "--oil-pressure",
        metavar="P",
        help="oil pressure available to push the transfer pump's gas on",
    )
    o.add_argument(
        "--transfer-dead",
        default="0L",
        metavar="VOL",
        help="gas left on the transfer pump's gas side at its end stop (default 0L)",
    )
    o.add_argument(
        "--own-piston",
        action="store_true",
        help="the transfer pump is the "
        "accumulator's own piston unit; the rest of --volume is its back-up bottles",
    )
    out = parser.add_argument_group("output")
    out.add_argument("--gas", default="real", choices=("real", "ideal"), help="gas model")
    out.add_argument(
        "--absolute", action="store_true", help="pressures given are absolute (default gauge)"
    )
    out.add_argument(
        "--table",
        metavar="T..T",
        help="also print the precharge to read at each temperature, °C range",
    )
    out.add_argument("--step", default="5", metavar="K", help="step of --table, K (default 5)")
    out.add_argument("--json", action="store_true", help="print the plan as JSON")
    allow_negative_ranges(parser)
    parser.set_defaults(func=run)
    return parser


def _plan(args: argparse.Namespace):
    from stowflow.fill import plan_fill

    def pressure(text: str, option: str) -> float:
        return parse_pressure(text, option, absolute=args.absolute)

    t_fill = parse_temperature(args.ambient, "--ambient")
    target = pressure(args.precharge, "--precharge")
    if args.ps is not None and target > parse_pressure(args.ps, "--ps"):
        raise SizingError(f"--precharge {args.precharge} exceeds the accumulator's PS {args.ps}")
    booster = None
    if (args.booster_ratio is None) != (args.booster_stroke is None):
        raise SettingsError("a booster needs both --booster-ratio and --booster-stroke")
    if args.booster_ratio is not None:
        booster = (
            parse_number(args.booster_ratio, "--booster-ratio", above=1.0),
            parse_volume(args.booster_stroke, "--booster-stroke"),
        )
    transfer = None
    if (args.transfer_volume is None) != (args.oil_pressure is None):
        raise SettingsError("a transfer pump needs both --transfer-volume and --oil-pressure")
    if args.own_piston and args.transfer_volume is None:
        raise SettingsError("--own-piston needs --transfer-volume (the piston unit's gas volume)")
    if args.transfer_volume is not None:
        transfer = (
            parse_volume(args.transfer_volume, "--transfer-volume"),
            pressure(args.oil_pressure, "--oil-pressure"),
            parse_volume(args.transfer_dead, "--transfer-dead"),
        )
    return plan_fill(
        parse_volume(args.volume, "--volume"),
        target,
        t_fill,
        parse_whole(args.bottles, "--bottles", at_least=1),
        parse_volume(args.bottle_volume, "--bottle-volume"),
        pressure(args.bottle_pressure, "--bottle-pressure"),
        initial_pressure=pressure(args.initial, "--initial"),
        model=args.gas,
        booster=booster,
        transfer=transfer,
        own_piston=args.own_piston,
        residual=pressure(args.residual, "--residual"),
        table_temperatures=(
            None
            if args.table is None
            else temperatures(args.table, args.step, option="--table", step_option="--step")
        ),
    )


def run(args: argparse.Namespace) -> int:
    """Plan the fill and print it (or JSON); return the exit code."""
    data = _plan(args).as_dict()
    ps = None if args.ps is None else parse_pressure_difference(args.ps, "--ps")
    if ps is not None and data["bottle_pressure_bar"] > ps / 1e5:
        data["notes"].append(
            "the bottle pressure exceeds the accumulator's PS: a pressure regulator set below "
            "PS is mandatory"
        )
    if args.json:
        print_json(data)
        return 0
    _print(data)
    return 0


#: The three pressures of a cascade step, in one line under its table.
PRESSURES_TEXT = (
    "settled: the gauge once the gas is back at the filling temperature with the valve left "
    "open; warm: the gauge just after the flow stops; cooled if shut at once: what that warm "
    "charge reads once cool if the valve is shut then"
)


def _f(x, digits: int = 4) -> str:
    return number(x, digits, max_decimals=2, trim=True)


def _print(d: dict) -> None:
    head = [
        ("gas volume to fill", _f(d["volume_l"]), "L"),
        ("target precharge at 20 °C", _f(d["target_precharge_bar_at_20c"]), "bar gauge"),
        (
            f"target settled at {_f(d['fill_temperature_c'], 3)} °C",
            _f(d["target_at_fill_temperature_bar"]),
            "bar gauge",
        ),
        ("gas model", d["gas_model"], ""),
        (
            "bottles used / needed by cascade",
            f"{d['bottles_used']} / {_f(d['bottles_needed_direct'])}",
            "",
        ),
        ("pressure after the cascade (settled)", _f(d["final_pressure_bar"]), "bar gauge"),
        ("target reached by the cascade", "yes" if d["reached"] else "no", ""),
    ]
    print_table(head, title="stowflow fill: nitrogen fill plan")
    print(f"assumption: {d['thermal_assumption']}")
    print()
    rows = [
        (
            str(s["bottle"]),
            _f(s["accumulator [bar]"]),
            _f(s["bottle_left [bar]"]),
            _f(s["warm [bar]"]),
            _f(s["warm_temperature [°C]"], 3),
            _f(s["cooled_if_shut_at_once [bar]"]),
            "yes" if s["reached"] else "no",
        )
        for s in d["steps"]
    ]
    print_table(
        rows,
        headers=(
            "bottle",
            "settled [bar]",
            "left in bottle [bar]",
            "warm [bar]",
            "warm gas [°C]",
            "cooled if shut at once [bar]",
            "target reached",
        ),
        title="cascade: each fresh bottle alone in turn (gauge)",
    )
    print(PRESSURES_TEXT)
    for o in d["options"]:
        print()
        print(f"option: {o['description']}")
        print(
            f"  strokes: {o['strokes']} (per bottle {o['strokes_per_bottle']}); "
            f"final {_f(o['final_pressure_bar'])} bar gauge settled; "
            f"{'target reached' if o['reached'] else 'not reached: ' + o['stop_reason']}"
        )
        print("  left in bottles [bar]: " + ", ".join(_f(b) for b in o["bottles_left_bar"]))
    if d["precharge_table"]:
        print()
        rows = [
            (
                _f(r["temperature [°C]"], 3),
                _f(r["precharge_gauge [bar]"]),
                _f(r["precharge_absolute [bar]"]),
            )
            for r in d["precharge_table"]
        ]
        print_table(
            rows,
            headers=("temperature [°C]", "gauge [bar]", "absolute [bar]"),
            title="precharge to read at the measured temperature",
        )
    print()
    for note in d["notes"]:
        print(f"note: {note}")
    print()
    for line in d["safety"]:
        print(line)
