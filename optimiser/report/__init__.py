"""The report of a study: one self-contained HTML file and three exports.

``write_study(result, out_dir)`` writes, into ``out_dir`` (created when missing):

* ``report.html``: the interactive report (:func:`stowflow.report.html.render_html`);
* ``design.json``: the machine-readable result (:func:`stowflow.report.exports.design_record`);
* ``schedule.csv``: one row per time step (:func:`stowflow.report.exports.schedule_frame`);
* ``spec.csv``: the procurement line items (:func:`stowflow.report.exports.spec_rows`).

The four files are written as one set (:func:`stowflow.report.folder.write_set`): into a new
folder beside ``out_dir`` first, which then takes its place, so the folder holds either the
previous study's four files or the new ones, never a mix; :func:`check_out_dir` checks the
folder before any work.

The package renders only: every number comes from the :class:`~stowflow.pipeline.StudyResult`
(its design, verification, comparison and settings), put into trade units by
:mod:`stowflow.report.content`.
"""

from __future__ import annotations

from pathlib import Path

from stowflow.report.exports import (
    design_json,
    design_record,
    schedule_csv,
    schedule_frame,
    spec_csv,
    spec_rows,
)
from stowflow.report.folder import DESIGN_OUTPUTS, check_out_dir, write_set
from stowflow.report.html import render_html

__all__ = [
    "OUTPUTS",
    "check_out_dir",
    "design_record",
    "render_html",
    "schedule_csv",
    "schedule_frame",
    "spec_rows",
    "study_texts",
    "write_study",
]

#: The files write_study produces: the returned dict is keyed by these names.
OUTPUTS: tuple[str, ...] = DESIGN_OUTPUTS


def write_study(
    result, out_dir: str | Path, option: str = "--out", *, pdf: str | None = None
) -> tuple[dict[str, Path], str | None] | dict[str, Path]:
    """Write the report and the exports of a study, as one set.

    Parameters
    ----------
    result : StudyResult
        The study's result (feasible or not).
    out_dir : str or Path
        Folder to write into; created with its parents when missing.  A previous study's
        files there are replaced as a set (see :mod:`stowflow.report.folder`).
    option : str
        How the user named the folder, for messages.
    pdf : {"a4", "letter"}, optional
        Also print the report to ``report.pdf`` on this paper with a headless browser
        (:func:`stowflow.report.pdf.render_pdf`); the other files are written either way.

    Returns
    -------
    dict of str to Path
        ``{"report.html": …, "design.json": …, "schedule.csv": …, "spec.csv": …}``: file
        name to written path (with ``"report.pdf"`` when it was printed).  With ``pdf``, a
        pair: that dict and why there is no PDF (None when there is one).

    Raises
    ------
    OutputError
        The folder cannot be used or written; the previous files are then unchanged.
    """
    check_out_dir(out_dir, option, OUTPUTS)  # before the rendering's seconds
    files: dict[str, str | bytes] = dict(study_texts(result))
    if pdf is None:
        return write_set(out_dir, files, option)
    from stowflow.report.pdf import render_pdf

    data, why_not = render_pdf(files["report.html"], pdf)
    if data is not None:
        files["report.pdf"] = data
    return write_set(out_dir, files, option), why_not


def study_texts(result) -> dict[str, str]:
    """The texts of the files :func:`write_study` writes, keyed as :data:`OUTPUTS` (a batch
    renders them where the study ran and writes them where it was asked for).

    Parameters
    ----------
    result : StudyResult
        The study's result.

    Returns
    -------
    dict of str to str
        File name → text.
    """
    texts = {
        "design.json": design_json(result),
        "schedule.csv": schedule_csv(result),
        "spec.csv": spec_csv(result),
        "report.html": render_html(result),
    }
    return {name: texts[name] for name in OUTPUTS}
