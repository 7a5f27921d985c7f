"""Units at the edges: one pint registry, the trade's unit spellings, SI conversion.

Everything inside stowflow is SI: pressure in Pa **absolute**, volume in m³, flow in m³/s,
power in W, temperature in K, time in s.  This module is the only place that knows about
other units.  Input strings ("5 L", "100bar", "1800 psi", "2.45 gpm") and CSV header units
("flow [L/min]") are parsed with pint; outputs are converted back with :func:`to_unit`.

Gauge and absolute pressure
---------------------------
Designers and gauges speak gauge pressure.  Gas laws need absolute pressure.  The conversion
``p_abs = p_gauge + P_AMBIENT`` happens here and nowhere else (:func:`gauge_to_abs`,
:func:`abs_to_gauge`).  The standard atmosphere, 101 325 Pa, is the default ambient
pressure (ISO 2533 standard atmosphere at sea level).

Unit factors
------------
Core code that needs a trade unit in a message or a scaled model uses the named factors here
(:data:`BAR`, :data:`LITRE`, :data:`LPM`, :data:`KW`, :data:`HOUR`, :data:`KWH`,
:data:`ZERO_CELSIUS`), never a hand-typed ``1e5`` or ``6e4``: a value in bar is
``p / BAR``, a flow in L/min ``q / LPM``.  They are stated exactly (SI Brochure, 9th edition,
BIPM 2019, tables 8 and 9); pint's conversions (:func:`si_factor`) agree with them to the last
bit or two.  :func:`bar_gauge` and :func:`bar_text` are the one absolute-pressure-to-gauge-bar
conversion and its text, for every layer.
"""

from __future__ import annotations

import functools
import re
from typing import TYPE_CHECKING, Literal

import numpy as np
from stowflow.errors import UnitsError

if TYPE_CHECKING:  # pragma: no cover - typing only
    import pint

__all__ = [
    "BAR",
    "DIMENSIONS",
    "HOUR",
    "KW",
    "KWH",
    "LITRE",
    "LPM",
    "P_AMBIENT",
    "T_REF",
    "ZERO_CELSIUS",
    "Dimension",
    "abs_to_gauge",
    "bar_gauge",
    "bar_text",
    "celsius_to_kelvin",
    "gauge_to_abs",
    "kelvin_to_celsius",
    "parse_quantity",
    "parse_unit",
    "registry",
    "si_factor",
    "to_unit",
    "unit_dimension",
]

#: Standard atmospheric pressure, [Pa] (ISO 2533 standard atmosphere, sea level).
P_AMBIENT: float = 101_325.0

#: Reference temperature at which precharge is stated: 20 °C, [K].
T_REF: float = 293.15

#: One bar, [Pa] (exact: 1 bar = 100 kPa, SI Brochure 9th ed. table 8).
BAR: float = 1e5
#: One litre, [m³] (exact: 1 L = 1 dm³, SI Brochure 9th ed. table 8).
LITRE: float = 1e-3
#: One litre per minute, [m³/s] (exact quotient, rounded once to the nearest double).
LPM: float = LITRE / 60.0
#: One kilowatt, [W] (exact, SI prefix kilo).
KW: float = 1e3
#: One hour, [s] (exact, SI Brochure 9th ed. table 8).
HOUR: float = 3600.0
#: One kilowatt hour, [J] (exact: 3.6 MJ).
KWH: float = KW * HOUR
#: The Celsius zero, [K] (exact: t/°C = T/K − 273.15, SI Brochure 9th ed. section 2.3.1).
ZERO_CELSIUS: float = 273.15

Dimension = Literal[
    "time", "flow", "pressure", "volume", "power", "displacement", "speed", "length", "energy"
]

#: The SI unit each dimension is stored in internally.
DIMENSIONS: dict[str, str] = {
    "time": "s",
    "flow": "m**3/s",
    "pressure": "Pa",
    "volume": "m**3",
    "power": "W",
    "displacement": "m**3",  # per revolution
    "speed": "1/s",  # revolutions per second
    "length": "m",
    "energy": "J",
}

# Spellings of the trade that pint does not know by itself.  "gal" in pint is the US liquid
# gallon, 3.785411784 L exactly (NIST Handbook 44, Appendix C).
_EXTRA_DEFINITIONS = (
    "US_gal = gallon = USgal = US_gallon",
    "gpm = gallon / minute",
    "lpm = liter / minute",
)

