"""User-facing option strings ("10..50", "5bar", "1s", "360/h", "10%") to settings objects.

The command line and the web page both take settings as text with units; this module is the
one place that turns that text into :class:`stowflow.search.settings.DesignSettings` (from
:data:`DESIGN_OPTIONS`) and :class:`stowflow.costs.CostSettings` (from :data:`COST_OPTIONS`), so
both shells accept exactly the same spellings and refuse bad ones with the same one-line
message.  Each option's text goes to the parser of its kind in :mod:`stowflow.io.quantities`,
named by its command-line flag (``--min-loaded-dwell``); a limit that only the settings
check is reported with the flag too.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

from stowflow.costs.comparison import CostSettings
from stowflow.errors import SettingsError
from stowflow.io.quantities import (
    parse_choice,
    parse_choices,
    parse_duration,
    parse_energy_price,
    parse_fraction,
    parse_gas_process,
    parse_number,
    parse_per_hour,
    parse_pressure_difference,
    parse_temperature_range,
    parse_whole,
)
from stowflow.io.temperatures import check_bare_range
from stowflow.physics.gas import GAS_MODELS
from stowflow.search.objective import CATEGORIES, OBJECTIVES
from stowflow.search.settings import ACCUMULATOR_TYPES, MOTOR_SIZING, DesignSettings
from stowflow.units import si_factor

__all__ = [
    "COST_OPTIONS",
    "DESIGN_OPTIONS",
    "EXCLUSIVE_COST_OPTIONS",
    "OPTION_CHOICES",
    "cost_settings",
    "design_settings",
]

#: Option name → (DesignSettings field, parser, help text).  The CLI builds its options and
#: the web page its form fields from this table.
DESIGN_OPTIONS: dict[str, tuple[str, str, str]] = {
    "temperature": (
        "t_min/t_max",
        "temperature range",
        "operating temperature range of gas and oil, °C unless a unit is given, e.g. 10..50, "
        "10degC..50degC or 50degF..120degF (default 10..50, an example)",
    ),
    "gas": ("gas_model", "choice", "nitrogen model: real (Span et al. 2000 EOS) or ideal"),
    "process": (
        "process",
        "text",
        "gas process: auto (from the cycle's time scale and the thermal time "
        "constant), isothermal, adiabatic or polytropic:N",
    ),
    "time_constant": (
        "time_constant",
        "time",
        "thermal time constant of the gas charge, e.g. 5s (default 5 s, from "
        "memory: typically 1-10 s for litre-size gas volumes)",
    ),
    "line_loss": (
        "line_loss",
        "pressure",
        "pressure allowance between accumulator and consumer, e.g. 5bar (common "
        "practice, no published source)",
    ),
    "relief_margin": (
        "relief_margin",
        "fraction",
        "relief setting above the unload pressure, e.g. 10%",
    ),
    "standby_pressure": (
        "standby_pressure",
        "pressure",
        "circulating pressure of an unloaded pump, e.g. 5bar",
    ),
    "min_loaded_dwell": ("min_loaded_dwell", "time", "least loaded time once loaded, e.g. 1s"),
    "min_unloaded_dwell": (
        "min_unloaded_dwell",
        "time",
        "least unloaded time once unloaded, e.g. 1s",
    ),
    "max_load_events": (
        "max_load_events_per_hour",
        "per hour",
        "most load events per hour, e.g. 360/h, or none",
    ),
    "flow_margin": (
        "flow_margin",
        "fraction",
        "pump flow the design must do without (wear), e.g. 10% (common practice, no published "
        "source)",
    ),
    "switch_differential": (
        "switch_differential/switch_differential_min",
        "pressure or fraction",
        "least differential of the pressure switch or charging valve, as a share of its "
        "cut-out pressure (e.g. 10%) or a pressure (e.g. 15bar) (default 10%: about the least "
        "a switch holds in practice; common practice, from memory)",
    ),
    "switch_tolerance": (
        "switch_tolerance",
        "fraction",
        "repeatability of the switch settings, e.g. 1% (default 1%, from memory); the "
        "verification runs the switch at the low end",
    ),
    "motor_sizing": (
        "motor_sizing",
        "choice",
        "size the motor for the pump at full flow at the relief setting (relief, default: a "
        "stuck unloading valve cannot overload it) or at the working pressure only (working)",
    ),
    "max_count": ("max_count", "integer", "most accumulators of one size in a bank"),
    "objective": (
        "objective",
        "choice",
        "what the search puts first, e.g. capex; power (least installed power, then capex; "
        "default), capex (least capex, then power), tco (least total cost of ownership with "
        "the cost settings, then power) or volume (least gas volume, then power and capex)",
    ),
    "max_category": (
        "max_category",
        "category",
        "highest pressure-equipment category of one accumulator, e.g. III; SEP, I, II, III or "
        "IV (a hint from PS x volume, from memory of Directive 2014/68/EU)",
    ),
    "prefer_types": (
        "prefer_types",
        "types",
        "accumulator types in order of preference among designs tied on the objective, "
        "comma-separated, e.g. piston,bladder",
    ),
    "types": ("types", "types", "accumulator types to consider, comma-separated"),
    "precharge_step": (
        "precharge_step",
        "pressure",
        "resolution of the precharge search, e.g. 1bar",
    ),
    "time_limit": ("time_limit", "time", "time limit of one schedule solve, e.g. 60s"),
    "mip_gap": ("mip_gap", "fraction", "relative MIP gap of the schedule model, e.g. 0.1%"),
    "motor_voltage": (
        "motor_voltage",
        "number",
        "motor supply voltage in V for the specification, e.g. 400 (default 400)",
    ),
    "motor_frequency": (
        "motor_frequency",
        "number",
        "motor supply frequency in Hz for the specification, e.g. 50 (default 50)",
    ),
    "motor_poles": (
        "motor_poles",
        "integer",
        "motor poles for the specification, e.g. 4 (default 4: 1500 rpm at 50 Hz)",
    ),
}


#: The options whose text is one of a few words, with those words.
OPTION_CHOICES: dict[str, tuple[str, ...]] = {
    "gas": GAS_MODELS,
    "motor_sizing": MOTOR_SIZING,
    "objective": OBJECTIVES,
}


def _flag(key: str) -> str:
    """The option's name as the command line spells it (``time_limit`` → ``--time-limit``)."""
    return "--" + key.replace("_", "-")


