"""Option text to SI: one parser per kind of option, for every command and the web form.

Each parser takes the text as typed and the option's name as the user sees it (``"--volume"``,
or ``"precharge"`` for a positional argument) and returns SI: Pa (absolute for a pressure
level), m³, m³/s, s, m, K, a fraction [-], events per hour [1/h].  A refusal is one line in one
style - the option, what was found, what is expected, with units::

    --min-dwell: '-1s' is below 0 s; expected a time ≥ 0 s with its unit, e.g. 1s

A problem with a number's unit raises :class:`~stowflow.errors.UnitsError`, any other problem
:class:`~stowflow.errors.SettingsError` (both are :class:`~stowflow.errors.StowflowError`).

Conventions shared by every parser:

* numbers are written with the ASCII digits 0-9; other decimal digits (full-width,
  Arabic-Indic, ...), which Python's ``float`` would read, are refused by name;
* no ``nan``, ``inf`` or ``1_000``: a number is ``[-+]digits[.digits][e[-+]digits]``;
* a bare zero needs no unit (0 s = 0 min, 0 bar = 0 psi);
* temperatures are °C unless they carry a unit: ``°C``, ``degC``, ``C`` or ``°F``, ``degF``,
  ``F`` (``50degF..120degF``; a unit on one end of a range holds for both); temperature
  steps K.

The option tables and the settings built from these parsers are in :mod:`stowflow.io.options`.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from stowflow.errors import SettingsError, StowflowError, UnitsError
from stowflow.glossary import term
from stowflow.io.rawtext import check_digits
from stowflow.units import (
    DIMENSIONS,
    P_AMBIENT,
    celsius_to_kelvin,
    gauge_to_abs,
    registry,
    si_factor,
    unit_dimension,
)

__all__ = [
    "NONE_WORDS",
    "check_digits",
    "parse_choice",
    "parse_choices",
    "parse_density",
    "parse_duration",
    "parse_energy_price",
    "parse_expansion_coefficient",
    "parse_flow",
    "parse_fraction",
    "parse_gas_process",
    "parse_length",
    "parse_number",
    "parse_per_hour",
    "parse_pressure",
    "parse_pressure_difference",
    "parse_temperature",
    "parse_temperature_range",
    "parse_temperature_step",
    "parse_velocity",
    "parse_volume",
    "parse_whole",
]

#: Words that mean "no limit" to :func:`parse_per_hour` (lower case).
NONE_WORDS: tuple[str, ...] = ("none", "off", "no", "unlimited")

# A number: ASCII digits only (re.ASCII below), optional sign, fraction and exponent.
_NUM = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_QUANTITY_RE = re.compile(rf"^\s*({_NUM})\s*(.*?)\s*$", re.ASCII)
_ZERO_RE = re.compile(r"^\s*[-+]?(?:0+\.?0*|\.0+)(?:[eE][-+]?\d+)?\s*$", re.ASCII)
_NUMBER_RE = re.compile(rf"^\s*({_NUM})\s*$", re.ASCII)
_WHOLE_RE = re.compile(r"^\s*([-+]?\d+)\s*$", re.ASCII)
_FRACTION_RE = re.compile(rf"^\s*({_NUM})\s*(%)?\s*$", re.ASCII)
_RATE_RE = re.compile(rf"^\s*({_NUM})\s*(?:/\s*(h|hour|min|minute))?\s*$", re.ASCII | re.I)
# A temperature's unit: °C (also degC, C) or °F (also degF, F); none means °C.
_DEG = r"(?:\s*(°\s*[CF]|deg\s*[CF]|[CF]))?"
_TEMPERATURE_RE = re.compile(
    rf"^\s*({_NUM}){_DEG}\s*(?:\.\.\s*({_NUM}){_DEG})?\s*$", re.ASCII | re.I
)
_STEP_RE = re.compile(rf"^\s*({_NUM})\s*(K|°\s*C|deg\s*C|C|°\s*F|deg\s*F|F)?\s*$", re.ASCII | re.I)
# number, optional currency word or symbol, "/", energy unit: "0.25/kWh", "0.11 $/kWh".
_PRICE_RE = re.compile(
    rf"^\s*(?P<num>{_NUM})\s*(?P<cur>[^\d\s/.+-][^\s/]{{0,15}})?\s*/\s*(?P<unit>\S.*?)\s*$",
    re.ASCII,
)


# --------------------------------------------------------------------------- shared pieces
def _refusal(
    option: str, found: str, expected: str, error: type[StowflowError] = SettingsError
) -> StowflowError:
    """The one-line error: ``{option}: {found}; expected {expected}``."""
    return error(f"{option}: {found}; expected {expected}")


@dataclass(frozen=True)
class _Bounds:
    """Inclusive (``at_least``, ``at_most``) and exclusive (``above``, ``below``) limits."""

    at_least: float | None = None
    above: float | None = None
    at_most: float | None = None
    below: float | None = None

    def phrase(self, fmt: Callable[[float], str]) -> str:
        """``"≥ 0 s"``, ``"> 0 % and < 50 %"``, ``"from 1 to 64"`` or ``""``."""
        if self.above is None and self.below is None:
            if self.at_least is not None and self.at_most is not None:
                return f"from {fmt(self.at_least)} to {fmt(self.at_most)}"
        parts = []
        if self.above is not None:
            parts.append(f"> {fmt(self.above)}")
        elif self.at_least is not None:
            parts.append(f"≥ {fmt(self.at_least)}")
        if self.below is not None:
            parts.append(f"< {fmt(self.below)}")
        elif self.at_most is not None:
            parts.append(f"≤ {fmt(self.at_most)}")
        return " and ".join(parts)

    def finding(self, value: float, fmt: Callable[[float], str]) -> str | None:
        """What is wrong with ``value`` (``"is below 0 s"``), or None when it is within."""
        if self.at_least is not None and value < self.at_least:
            return f"is below {fmt(self.at_least)}"
        if self.above is not None and not value > self.above:
            return f"is not above {fmt(self.above)}"
        if self.at_most is not None and value > self.at_most:
            return f"is above {fmt(self.at_most)}"
        if self.below is not None and not value < self.below:
            return f"is not below {fmt(self.below)}"
        return None


def _with_limits(noun: str, bounds: _Bounds, fmt: Callable[[float], str]) -> str:
    limits = bounds.phrase(fmt)
    return f"{noun} {limits}" if limits else noun


def _check(value: float, text: str, option: str, bounds: _Bounds, fmt, expected: str) -> None:
    found = bounds.finding(value, fmt)
    if found is not None:
        raise _refusal(option, f"'{text}' {found}", expected)


# --------------------------------------------------------------------------- quantities
@dataclass(frozen=True)
class _Kind:
    """A kind of quantity: its noun, how a unit converts, the unit limits are shown in."""

    noun: str
    example: str
    shown_unit: str
    dimension: str | None = None  # a key of stowflow.units.DIMENSIONS ...
    si_unit: str | None = None  # ... or, for the few it does not list, pint's SI unit


_PRESSURE = _Kind("a pressure", "100bar", "bar", dimension="pressure")
_VOLUME = _Kind("a volume", "5L", "L", dimension="volume")
_FLOW = _Kind("a flow", "120L/min", "L/min", dimension="flow")
_TIME = _Kind("a time", "1s", "s", dimension="time")
_LENGTH = _Kind("a length", "25mm", "mm", dimension="length")
_VELOCITY = _Kind("a velocity", "4m/s", "m/s", si_unit="m/s")
_DENSITY = _Kind("a density", "870kg/m3", "kg/m3", si_unit="kg/m**3")
_EXPANSION = _Kind("an expansion coefficient", "7e-4/K", "/K", si_unit="1/K")


def _pint_unit(unit: str) -> str:
    """A unit of a kind :mod:`stowflow.units` does not list, in pint's spelling (1/K, kg/m**3)."""
    u = unit.replace("°C", "K").replace("degC", "K").replace("³", "**3")
    u = re.sub(r"(?<=[A-Za-z])3\b", "**3", u)
    return "1" + u if u.startswith("/") else u


