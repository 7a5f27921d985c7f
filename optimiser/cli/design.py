"""``stowflow design CYCLE.csv``: the main job, a thin shell over :func:`stowflow.pipeline.run`."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from stowflow.cli._common import step_limit
from stowflow.cli._costopts import add_cost_options, cost_settings_from_args
from stowflow.cli._output import print_json, print_table, progress
from stowflow.io.numbers import METRIC, current_system, fmt, shown, unit_label
from stowflow.io.options import DESIGN_OPTIONS, OPTION_CHOICES, design_settings
from stowflow.io.quantities import parse_duration, parse_pressure_difference
from stowflow.report.display_units import catalogue_names, in_system_text, keeping
from stowflow.units import T_REF

__all__ = [
    "PDF_MISSING_EXIT",
    "add_design_options",
    "add_pdf_options",
    "finish_pdf",
    "register",
    "run",
    "run_study",
    "settings_from_args",
]

#: Exit code when ``--pdf`` could not write report.pdf (no headless Chromium, or it failed);
#: every other output is written.
PDF_MISSING_EXIT = 3

_EXAMPLE = """\
example:
  stowflow design duty_cycles/forming_press.csv --temperature 10..50 --out reports/press

writes report.html, design.json, schedule.csv and spec.csv to the output folder
(default reports/<cycle name>/), and report.pdf with --pdf.  Pressures are gauge; values
take units (5bar, 1s, 10%).

