"""A fleet of cycles: every cycle designed with shared settings, one output folder each.

:func:`run_batch` finds the cycles (a folder's ``*.csv`` or a glob), reads each with the
shared catalogue and settings plus its row of an optional overrides table, and runs
:func:`stowflow.pipeline.run` for each as a Dask task (:mod:`~stowflow.studies.cluster`).
A task renders the four files of ``stowflow design`` where it runs
(:func:`stowflow.report.study_texts`); the caller writes them as one set into
``OUT/<cycle>/`` (:func:`stowflow.report.folder.write_set`) with the inputs' content hash
beside them (:data:`INPUTS_FILE`), so a rerun skips a cycle whose inputs are unchanged.
A cycle that fails (bad input, an internal error) is a row with status ``failed`` and its
reason; the batch goes on.  The fleet summary is ``OUT/summary.csv`` (:data:`COLUMNS`, one
row per cycle) and ``OUT/fleet.html`` (:mod:`~stowflow.studies.fleet_html`).

The overrides table is a CSV with a ``cycle`` column (the file's stem) and one column per
option of ``stowflow design`` (``line_loss`` or ``line-loss``; values as on the command line,
``5bar``, ``10..50``), plus ``min_pressure`` and ``step``; an empty cell keeps the shared
value.
"""

from __future__ import annotations

import glob
import hashlib
import io
import json
import os
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

from stowflow.errors import CycleError, SettingsError, StowflowError, one_line
from stowflow.version import __version__

if TYPE_CHECKING:  # pragma: no cover - typing only
    import pandas as pd
    from stowflow.catalogue import Catalogue
    from stowflow.costs.comparison import CostSettings
    from stowflow.search.settings import DesignSettings

__all__ = [
    "COLUMNS",
    "FLEET_FILES",
    "INPUTS_FILE",
    "OVERRIDE_EXTRA",
    "find_cycles",
    "read_overrides",
    "run_batch",
    "summary_row",
]

#: The hidden file beside a cycle's outputs that holds the content hash of its inputs.
INPUTS_FILE = ".stowflow-inputs"
#: The fleet's own files in the output folder.
FLEET_FILES: tuple[str, ...] = ("summary.csv", "fleet.html")
#: Columns of an overrides table beyond the design and cost options.
OVERRIDE_EXTRA: tuple[str, ...] = ("min_pressure", "step")
#: Columns of ``summary.csv``, in order (units in the names; pressures gauge).
COLUMNS: tuple[str, ...] = (
    "cycle",
    "status",
    "run",
    "supply",
    "accumulator",
    "total_gas_volume [L]",
    "pump",
    "motor",
    "motor [kW]",
    "capex",
    "tco",
    "currency",
    "pump_only_kind",
    "pump_only_motor [kW]",
    "pump_only_tco",
    "verdict",
    "recommended",
    "verified",
    "min_margin [bar]",
    "reason",
    "report",
)


def find_cycles(pattern: str | Path) -> list[Path]:
    """The cycle files of a folder (its ``*.csv``, not its subfolders) or of a glob.

    Parameters
    ----------
    pattern : str or pathlib.Path
        A folder, one CSV file or a glob pattern (``machines/*.csv``).

    Returns
    -------
    list of pathlib.Path
        The files, sorted by name.

    Raises
    ------
    CycleError
        Nothing matches, or two files have the same stem (their folders would collide).
    """
    p = Path(pattern)
    if p.is_dir():
        found = sorted(q for q in p.glob("*.csv") if q.is_file())
    elif p.is_file():
        found = [p]
    else:
        found = sorted(Path(q) for q in glob.glob(str(pattern)) if Path(q).is_file())
    if not found:
        raise CycleError(f"{pattern}: no duty-cycle CSV found (a folder, a file or a glob)")
    stems: dict[str, Path] = {}
    for q in found:
        if q.stem in stems:
            raise CycleError(
                f"{q} and {stems[q.stem]}: two cycles named '{q.stem}'; their output folders "
                "would collide"
            )
        stems[q.stem] = q
    return found


