"""The report of a study: one self-contained HTML file and three exports.

``write_study(result, out_dir)`` writes, into ``out_dir`` (created when missing):

* ``report.html``: the interactive report (:func:`stowflow.report.html.render_html`);
* ``design.json``: the machine-readable result (:func:`stowflow.report.exports.design_record`);
* ``schedule.csv``: one row per time step (:func:`stowflow.report.exports.schedule_frame`);
* ``spec.csv``: the procurement line items (:func:`stowflow.report.exports.spec_rows`).

The package renders only: every number comes from the :class:`~stowflow.pipeline.StudyResult`
(its design, verification, comparison and settings), put into trade units by
:mod:`stowflow.report.content`.
"""

from __future__ import annotations

from pathlib import Path

from stowflow.report.exports import design_json, design_record, schedule_frame, spec_csv, spec_rows
from stowflow.report.html import render_html

__all__ = [
    "OUTPUTS",
    "design_record",
    "render_html",
    "schedule_frame",
    "spec_rows",
    "write_study",
]

#: The files write_study produces: the returned dict is keyed by these names.
OUTPUTS: tuple[str, ...] = ("report.html", "design.json", "schedule.csv", "spec.csv")


def _write(path: Path, text: str) -> Path:
    tmp = path.with_name(path.name + ".part")
    tmp.write_text(text, encoding="utf-8", newline="")
    tmp.replace(path)
    return path


def write_study(result, out_dir: str | Path) -> dict[str, Path]:
    """Write the report and the exports of a study.

    Parameters
    ----------
    result : StudyResult
        The study's result (feasible or not).
    out_dir : str or Path
        Folder to write into; created with its parents when missing.

    Returns
    -------
    dict of str to Path
        ``{"report.html": …, "design.json": …, "schedule.csv": …, "spec.csv": …}``: file
        name to written path.
    """
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    schedule = schedule_frame(result).to_csv(index=False, lineterminator="\n", na_rep="")
    texts = {
        "design.json": design_json(result),
        "schedule.csv": schedule,
        "spec.csv": spec_csv(result),
        "report.html": render_html(result),
    }
    return {name: _write(out / name, texts[name]) for name in OUTPUTS}
