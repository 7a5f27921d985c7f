"""The upload form: its fields, built from the option tables, and the form → :class:`Study` step.

Every settings field comes from :data:`stowflow.io.options.DESIGN_OPTIONS` (form name
``d_<key>``) or :data:`stowflow.io.options.COST_OPTIONS` (``c_<key>``), with the table's help
text; a new option in a table appears on the page by itself.  This module only gives the
fields their labels (the trade's terms) and order.  The text typed in goes, unchanged, to the
same parsers the command line uses: :func:`~stowflow.io.options.design_settings`,
:func:`~stowflow.io.options.cost_settings`, the option parsers of :mod:`stowflow.io.quantities`,
:func:`~stowflow.cycle.duty.parse_cycle_bytes` and :func:`~stowflow.catalogue.parse_catalogue_text`.
A refusal names the option by its command-line flag (``--min-pressure``), as the command line
does.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

from stowflow.catalogue import ACCUMULATOR_TYPES, Catalogue, parse_catalogue_text
from stowflow.cycle.csvtable import utf8_text
from stowflow.cycle.duty import DutyCycle, parse_cycle_bytes
from stowflow.errors import CatalogueError, SettingsError
from stowflow.io.numbers import SYSTEMS, unit_system
from stowflow.io.options import (
    COST_OPTIONS,
    DESIGN_OPTIONS,
    OPTION_CHOICES,
    cost_settings,
    design_settings,
)
from stowflow.io.quantities import parse_duration, parse_pressure_difference
from stowflow.pipeline import MAX_TIGHTENINGS, Study
from stowflow.search.settings import DesignSettings
from stowflow.web.upload import UploadedForm

__all__ = [
    "CATALOGUE_FIELD",
    "CYCLE_FIELD",
    "DEMO_FIELD",
    "FILE_FIELDS",
    "TEXT_FIELDS",
    "UNITS_FIELD",
    "FormField",
    "FormLimits",
    "build_study",
    "chosen_units",
    "form_sections",
    "study_name",
]

#: Part of a job's time limit given to the schedule solves, [-].
SOLVE_SHARE = 0.5

#: File inputs and the demo button.
CYCLE_FIELD, CATALOGUE_FIELD, DEMO_FIELD = "cycle", "catalogue", "use_demo"

#: Labels in the trade's terms; an option without one is labelled from its key.
_LABELS = {
    "temperature": "Operating temperature range",
    "gas": "Nitrogen model",
    "process": "Gas process",
    "time_constant": "Thermal time constant",
    "line_loss": "Line loss allowance",
    "relief_margin": "Relief valve margin",
    "standby_pressure": "Standby pressure (unloaded pump)",
    "min_loaded_dwell": "Least loaded time",
    "min_unloaded_dwell": "Least unloaded time",
    "max_load_events": "Load events per hour, at most",
    "flow_margin": "Pump flow margin",
    "switch_differential": "Pressure switch differential, at least",
    "switch_tolerance": "Pressure switch repeatability",
    "motor_sizing": "Motor sized at",
    "max_count": "Accumulators in one bank, at most",
    "objective": "Objective (what the search puts first)",
    "max_category": "Pressure-equipment category of one accumulator, at most",
    "prefer_types": "Preferred accumulator types among ties",
    "motor_voltage": "Motor supply voltage [V]",
    "motor_frequency": "Motor supply frequency [Hz]",
    "motor_poles": "Motor poles",
    "types": "Accumulator types",
    "precharge_step": "Precharge search step",
    "time_limit": "Time limit of one schedule solve",
    "mip_gap": "Relative MIP gap",
    "energy_price": "Energy price",
    "hours_per_year": "Operating hours per year",
    "cycles_per_hour": "Machine cycles per hour",
    "cycle_time": "Cycle time (start to start)",
    "years": "Cost horizon, years",
    "discount_rate": "Discount rate",
    "installation_factor": "Installation factor",
    "currency": "Currency label",
    "min_pressure": "Minimum working pressure (gauge)",
    "step": "Time step of the cycle grid",
    "units": "Units of the report",
}
#: Options shown first, in this order; the rest sit under "More settings".
_MAIN = (
    "units",
    "d_temperature",
    "c_cycles_per_hour",
    "c_cycle_time",
    "c_hours_per_year",
    "c_energy_price",
    "d_gas",
    "d_process",
)
#: Cycle options of ``stowflow design`` that are not settings (same parsing as the CLI).
_CYCLE_OPTIONS = {
    "min_pressure": "minimum working pressure, gauge, for a cycle without a pressure column, "
    "e.g. 120bar",
    "step": "time step of the cycle grid, e.g. 0.05s (default: automatic)",
}

#: The report's unit system (not a setting of the design: the design is the same in any units).
UNITS_FIELD = "units"
_UNITS_HELP = (
    "units of the report and its files: metric (bar, L, L/min, kW, °C) or us (psi, US gal, "
    "gpm, hp beside kW, °F); design.json keeps its metric keys either way"
)

TEXT_FIELDS: tuple[str, ...] = (
    UNITS_FIELD,
    *(f"d_{k}" for k in DESIGN_OPTIONS),
    *(f"c_{k}" for k in COST_OPTIONS),
    *_CYCLE_OPTIONS,
    DEMO_FIELD,
)
FILE_FIELDS: tuple[str, ...] = (CYCLE_FIELD, CATALOGUE_FIELD)


@dataclass(frozen=True)
class FormField:
    """One input of the form.

    Attributes
    ----------
    name : str
        Form field name.
    label : str
        Label in the trade's terms.
    help : str
        Help text from the option table (units and defaults).
    placeholder : str
        Example shown in the empty input.
    choices : tuple of str
        Choices of a drop-down (empty: a text input).
    suggestions : tuple of str
        Suggested values of a text input.
    """

    name: str
    label: str
    help: str
    placeholder: str = ""
    choices: tuple[str, ...] = ()
    suggestions: tuple[str, ...] = ()


@dataclass(frozen=True)
class FormLimits:
    """What this server accepts.

    Attributes
    ----------
    max_rows : int
        Most data rows of a cycle, [-].
    job_time_limit : float
        Wall-clock limit of one design job, [s].
    """

    max_rows: int
    job_time_limit: float

    @property
    def solve_time_limit(self) -> float:
        """Default time limit of one schedule solve, [s].

        Half the job's limit shared over the most design passes the pipeline makes; the other
        half is left for reading, screening, model building and the time-domain checks.  A
        solve stopped by it returns the best schedule found, with its gap ("feasible").
        """
        share = SOLVE_SHARE * self.job_time_limit / (MAX_TIGHTENINGS + 1)
        return min(DesignSettings().time_limit, share)


def _example(help_text: str) -> str:
    m = re.search(r"e\.g\. ([^\s,;)]+)", help_text)
    return m.group(1) if m else ""


def _field(name: str, key: str, help_text: str, limits: FormLimits) -> FormField:
    label = _LABELS.get(key, key.replace("_", " ").capitalize())
    placeholder, choices, suggestions = _example(help_text), (), ()
    if key in OPTION_CHOICES:
        choices = ("", *OPTION_CHOICES[key])
    elif name == "d_process":
        suggestions = ("auto", "isothermal", "adiabatic", "polytropic:1.3")
        placeholder = "auto"
    elif name == "d_types":
        placeholder = ",".join(ACCUMULATOR_TYPES)
    elif name == "d_time_limit":
        placeholder = f"{limits.solve_time_limit:g}s"
        help_text += (
            f"; this server's default is {limits.solve_time_limit:g} s so that all "
            f"{MAX_TIGHTENINGS + 1} design passes fit in its {limits.job_time_limit:g} s "
            "limit per design; a solve stopped by it keeps the best schedule found"
        )
    return FormField(name, label, help_text, placeholder, choices, suggestions)


def form_sections(limits: FormLimits) -> list[tuple[str, list[FormField]]]:
    """The form's settings fields in sections: main settings first, then the rest.

    Parameters
    ----------
    limits : FormLimits
        The server's limits (the time-limit field quotes them).

    Returns
    -------
    list of (title, fields)
    """
    fields: dict[str, FormField] = {}
    for key, (_f, _kind, text) in DESIGN_OPTIONS.items():
        fields[f"d_{key}"] = _field(f"d_{key}", key, text, limits)
    for key, (_metavar, text) in COST_OPTIONS.items():
        fields[f"c_{key}"] = _field(f"c_{key}", key, text, limits)
    cycle = [_field(k, k, text, limits) for k, text in _CYCLE_OPTIONS.items()]
    fields[UNITS_FIELD] = FormField(
        UNITS_FIELD, _LABELS[UNITS_FIELD], _UNITS_HELP, choices=("", *SYSTEMS)
    )
    main = [fields.pop(name) for name in _MAIN]
    design = [f for n, f in fields.items() if n.startswith("d_")]
    costs = [f for n, f in fields.items() if n.startswith("c_")]
    return [
        ("Main settings", main),
        ("Cycle", cycle),
        ("Design", design),
        ("Costs", costs),
    ]


def chosen_units(form: UploadedForm) -> str:
    """The unit system the form asks for ("metric" when left at the default).

    Raises
    ------
    SettingsError
        A name that is not a unit system.
    """
    return unit_system(_optional(form, UNITS_FIELD) or "metric").name


def study_name(filename: str) -> str:
    """A study name from an uploaded file's name: its stem, letters, digits and ``-_. ``."""
    stem = filename.rsplit(".", 1)[0] if "." in filename.strip(".") else filename
    name = re.sub(r"[^\w .-]+", "_", stem).strip(" ._")[:60]
    return name or "upload"


