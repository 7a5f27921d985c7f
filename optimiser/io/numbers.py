"""One way to show numbers: the CLI, the report and the web page all format through here.

A value is shown by its *kind* of quantity (``"pressure"``, ``"flow"``, ``"money"``, …).
The kind picks the display unit of the unit system in force, the conversion from SI, how many
significant digits the value carries and how many decimals at most.  Whole digits are never
rounded away (a price of 96,464 stays 96,464); thousands are grouped with commas; a value
whose fixed form would be wider than its column (1e-300 L/min, 1e300 kW) is shown compactly in
scientific form with a ×10 power, never with an "e" exponent.

The conversion from SI to the display unit lives in one place, :class:`UnitSystem`:
:data:`METRIC` (bar gauge, L, L/min, kW, °C, …) and :data:`US` (psi gauge, US gal, gpm, hp
beside kW, °F, in³/rev), both by name in :data:`SYSTEMS`.  A call to :func:`fmt` (an SI
value) passes ``system=``, or leaves it out and gets the system in force: :data:`METRIC`
unless a caller (the CLI's ``--units``, the web form) chose another with
``with using(US): ...``.  Every conversion
factor comes from the one pint registry (:func:`stowflow.units.to_unit`).

Durations read in words ("under 1 month", "5 months", "2.3 years", "never").

>>> fmt(2.198e7 + 101325, "pressure")
'219.8 bar'
>>> fmt(1.23e-300 / 60000, "flow", width=10)
'1.2×10⁻³⁰⁰ L/min'
>>> years_words(0.4)
'5 months'
"""

from __future__ import annotations

import contextlib
import contextvars
import math
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field

from stowflow.units import BAR, P_AMBIENT, to_unit

__all__ = [
    "DASH",
    "KINDS",
    "METRIC",
    "SYSTEMS",
    "US",
    "DisplayUnit",
    "UnitSystem",
    "count_words",
    "current_system",
    "display_value",
    "duration_words",
    "fmt",
    "number",
    "plural",
    "shown",
    "unit_label",
    "unit_system",
    "using",
    "years_words",
]

#: What an unknown value (None, NaN) is shown as.
DASH = "–"

#: Column width [characters] a number may take before it is shown in scientific form.
WIDTH = 12

_SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")

_YEAR_S = 365.25 * 86400.0
_MONTH_S = _YEAR_S / 12.0


@dataclass(frozen=True)
class DisplayUnit:
    """How one kind of quantity is shown in one unit system.

    Attributes
    ----------
    label : str
        Unit text after the number ("bar", "L/min"; "" for none).
    from_si : callable
        ``from_si(value_si, context) -> float``: SI value to the display unit; ``context``
        holds the study's values a conversion may need (``p_ambient`` [Pa] for gauge pressure).
    digits : int
        Significant digits, [-]: they set the decimals of a value below 10**digits.
    max_decimals : int
        Most decimals shown, [-].
    trim : bool
        Drop trailing zeros after the point (a temperature of 20 °C, not 20.0 °C).
    beside : DisplayUnit, optional
        A second unit :func:`fmt` shows in brackets after the first ("29.5 hp (22 kW)").
    """

    label: str
    from_si: Callable[[float, dict], float]
    digits: int = 3
    max_decimals: int = 2
    trim: bool = False
    beside: DisplayUnit | None = None


def _factor(unit: str, dimension: str) -> Callable[[float, dict], float]:
    return lambda v, _ctx: to_unit(v, unit, dimension)


def _gauge_bar(v: float, ctx: dict) -> float:
    return (v - ctx.get("p_ambient", P_AMBIENT)) / BAR


def _same(v: float, _ctx: dict) -> float:
    return float(v)


@dataclass(frozen=True)
class UnitSystem:
    """The display units of every kind of quantity.

    Attributes
    ----------
    name : str
        Name of the system ("metric").
    units : dict of str to DisplayUnit
        One entry per kind (:data:`KINDS`).
    """

    name: str
    units: dict = field(default_factory=dict)

    def unit(self, kind: str) -> DisplayUnit:
        """The display unit of ``kind`` (a KeyError names the kinds known)."""
        try:
            return self.units[kind]
        except KeyError:
            raise KeyError(f"unknown quantity kind {kind!r}; known: {sorted(self.units)}") from None


