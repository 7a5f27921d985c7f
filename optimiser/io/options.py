"""User-facing option strings ("10..50", "5bar", "1s", "360/h", "10%") to settings objects.

The command line and the web page both take settings as text with units; this module is the
one place that turns that text into :class:`stowflow.search.settings.DesignSettings` (from
:data:`DESIGN_OPTIONS`) and :class:`stowflow.costs.CostSettings` (from :data:`COST_OPTIONS`), so
both shells accept exactly the same spellings and refuse bad ones with the same one-line
message.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping

from stowflow.costs.comparison import CostSettings
from stowflow.errors import SettingsError, StowflowError, UnitsError
from stowflow.search.settings import ACCUMULATOR_TYPES, DesignSettings
from stowflow.units import celsius_to_kelvin, parse_quantity, si_factor

__all__ = [
    "COST_OPTIONS",
    "DESIGN_OPTIONS",
    "cost_settings",
    "design_settings",
    "parse_energy_price",
    "parse_fraction",
    "parse_per_hour",
    "parse_temperature_range",
]

#: Option name → (DesignSettings field, parser, help text).  The CLI builds its options and
#: the web page its form fields from this table.
DESIGN_OPTIONS: dict[str, tuple[str, str, str]] = {
    "temperature": (
        "t_min/t_max",
        "temperature range",
        "operating temperature range of gas and oil in °C, e.g. 10..50 (default "
        "10..50, an example)",
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
    "max_count": ("max_count", "integer", "most accumulators of one size in a bank"),
    "types": ("types", "types", "accumulator types to consider, comma-separated"),
    "precharge_step": (
        "precharge_step",
        "pressure",
        "resolution of the precharge search, e.g. 1bar",
    ),
    "time_limit": ("time_limit", "time", "time limit of one schedule solve, e.g. 60s"),
    "mip_gap": ("mip_gap", "fraction", "relative MIP gap of the schedule model, e.g. 0.1%"),
}


def parse_temperature_range(text: str) -> tuple[float, float]:
    """Parse ``"10..50"``, ``"-20..60"`` or ``"40"`` (°C) into (coldest, hottest) [K]."""
    t = str(text).strip().replace("°C", "").replace("degC", "").strip()
    m = re.fullmatch(r"([-+]?\d+(?:\.\d*)?)\s*(?:\.\.|to)\s*([-+]?\d+(?:\.\d*)?)", t)
    try:
        if m:
            lo, hi = float(m.group(1)), float(m.group(2))
        else:
            lo = hi = float(t)
    except ValueError:
        raise SettingsError(
            f"temperature '{text}' is not a range in °C; write it like 10..50 or 40"
        ) from None
    if lo > hi:
        raise SettingsError(
            f"temperature range '{text}' runs from hot to cold; write {hi:g}..{lo:g}"
        )
    return float(celsius_to_kelvin(lo)), float(celsius_to_kelvin(hi))


def parse_fraction(text: str) -> float:
    """Parse ``"10%"`` or ``"0.1"`` into a fraction [-]."""
    t = str(text).strip()
    try:
        value = float(t[:-1]) / 100.0 if t.endswith("%") else float(t)
    except ValueError:
        raise SettingsError(f"'{text}' is not a fraction; write it like 10% or 0.1") from None
    if not math.isfinite(value) or value < 0:
        raise SettingsError(f"'{text}' must be a fraction ≥ 0")
    return value


def parse_per_hour(text: str) -> float | None:
    """Parse ``"360/h"``, ``"6/min"``, ``"360"`` or ``"none"`` into events per hour [1/h]."""
    t = str(text).strip().lower()
    if t in ("none", "off", "no", "unlimited"):
        return None
    m = re.fullmatch(r"([-+]?\d+(?:\.\d*)?)\s*(?:/\s*(h|hour|min|minute))?", t)
    if not m:
        raise SettingsError(f"'{text}' is not a rate; write it like 360/h, 6/min or none")
    value = float(m.group(1)) * (60.0 if m.group(2) in ("min", "minute") else 1.0)
    return value


_ZERO_RE = re.compile(r"^\s*[-+]?(?:0+\.?0*|\.0+)(?:[eE][-+]?\d+)?\s*$")


def _quantity(text: str, dimension: str) -> float:
    """Parse a quantity with its unit to SI; a bare zero needs none (0 s = 0 min), [SI].

    Whether zero is allowed is the settings' business (:class:`DesignSettings` refuses a
    zero time constant, for example); other bare numbers still need their unit.
    """
    if _ZERO_RE.match(text):
        return 0.0
    return parse_quantity(text, dimension)


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
    changes: dict = {}
    for key, text in values.items():
        if text is None or (isinstance(text, str) and not text.strip()):
            continue
        if key not in DESIGN_OPTIONS:
            raise SettingsError(f"unknown design option '{key}'")
        field_name, kind, _ = DESIGN_OPTIONS[key]
        try:
            if kind == "temperature range":
                changes["t_min"], changes["t_max"] = parse_temperature_range(text)
            elif kind == "choice":
                changes[field_name] = str(text).strip().lower()
            elif kind == "text":
                changes[field_name] = str(text).strip().lower()
            elif kind in ("time", "pressure"):
                changes[field_name] = _quantity(str(text), kind)
            elif kind == "fraction":
                changes[field_name] = parse_fraction(str(text))
            elif kind == "per hour":
                changes[field_name] = parse_per_hour(str(text))
            elif kind == "integer":
                changes[field_name] = int(str(text).strip())
            elif kind == "types":
                names = tuple(t.strip().lower() for t in str(text).split(",") if t.strip())
                unknown = [t for t in names if t not in ACCUMULATOR_TYPES]
                if unknown:
                    raise SettingsError(
                        f"unknown accumulator type(s) {unknown}; known: {list(ACCUMULATOR_TYPES)}"
                    )
                changes[field_name] = names
        except StowflowError as exc:
            raise SettingsError(f"--{key.replace('_', '-')}: {exc}") from None
        except ValueError:
            raise SettingsError(
                f"--{key.replace('_', '-')}: '{text}' is not a whole number"
            ) from None
    return (base or DesignSettings()).with_(**changes)


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

# number, optional currency word or symbol, "/", energy unit: "0.25/kWh", "0.11 $/kWh".
_PRICE_RE = re.compile(
    r"^\s*(?P<num>[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*"
    r"(?P<cur>[^\d\s/.+-][^\s/]{0,15})?\s*/\s*(?P<unit>\S.*?)\s*$"
)


def parse_energy_price(text: str) -> tuple[float, str]:
    """Read ``"0.25/kWh"`` or ``"0.11 $/kWh"``.

    Parameters
    ----------
    text : str
        Price per energy unit, optionally with a currency label before the slash.

    Returns
    -------
    tuple of (float, str)
        Price, [currency/J], and the currency label ("" when none was written).
    """
    m = _PRICE_RE.match(str(text))
    if not m:
        raise UnitsError(
            f"energy price '{text}' is not a price per energy unit; write e.g. 0.25/kWh"
        )
    value = float(m.group("num"))
    if value < 0:
        raise SettingsError(f"energy price '{text}' is negative")
    factor = si_factor(m.group("unit"), "energy")
    return value / factor, (m.group("cur") or "")


def _signed_fraction(text: str, what: str) -> float:
    """Read ``"0.05"`` or ``"5%"`` (sign allowed) as a fraction, [-]."""
    s = str(text).strip()
    scale = 1.0
    if s.endswith("%"):
        s, scale = s[:-1].strip(), 0.01
    try:
        return float(s) * scale
    except ValueError:
        raise SettingsError(f"{what} '{text}' is not a number (examples: 0.05, 5%)") from None


def _number(text: str, what: str) -> float:
    try:
        return float(str(text).strip())
    except ValueError:
        raise SettingsError(f"{what} '{text}' is not a number") from None


def _whole(text: str, what: str) -> int:
    try:
        return int(str(text).strip())
    except ValueError:
        raise SettingsError(f"{what} '{text}' is not a whole number") from None


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
    given = {
        key: text
        for key, text in values.items()
        if text is not None and not (isinstance(text, str) and not text.strip())
    }
    for key in given:
        if key not in COST_OPTIONS:
            raise SettingsError(f"unknown cost option '{key}'")
    if all(key in given for key in EXCLUSIVE_COST_OPTIONS):
        raise SettingsError(
            f"cycles per hour '{given['cycles_per_hour']}' and cycle time "
            f"'{given['cycle_time']}' both given; give one of them"
        )
    changes: dict = {}
    currency = given.get("currency")
    if "energy_price" in given:
        changes["energy_price"], cur = parse_energy_price(given["energy_price"])
        if cur and currency is None:
            currency = cur
    if "hours_per_year" in given:
        changes["operating_time"] = parse_quantity(
            str(given["hours_per_year"]), "time", default_unit="h"
        )
    if "cycles_per_hour" in given:
        n = _number(given["cycles_per_hour"], "cycles per hour")
        if not n > 0:
            raise SettingsError(f"cycles per hour must be > 0, got {given['cycles_per_hour']}")
        changes["cycle_time"] = si_factor("h", "time") / n
    if "cycle_time" in given:
        changes["cycle_time"] = parse_quantity(str(given["cycle_time"]), "time")
    if "years" in given:
        changes["years"] = _whole(given["years"], "years")
    if "discount_rate" in given:
        changes["discount_rate"] = _signed_fraction(given["discount_rate"], "discount rate")
    if "installation_factor" in given:
        changes["installation_factor"] = _number(
            given["installation_factor"], "installation factor"
        )
    if currency is not None:
        changes["currency"] = str(currency).strip()
    start = base or _COST_DEFAULTS
    return CostSettings(**{**start.__dict__, **changes})