def _unit_factor(text: str, unit: str, kind: _Kind, option: str, expected: str) -> float:
    """SI per ``unit`` for ``kind``; a unit that is unknown or of another kind is refused."""
    try:
        if kind.dimension is not None:
            return si_factor(unit, kind.dimension)
        ureg = registry()
        return float(ureg.Quantity(1.0, ureg.Unit(_pint_unit(unit))).to(kind.si_unit).magnitude)
    except Exception:
        pass
    found_in = unit_dimension(unit if kind.dimension is not None else _pint_unit(unit))
    if found_in is None:
        found = f"'{text}' has an unknown unit '{unit}'"
    elif found_in in DIMENSIONS or found_in == "temperature":
        found = f"'{text}' has the {found_in} unit '{unit}'"
    else:
        found = f"'{text}' has the unit '{unit}', which is not {kind.noun} unit"
    raise _refusal(option, found, expected, UnitsError)


def _quantity(
    text,
    option: str,
    kind: _Kind,
    bounds: _Bounds,
    *,
    noun: str | None = None,
    default_unit: str | None = None,
    example: str | None = None,
) -> float:
    """Parse a number with its unit to SI and check it against ``bounds`` (given in SI)."""
    s = str(text).strip()
    shown = default_unit or kind.shown_unit
    factor = (
        si_factor(shown, kind.dimension) if kind.dimension is not None else 1.0
    )  # SI per shown unit

    def fmt(v: float) -> str:
        return f"{v / factor:g}{'' if shown.startswith('/') else ' '}{shown}"

    described = _with_limits(noun or kind.noun, bounds, fmt)
    if default_unit:
        expected = (
            f"{described}, a bare number in {default_unit} or one with its unit, "
            f"e.g. {example or '1' + default_unit}"
        )
    else:
        expected = f"{described} with its unit, e.g. {example or kind.example}"
    check_digits(s, option, expected, UnitsError)
    if _ZERO_RE.match(s):
        value = 0.0
    else:
        m = _QUANTITY_RE.match(s)
        if not m:
            raise _refusal(option, f"'{s}' is not a number with a unit", expected, UnitsError)
        unit = m.group(2) or default_unit
        if not unit:
            raise _refusal(option, f"'{s}' has no unit", expected, UnitsError)
        value = float(m.group(1)) * _unit_factor(s, unit, kind, option, expected)
        if not math.isfinite(value):
            raise _refusal(option, f"'{s}' is not a finite number", expected, UnitsError)
    _check(value, s, option, bounds, fmt, expected)
    return value