#: The metric system of the trade: gauge bar, litres, L/min, kW, °C.
METRIC = UnitSystem(
    "metric",
    {
        "pressure": DisplayUnit("bar", _gauge_bar, digits=4, max_decimals=1),
        "pressure_absolute": DisplayUnit("bar abs", _factor("bar", "pressure"), 4, 1),
        "pressure_difference": DisplayUnit("bar", _factor("bar", "pressure"), 3, 2),
        "volume": DisplayUnit("L", _factor("L", "volume"), 3, 3, trim=True),
        "flow": DisplayUnit("L/min", _factor("L/min", "flow"), 3, 1),
        "power": DisplayUnit("kW", _factor("kW", "power"), 3, 2, trim=True),
        "energy": DisplayUnit("kJ", _factor("kJ", "energy"), 3, 1),
        "energy_per_year": DisplayUnit("MWh", _factor("MWh", "energy"), 3, 1),
        "temperature": DisplayUnit("°C", lambda v, _c: v - 273.15, 3, 1, trim=True),
        "temperature_difference": DisplayUnit("K", _same, 3, 1, trim=True),
        "time": DisplayUnit("s", _same, 3, 2, trim=True),
        "displacement": DisplayUnit("cm³/rev", _factor("cm3", "displacement"), 3, 1, trim=True),
        "money": DisplayUnit("", _same, 1, 0),
        "ratio": DisplayUnit("", _same, 3, 2, trim=True),
        "percent": DisplayUnit("%", lambda v, _c: 100.0 * v, 3, 1, trim=True),
        "rate_per_hour": DisplayUnit("per hour", lambda v, _c: 3600.0 * v, 3, 0, trim=True),
        "count": DisplayUnit("", _same, 1, 0),
    },
)

#: The kinds of quantity every unit system shows.
KINDS: tuple[str, ...] = tuple(METRIC.units)


def _gauge_psi(v: float, ctx: dict) -> float:
    return to_unit(v - ctx.get("p_ambient", P_AMBIENT), "psi", "pressure")


def _fahrenheit(v: float, _ctx: dict) -> float:
    from stowflow.units import registry

    return float(registry().Quantity(float(v), "kelvin").to("degF").magnitude)


def _fahrenheit_difference(v: float, _ctx: dict) -> float:
    from stowflow.units import registry

    return float(registry().Quantity(float(v), "delta_degC").to("delta_degF").magnitude)


#: US customary units: psi gauge, US gallons, US gal/min (gpm), hp (mechanical, 550 ft·lbf/s)
#: with kW beside it, °F, in³/rev; energy stays kJ and MWh (electricity is billed in kWh).
#: Conversions from pint (NIST Handbook 44 appendix C factors).
US = UnitSystem(
    "us",
    METRIC.units
    | {
        "pressure": DisplayUnit("psi", _gauge_psi, digits=4, max_decimals=0),
        "pressure_absolute": DisplayUnit("psia", _factor("psi", "pressure"), 4, 0),
        "pressure_difference": DisplayUnit("psi", _factor("psi", "pressure"), 3, 2),
        "volume": DisplayUnit("US gal", _factor("gallon", "volume"), 3, 3, trim=True),
        "flow": DisplayUnit("gpm", _factor("gallon/minute", "flow"), 3, 1),
        "power": DisplayUnit(
            "hp", _factor("hp", "power"), 3, 1, trim=True, beside=METRIC.units["power"]
        ),
        "temperature": DisplayUnit("°F", _fahrenheit, 3, 0, trim=True),
        "temperature_difference": DisplayUnit("°F", _fahrenheit_difference, 3, 1, trim=True),
        "displacement": DisplayUnit("in³/rev", _factor("in**3", "displacement"), 3, 2, trim=True),
    },
)