# Aliases applied to a unit string before pint sees it.
_ALIASES = {
    "l/min": "L/min",
    "lpm": "L/min",
    "gpm": "gallon/minute",
    "us gal/min": "gallon/minute",
    "usgpm": "gallon/minute",
    "cc": "cm**3",
    "cc/rev": "cm**3",
    "cm³/rev": "cm**3",
    "cm3/rev": "cm**3",
    "us gal": "gallon",
    "us gal/s": "gallon/second",
    # pint's "revolution" is 2π rad; a shaft speed in rpm is turns per minute, so map it to 1/min.
    "rpm": "1/minute",
    "r/min": "1/minute",
    "1/min": "1/minute",
    "°c": "degC",
    "degc": "degC",
}


@functools.cache
def registry() -> pint.UnitRegistry:
    """Return the one pint registry stowflow uses (built once, cached on disk when possible)."""
    import pint

    try:
        ureg = pint.UnitRegistry(cache_folder=":auto:")
    except Exception:
        ureg = pint.UnitRegistry()
    for line in _EXTRA_DEFINITIONS:
        try:
            ureg.define(line)
        except Exception:
            pass
    return ureg


def _normalise(text: str) -> str:
    s = text.strip()
    s = s.replace("³", "**3").replace("²", "**2").replace("·", "*").replace("^", "**")
    s = re.sub(r"(?<=[A-Za-z])([23])(?![\d.])", r"**\1", s)  # cm3 -> cm**3, m3/h -> m**3/h
    key = re.sub(r"\s+", " ", s.lower())
    return _ALIASES.get(key, s)


def parse_unit(text: str, dimension: str, *, where: str = "") -> float:
    """Parse a unit string and return the factor that converts it to SI.

    Parameters
    ----------
    text : str
        A unit such as ``"L/min"``, ``"US gal/min"``, ``"psi"``, ``"ms"``.
    dimension : str
        One of :data:`DIMENSIONS`' keys; the unit must have this dimension.
    where : str
        Context for the error message (file, column).

    Returns
    -------
    float
        Multiply a value in ``text`` units by this to get SI, [SI/unit].

    Raises
    ------
    UnitsError
        The unit is unknown, or has the wrong dimension.
    """
    import pint

    ureg = registry()
    prefix = f"{where}: " if where else ""
    if not text or not text.strip():
        raise UnitsError(f"{prefix}no unit given; expected a {dimension} unit")
    try:
        unit = ureg.Unit(_normalise(text))
    except (pint.errors.UndefinedUnitError, pint.errors.DefinitionSyntaxError, Exception) as exc:
        raise UnitsError(f"{prefix}unknown unit '{text.strip()}' ({type(exc).__name__})") from None
    target = ureg.Unit(DIMENSIONS[dimension])
    if unit.dimensionality != target.dimensionality:
        found = _dimension_name(unit.dimensionality) or str(unit.dimensionality)
        raise UnitsError(
            f"{prefix}unit '{text.strip()}' is a {found} unit, expected a {dimension} unit "
            f"such as {_EXAMPLE[dimension]}"
        )
    return float(ureg.Quantity(1.0, unit).to(target).magnitude)


def _dimension_name(dimensionality) -> str | None:
    ureg = registry()
    for name, si in DIMENSIONS.items():
        if ureg.Unit(si).dimensionality == dimensionality:
            return name
    if dimensionality == ureg.Unit("K").dimensionality:
        return "temperature"
    return None


def unit_dimension(text: str) -> str | None:
    """What a unit measures, for messages about a unit of the wrong kind.

    Parameters
    ----------
    text : str
        A unit such as ``"bar"``, ``"L/min"``, ``"kg"``.

    Returns
    -------
    str or None
        A key of :data:`DIMENSIONS` or ``"temperature"``; pint's dimensionality text (e.g.
        ``"[mass]"``) for any other known unit; None when the unit is unknown.
    """
    try:
        unit = registry().Unit(_normalise(text))
    except Exception:
        return None
    return _dimension_name(unit.dimensionality) or str(unit.dimensionality)


def si_factor(unit: str, dimension: str) -> float:
    """Factor from ``unit`` to the SI unit of ``dimension``, [SI/unit] (cached)."""
    return _si_factor_cached(unit, dimension)


@functools.cache
def _si_factor_cached(unit: str, dimension: str) -> float:
    return parse_unit(unit, dimension)


_QUANTITY_RE = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