def parse_pressure(text: str, option: str, *, absolute: bool = False) -> float:
    """A pressure level: gauge, as a gauge reads it, unless ``absolute``.

    Parameters
    ----------
    text : str
        A number with a pressure unit, ``"100bar"``, ``"1800 psi"`` (``"0"`` needs none).
    option : str
        The option's name as the user sees it, e.g. ``"--min-pressure"``.
    absolute : bool
        The text is an absolute pressure (a command's ``--absolute``).

    Returns
    -------
    float
        Absolute pressure, [Pa]; above vacuum.

    Raises
    ------
    UnitsError
        Not a number with a pressure unit.
    SettingsError
        Not above vacuum.
    """
    noun = "an absolute pressure" if absolute else "a gauge pressure"
    p = _quantity(text, option, _PRESSURE, _Bounds(), noun=noun)
    p_abs = p if absolute else gauge_to_abs(p)
    if not p_abs > 0.0:
        vacuum = 0.0 if absolute else -P_AMBIENT
        raise _refusal(
            option,
            f"'{str(text).strip()}' is not above vacuum",
            f"{noun} > {vacuum / 1e5:g} bar with its unit, e.g. {_PRESSURE.example}",
        )
    return p_abs


def parse_pressure_difference(
    text: str,
    option: str,
    *,
    at_least: float | None = 0.0,
    above: float | None = None,
) -> float:
    """A pressure taken as typed: an allowance, a step, a modulus, a gauge value kept gauge.

    Parameters
    ----------
    text : str
        A number with a pressure unit, ``"5bar"``, ``"210GPa"``.
    option : str
        The option's name as the user sees it.
    at_least, above : float or None
        Least value allowed, inclusive / exclusive, [Pa].  Default: ≥ 0.

    Returns
    -------
    float
        The pressure, [Pa], without any gauge/absolute shift.

    Raises
    ------
    UnitsError, SettingsError
        Not a number with a pressure unit; out of range.
    """
    return _quantity(text, option, _PRESSURE, _Bounds(at_least=at_least, above=above))