#: The unit systems by the name ``--units`` takes.
SYSTEMS: dict[str, UnitSystem] = {"metric": METRIC, "us": US}

_CURRENT: contextvars.ContextVar[UnitSystem] = contextvars.ContextVar(
    "stowflow_unit_system", default=METRIC
)


def unit_system(name) -> UnitSystem:
    """The unit system called ``name`` ("metric", "us"; a :class:`UnitSystem` is returned as is).

    Raises
    ------
    stowflow.errors.SettingsError
        An unknown name (the message lists the known ones).
    """
    if isinstance(name, UnitSystem):
        return name
    key = str(name or "metric").strip().lower()
    if key not in SYSTEMS:
        from stowflow.errors import SettingsError

        raise SettingsError(
            f"--units: '{name}' is not a unit system; expected one of {', '.join(SYSTEMS)}"
        )
    return SYSTEMS[key]


def current_system() -> UnitSystem:
    """The unit system in force (:data:`METRIC` unless :func:`using` chose another)."""
    return _CURRENT.get()


@contextlib.contextmanager
def using(system) -> Iterator[UnitSystem]:
    """Show every number in ``system`` (a :class:`UnitSystem` or its name) inside the block."""
    token = _CURRENT.set(unit_system(system))
    try:
        yield _CURRENT.get()
    finally:
        _CURRENT.reset(token)


def _scientific(x: float, digits: int) -> str:
    """``x`` as ``1.2×10⁻³⁰⁰`` with ``digits`` significant digits (at least 1)."""
    mant, exp = f"{x:.{max(digits - 1, 0)}e}".split("e")
    return f"{mant}×10{str(int(exp)).translate(_SUPERSCRIPT)}"


def number(
    x,
    digits: int = 3,
    *,
    max_decimals: int = 2,
    trim: bool = False,
    width: int = WIDTH,
) -> str:
    """A number already in its display unit, as text.

    Parameters
    ----------
    x : float or None
        The value [display unit]; None and NaN show as "–", infinities as "∞".
    digits : int
        Significant digits [-]: decimals are added until the value carries this many, up to
        ``max_decimals``; whole digits are never rounded away.
    max_decimals : int
        Most decimals [-].
    trim : bool
        Drop trailing zeros after the point.
    width : int
        Widest text [characters] before the value is shown in scientific form.

    Returns
    -------
    str
    """
    if x is None:
        return DASH
    try:
        v = float(x)
    except (TypeError, ValueError):
        return str(x)
    if math.isnan(v):
        return DASH
    if math.isinf(v):
        return "∞" if v > 0 else "−∞"
    if v == 0.0:
        return "0"
    mag = math.floor(math.log10(abs(v)))
    decimals = min(max(digits - 1 - mag, 0), max_decimals)
    text = f"{v:,.{decimals}f}"
    tiny = float(text.replace(",", "")) == 0.0  # all its digits rounded away
    if tiny and abs(v) >= 10.0 ** -(max_decimals + 3) and len(text) <= width:
        # a small value still worth a fixed form: show its own significant digits
        text = f"{v:,.{min(digits - 1 - mag, max_decimals + 3)}f}"
        tiny = False
    if tiny or len(text) > width:
        text = _scientific(v, min(digits, 2))
        return text if len(text) <= width else _scientific(v, 1)
    if trim and "." in text:
        text = text.rstrip("0").rstrip(".")
    if text in ("-0", "-0.0"):
        text = "0"
    return text


def display_value(value_si, kind: str, *, system: UnitSystem | None = None, **context) -> float:
    """An SI value converted to the display unit of ``kind`` in ``system``.

    Parameters
    ----------
    value_si : float
        The value, [SI; pressures absolute, Pa].
    kind : str
        Kind of quantity (:data:`KINDS`).
    system : UnitSystem
        Display units (default: the system in force, :func:`current_system`).
    **context
        Study values a conversion needs: ``p_ambient`` [Pa] for gauge pressure.
    """
    system = system or current_system()
    return float(system.unit(kind).from_si(float(value_si), context))