exit codes: 0 designed; 1 no design found (the report says why); 2 bad input; 3 designed
and written, but --pdf found no headless Chromium (or it failed): report.pdf is missing;
130 interrupted.
"""


def add_pdf_options(parser: argparse.ArgumentParser) -> None:
    """Add ``--pdf`` and ``--paper`` (shared by ``design`` and ``demo``)."""
    g = parser.add_argument_group("PDF")
    g.add_argument(
        "--pdf",
        action="store_true",
        help="also print the report to report.pdf with a headless Chromium (exit code 3, "
        "with the other files written, when none is installed)",
    )
    g.add_argument(
        "--paper",
        choices=("a4", "letter"),
        default="a4",
        help="paper size of report.pdf (default: %(default)s)",
    )


def finish_pdf(args: argparse.Namespace, why_not: str | None, code: int, stream=None) -> int:
    """Say why report.pdf is missing, on stderr; the exit code: ``code``, or
    :data:`PDF_MISSING_EXIT` when ``--pdf`` wrote nothing and the design itself succeeded."""
    if not getattr(args, "pdf", False) or why_not is None:
        return code
    (stream or sys.stderr).write(f"stowflow: report.pdf not written: {why_not}\n")
    return PDF_MISSING_EXIT if code == 0 else code


def add_design_options(parser: argparse.ArgumentParser) -> None:
    """Add the design settings and cost options shared by ``design`` and ``demo``."""
    g = parser.add_argument_group("design settings")
    for key, (_field, kind, raw) in DESIGN_OPTIONS.items():
        flag = "--" + key.replace("_", "-")
        text = raw.replace("%", "%%")  # argparse formats help with % ("10%" → "10%%")
        if kind == "choice":
            g.add_argument(flag, dest=f"opt_{key}", choices=OPTION_CHOICES[key], help=text)
        else:
            g.add_argument(flag, dest=f"opt_{key}", metavar="VALUE", help=text)
    g.add_argument(
        "--min-dwell",
        dest="opt_min_dwell",
        metavar="TIME",
        help="least loaded and unloaded time, both at once, e.g. 1s (0 disables)",
    )
    g.add_argument(
        "--no-pump-only",
        action="store_true",
        help="do not consider a pump without accumulator as a design",
    )
    g.add_argument(
        "--no-verify",
        action="store_true",
        help="skip the time-domain verification (not recommended)",
    )
    add_cost_options(parser)


def settings_from_args(args: argparse.Namespace):
    """Design settings from parsed options (unit strings → SI)."""
    values = {key: getattr(args, f"opt_{key}", None) for key in DESIGN_OPTIONS}
    both = getattr(args, "opt_min_dwell", None)
    if both:
        parse_duration(both, "--min-dwell")  # refused here, by the name the user typed
        values["min_loaded_dwell"] = values["min_loaded_dwell"] or both
        values["min_unloaded_dwell"] = values["min_unloaded_dwell"] or both
    s = design_settings(values)
    if getattr(args, "no_pump_only", False):
        s = s.with_(allow_pump_only=False)
    return s


def register(subparsers, common) -> None:
    """Add ``stowflow design``."""
    p = subparsers.add_parser(
        "design",
        parents=[common],
        help="design the least-installed-power supply for a duty cycle",
        description=(
            "Find the supply with the least installed motor power for a duty cycle (then the "
            "least capital cost, then the least energy): accumulator type, size, count, "
            "precharge and pressure window, pump, motor and load/unload schedule; verify it "
            "in the time domain at the coldest and hottest temperature; compare costs with "
            "pump-only supplies; write the report and exports."
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
    p.add_argument("--out", metavar="DIR", help="output folder (default reports/<cycle name>/)")
    p.add_argument("--json", action="store_true", help="also print design.json to stdout")
    p.add_argument(
        "--min-pressure",
        metavar="PRESSURE",
        help="minimum working pressure, gauge, for a cycle without a pressure column",
    )
    p.add_argument(
        "--step", metavar="TIME", help="time step of the cycle grid (default: automatic)"
    )
    p.add_argument(
        "--max-steps",
        metavar="N",
        help="largest number of time steps of the cycle grid (default 20000 for the "
        "automatic grid, 100000 with --step), e.g. 40000",
    )
    add_design_options(p)
    add_pdf_options(p)
    p.set_defaults(func=run)


def run_study(args: argparse.Namespace, cycle, *, out_default: Path, name: str | None = None):
    """Run the pipeline for parsed options and write the outputs; return (result, paths).

    Every input is checked before the design runs: the options, the cycle, the catalogue
    and the output folder (:func:`stowflow.report.check_out_dir`).
    """
    from stowflow.catalogue import default_catalogue_path, load_catalogue
    from stowflow.cycle.duty import load_cycle
    from stowflow.pipeline import Study
    from stowflow.pipeline import run as run_pipeline
    from stowflow.report import OUTPUTS, check_out_dir, write_study

    settings = settings_from_args(args)
    costs = cost_settings_from_args(args)
    min_p = getattr(args, "min_pressure", None)
    step = getattr(args, "step", None)
    cycle = load_cycle(
        cycle,
        step=parse_duration(step, "--step", above=0.0) if step else None,
        min_pressure=parse_pressure_difference(min_p, "--min-pressure") if min_p else None,
        max_steps=step_limit(getattr(args, "max_steps", None), step),
    )
    catalogue = load_catalogue(getattr(args, "catalogue", None) or default_catalogue_path())
    out = Path(args.out) if getattr(args, "out", None) else out_default / (name or cycle.name)
    check_out_dir(out, "--out", OUTPUTS)
    study = Study(
        cycle=cycle,
        catalogue=catalogue,
        settings=settings,
        costs=costs,
        name=name,
        verify=not getattr(args, "no_verify", False),
    )
    with progress("designing", total=1.0) as update:
        result = run_pipeline(study, progress=lambda f, label: update(f, label=label))
    if getattr(args, "pdf", False):
        paths, args.pdf_why_not = write_study(result, out, pdf=args.paper)
    else:
        paths = write_study(result, out)
    return result, paths


def _bar(p_abs: float) -> str:
    return fmt(p_abs, "pressure", unit=False)


def _value(value_si: float, kind: str) -> str:
    """An SI value as the table's value cell (the unit goes in its own column)."""
    return fmt(value_si, kind, unit=False)