def parse_flow(text: str, option: str, *, at_least: float | None = 0.0, above=None) -> float:
    """A flow, ``"120L/min"``, ``"2.45gpm"``.

    Parameters
    ----------
    text : str
        A number with a flow unit.
    option : str
        The option's name as the user sees it.
    at_least, above : float or None
        Least value allowed, inclusive / exclusive, [m³/s].  Default: ≥ 0.

    Returns
    -------
    float
        The flow, [m³/s].
    """
    return _quantity(text, option, _FLOW, _Bounds(at_least=at_least, above=above))


def parse_volume(text: str, option: str, *, at_least: float | None = 0.0, above=None) -> float:
    """A volume, ``"5L"``, ``"2827in3"``, ``"1.3gal"``.

    Parameters
    ----------
    text : str
        A number with a volume unit.
    option : str
        The option's name as the user sees it.
    at_least, above : float or None
        Least value allowed, inclusive / exclusive, [m³].  Default: ≥ 0.

    Returns
    -------
    float
        The volume, [m³].
    """
    return _quantity(text, option, _VOLUME, _Bounds(at_least=at_least, above=above))


def parse_duration(
    text: str,
    option: str,
    *,
    at_least: float | None = 0.0,
    above: float | None = None,
    default_unit: str | None = None,
    example: str | None = None,
) -> float:
    """A time, ``"1s"``, ``"10ms"``, ``"1.5min"``.

    Parameters
    ----------
    text : str
        A number with a time unit.
    option : str
        The option's name as the user sees it.
    at_least, above : float or None
        Least value allowed, inclusive / exclusive, [s].  Default: ≥ 0.
    default_unit : str, optional
        Unit of a bare number (``"h"`` for hours per year); limits are shown in it.
    example : str, optional
        Example for the message (default ``1s``, or ``1`` and the default unit).

    Returns
    -------
    float
        The time, [s].
    """
    return _quantity(
        text,
        option,
        _TIME,
        _Bounds(at_least=at_least, above=above),
        default_unit=default_unit,
        example=example,
    )


def parse_length(text: str, option: str, *, at_least: float | None = 0.0, above=None) -> float:
    """A length, ``"25mm"``, ``"20m"``.

    Parameters
    ----------
    text : str
        A number with a length unit.
    option : str
        The option's name as the user sees it.
    at_least, above : float or None
        Least value allowed, inclusive / exclusive, [m].  Default: ≥ 0.

    Returns
    -------
    float
        The length, [m].
    """
    return _quantity(text, option, _LENGTH, _Bounds(at_least=at_least, above=above))


def parse_velocity(text: str, option: str, *, at_least: float | None = 0.0, above=None) -> float:
    """A velocity, ``"4m/s"``.

    Parameters
    ----------
    text : str
        A number with a velocity unit.
    option : str
        The option's name as the user sees it.
    at_least, above : float or None
        Least value allowed, inclusive / exclusive, [m/s].  Default: ≥ 0.

    Returns
    -------
    float
        The velocity, [m/s].
    """
    return _quantity(text, option, _VELOCITY, _Bounds(at_least=at_least, above=above))