def read_overrides(source: str | Path | pd.DataFrame | None) -> dict[str, dict[str, str]]:
    """Per-cycle option texts from an overrides table.

    Parameters
    ----------
    source : str, pathlib.Path, pandas.DataFrame or None
        A CSV (or a frame) with a ``cycle`` column and option columns (see the module).

    Returns
    -------
    dict
        Cycle name → {option key → text} (empty cells left out).

    Raises
    ------
    SettingsError
        A missing ``cycle`` column, an unknown option column, a cycle named twice.
    """
    if source is None:
        return {}
    import pandas as pd
    from stowflow.io.options import COST_OPTIONS, DESIGN_OPTIONS

    where = "overrides" if isinstance(source, pd.DataFrame) else str(source)
    if isinstance(source, pd.DataFrame):
        frame = source.astype(str).where(source.notna(), "")
    else:
        from stowflow.io.rawtext import read_limited

        data = read_limited(source, "overrides", SettingsError, "an overrides CSV")
        try:
            text = data.decode("utf-8-sig")
            frame = pd.read_csv(io.StringIO(text), dtype=str, keep_default_na=False, comment="#")
        except (UnicodeDecodeError, ValueError) as exc:
            raise SettingsError(
                f"{where}: cannot read the overrides table ({one_line(exc)}); expected a CSV "
                "with a 'cycle' column"
            ) from None
    frame = frame.rename(columns=lambda c: str(c).strip().replace("-", "_"))
    if "cycle" not in frame.columns:
        raise SettingsError(f"{where}: no 'cycle' column; expected the cycle file's stem")
    known = set(DESIGN_OPTIONS) | set(COST_OPTIONS) | set(OVERRIDE_EXTRA) | {"min_dwell"}
    unknown = [c for c in frame.columns if c != "cycle" and c not in known]
    if unknown:
        raise SettingsError(
            f"{where}: unknown column(s) {', '.join(map(repr, unknown))}; expected options of "
            "`stowflow design` (e.g. line_loss, temperature), min_pressure or step"
        )
    out: dict[str, dict[str, str]] = {}
    for line, row in enumerate(frame.to_dict("records"), start=2):
        name = str(row.pop("cycle")).strip()
        if name in out:
            raise SettingsError(f"{where}, line {line}: cycle '{name}' given twice")
        out[name] = {k: str(v).strip() for k, v in row.items() if str(v).strip()}
    return out


@dataclass(frozen=True)
class _Job:
    """One cycle of the batch, read and keyed before any task runs."""

    name: str
    path: Path
    cycle: Any = None  # DutyCycle
    design: Any = None  # DesignSettings
    costs: Any = None  # CostSettings
    key: str = ""
    error: str | None = None
    row: dict = field(default_factory=dict)


def _apply(texts: Mapping[str, str], design, costs):
    """Shared settings with one cycle's option texts over them."""
    from stowflow.io.options import COST_OPTIONS, design_settings
    from stowflow.io.options import cost_settings as make_costs

    d_text = {k: v for k, v in texts.items() if k not in COST_OPTIONS and k not in OVERRIDE_EXTRA}
    both = d_text.pop("min_dwell", None)
    if both:
        d_text.setdefault("min_loaded_dwell", both)
        d_text.setdefault("min_unloaded_dwell", both)
    c_text = {k: v for k, v in texts.items() if k in COST_OPTIONS}
    return (
        design_settings(d_text, design) if d_text else design,
        make_costs(c_text, costs) if c_text else costs,
    )


def _digest(*parts: Any) -> str:
    h = hashlib.sha256()
    for part in parts:
        data = part if isinstance(part, bytes) else repr(part).encode("utf-8")
        h.update(len(data).to_bytes(8, "little") + data)
    return h.hexdigest()


def _prepare(
    path: Path,
    catalogue_bytes: bytes,
    texts: Mapping[str, str],
    design,
    costs,
    shared: Mapping[str, Any],
) -> _Job:
    """Read one cycle with its overrides and key its inputs; an input error is kept."""
    from stowflow.cycle.duty import load_cycle
    from stowflow.io.quantities import parse_duration, parse_pressure_difference

    name = path.stem
    try:
        d, c = _apply(texts, design, costs)
        min_p = texts.get("min_pressure")
        step = texts.get("step")
        min_p = parse_pressure_difference(min_p, "min_pressure") if min_p else shared["min_p"]
        step = parse_duration(step, "step", above=0.0) if step else shared["step"]
        cycle = load_cycle(path, step=step, min_pressure=min_p)
        key = _digest(
            path.read_bytes(), catalogue_bytes, d, c, min_p, step, shared["verify"], __version__
        )
        return _Job(name, path, cycle, d, c, key)
    except StowflowError as exc:
        return _Job(name, path, error=one_line(exc))


def _design_task(cycle, catalogue, design, costs, verify: bool) -> dict[str, str]:
    """What one worker does: the pipeline, then the four files' texts."""
    from stowflow.pipeline import Study, run
    from stowflow.report import study_texts

    study = Study(cycle=cycle, catalogue=catalogue, settings=design, costs=costs, verify=verify)
    return study_texts(run(study))


