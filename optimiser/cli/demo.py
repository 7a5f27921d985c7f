"""``stowflow demo``: the main job on a bundled, invented demo cycle."""

from __future__ import annotations

import argparse
from pathlib import Path

from stowflow.catalogue import default_catalogue_path
from stowflow.cli.design import (
    add_design_options,
    add_pdf_options,
    finish_pdf,
    print_summary,
    run_study,
)
from stowflow.errors import CycleError

__all__ = ["DEMO_CYCLES", "register", "run"]

#: Bundled demo cycles (invented scenarios) by short name; the first is the default.
DEMO_CYCLES = ("forming_press", "injection_moulding", "die_casting_shot", "test_rig_pulse")


def register(subparsers, common) -> None:
    """Add ``stowflow demo``."""
    p = subparsers.add_parser(
        "demo",
        parents=[common],
        help="run the whole design on a bundled demo cycle",
        description=(
            "Design, verify and cost the supply for a bundled demo cycle (an invented "
            "forming press by default) with the bundled demo catalogue (invented; prices are "
            "placeholders), and write the report to reports/demo/."
        ),
    )
    p.add_argument(
        "--cycle",
        choices=DEMO_CYCLES,
        default=DEMO_CYCLES[0],
        help="which demo cycle (default: %(default)s)",
    )
    p.add_argument(
        "--out", metavar="DIR", default=None, help="output folder (default reports/demo/)"
    )
    add_design_options(p)
    add_pdf_options(p)
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    """Run ``stowflow demo``."""
    folder = default_catalogue_path().parent
    path = folder / f"{args.cycle}.csv"
    if not path.is_file():
        raise CycleError(f"{path}: demo cycle not found; is this a complete checkout?")
    args.catalogue = None
    args.out = args.out or str(Path("reports") / "demo")
    result, paths = run_study(args, path, out_default=Path("reports"), name="demo")
    print_summary(result, paths)
    report = Path(paths["report.html"]).resolve()
    print(f"\nopen the report: {report}")
    code = 0 if result.design.feasible else 1
    return finish_pdf(args, getattr(args, "pdf_why_not", None), code)
