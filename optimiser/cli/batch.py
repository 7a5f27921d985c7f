"""``stowflow batch DIR_OR_GLOB``: a fleet of cycles on Dask, a thin shell over
:func:`stowflow.studies.batch.run_batch`."""

from __future__ import annotations

import argparse
from pathlib import Path

from stowflow.cli._costopts import cost_settings_from_args
from stowflow.cli._output import print_table, progress
from stowflow.cli.design import add_design_options, settings_from_args
from stowflow.io.quantities import parse_duration, parse_pressure_difference

__all__ = ["add_scheduler_options", "register", "run"]

_EXAMPLE = """\
examples:
  stowflow batch duty_cycles/ --out reports/fleet
  stowflow batch 'machines/*.csv' --overrides machines/overrides.csv --temperature 10..50
  stowflow batch duty_cycles/ --scheduler tcp://10.0.0.5:8786

writes OUT/<cycle>/ (report.html, design.json, schedule.csv, spec.csv) per cycle, and
OUT/summary.csv and OUT/fleet.html.  A rerun skips the cycles whose inputs are unchanged
(--force designs them again).  The overrides CSV has a 'cycle' column (the file's stem) and
one column per design option (line_loss, temperature, ...), values as on the command line.
"""


def add_scheduler_options(parser: argparse.ArgumentParser) -> None:
    """Add ``--scheduler`` and ``--workers`` (where the Dask tasks run)."""
    g = parser.add_argument_group("where the tasks run (Dask)")
    g.add_argument(
        "--scheduler",
        metavar="ADDRESS",
        help="a running Dask scheduler, tcp://HOST:PORT (default: a local cluster, one "
        "worker process per core)",
    )
    g.add_argument(
        "--workers",
        metavar="N",
        type=int,
        help="worker processes of the local cluster (default: one per core)",
    )


def register(subparsers, common) -> None:
    """Add ``stowflow batch``."""
    p = subparsers.add_parser(
        "batch",
        parents=[common],
        help="design every cycle of a folder or glob (a fleet of machines) on Dask",
        description=(
            "Design, verify and cost the supply of every duty cycle of a folder or glob with "
            "a shared catalogue and settings, plus per-cycle overrides; one output folder per "
            "cycle and a fleet summary (summary.csv, fleet.html). The cycles run as Dask "
            "tasks on a local cluster, or on a running scheduler (--scheduler). A cycle that "
            "fails is reported in the summary and does not stop the others."
        ),
        epilog=_EXAMPLE,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("cycles", metavar="DIR_OR_GLOB", help="a folder of cycle CSVs, or a glob")
    p.add_argument(
        "--catalogue",
        metavar="FILE",
        help="component catalogue TOML (default: the bundled demo catalogue)",
    )
    p.add_argument("--out", metavar="DIR", help="output folder (default reports/batch/)")
    p.add_argument(
        "--overrides",
        metavar="CSV",
        help="per-cycle options: a 'cycle' column and one column per design option",
    )
    p.add_argument(
        "--force", action="store_true", help="design every cycle again, even unchanged ones"
    )
    p.add_argument(
        "--min-pressure",
        metavar="PRESSURE",
        help="minimum working pressure, gauge, for cycles without a pressure column",
    )
    p.add_argument(
        "--step", metavar="TIME", help="time step of the cycle grids (default: automatic)"
    )
    add_scheduler_options(p)
    add_design_options(p)
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Run ``stowflow batch``."""
    from stowflow.errors import SettingsError
    from stowflow.studies.batch import run_batch

    if args.workers is not None and args.workers < 1:
        raise SettingsError(f"--workers: {args.workers}; expected a whole number ≥ 1")
    design = settings_from_args(args)
    costs = cost_settings_from_args(args)
    out = Path(args.out) if args.out else Path("reports") / "batch"
    with progress("designing the fleet", total=1) as update:
        frame = run_batch(
            args.cycles,
            out,
            catalogue=args.catalogue,
            design=design,
            costs=costs,
            overrides=args.overrides,
            min_pressure=(
                parse_pressure_difference(args.min_pressure, "--min-pressure")
                if args.min_pressure
                else None
            ),
            step=parse_duration(args.step, "--step", above=0.0) if args.step else None,
            verify=not args.no_verify,
            scheduler=args.scheduler,
            workers=args.workers,
            force=args.force,
            progress=lambda done, total, label: update(done, total=total, label=label),
        )
    rows = [
        (
            r["cycle"],
            r["status"],
            r["run"],
            "" if r["motor [kW]"] is None else f"{r['motor [kW]']:g}",
            r["accumulator"] or r["reason"] or "",
        )
        for r in frame.astype(object).where(frame.notna(), None).to_dict("records")
    ]
    print_table(
        rows,
        title=f"stowflow batch: {len(frame)} cycle(s)",
        headers=("cycle", "status", "run", "motor [kW]", "accumulator / reason"),
    )
    print(f"summary.csv: {out / 'summary.csv'}")
    print(f"fleet.html: {out / 'fleet.html'}")
    good = frame["status"].isin(["optimal", "feasible"]).all()
    return 0 if good else 1