def parse_quantity(text: str, dimension: str, *, default_unit: str | None = None) -> float:
    """Parse ``"5L"``, ``"100 bar"``, ``"2.45 gpm"`` into an SI value.

    Pressures come back as the number given, converted to Pa, **without** any gauge/absolute
    shift: the caller decides which one the user meant.

    Parameters
    ----------
    text : str
        A number followed by a unit.
    dimension : str
        Expected dimension (a key of :data:`DIMENSIONS`).
    default_unit : str, optional
        Unit to assume when the text is a bare number.

    Returns
    -------
    float
        The value in SI units.
    """
    m = _QUANTITY_RE.match(str(text))
    if not m:
        raise UnitsError(f"'{text}' is not a number with a unit (example: 100bar)")
    value = float(m.group(1))
    unit = m.group(2) or default_unit
    if not unit:
        raise UnitsError(
            f"'{text}' has no unit; write it with one, e.g. {value:g}{_EXAMPLE[dimension]}"
        )
    if not np.isfinite(value):
        raise UnitsError(f"'{text}' is not a finite number")
    return value * si_factor(unit, dimension)


_EXAMPLE = {
    "time": "s",
    "flow": "L/min",
    "pressure": "bar",
    "volume": "L",
    "power": "kW",
    "displacement": "cm3",
    "speed": "rpm",
    "length": "mm",
    "energy": "kJ",
}


def to_unit(value, unit: str, dimension: str):
    """Convert an SI value (scalar or array) to ``unit``.

    Parameters
    ----------
    value : float or array_like
        Value in the SI unit of ``dimension``.
    unit : str
        Target unit.
    dimension : str
        Dimension of the value.

    Returns
    -------
    float or numpy.ndarray
        The value in ``unit``.
    """
    factor = si_factor(unit, dimension)
    if np.isscalar(value):
        return float(value) / factor
    return np.asarray(value, dtype=float) / factor


def gauge_to_abs(p_gauge, p_ambient: float = P_AMBIENT):
    """Gauge to absolute pressure: :math:`p_{abs} = p_g + p_{amb}`.

    Parameters
    ----------
    p_gauge : float or array_like
        Gauge pressure, [Pa].
    p_ambient : float
        Ambient pressure, [Pa].

    Returns
    -------
    float or numpy.ndarray
        Absolute pressure, [Pa].
    """
    return (
        np.asarray(p_gauge, dtype=float) + p_ambient
        if not np.isscalar(p_gauge)
        else (float(p_gauge) + p_ambient)
    )


def abs_to_gauge(p_abs, p_ambient: float = P_AMBIENT):
    """Absolute to gauge pressure, [Pa] → [Pa]."""
    return (
        np.asarray(p_abs, dtype=float) - p_ambient
        if not np.isscalar(p_abs)
        else (float(p_abs) - p_ambient)
    )


def bar_gauge(p_abs, p_ambient: float = P_AMBIENT):
    """Absolute pressure to gauge pressure in bar, [Pa] → [bar].

    Parameters
    ----------
    p_abs : float or array_like
        Absolute pressure, [Pa].
    p_ambient : float
        Ambient pressure, [Pa].

    Returns
    -------
    float or numpy.ndarray
        Gauge pressure, [bar]; a float for a scalar (or 0-d) input.
    """
    g = abs_to_gauge(p_abs, p_ambient) / BAR
    return float(g) if np.ndim(g) == 0 else g


def bar_text(p_abs: float, p_ambient: float = P_AMBIENT, spec: str = ".1f") -> str:
    """``"123.4 bar"``: an absolute pressure [Pa] as gauge bar text, formatted by ``spec``.

    Parameters
    ----------
    p_abs : float
        Absolute pressure, [Pa].
    p_ambient : float
        Ambient pressure, [Pa].
    spec : str
        Format specification of the number (e.g. ``".0f"``).

    Returns
    -------
    str
        The gauge pressure and its unit.
    """
    return f"{bar_gauge(p_abs, p_ambient):{spec}} bar"


def celsius_to_kelvin(t_c):
    """Temperature in °C to K, [°C] → [K] (offset :data:`ZERO_CELSIUS`)."""
    if np.isscalar(t_c):
        return float(t_c) + ZERO_CELSIUS
    return np.asarray(t_c, dtype=float) + ZERO_CELSIUS


def kelvin_to_celsius(t_k):
    """Temperature in K to °C, [K] → [°C]."""
    if np.isscalar(t_k):
        return float(t_k) - ZERO_CELSIUS
    return np.asarray(t_k, dtype=float) - ZERO_CELSIUS