def parse_density(text: str, option: str, *, at_least: float | None = None, above=0.0) -> float:
    """A density, ``"870kg/m3"``.

    Parameters
    ----------
    text : str
        A number with a density unit.
    option : str
        The option's name as the user sees it.
    at_least, above : float or None
        Least value allowed, inclusive / exclusive, [kg/m³].  Default: > 0.

    Returns
    -------
    float
        The density, [kg/m³].
    """
    return _quantity(text, option, _DENSITY, _Bounds(at_least=at_least, above=above))


def parse_expansion_coefficient(
    text: str, option: str, *, at_least: float | None = 0.0, above=None
) -> float:
    """A volumetric expansion coefficient, ``"7e-4/K"`` (``/°C`` is the same).

    Parameters
    ----------
    text : str
        A number with a unit of 1/temperature.
    option : str
        The option's name as the user sees it.
    at_least, above : float or None
        Least value allowed, inclusive / exclusive, [1/K].  Default: ≥ 0.

    Returns
    -------
    float
        The coefficient, [1/K].
    """
    return _quantity(text, option, _EXPANSION, _Bounds(at_least=at_least, above=above))


# --------------------------------------------------------------------------- temperatures
_RANGE_EXPECTED = (
    "a range in °C as LO..HI or one value, e.g. 10..50, -20..60 or 20 (°F with its unit, "
    "e.g. 50degF..120degF)"
)


def _to_celsius(value: float, unit: str | None) -> float:
    """A temperature in ``unit`` (a °F spelling, or °C / None) in °C, through pint."""
    if unit is None or not unit.strip()[-1:].upper() == "F":
        return value
    return float(registry().Quantity(value, "degF").to("degC").magnitude)


def _celsius(text: str, option: str, expected: str) -> tuple[str, float, float, bool]:
    """``(text, lo, hi, is_range)`` in °C, each value within the glossary's plausible range.

    A value may be written in °F (``50degF``); it is converted to °C here.
    """
    s = str(text).strip()
    check_digits(s, option, expected)
    m = _TEMPERATURE_RE.match(s)
    if not m:
        raise _refusal(option, f"'{s}' is not a temperature in °C or °F", expected)
    unit_lo, unit_hi = m.group(2), m.group(4)
    if m.group(3) is not None and (unit_lo is None) != (unit_hi is None):
        unit_lo = unit_hi = unit_lo or unit_hi  # "50..120degF": the unit holds for both ends
    lo = _to_celsius(float(m.group(1)), unit_lo)
    hi = _to_celsius(float(m.group(3)), unit_hi) if m.group(3) is not None else lo
    low, high = term("temperature").plausible
    for v in (lo, hi):
        if not low <= v <= high:
            raise _refusal(
                option,
                f"'{s}' has {v:.4g} °C, outside the plausible {low:g} … {high:g} °C",
                f"temperatures in °C from {low:g} to {high:g}, e.g. 10..50",
            )
    return s, lo, hi, m.group(3) is not None


def parse_temperature_range(text: str, option: str) -> tuple[float, float]:
    """An operating temperature range in °C: ``"10..50"``, ``"-20..60"``, ``"20"``.

    Each value may carry ``°C``, ``degC`` or ``C``, or ``°F``, ``degF`` or ``F``
    (``"50degF..120degF"``); a bare number is °C; one value is a range of one temperature.
    Each value lies in the glossary's plausible range; the colder one comes first.

    Parameters
    ----------
    text : str
        The range.
    option : str
        The option's name as the user sees it, e.g. ``"--temperature"``.

    Returns
    -------
    tuple of float
        Coldest and hottest temperature, [K].

    Raises
    ------
    SettingsError
        Not a range, implausible, or from hot to cold.
    """
    s, lo, hi, _ = _celsius(text, option, _RANGE_EXPECTED)
    if hi < lo:
        raise _refusal(
            option, f"'{s}' runs from hot to cold", f"the colder end first, {hi:.4g}..{lo:.4g} (°C)"
        )
    return celsius_to_kelvin(lo), celsius_to_kelvin(hi)