def _optional(form: UploadedForm, name: str) -> str | None:
    text = form.fields.get(name)
    return text if text and text.strip() else None


def build_study(form: UploadedForm, limits: FormLimits, demo_cycle: Path) -> tuple[Study, str]:
    """Turn an upload into a study, with the library's parsers and their one-line errors.

    Parameters
    ----------
    form : UploadedForm
        The upload.
    limits : FormLimits
        The server's limits.
    demo_cycle : pathlib.Path
        The demo cycle used when the form asks for it.

    Returns
    -------
    tuple of (Study, str)
        The study, cycle and catalogue parsed (``catalogue=None``: the bundled demo one),
        and what was uploaded, as text for display.

    Raises
    ------
    StowflowError
        Any setting, the cycle or the catalogue is refused (one line).
    """
    values = {key: form.fields.get(f"d_{key}") for key in DESIGN_OPTIONS}
    settings = design_settings(values, base=DesignSettings(time_limit=limits.solve_time_limit))
    if settings.time_limit > limits.job_time_limit:
        raise SettingsError(
            f"--time-limit: '{values['time_limit'].strip()}' is longer than this server's limit "
            f"of {limits.job_time_limit:g} s per design (stowflow serve --time-limit); expected "
            f"a time limit of one schedule solve ≤ {limits.job_time_limit:g} s, e.g. "
            f"{limits.solve_time_limit:g}s"
        )
    costs = cost_settings({key: form.fields.get(f"c_{key}") for key in COST_OPTIONS})
    min_p = _optional(form, "min_pressure")
    step = _optional(form, "step")
    if _optional(form, DEMO_FIELD):
        data, source, name = demo_cycle.read_bytes(), f"{demo_cycle.name} (demo)", "demo"
    else:
        upload = form.files.get(CYCLE_FIELD)
        if upload is None:
            raise SettingsError(
                "no duty-cycle file chosen; choose a CSV file, or press 'Try the demo cycle'"
            )
        data, source = upload.data, upload.filename or "upload.csv"
        name = study_name(source)
    cycle: DutyCycle = parse_cycle_bytes(
        data,
        source=source,
        name=name,
        step=parse_duration(step, "--step", above=0.0) if step else None,
        min_pressure=parse_pressure_difference(min_p, "--min-pressure") if min_p else None,
        max_rows=limits.max_rows,
    )
    catalogue: Catalogue | None = None
    cat_upload = form.files.get(CATALOGUE_FIELD)
    if cat_upload is not None:
        cat_source = cat_upload.filename or "catalogue.toml"
        if not cat_upload.data.strip():
            raise CatalogueError(f"{cat_source}: empty file; expected a TOML catalogue")
        text = utf8_text(cat_upload.data, cat_source, CatalogueError, "a UTF-8 TOML file")
        catalogue = parse_catalogue_text(text, source=cat_source)
    study = Study(cycle=cycle, catalogue=catalogue, settings=settings, costs=costs, name=name)
    return study, source