def unit_label(kind: str, *, system: UnitSystem | None = None) -> str:
    """The display unit of ``kind`` ("bar", "L/min"; "" for a plain number)."""
    return (system or current_system()).unit(kind).label


def shown(
    value,
    kind: str,
    *,
    unit: bool | str = True,
    system: UnitSystem | None = None,
    digits: int | None = None,
    width: int = WIDTH,
) -> str:
    """A value already in the display unit of ``kind``, as text with its unit.

    Parameters
    ----------
    value : float or None
        The value [display unit of ``kind``].
    kind : str
        Kind of quantity (:data:`KINDS`).
    unit : bool or str
        True: append the kind's unit; False: the number alone; a string: append that label
        (a currency, say).
    system : UnitSystem
        Display units the value is in (default :data:`METRIC`: a value already converted
        by hand is in metric units; :func:`fmt` passes the system in force).
    digits : int, optional
        Significant digits [-] instead of the kind's.
    width : int
        Widest number [characters] before scientific form.
    """
    du = (system or METRIC).unit(kind)  # a value already shown: its callers' units are metric
    text = number(
        value,
        du.digits if digits is None else digits,
        max_decimals=du.max_decimals,
        trim=du.trim,
        width=width,
    )
    label = du.label if unit is True else (unit or "")
    if text == DASH or not label:
        return text
    return f"{text} {label}"


def fmt(
    value_si,
    kind: str,
    *,
    unit: bool | str = True,
    system: UnitSystem | None = None,
    digits: int | None = None,
    width: int = WIDTH,
    **context,
) -> str:
    """An SI value as text in the display unit of its kind: ``fmt(2.2e7, "pressure")``.

    Parameters
    ----------
    value_si : float or None
        The value, [SI; pressures absolute, Pa]; None or NaN shows as "–".
    kind : str
        Kind of quantity (:data:`KINDS`).
    unit, system, digits, width
        As for :func:`shown`.
    **context
        Study values a conversion needs: ``p_ambient`` [Pa] for gauge pressure.

    Returns
    -------
    str
    """
    if value_si is None:
        return DASH
    try:
        v = float(value_si)
    except (TypeError, ValueError):
        return str(value_si)
    system = system or current_system()
    if not math.isfinite(v):
        return shown(v, kind, unit=unit, system=system, digits=digits, width=width)
    text = shown(
        display_value(v, kind, system=system, **context),
        kind,
        unit=unit,
        system=system,
        digits=digits,
        width=width,
    )
    other = system.unit(kind).beside
    if other is None or unit is not True:
        return text
    second = number(
        other.from_si(v, context),
        other.digits,
        max_decimals=other.max_decimals,
        trim=other.trim,
        width=width,
    )
    return f"{text} ({second} {other.label})"


def duration_words(seconds) -> str:
    """A long duration in words: "at once", "under 1 month", "5 months", "2.3 years", "never".

    Parameters
    ----------
    seconds : float or None
        The duration, [s]; None or infinite: never.
    """
    if seconds is None:
        return "never"
    s = float(seconds)
    if not math.isfinite(s):
        return "never"
    if s <= 0.0:
        return "at once"
    months = s / _MONTH_S
    if months < 1.0:
        return "under 1 month"
    if round(months) < 12:
        return count_words(round(months), "month")
    yrs = s / _YEAR_S
    return f"{yrs:,.1f} years"  # as stowflow.costs.finance.payback_words


def years_words(years) -> str:
    """A time in years in words (as :func:`duration_words`).

    Parameters
    ----------
    years : float or None
        The time, [year]; None or infinite: never.
    """
    if years is None:
        return "never"
    return duration_words(float(years) * _YEAR_S)


def plural(n: int, word: str, many: str | None = None) -> str:
    """``word`` or its plural for a count ``n`` ("run"/"runs"); no "(s)"."""
    return word if n == 1 else (many or word + "s")


def count_words(n: int, word: str, many: str | None = None) -> str:
    """A count with its word: "1 run", "3 runs", "1,200 designs"."""
    return f"{int(n):,} {plural(int(n), word, many)}"