def parse_temperature(text: str, option: str) -> float:
    """One temperature in °C, ``"15"`` or ``"15°C"`` (or in °F with its unit, ``"59degF"``).

    Parameters
    ----------
    text : str
        The temperature.
    option : str
        The option's name as the user sees it, e.g. ``"--ambient"``.

    Returns
    -------
    float
        The temperature, [K].

    Raises
    ------
    SettingsError
        Not a temperature, implausible, or a range.
    """
    expected = "one temperature in °C, e.g. 15"
    s, lo, hi, is_range = _celsius(text, option, expected)
    if is_range and lo != hi:
        raise _refusal(option, f"'{s}' is a range", expected)
    return celsius_to_kelvin(lo)


def parse_temperature_step(text: str, option: str) -> float:
    """A temperature step in kelvin (= °C), ``"5"``, ``"5K"``, or in °F with its unit
    (``"9degF"`` = 5 K).

    Parameters
    ----------
    text : str
        The step.
    option : str
        The option's name as the user sees it, e.g. ``"--step"``.

    Returns
    -------
    float
        The step, [K], > 0.

    Raises
    ------
    SettingsError
        Not a number of kelvin, or not above zero.
    """
    s = str(text).strip()
    bounds = _Bounds(above=0.0)

    def fmt(v: float) -> str:
        return f"{v:g} K"

    expected = f"{_with_limits('a step', bounds, fmt)}, e.g. 5 or 5K"
    check_digits(s, option, expected)
    m = _STEP_RE.match(s)
    if not m:
        raise _refusal(option, f"'{s}' is not a number of kelvin", expected)
    value = float(m.group(1))
    if not math.isfinite(value):
        raise _refusal(option, f"'{s}' is not a finite number", expected)
    if m.group(2) and m.group(2)[-1] in "fF":  # a step in °F: 1 °F = 5/9 K, through pint
        value = float(registry().Quantity(value, "delta_degF").to("kelvin").magnitude)
    _check(value, s, option, bounds, fmt, expected)
    return value


# --------------------------------------------------------------------------- plain numbers
def _percent(v: float) -> str:
    return f"{v * 100:g} %"


def parse_fraction(
    text: str,
    option: str,
    *,
    at_least: float | None = 0.0,
    above: float | None = None,
    at_most: float | None = None,
    below: float | None = None,
) -> float:
    """A percentage or a fraction, ``"10%"`` or ``"0.1"``.

    Parameters
    ----------
    text : str
        The value; a sign is read (a negative value fails the default ``at_least``).
    option : str
        The option's name as the user sees it.
    at_least, above, at_most, below : float or None
        Limits, inclusive / exclusive, as fractions [-].  Default: ≥ 0.

    Returns
    -------
    float
        The fraction, [-] (``"10%"`` → 0.1).

    Raises
    ------
    SettingsError
        Not a percentage or fraction, or out of range.
    """
    s = str(text).strip()
    bounds = _Bounds(at_least, above, at_most, below)
    described = _with_limits("a fraction", bounds, _percent)
    expected = f"{described}, as a percentage or a number, e.g. 10% or 0.1"
    check_digits(s, option, expected)
    m = _FRACTION_RE.match(s)
    if not m:
        raise _refusal(option, f"'{s}' is not a percentage or a fraction", expected)
    value = float(m.group(1)) / (100.0 if m.group(2) else 1.0)
    if not math.isfinite(value):
        raise _refusal(option, f"'{s}' is not a finite number", expected)
    _check(value, s, option, bounds, _percent, expected)
    return value