#: Option name → parser of its text (text, the option's flag → value).  The limits mirror
#: those :class:`DesignSettings` checks, so that a refusal names the option the user typed.
_DESIGN_PARSERS: dict[str, Callable[[str, str], Any]] = {
    "temperature": parse_temperature_range,
    "gas": lambda text, flag: parse_choice(text, flag, GAS_MODELS),
    "process": parse_gas_process,
    "time_constant": lambda text, flag: parse_duration(text, flag, above=0.0),
    "line_loss": parse_pressure_difference,
    "relief_margin": parse_fraction,
    "standby_pressure": parse_pressure_difference,
    "min_loaded_dwell": parse_duration,
    "min_unloaded_dwell": parse_duration,
    "max_load_events": lambda text, flag: parse_per_hour(
        text, flag, allow_none=True, at_least=1.0, above=None
    ),
    "flow_margin": lambda text, flag: parse_fraction(text, flag, below=0.5),
    "switch_differential": lambda text, flag: _differential(text, flag),
    "switch_tolerance": lambda text, flag: parse_fraction(text, flag, below=0.1),
    "motor_sizing": lambda text, flag: parse_choice(text, flag, MOTOR_SIZING),
    "max_count": lambda text, flag: parse_whole(text, flag, at_least=1, at_most=64),
    "types": lambda text, flag: parse_choices(text, flag, ACCUMULATOR_TYPES),
    "objective": lambda text, flag: parse_choice(text, flag, OBJECTIVES),
    "max_category": lambda text, flag: _category(text, flag),
    "prefer_types": lambda text, flag: parse_choices(text, flag, ACCUMULATOR_TYPES),
    "precharge_step": lambda text, flag: parse_pressure_difference(
        text, flag, at_least=None, above=0.0
    ),
    "time_limit": lambda text, flag: parse_duration(text, flag, above=0.0),
    "mip_gap": lambda text, flag: parse_fraction(text, flag, above=0.0, below=0.5),
    "motor_voltage": lambda text, flag: parse_number(text, flag, at_least=24.0, at_most=15000.0),
    "motor_frequency": lambda text, flag: parse_number(text, flag, at_least=10.0, at_most=400.0),
    "motor_poles": lambda text, flag: parse_whole(text, flag, at_least=2, at_most=16),
}


