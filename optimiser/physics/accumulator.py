"""Accumulator types and the limits of each: pressure ratio, pressure cap, precharge rule, flow.

Every default in :data:`DEFAULT_RULES` is **common practice, no published source**: trade
facts that vary between makers and models.  They are editable defaults, never hard truths:
a catalogue overrides them per type in a ``[limits.<type>]`` table (see :func:`rules_for`), and
a catalogue row's own ``max_flow`` beats the size-dependent flow default.

Conventions: pressures inside are absolute [Pa]; the precharge ``p0_ref`` is stated at 20 °C
(293.15 K, :data:`stowflow.units.T_REF`) and moves with temperature along the isochore
(:func:`stowflow.physics.gas.precharge_at`).  Pressure ratios are **absolute** p2/p0: the gas law
and the bladder's stretch both see absolute pressures, and the gauge ratio would make the same
bladder look worse at low pressure only because of the ambient offset.

The pressure-equipment hint (:func:`pressure_equipment_category`) follows Directive
2014/68/EU, Annex II, Table 2 (vessels for group 2 gases) with values **from memory**; it
defers to the directive text and to local codes.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from enum import StrEnum

import numpy as np
from stowflow.errors import SettingsError
from stowflow.physics.gas import precharge_at
from stowflow.units import (
    BAR,
    abs_to_gauge,
    gauge_to_abs,
    kelvin_to_celsius,
    si_factor,
    to_unit,
)

__all__ = [
    "DEFAULT_RULES",
    "OVERRIDE_KEYS",
    "RULE_SOURCE",
    "AccumulatorType",
    "TypeRules",
    "Violation",
    "check_limits",
    "gas_share",
    "max_precharge_for_min_pressure",
    "max_pressure_for_precharge",
    "min_working_pressure_for_precharge",
    "nominal_gas_volume",
    "parse_type",
    "pressure_equipment_category",
    "rules_for",
    "shell_volume",
    "unit_flow_limit",
]

#: How every default rule is sourced.
RULE_SOURCE = "common practice, no published source"
#: Relative tolerance when a rule is met exactly (a precharge set by the rule itself).
_RULE_RTOL = 1e-9


class AccumulatorType(StrEnum):
    """The accumulator types stowflow knows."""

    GAS_OVER_OIL = "gas-over-oil"
    BLADDER = "bladder"
    DIAPHRAGM = "diaphragm"
    PISTON = "piston"
    PISTON_BOTTLES = "piston-bottles"


def parse_type(name: str | AccumulatorType) -> AccumulatorType:
    """Return the :class:`AccumulatorType` named ``name`` (SettingsError if unknown).

    Parameters
    ----------
    name : str or AccumulatorType
        Type name, any case, surrounding blanks ignored.

    Returns
    -------
    AccumulatorType
        The type.

    Examples
    --------
    The project's own type names (regression example, no published source):

    >>> parse_type(" Bladder ").value
    'bladder'
    """
    try:
        return AccumulatorType(str(name).strip().lower())
    except ValueError:
        known = ", ".join(t.value for t in AccumulatorType)
        raise SettingsError(f"accumulator type '{name}' is unknown; use one of {known}") from None


@dataclass(frozen=True)
class TypeRules:
    """Limits of one accumulator type (all defaults: common practice, no published source).

    Attributes
    ----------
    max_pressure_ratio : float
        Largest p_max/p0(T), absolute pressures, at the coldest temperature; inf: none, [-].
    max_pressure_gauge : float
        Type's own cap on the working pressure, gauge; inf: none (the vessel's PS still
        applies), [Pa].
    precharge_factor : float
        Precharge rule p0(T) ≤ factor·p_min − margin at every temperature (absolute), [-].
    precharge_margin : float
        Margin of the precharge rule, [Pa].
    max_flow : float
        Per-unit discharge cap when the catalogue row gives none; inf: none, [m³/s].
    flow_per_volume : float
        Size-dependent per-unit flow default, flow per nominal volume; inf: none, [1/s].
    max_piston_speed : float
        Piston types: the flow limit is bore area × this speed; nan otherwise, [m/s].
    residual_oil_fraction : float
        Oil that must stay in the shell at the lowest pressure, fraction of the shell
        volume (gas-over-oil: the gas must never reach the outlet), [-].
    """

    max_pressure_ratio: float = math.inf
    max_pressure_gauge: float = math.inf
    precharge_factor: float = 1.0
    precharge_margin: float = 0.0
    max_flow: float = math.inf
    flow_per_volume: float = math.inf
    max_piston_speed: float = math.nan
    residual_oil_fraction: float = 0.0


# L/s through pint, like every flow the catalogue and the reports state in L/s (pint's factor
# is 1e-3 plus one unit in the last place), so that 120 L/s reads back as exactly 120.
_LPS = si_factor("L/s", "flow")

#: Default limits per type.  Each value is common practice, no published source; edit them
#: here or override them per catalogue with a ``[limits.<type>]`` table.
DEFAULT_RULES: dict[AccumulatorType, TypeRules] = {
    AccumulatorType.GAS_OVER_OIL: TypeRules(
        max_pressure_gauge=60 * BAR,  # nitrogen dissolves into the oil above about 60 bar
        precharge_factor=1.0,  # no separator to protect; the residual oil guards the outlet
        residual_oil_fraction=0.10,  # keep 10 % of the shell as oil at the lowest pressure
        # flow: not limited by the type (ports and piping limit it)
    ),
    AccumulatorType.BLADDER: TypeRules(
        max_pressure_ratio=4.0,  # p2/p0 ≤ 4, absolute
        precharge_factor=0.9,  # p0 ≈ 0.9·p_min: the bladder must not close onto the poppet
        max_flow=120 * _LPS,  # large high-flow units reach about 120 L/s
        flow_per_volume=2.4 * _LPS / si_factor("L", "volume"),  # 2.4 L/s per litre: 50 L → 120
    ),
    AccumulatorType.DIAPHRAGM: TypeRules(
        max_pressure_ratio=8.0,  # 1:6 to 1:8; 6 is the conservative choice
        precharge_factor=0.9,
        max_flow=6 * _LPS,  # much lower discharge, about 6 L/s
    ),
    AccumulatorType.PISTON: TypeRules(
        precharge_margin=5 * BAR,  # a few bar below the minimum working pressure
        max_piston_speed=3.5,  # m/s
    ),
    AccumulatorType.PISTON_BOTTLES: TypeRules(
        precharge_margin=5 * BAR,
        max_piston_speed=3.5,  # the swept volume of the piston unit limits the oil exchange
    ),
}

#: Catalogue override keys (trade units) → (field, factor to SI, lower bound, lower bound
#: allowed, upper bound).
OVERRIDE_KEYS: dict[str, tuple[str, float, float, bool, float]] = {
    "max_pressure_ratio": ("max_pressure_ratio", 1.0, 1.0, False, math.inf),
    "max_pressure_bar": ("max_pressure_gauge", BAR, 0.0, False, math.inf),
    "precharge_factor": ("precharge_factor", 1.0, 0.0, False, 1.0),
    "precharge_margin_bar": ("precharge_margin", BAR, 0.0, True, math.inf),
    "max_flow_lps": ("max_flow", _LPS, 0.0, False, math.inf),
    "flow_per_volume_lps_per_l": ("flow_per_volume", 1.0, 0.0, False, math.inf),
    "max_piston_speed_m_s": ("max_piston_speed", 1.0, 0.0, False, math.inf),
    "residual_oil_fraction": ("residual_oil_fraction", 1.0, 0.0, True, 0.9),
}


def rules_for(acc_type: str | AccumulatorType, overrides: dict | None = None) -> TypeRules:
    """The type's default rules, with a catalogue's ``[limits.<type>]`` overrides merged in.

    Parameters
    ----------
    acc_type : str or AccumulatorType
        Accumulator type.
    overrides : dict[str, float], optional
        Keys of :data:`OVERRIDE_KEYS` in trade units, e.g. ``{"max_pressure_ratio": 3.5}``,
        ``{"precharge_margin_bar": 10}``, ``{"max_flow_lps": 80}``.

    Returns
    -------
    TypeRules
        The merged rules (SI).

    Raises
    ------
    SettingsError
        Unknown type or key, or a value that is not a number in its range.

    Examples
    --------
    The bladder's default limit on p2/p0 (common practice, no published source), and the same
    with a catalogue's override:

    >>> rules_for("bladder").max_pressure_ratio
    4.0
    >>> rules_for("bladder", {"max_pressure_ratio": 3.5}).max_pressure_ratio
    3.5
    """
    t = parse_type(acc_type)
    rules = DEFAULT_RULES[t]
    changes = {}
    for key, value in (overrides or {}).items():
        if key not in OVERRIDE_KEYS:
            raise SettingsError(
                f"[limits.{t.value}]: unknown key '{key}'; known keys: " + ", ".join(OVERRIDE_KEYS)
            )
        field, factor, lo, lo_ok, hi = OVERRIDE_KEYS[key]
        if isinstance(value, bool) or not isinstance(value, int | float) or math.isnan(value):
            raise SettingsError(f"[limits.{t.value}] {key} = {value!r} is not a number")
        if not ((lo <= value if lo_ok else lo < value) and value <= hi):
            span = f"{'[' if lo_ok else '('}{lo:g}, {hi:g}]"
            raise SettingsError(f"[limits.{t.value}] {key} = {value:g} is outside {span}")
        changes[field] = float(value) * factor
    return replace(rules, **changes) if changes else rules


def gas_share(acc_type: str | AccumulatorType, rules: TypeRules | None = None) -> float:
    """Share of an accumulator's shell that its gas fills at precharge: the residual-oil rule.

    .. math:: V_0 / V_{shell} = 1 - f_{res}

    A gas-over-oil vessel has no separator, so a share :math:`f_{res}` of its shell stays oil
    at the lowest pressure (the gas must never reach the outlet); every other type's gas fills
    its whole nominal volume.  :func:`shell_volume` (``stowflow size``) and
    :func:`nominal_gas_volume` (the design search and its verification) both apply the rule
    through this function.

    Parameters
    ----------
    acc_type : str or AccumulatorType
        Accumulator type.
    rules : TypeRules, optional
        Rules; default the type's defaults.

    Returns
    -------
    float
        :math:`1 - f_{res}` in (0, 1], [-].

    Examples
    --------
    Gas-over-oil keeps 10 % of its shell as oil (common practice, no published source):

    >>> gas_share("gas-over-oil"), gas_share("bladder")
    (0.9, 1.0)
    """
    rules = rules or rules_for(acc_type)
    return 1.0 - rules.residual_oil_fraction


def shell_volume(
    acc_type: str | AccumulatorType, gas_volume: float, rules: TypeRules | None = None
) -> float:
    """Shell volume needed for a usable gas volume (gas-over-oil keeps its residual oil).

    .. math:: V_{shell} = V_0 / (1 - f_{res})

    The inverse of :func:`nominal_gas_volume` (both through :func:`gas_share`).

    Parameters
    ----------
    acc_type : str or AccumulatorType
        Accumulator type.
    gas_volume : float
        Gas volume at precharge V0, [m³].
    rules : TypeRules, optional
        Rules; default the type's defaults.

    Returns
    -------
    float
        Shell volume, [m³] (equal to V0 for the separator types).

    Examples
    --------
    Gas-over-oil keeps 10 % of its shell as oil (common practice, no published source), so
    9 L of gas needs a 10 L shell:

    >>> from stowflow.units import LITRE
    >>> print(f"{shell_volume('gas-over-oil', 9 * LITRE) / LITRE:.2f} L")
    10.00 L
    """
    return gas_volume / gas_share(acc_type, rules)


def nominal_gas_volume(
    acc_type: str | AccumulatorType, nominal_volume: float, rules: TypeRules | None = None
) -> float:
    """Gas volume at precharge of one catalogue unit of a nominal volume.

    .. math:: V_0 = (1 - f_{res})\\, V_{nom}

    A catalogue row's nominal volume is the gas volume at precharge for the separator types
    and the vessel's (shell) volume for gas-over-oil, whose residual oil never leaves: the
    same rule as :func:`shell_volume`, inverted (both through :func:`gas_share`).

    Parameters
    ----------
    acc_type : str or AccumulatorType
        Accumulator type.
    nominal_volume : float
        Nominal volume of the unit, [m³].
    rules : TypeRules, optional
        Rules; default the type's defaults.

    Returns
    -------
    float
        Gas volume at precharge, [m³] (the nominal volume for the separator types).

    Examples
    --------
    A 100 L gas-over-oil vessel holds 90 L of gas at precharge and 10 L of oil that never
    leaves (common practice, no published source); a 50 L bladder holds 50 L of gas:

    >>> from stowflow.units import LITRE
    >>> print(f"{nominal_gas_volume('gas-over-oil', 100 * LITRE) / LITRE:.2f} L")
    90.00 L
    >>> print(f"{nominal_gas_volume('bladder', 50 * LITRE) / LITRE:.2f} L")
    50.00 L
    """
    return nominal_volume * gas_share(acc_type, rules)


def unit_flow_limit(
    acc_type: str | AccumulatorType,
    nominal_volume: float,
    bore: float | None = None,
    max_flow: float | None = None,
    rules: TypeRules | None = None,
) -> float:
    """Largest discharge (or charge) flow of one unit.

    The catalogue row's ``max_flow`` wins when given.  Otherwise: piston types
    :math:`Q = \\pi d^2/4 \\cdot v_{max}`; other types
    :math:`Q = \\min(Q_{cap}, k\\, V_0)` (common practice, no published source).

    Parameters
    ----------
    acc_type : str or AccumulatorType
        Accumulator type.
    nominal_volume : float
        Nominal gas volume of the unit, [m³].
    bore : float, optional
        Piston bore, [m]; required for piston types without ``max_flow``.
    max_flow : float, optional
        Flow limit stated by the catalogue row, [m³/s].
    rules : TypeRules, optional
        Rules; default the type's defaults.

    Returns
    -------
    float
        Flow limit per unit, [m³/s]; ``inf`` where the type sets none.

    Examples
    --------
    Bladder: 2.4 L/s per litre of nominal volume, at most 120 L/s; piston: bore area times
    3.5 m/s (common practice, no published source):

    >>> from stowflow.units import LITRE
    >>> print(f"{unit_flow_limit('bladder', 10 * LITRE) / LITRE:.1f} L/s")
    24.0 L/s
    >>> print(f"{unit_flow_limit('piston', 20 * LITRE, bore=0.1) / LITRE:.2f} L/s")
    27.49 L/s
    """
    t = parse_type(acc_type)
    rules = rules or rules_for(t)
    if max_flow is not None and max_flow > 0:
        return float(max_flow)
    if not math.isnan(rules.max_piston_speed):
        if bore is None or not bore > 0:
            raise SettingsError(
                f"{t.value}: the flow limit needs the piston bore (bore_mm) or a max_flow"
            )
        return min(rules.max_flow, math.pi / 4 * bore**2 * rules.max_piston_speed)
    return min(rules.max_flow, rules.flow_per_volume * nominal_volume)


def min_working_pressure_for_precharge(
    acc_type: str | AccumulatorType, p0_at_T, rules: TypeRules | None = None
):
    """Lowest minimum working pressure the precharge rule allows, at one temperature.

    .. math:: p_{min} \\ge (p_0(T) + \\Delta p)/f

    (bladder, diaphragm: :math:`p_0/0.9`; piston: :math:`p_0 + 5` bar; common practice, no
    published source).

    Parameters
    ----------
    acc_type : str or AccumulatorType
        Accumulator type.
    p0_at_T : array_like
        Precharge at the operating temperature, absolute, [Pa].
    rules : TypeRules, optional
        Rules; default the type's defaults.

    Returns
    -------
    float or numpy.ndarray
        Absolute pressure, [Pa].

    Examples
    --------
    Bladder: :math:`p_0/0.9`; piston: :math:`p_0` + 5 bar (common practice, no published
    source):

    >>> from stowflow.units import BAR
    >>> print(f"{min_working_pressure_for_precharge('bladder', 90 * BAR) / BAR:.1f} bar")
    100.0 bar
    >>> print(f"{min_working_pressure_for_precharge('piston', 90 * BAR) / BAR:.1f} bar")
    95.0 bar
    """
    rules = rules or rules_for(acc_type)
    return (np.asarray(p0_at_T, dtype=float) + rules.precharge_margin) / rules.precharge_factor


def max_precharge_for_min_pressure(
    acc_type: str | AccumulatorType, p_min, rules: TypeRules | None = None
):
    """Highest precharge, at the operating temperature, that the rule allows for p_min.

    .. math:: p_0(T) \\le f\\, p_{min} - \\Delta p

    Parameters
    ----------
    acc_type : str or AccumulatorType
        Accumulator type.
    p_min : array_like
        Minimum working pressure, absolute, [Pa].
    rules : TypeRules, optional
        Rules; default the type's defaults.

    Returns
    -------
    float or numpy.ndarray
        Absolute precharge at that temperature, [Pa].

    Examples
    --------
    Bladder: :math:`0.9\\, p_{min}`; piston: :math:`p_{min}` − 5 bar (common practice, no
    published source):

    >>> from stowflow.units import BAR
    >>> print(f"{max_precharge_for_min_pressure('bladder', 100 * BAR) / BAR:.1f} bar")
    90.0 bar
    >>> print(f"{max_precharge_for_min_pressure('piston', 100 * BAR) / BAR:.1f} bar")
    95.0 bar
    """
    rules = rules or rules_for(acc_type)
    return rules.precharge_factor * np.asarray(p_min, dtype=float) - rules.precharge_margin


def max_pressure_for_precharge(
    acc_type: str | AccumulatorType, p0_at_T, rules: TypeRules | None = None
):
    """Highest working pressure the type allows for a precharge, at one temperature.

    .. math:: p_{max} \\le \\min(r_{max}\\, p_0(T),\\ p_{cap} + p_{amb})

    Parameters
    ----------
    acc_type : str or AccumulatorType
        Accumulator type.
    p0_at_T : array_like
        Precharge at the operating temperature, absolute, [Pa].
    rules : TypeRules, optional
        Rules; default the type's defaults.

    Returns
    -------
    float or numpy.ndarray
        Absolute pressure, [Pa]; inf where the type sets no limit.

    Examples
    --------
    Bladder: four times the precharge (absolute); gas-over-oil: its 60 bar gauge cap, here in
    absolute bar (both common practice, no published source):

    >>> from stowflow.units import BAR
    >>> print(f"{max_pressure_for_precharge('bladder', 50 * BAR) / BAR:.2f} bar")
    200.00 bar
    >>> print(f"{max_pressure_for_precharge('gas-over-oil', 50 * BAR) / BAR:.2f} bar")
    61.01 bar
    """
    rules = rules or rules_for(acc_type)
    p0 = np.asarray(p0_at_T, dtype=float)
    return np.minimum(rules.max_pressure_ratio * p0, gauge_to_abs(rules.max_pressure_gauge))


@dataclass(frozen=True)
class Violation:
    """A broken limit.

    Attributes
    ----------
    limit : str
        Short key: ``ratio``, ``max_pressure``, ``precharge``, ``ps``, ``flow`` or
        ``swept_volume``.
    message : str
        One plain sentence with the numbers and units.
    """

    limit: str
    message: str

    def __str__(self) -> str:
        return self.message


def _bar(p_abs: float) -> str:
    return f"{to_unit(abs_to_gauge(p_abs), 'bar', 'pressure'):.4g} bar"


def _litres(value: float, unit: str, dimension: str) -> str:
    return f"{to_unit(value, unit, dimension):.4g} {unit}"


def _celsius(T: float) -> str:
    return f"{kelvin_to_celsius(T):.4g} °C"


def check_limits(
    acc_type: str | AccumulatorType,
    p0_ref: float,
    p_min: float,
    p_max: float,
    T_min: float,
    T_max: float,
    peak_unit_flow: float | None = None,
    *,
    rules: TypeRules | None = None,
    model: str = "real",
    nominal_volume: float | None = None,
    bore: float | None = None,
    max_flow: float | None = None,
    max_allowable_pressure: float | None = None,
    oil_exchange: float | None = None,
    swept_volume: float | None = None,
) -> list[Violation]:
    """Every limit of the type that a design breaks, across the temperature range.

    The ratio is checked at the coldest temperature (lowest precharge), the precharge rule at
    the hottest (highest precharge).

    Parameters
    ----------
    acc_type : str or AccumulatorType
        Accumulator type.
    p0_ref : float
        Precharge at 20 °C, absolute, [Pa].
    p_min, p_max : float
        Minimum and maximum working pressure, absolute, [Pa].
    T_min, T_max : float
        Operating temperature range, [K].
    peak_unit_flow : float, optional
        Largest flow through one unit, [m³/s]; checked when given.
    rules : TypeRules, optional
        Rules; default the type's defaults.
    model : {"real", "ideal"}
        Gas model for the precharge's temperature shift.
    nominal_volume : float, optional
        Nominal gas volume of one unit (for the size-dependent flow limit), [m³].
    bore : float, optional
        Piston bore, [m].
    max_flow : float, optional
        Catalogue flow limit of the unit, [m³/s].
    max_allowable_pressure : float, optional
        Vessel PS, absolute, [Pa]; checked when given.
    oil_exchange : float, optional
        Oil volume exchanged per unit, [m³]; with ``swept_volume`` for piston-bottles.
    swept_volume : float, optional
        Swept volume of the piston unit (piston-bottles), [m³].

    Returns
    -------
    list of Violation
        Empty when every limit holds.

    Examples
    --------
    A bladder precharged to 40 bar absolute at 20 °C and charged to 200 bar breaks the rule
    p2/p0 ≤ 4 at 10 °C (common practice, no published source):

    >>> from stowflow.units import BAR, ZERO_CELSIUS
    >>> found = check_limits("bladder", 40 * BAR, 100 * BAR, 200 * BAR,
    ...                      ZERO_CELSIUS + 10, ZERO_CELSIUS + 50)
    >>> [v.limit for v in found]
    ['ratio']
    """
    t = parse_type(acc_type)
    rules = rules or rules_for(t)
    out: list[Violation] = []
    p0_cold = float(precharge_at(p0_ref, T_min, model))
    p0_hot = float(precharge_at(p0_ref, T_max, model))
    ratio = p_max / p0_cold
    if ratio > rules.max_pressure_ratio * (1 + _RULE_RTOL):
        msg = (
            f"{t.value} ratio p2/p0 = {ratio:.3g} (absolute) at {_celsius(T_min)} exceeds "
            f"{rules.max_pressure_ratio:g} ({RULE_SOURCE})"
        )
        out.append(Violation("ratio", msg))
    cap = gauge_to_abs(rules.max_pressure_gauge)
    if p_max > cap * (1 + _RULE_RTOL):
        msg = (
            f"{t.value} maximum working pressure {_bar(p_max)} exceeds the type's "
            f"{_bar(cap)} ({RULE_SOURCE})"
        )
        out.append(Violation("max_pressure", msg))
    p_min_rule = float(min_working_pressure_for_precharge(t, p0_hot, rules))
    if p_min < p_min_rule * (1 - _RULE_RTOL):
        msg = (
            f"{t.value} precharge {_bar(p0_hot)} at {_celsius(T_max)} needs a minimum "
            f"working pressure of at least {_bar(p_min_rule)}, but it is {_bar(p_min)} "
            f"({RULE_SOURCE})"
        )
        out.append(Violation("precharge", msg))
    if max_allowable_pressure is not None and p_max > max_allowable_pressure:
        msg = (
            f"maximum working pressure {_bar(p_max)} exceeds the vessel's PS "
            f"{_bar(max_allowable_pressure)}"
        )
        out.append(Violation("ps", msg))
    unit = (peak_unit_flow, nominal_volume, bore, max_flow, oil_exchange, swept_volume)
    return out + _unit_violations(t, rules, *unit)


def _unit_violations(
    t: AccumulatorType,
    rules: TypeRules,
    peak_unit_flow: float | None,
    nominal_volume: float | None,
    bore: float | None,
    max_flow: float | None,
    oil_exchange: float | None,
    swept_volume: float | None,
) -> list[Violation]:
    """The limits of one unit's flow and swept volume that :func:`check_limits` checks."""
    out: list[Violation] = []
    if peak_unit_flow is not None:
        limit = unit_flow_limit(t, nominal_volume or 0.0, bore, max_flow, rules)
        if peak_unit_flow > limit:
            msg = (
                f"{t.value} peak flow per unit {_litres(peak_unit_flow, 'L/s', 'flow')} "
                f"exceeds its limit of {_litres(limit, 'L/s', 'flow')}"
                + ("" if max_flow else f" ({RULE_SOURCE})")
            )
            out.append(Violation("flow", msg))
    swept = t is AccumulatorType.PISTON_BOTTLES and None not in (oil_exchange, swept_volume)
    if swept and oil_exchange > swept_volume:
        msg = (
            f"piston-bottles oil exchange {_litres(oil_exchange, 'L', 'volume')} exceeds the "
            f"piston unit's swept volume {_litres(swept_volume, 'L', 'volume')}"
        )
        out.append(Violation("swept_volume", msg))
    return out