def parse_per_hour(
    text: str,
    option: str,
    *,
    allow_none: bool = False,
    at_least: float | None = None,
    above: float | None = 0.0,
) -> float | None:
    """A rate per hour, ``"360/h"``, ``"6/min"``, ``"360"``; ``"none"`` when allowed.

    Parameters
    ----------
    text : str
        The rate; a bare number is per hour.
    option : str
        The option's name as the user sees it.
    allow_none : bool
        Whether ``none`` (or ``off``, ``no``, ``unlimited``) means no limit.
    at_least, above : float or None
        Least rate allowed, inclusive / exclusive, [1/h].  Default: > 0.

    Returns
    -------
    float or None
        Events per hour, [1/h]; None for ``none``.

    Raises
    ------
    SettingsError
        Not a rate, or out of range.
    """
    s = str(text).strip()
    bounds = _Bounds(at_least=at_least, above=above)

    def fmt(v: float) -> str:
        return f"{v:g} per hour"

    expected = f"{_with_limits('a rate', bounds, fmt)}, e.g. 360/h or 6/min" + (
        ", or none" if allow_none else ""
    )
    if allow_none and s.lower() in NONE_WORDS:
        return None
    check_digits(s, option, expected)
    m = _RATE_RE.match(s)
    if not m:
        raise _refusal(option, f"'{s}' is not a rate", expected)
    per_minute = (m.group(2) or "h").lower() in ("min", "minute")
    value = float(m.group(1)) * (60.0 if per_minute else 1.0)
    if not math.isfinite(value):
        raise _refusal(option, f"'{s}' is not a finite number", expected)
    _check(value, s, option, bounds, fmt, expected)
    return value


def parse_energy_price(text: str, option: str) -> tuple[float, str]:
    """A price per energy unit, ``"0.25/kWh"``, ``"0.11 $/kWh"``, ``"250 EUR/MWh"``.

    Parameters
    ----------
    text : str
        Price ≥ 0 per energy unit, optionally with a currency label before the slash.
    option : str
        The option's name as the user sees it, e.g. ``"--energy-price"``.

    Returns
    -------
    tuple of (float, str)
        Price, [currency/J], and the currency label ("" when none was written).

    Raises
    ------
    UnitsError
        Not a price per energy unit.
    SettingsError
        Negative.
    """
    s = str(text).strip()
    expected = "a price ≥ 0 per energy unit, e.g. 0.25/kWh or 0.11 EUR/kWh"
    check_digits(s, option, expected, UnitsError)
    m = _PRICE_RE.match(s)
    if not m:
        raise _refusal(option, f"'{s}' is not a price per energy unit", expected, UnitsError)
    value = float(m.group("num"))
    if not math.isfinite(value):
        raise _refusal(option, f"'{s}' is not a finite number", expected, UnitsError)
    if value < 0:
        raise _refusal(option, f"'{s}' is negative", expected)
    energy = _Kind("an energy", "1kWh", "kWh", dimension="energy")
    factor = _unit_factor(s, m.group("unit"), energy, option, expected)
    return value / factor, (m.group("cur") or "")


def parse_whole(
    text, option: str, *, at_least: int | None = None, at_most: int | None = None
) -> int:
    """A whole number, ``"8"``.

    Parameters
    ----------
    text : str or int
        The number.
    option : str
        The option's name as the user sees it.
    at_least, at_most : int or None
        Limits, inclusive.

    Returns
    -------
    int
        The number.

    Raises
    ------
    SettingsError
        Not a whole number, or out of range.
    """
    s = str(text).strip()
    bounds = _Bounds(at_least=at_least, at_most=at_most)

    def fmt(v: float) -> str:
        return f"{v:g}"

    expected = _with_limits("a whole number", bounds, fmt)
    check_digits(s, option, expected)
    m = _WHOLE_RE.match(s)
    if not m:
        raise _refusal(option, f"'{s}' is not a whole number", expected)
    value = int(m.group(1))
    _check(value, s, option, bounds, fmt, expected)
    return value