def _category(text: str, flag: str) -> str:
    """``iv`` or ``IV`` → ``"IV"``: a pressure-equipment category as the hint spells it."""
    words = {c.lower(): c for c in CATEGORIES[1:]}
    return words[parse_choice(text, flag, tuple(words))]


def _differential(text: str, flag: str) -> tuple[float, float]:
    """``10%`` or ``0.1`` → (0.1, 0) as a share of the cut-out pressure; ``15bar`` →
    (0, 15 bar) as a pressure, [-] and [Pa]."""
    t = text.strip()
    if t.endswith("%") or not any(c.isalpha() for c in t):
        return parse_fraction(t, flag, below=0.5), 0.0
    return 0.0, parse_pressure_difference(t, flag)


def _given(values: Mapping[str, str | None]) -> dict[str, str]:
    """The options given: None and blank text leave the default."""
    return {
        key: str(text)
        for key, text in values.items()
        if text is not None and not (isinstance(text, str) and not text.strip())
    }


def design_settings(
    values: Mapping[str, str | None], base: DesignSettings | None = None
) -> DesignSettings:
    """Build design settings from option strings keyed as in :data:`DESIGN_OPTIONS`.

    Parameters
    ----------
    values : mapping
        Option name → text (None or "" leaves the default).
    base : DesignSettings, optional
        Settings to start from.

    Returns
    -------
    DesignSettings
    """
    start = base or DesignSettings()
    changes: dict = {}
    for key, text in _given(values).items():
        if key not in DESIGN_OPTIONS:
            raise SettingsError(f"unknown design option '{key}'")
        field_name, _kind, _help = DESIGN_OPTIONS[key]
        value = _DESIGN_PARSERS[key](text, _flag(key))
        change = (
            dict(zip(field_name.split("/"), value, strict=True))
            if "/" in field_name
            else {field_name: value}
        )
        try:  # a limit only the settings know: name the option anyway
            start.with_(**change)
        except SettingsError as exc:
            raise SettingsError(f"{_flag(key)}: {exc}") from None
        changes.update(change)
    result = start.with_(**changes)
    given = _given(values)
    if "temperature" in given:  # a bare range too hot for the types in play: °F meant?
        check_bare_range(given["temperature"], result.t_max, result.types, "--temperature")
    return result


_COST_DEFAULTS = CostSettings()