def _supply(record: dict) -> tuple[str, str]:
    """(the supply in words, the bank in words) from a design record."""
    acc = record.get("accumulator")
    pump, motor = record.get("pump") or {}, record.get("motor") or {}
    bank = f"{acc['count']} × {acc['name']}" if acc else "none (pump only)"
    if not pump:
        return "", ""
    return f"{bank}; {pump.get('name')}; {motor.get('name')}", bank


def summary_row(name: str, record: dict | None, run: str, error: str | None = None) -> dict:
    """One row of ``summary.csv`` from a cycle's ``design.json`` (None: the cycle failed).

    Parameters
    ----------
    name : str
        The cycle's name (its file stem).
    record : dict or None
        The parsed ``design.json``.
    run : str
        ``"designed"``, ``"unchanged"`` (skipped: same inputs as the folder's) or
        ``"failed"``.
    error : str, optional
        Why the cycle failed.

    Returns
    -------
    dict
        Keyed by :data:`COLUMNS`.
    """
    row: dict[str, Any] = dict.fromkeys(COLUMNS)
    row |= {"cycle": name, "run": run}
    if record is None:
        return row | {"status": "failed", "reason": error}
    costs = record["costs"]
    acc = record.get("accumulator") or {}
    pump, motor = record.get("pump") or {}, record.get("motor") or {}
    against = costs.get("payback_against")
    base = (costs.get("options") or {}).get(against) or {}
    supply, bank = _supply(record)
    return row | {
        "status": record["status"],
        "supply": supply or None,
        "accumulator": bank or None,
        "total_gas_volume [L]": acc.get("total_gas_volume_l", 0.0 if pump else None),
        "pump": pump.get("name"),
        "motor": motor.get("name"),
        "motor [kW]": motor.get("rated_kw"),
        "capex": costs.get("capex"),
        "tco": costs.get("tco"),
        "currency": costs.get("currency"),
        "pump_only_kind": against,
        "pump_only_motor [kW]": base.get("installed_power_kw"),
        "pump_only_tco": costs.get("baseline_tco"),
        "verdict": costs.get("verdict_note"),
        "recommended": costs.get("recommended"),
        "verified": record["verification"]["passed"],
        "min_margin [bar]": record["verification"]["min_margin_bar"],
        "reason": record.get("reason"),
        "report": f"{name}/report.html",
    }