def parse_number(
    text,
    option: str,
    *,
    at_least: float | None = None,
    above: float | None = None,
    at_most: float | None = None,
    below: float | None = None,
) -> float:
    """A plain number without unit, ``"1.4"``.

    Parameters
    ----------
    text : str or float
        The number.
    option : str
        The option's name as the user sees it.
    at_least, above, at_most, below : float or None
        Limits, inclusive / exclusive.

    Returns
    -------
    float
        The number, [-].

    Raises
    ------
    SettingsError
        Not a finite number, or out of range.
    """
    s = str(text).strip()
    bounds = _Bounds(at_least, above, at_most, below)

    def fmt(v: float) -> str:
        return f"{v:g}"

    expected = _with_limits("a number", bounds, fmt)
    check_digits(s, option, expected)
    m = _NUMBER_RE.match(s)
    if not m:
        raise _refusal(option, f"'{s}' is not a number", expected)
    value = float(m.group(1))
    if not math.isfinite(value):
        raise _refusal(option, f"'{s}' is not a finite number", expected)
    _check(value, s, option, bounds, fmt, expected)
    return value


# --------------------------------------------------------------------------- words
def _listed(words: Sequence[str]) -> str:
    words = list(words)
    return words[0] if len(words) == 1 else f"{', '.join(words[:-1])} or {words[-1]}"


def parse_choice(text: str, option: str, choices: Sequence[str]) -> str:
    """One word of ``choices`` (case is ignored), ``"real"``.

    Parameters
    ----------
    text : str
        The word.
    option : str
        The option's name as the user sees it.
    choices : sequence of str
        The words allowed (lower case).

    Returns
    -------
    str
        The word, lower case.

    Raises
    ------
    SettingsError
        Not one of the choices.
    """
    word = str(text).strip().lower()
    if word not in choices:
        raise _refusal(option, f"'{str(text).strip()}' is not a choice here", _listed(choices))
    return word


def parse_choices(text: str, option: str, choices: Sequence[str]) -> tuple[str, ...]:
    """Comma-separated words of ``choices``, ``"bladder,piston"``.

    Parameters
    ----------
    text : str
        The words.
    option : str
        The option's name as the user sees it.
    choices : sequence of str
        The words allowed (lower case).

    Returns
    -------
    tuple of str
        The words, lower case, in the order given.

    Raises
    ------
    SettingsError
        None given, or one that is not a choice.
    """
    s = str(text).strip()
    names = tuple(t.strip().lower() for t in s.split(",") if t.strip())
    expected = f"a comma-separated list of {', '.join(choices)}"
    unknown = [n for n in names if n not in choices]
    if unknown:
        raise _refusal(option, f"'{s}' names unknown {', '.join(unknown)}", expected)
    if not names:
        raise _refusal(option, f"'{s}' names none", expected)
    return names


def parse_gas_process(text: str, option: str, *, allow_auto: bool = True) -> str:
    """A gas process, ``"adiabatic"``, ``"isothermal"``, ``"polytropic:1.3"`` (or ``"auto"``).

    Parameters
    ----------
    text : str
        The process (``"isentropic"`` is read as adiabatic).
    option : str
        The option's name as the user sees it, e.g. ``"--process"``.
    allow_auto : bool
        Whether ``auto`` (from the cycle's time scale) is allowed.

    Returns
    -------
    str
        The process as typed, lower case and stripped.

    Raises
    ------
    SettingsError
        Not a process, a polytropic process without its index, or an index out of range.
    """
    from stowflow.physics.gas import PROCESS_KINDS, parse_process

    s = str(text).strip()
    words = [*(("auto",) if allow_auto else ()), *PROCESS_KINDS[:-1], "polytropic:N"]
    expected = f"{_listed(words)}, e.g. polytropic:1.3"
    check_digits(s, option, expected)
    word = s.lower()
    if allow_auto and word == "auto":
        return word
    kind, sep, index = word.partition(":")
    if kind == "polytropic" and not index.strip():
        raise _refusal(option, f"'{s}' has no index", expected)
    if kind == "polytropic" and not _NUMBER_RE.match(index):
        raise _refusal(option, f"'{s}' has an index that is not a number", expected)
    if kind not in (*PROCESS_KINDS, "isentropic") or (sep and kind != "polytropic"):
        raise _refusal(option, f"'{s}' is not a gas process", expected)
    try:
        parse_process(word)
    except SettingsError as exc:
        raise _refusal(option, f"'{s}' is refused: {exc}", expected) from None
    return word