_PED_NOTE = (
    "EU Directive 2014/68/EU, Annex II, Table 2 (vessels, group 2 gases such as nitrogen); "
    "the limits are from memory: check the directive text and local codes. Classify each "
    "vessel by its total shell volume."
)


def pressure_equipment_category(ps_bar_gauge: float, volume_l: float) -> tuple[str, str]:
    """Pressure-equipment category hint for one vessel holding nitrogen.

    ========================  =================================================
    PS·V [bar·L]              category (V > 1 L)
    ========================  =================================================
    ≤ 50                      SEP (sound engineering practice, Article 4(3))
    50 … 200                  I
    200 … 1000                II
    1000 … 3000               III
    > 3000                    IV
    ========================  =================================================

    For V ≤ 1 L: PS ≤ 1000 bar is SEP, PS > 1000 bar category III.  PS ≤ 0.5 bar is outside
    the directive.  Values from memory.

    Parameters
    ----------
    ps_bar_gauge : float
        Maximum allowable pressure PS, gauge, [bar].
    volume_l : float
        Vessel volume, [L].

    Returns
    -------
    tuple of str
        Category (``"SEP"``, ``"I"`` … ``"IV"`` or ``"outside scope"``) and a note that states
        the source and that the values are from memory.

    References
    ----------
    Directive 2014/68/EU of the European Parliament and of the Council on pressure equipment
    (recast), OJ L 189, 27.6.2014, Article 4 and Annex II (from memory).

    Examples
    --------
    Directive 2014/68/EU, Annex II, Table 2 (from memory): 330 bar × 16.99 L = 5607 bar·L is
    above 3000 bar·L, category IV; 200 bar × 4 L = 800 bar·L is category II.

    >>> pressure_equipment_category(330.0, 16.99)[0]
    'IV'
    >>> pressure_equipment_category(200.0, 4.0)[0]
    'II'
    """
    if not (np.isfinite(ps_bar_gauge) and np.isfinite(volume_l)) or volume_l <= 0:
        raise SettingsError(
            f"category hint needs a finite PS and a volume > 0 L; got {ps_bar_gauge} bar, "
            f"{volume_l} L"
        )
    if ps_bar_gauge <= 0.5:
        return "outside scope", "PS ≤ 0.5 bar is outside the directive. " + _PED_NOTE
    if volume_l <= 1.0:
        return ("III" if ps_bar_gauge > 1000.0 else "SEP"), _PED_NOTE
    psv = ps_bar_gauge * volume_l
    for bound, cat in ((50.0, "SEP"), (200.0, "I"), (1000.0, "II"), (3000.0, "III")):
        if psv <= bound:
            return cat, _PED_NOTE
    return "IV", _PED_NOTE