def _unchanged(folder: Path, key: str) -> dict | None:
    """The design record of a finished folder whose inputs hash to ``key``, else None."""
    from stowflow.report import OUTPUTS

    try:
        if (folder / INPUTS_FILE).read_text(encoding="utf-8").strip() != key:
            return None
        if not all((folder / n).is_file() for n in OUTPUTS):
            return None
        return json.loads((folder / "design.json").read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None


def _write_atomic(path: Path, text: str) -> None:
    """A file replaced in one step (a temporary file beside it, then a rename)."""
    tmp = path.with_name(f".{path.name}.tmp-{os.getpid()}")
    with open(tmp, "w", encoding="utf-8", newline="") as f:
        f.write(text)
    os.replace(tmp, path)


def run_batch(
    pattern: str | Path,
    out: str | Path,
    *,
    catalogue: Catalogue | str | Path | None = None,
    design: DesignSettings | None = None,
    costs: CostSettings | None = None,
    overrides: str | Path | pd.DataFrame | None = None,
    min_pressure: float | None = None,
    step: float | None = None,
    verify: bool = True,
    scheduler: str | None = None,
    workers: int | None = None,
    force: bool = False,
    progress: Callable[[int, int, str], None] | None = None,
) -> pd.DataFrame:
    """Design every cycle of a folder or glob on Dask; write the folders and the summary.

    Parameters
    ----------
    pattern : str or pathlib.Path
        A folder of cycle CSVs, one CSV or a glob (:func:`find_cycles`).
    out : str or pathlib.Path
        Output folder: ``OUT/<cycle>/`` per cycle, ``summary.csv`` and ``fleet.html``.
    catalogue : Catalogue, str or pathlib.Path, optional
        Shared catalogue (default: the bundled demo catalogue).
    design, costs : DesignSettings, CostSettings, optional
        Shared settings (default: the defaults).
    overrides : str, pathlib.Path or pandas.DataFrame, optional
        Per-cycle option texts (:func:`read_overrides`).
    min_pressure : float, optional
        Shared minimum working pressure for cycles without a pressure column, gauge, [Pa].
    step : float, optional
        Shared time step of the cycle grid, [s] (default: automatic per cycle).
    verify : bool
        Run the time-domain verification (default True).
    scheduler : str, optional
        Address of a running Dask scheduler; None starts a local cluster.
    workers : int, optional
        Worker processes of the local cluster, [-].
    force : bool
        Design every cycle again, even one whose inputs are unchanged.
    progress : callable, optional
        ``progress(done, total, label)`` as cycles finish.

    Returns
    -------
    pandas.DataFrame
        ``summary.csv`` as written: one row per cycle, :data:`COLUMNS`.

    Raises
    ------
    CycleError, CatalogueError, SettingsError, OutputError
        No cycle found, a bad catalogue, overrides table or output folder (a bad cycle is a
        failed row instead).
    """
    import pandas as pd
    from stowflow.catalogue import Catalogue, default_catalogue_path, load_catalogue
    from stowflow.costs.comparison import CostSettings
    from stowflow.report import OUTPUTS, check_out_dir
    from stowflow.report.folder import write_set
    from stowflow.search.settings import DesignSettings
    from stowflow.studies.cluster import open_client
    from stowflow.studies.fleet_html import render_fleet

    report = progress or (lambda done, total, label: None)
    paths = find_cycles(pattern)
    table = read_overrides(overrides)
    stray = sorted(set(table) - {p.stem for p in paths})
    if stray:
        raise SettingsError(
            f"overrides: no cycle named {', '.join(map(repr, stray))} among the {len(paths)} found"
        )
    cat = catalogue if isinstance(catalogue, Catalogue) else None
    if cat is None:
        cat = load_catalogue(catalogue or default_catalogue_path())
    cat_bytes = _digest(cat).encode()  # the rows as read: a changed file changes them
    out = Path(out)
    names = (*OUTPUTS, INPUTS_FILE)
    for p in paths:
        check_out_dir(out / p.stem, "--out", names)
    shared = {"min_p": min_pressure, "step": step, "verify": verify}
    jobs = [
        _prepare(
            p,
            cat_bytes,
            table.get(p.stem, {}),
            design or DesignSettings(),
            costs or CostSettings(),
            shared,
        )
        for p in paths
    ]
    rows: dict[str, dict] = {}
    todo: list[_Job] = []
    for job in jobs:
        if job.error is not None:
            rows[job.name] = summary_row(job.name, None, "failed", job.error)
            continue
        record = None if force else _unchanged(out / job.name, job.key)
        if record is not None:
            rows[job.name] = summary_row(job.name, record, "unchanged")
        else:
            todo.append(job)
    total = len(jobs)
    report(len(rows), total, f"{len(todo)} cycle(s) to design")
    if todo:
        from distributed import as_completed

        with open_client(scheduler, workers=workers, tasks=len(todo)) as client:
            [cat_f] = client.scatter([cat], broadcast=True)
            futures = {
                client.submit(
                    _design_task,
                    job.cycle,
                    cat_f,
                    job.design,
                    job.costs,
                    verify,
                    key=f"stowflow-design-{job.name}-{job.key[:12]}",
                    pure=False,
                ): job
                for job in todo
            }
            for fut in as_completed(futures, loop=client.loop):
                job = futures[fut]
                rows[job.name] = _collect(fut, job, out, names, write_set)
                report(len(rows), total, job.name)
    frame = pd.DataFrame([rows[j.name] for j in jobs], columns=list(COLUMNS))
    text = frame.to_csv(index=False, lineterminator="\n")
    frame = pd.read_csv(io.StringIO(text))  # what the file holds, read as a reader reads it
    out.mkdir(parents=True, exist_ok=True)
    _write_atomic(out / "summary.csv", text)
    _write_atomic(out / "fleet.html", render_fleet(frame))
    return frame


def _collect(fut, job: _Job, out: Path, names: tuple[str, ...], write_set) -> dict:
    """A finished task's folder written as one set and its summary row (or its failure)."""
    try:
        texts = fut.result()
    except StowflowError as exc:
        return summary_row(job.name, None, "failed", one_line(exc))
    except Exception as exc:  # a bug or a lost worker: the batch goes on, the row says it
        return summary_row(job.name, None, "failed", f"{type(exc).__name__}: {one_line(exc)}")
    texts = {**texts, INPUTS_FILE: job.key + "\n"}
    try:
        write_set(out / job.name, {n: texts[n] for n in names}, "--out")
    except StowflowError as exc:
        return summary_row(job.name, None, "failed", one_line(exc))
    return summary_row(job.name, json.loads(texts["design.json"]), "designed")
