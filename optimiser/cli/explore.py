"""``stowflow explore CYCLE.csv``: trade-off front and sensitivity on Dask, a thin shell over
:func:`stowflow.studies.explore.explore_cycle`."""

from __future__ import annotations

import argparse
from pathlib import Path

from stowflow.cli._costopts import cost_settings_from_args
from stowflow.cli._output import print_table, progress
from stowflow.cli.batch import add_scheduler_options
from stowflow.cli.design import add_design_options, settings_from_args
from stowflow.io.quantities import parse_duration, parse_pressure_difference

__all__ = ["register", "run"]

_EXAMPLE = """\
examples:
  stowflow explore duty_cycles/forming_press.csv
  stowflow explore duty_cycles/forming_press.csv --samples 200 --seed 1 --out reports/fp

writes front.csv (the non-dominated designs over installed kW, capex, TCO and gas volume),
sensitivity.csv (the chosen design re-verified under changed conditions), monte_carlo.csv
(with --samples) and explore.html to the output folder (default reports/explore/<cycle>/).
"""


def register(subparsers, common) -> None:
    """Add ``stowflow explore``."""
    p = subparsers.add_parser(
        "explore",
        parents=[common],
        help="trade-off front and sensitivity of a cycle's design (on Dask)",
        description=(
            "Show the trade-offs of a cycle's design: the non-dominated designs of the "
            "screening search over installed power, capex, TCO and gas volume, and the "
            "chosen design verified again under changed conditions (precharge -5/-10 %, "
            "temperature range ±10 K, thermal time constant ×0.5/×2, pump flow -10 %, cycle "
            "flow +10 %, efficiencies -3 points), one at a time and together; optionally a "
            "Monte Carlo study of the same changes."
        ),
        epilog=_EXAMPLE,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("cycle", metavar="CYCLE.csv", help="duty-cycle CSV (see README: input format)")
    p.add_argument(
        "--catalogue",
        metavar="FILE",
        help="component catalogue TOML (default: the bundled demo catalogue)",
    )
    p.add_argument(
        "--out", metavar="DIR", help="output folder (default reports/explore/<cycle name>/)"
    )
    p.add_argument(
        "--samples",
        metavar="N",
        type=int,
        default=0,
        help="Monte Carlo samples of the changes (default 0: none)",
    )
    p.add_argument("--seed", metavar="N", type=int, default=0, help="Monte Carlo seed")
    p.add_argument(
        "--min-pressure",
        metavar="PRESSURE",
        help="minimum working pressure, gauge, for a cycle without a pressure column",
    )
    p.add_argument(
        "--step", metavar="TIME", help="time step of the cycle grid (default: automatic)"
    )
    add_scheduler_options(p)
    add_design_options(p)
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Run ``stowflow explore``."""
    from stowflow.catalogue import default_catalogue_path, load_catalogue
    from stowflow.cycle.duty import load_cycle
    from stowflow.errors import SettingsError
    from stowflow.studies.explore import EXPLORE_OUTPUTS, explore_cycle, write_exploration

    if args.samples < 0:
        raise SettingsError(f"--samples: {args.samples}; expected a whole number ≥ 0")
    if args.workers is not None and args.workers < 1:
        raise SettingsError(f"--workers: {args.workers}; expected a whole number ≥ 1")
    design = settings_from_args(args)
    costs = cost_settings_from_args(args)
    cycle = load_cycle(
        args.cycle,
        step=parse_duration(args.step, "--step", above=0.0) if args.step else None,
        min_pressure=(
            parse_pressure_difference(args.min_pressure, "--min-pressure")
            if args.min_pressure
            else None
        ),
    )
    catalogue = load_catalogue(args.catalogue or default_catalogue_path())
    out = Path(args.out) if args.out else Path("reports") / "explore" / cycle.name
    from stowflow.report import check_out_dir

    check_out_dir(out, "--out", EXPLORE_OUTPUTS)
    with progress("exploring", total=1) as update:
        ex = explore_cycle(
            cycle,
            catalogue,
            design,
            costs,
            samples=args.samples,
            seed=args.seed,
            scheduler=args.scheduler,
            workers=args.workers,
            progress=lambda done, total, label: update(done, total=total, label=label),
        )
    paths = write_exploration(ex, out)
    front = ex.front
    rows = [
        (
            ("* " if r["chosen"] else "") + str(r["supply"]),
            f"{r['motor [kW]']:g}",
            f"{r['capex']:,.0f}",
            f"{r['tco']:,.0f}",
            f"{r['total_gas_volume [L]']:.1f}",
        )
        for r in front.to_dict("records")
    ]
    print_table(
        rows,
        title=f"trade-off front of {cycle.name}: {int(front['on_front'].sum())} of "
        f"{len(ex.candidates)} candidates (* the chosen design)",
        headers=("supply", "motor [kW]", "capex", "TCO", "gas [L]"),
    )
    sens = ex.sensitivity
    if not sens.empty:
        print_table(
            [
                (
                    r["case"] + ("  <- first to break (least margin)" if r["breaks_first"] else ""),
                    f"{r['min_margin [bar]']:.2f}",
                    "passes" if r["passed"] else f"FAILS: {r['reason']}",
                )
                for r in sens.to_dict("records")
            ],
            title="sensitivity of the chosen design (verified again, not redesigned)",
            headers=("case", "margin [bar]", "verdict"),
        )
    if not ex.monte_carlo.empty:
        from stowflow.studies.explore_html import shortfall_probability

        p, se = shortfall_probability(ex.monte_carlo)
        print(
            f"Monte Carlo: {len(ex.monte_carlo)} samples, shortfall probability {p:.1%} ± {se:.1%}"
        )
    for key, path in paths.items():
        print(f"{key}: {path}")
    return 0 if ex.study.design.feasible else 1