#: Option name → (metavar, help text) of the cost settings.  The CLI builds its ``costs``
#: option group and the web page its cost fields from this table; :func:`cost_settings` reads
#: the values.  ``cycles_per_hour`` and ``cycle_time`` exclude each other.
COST_OPTIONS: dict[str, tuple[str, str]] = {
    "energy_price": (
        "PRICE",
        "electricity price per energy unit, e.g. 0.25/kWh, 0.25EUR/kWh, 250/MWh "
        f"(default {_COST_DEFAULTS.energy_price_per_kwh:g}/kWh)",
    ),
    "hours_per_year": (
        "H",
        f"operating hours per year (default "
        f"{_COST_DEFAULTS.operating_time / si_factor('h', 'time'):g})",
    ),
    "cycles_per_hour": (
        "N",
        "machine cycles per operating hour (default: back to back, from the cycle length)",
    ),
    "cycle_time": (
        "T",
        "time from one cycle start to the next, with unit, e.g. 40s (default: the cycle length)",
    ),
    "years": ("N", f"horizon of the total cost (default {_COST_DEFAULTS.years})"),
    "discount_rate": (
        "R",
        f"annual discount rate, 0.05 or 5% (default {_COST_DEFAULTS.discount_rate:g})",
    ),
    "installation_factor": (
        "F",
        "installed cost over catalogue price (default 1.0: catalogue prices only)",
    ),
    "currency": ("LABEL", "currency label for prices (default: the catalogue's currency)"),
}

#: Options of :data:`COST_OPTIONS` that exclude each other.
EXCLUSIVE_COST_OPTIONS: tuple[str, str] = ("cycles_per_hour", "cycle_time")

#: Option name → parser of its text, as :data:`_DESIGN_PARSERS` (limits as CostSettings').
_COST_PARSERS: dict[str, Callable[[str, str], Any]] = {
    "energy_price": parse_energy_price,
    "hours_per_year": lambda text, flag: parse_duration(
        text, flag, at_least=None, above=0.0, default_unit="h", example="4000"
    ),
    "cycles_per_hour": parse_per_hour,
    "cycle_time": lambda text, flag: parse_duration(text, flag, at_least=None, above=0.0),
    "years": lambda text, flag: parse_whole(text, flag, at_least=1),
    "discount_rate": lambda text, flag: parse_fraction(
        text, flag, at_least=None, above=-0.5, at_most=1.0
    ),
    "installation_factor": lambda text, flag: parse_number(text, flag, above=0.0),
    "currency": lambda text, flag: text.strip(),
}


def cost_settings(
    values: Mapping[str, str | None], base: CostSettings | None = None
) -> CostSettings:
    """Build cost settings from option strings keyed as in :data:`COST_OPTIONS`.

    Parameters
    ----------
    values : mapping
        Option name → text (None or "" leaves the default).  Examples: ``energy_price``
        "0.25/kWh" or "250 EUR/MWh", ``hours_per_year`` "4000" [h], ``cycles_per_hour`` "120"
        [1/h] or ``cycle_time`` "40s" (not both), ``years`` "10", ``discount_rate`` "5%",
        ``installation_factor`` "1.4", ``currency`` "EUR" (wins over a price's label).
    base : CostSettings, optional
        Settings to start from.

    Returns
    -------
    CostSettings
        The settings, validated.

    Raises
    ------
    SettingsError, UnitsError
        An unknown option, a value that does not parse, or one out of range (one line).
    """
    given = _given(values)
    for key in given:
        if key not in COST_OPTIONS:
            raise SettingsError(f"unknown cost option '{key}'")
    if all(key in given for key in EXCLUSIVE_COST_OPTIONS):
        raise SettingsError(
            f"--cycles-per-hour '{given['cycles_per_hour'].strip()}' and --cycle-time "
            f"'{given['cycle_time'].strip()}' both given; expected one of them"
        )
    start = base or _COST_DEFAULTS
    changes: dict = {}
    for key, text in given.items():
        value = _COST_PARSERS[key](text, _flag(key))
        if key == "energy_price":
            change = {"energy_price": value[0]}
            if value[1] and "currency" not in given:
                change["currency"] = value[1]
        elif key == "hours_per_year":
            change = {"operating_time": value}
        elif key == "cycles_per_hour":
            change = {"cycle_time": si_factor("h", "time") / value}
        else:
            change = {key: value}
        try:  # a limit only the settings know: name the option anyway
            CostSettings(**{**start.__dict__, **change})
        except SettingsError as exc:
            raise SettingsError(f"{_flag(key)}: {exc}") from None
        changes.update(change)
    return CostSettings(**{**start.__dict__, **changes})