#: The one-line explanation printed under the table for the power line.
LEAST_POWER_TEXT = (
    "least possible power: the cycle's mean hydraulic power over the best efficiencies in the "
    "catalogue ({least}); no supply can install less"
)


def _power_unit(p_si: float) -> str:
    """The power column's unit: "kW", or "hp (22 kW)" in a system that shows kW beside."""
    du = current_system().unit("power")
    if du.beside is None:
        return du.label
    return f"{du.label} ({fmt(p_si, 'power', system=METRIC)})"


def print_summary(result, paths, stream=None) -> None:
    """Print the verdict of a study as a table with units (those of ``--units``), then where
    the files are."""
    stream = stream or sys.stdout
    p_unit = unit_label("pressure")
    t20 = fmt(T_REF, "temperature")
    d = result.design
    rows = [("status", d.status, "")]
    explain = []
    if not d.feasible:
        rows.append(("reason", d.reason, ""))
    else:
        if d.bank is not None:
            b = d.bank
            rows += [
                ("accumulator", f"{b.count} × {b.option.name}", ""),
                ("total gas volume", _value(b.gas_volume, "volume"), unit_label("volume")),
                (f"precharge at {t20}", _bar(b.precharge), p_unit),
            ]
        else:
            rows.append(("accumulator", "none (pump only)", ""))
        rows += [
            ("working window", f"{_bar(d.p_min)} – {_bar(d.p_max)}", p_unit),
            ("relief setting", _bar(d.relief), p_unit),
            ("pump", f"{d.pump.name} ({fmt(d.pump.flow, 'flow')})", ""),
            ("motor", _value(d.motor.rated_power, "power"), _power_unit(d.motor.rated_power)),
        ]
        if d.lower_bound_power > 0:
            rows.append(
                (
                    "installed over least possible power",
                    shown(d.installed_power / d.lower_bound_power, "ratio"),
                    "times",
                )
            )
            explain.append(LEAST_POWER_TEXT.format(least=fmt(d.lower_bound_power, "power")))
        v = result.verification
        if v is not None:
            rows.append(
                (
                    "verification",
                    f"{'passed' if v.passed else 'FAILED'} "
                    f"({v.controller}, margin {fmt(v.min_margin, 'pressure_difference')})",
                    "",
                )
            )
            if v.setpoints.get("load_below") and v.setpoints.get("unload_above"):
                rows.append(
                    (
                        "pressure switch",
                        f"load below {_bar(v.setpoints['load_below'])}, "
                        f"unload above {_bar(v.setpoints['unload_above'])}",
                        p_unit,
                    )
                )
        best, ref = result.comparison.strongest, result.comparison.reference
        if best is not None:
            rows.append(
                (
                    "pump-only motor",
                    f"{_value(best.installed_power, 'power')} ({best.key})",
                    _power_unit(best.installed_power),
                )
            )
        if ref is not None:
            rows.append((f"against {best.key}", ref.note, ""))
    rows.append(("time", shown(result.timings["total"], "time", unit=False), "s"))
    with keeping(catalogue_names(result)):  # catalogue names as the catalogue writes them
        print_table(rows, title=f"stowflow design: {result.name}", stream=stream)
        from stowflow.report.content import recommendation

        stream.write(f"recommendation: {in_system_text(recommendation(result))}\n")
        for line in explain:
            stream.write(f"{line}\n")
        for note in d.notes:
            stream.write(f"note: {in_system_text(note)}\n")
    for key, path in paths.items():
        stream.write(f"{key}: {path}\n")


def run(args: argparse.Namespace) -> int:
    """Run ``stowflow design``."""
    result, paths = run_study(args, args.cycle, out_default=Path("reports"))
    if args.json:
        import json

        print_json(json.loads(Path(paths["design.json"]).read_text(encoding="utf-8")))
    else:
        print_summary(result, paths)
    code = 0 if result.design.feasible else 1
    return finish_pdf(args, getattr(args, "pdf_why_not", None), code)
