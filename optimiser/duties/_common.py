"""What the three duties share: the precharge by the type's rule, the limits, trade units.

The precharge rule and the type limits are those of :mod:`stowflow.physics.accumulator` (common
practice, no published source), so a reserve, shock or thermal accumulator is judged by the
same rules as an energy-storage one.
"""

from __future__ import annotations

import math

import numpy as np
from stowflow.errors import SizingError
from stowflow.physics.accumulator import (
    AccumulatorType,
    Violation,
    check_limits,
    max_precharge_for_min_pressure,
    parse_type,
    pressure_equipment_category,
    rules_for,
    shell_volume,
)
from stowflow.physics.gas import reference_precharge
from stowflow.units import P_AMBIENT, bar_gauge, kelvin_to_celsius, to_unit

__all__ = [
    "SAFETY",
    "celsius",
    "check_positive",
    "litre",
    "resolve_precharge",
    "type_report",
]

#: The cautions every duty prints and writes into its JSON.
SAFETY: tuple[str, ...] = (
    "Precharge with nitrogen only, never air or oxygen.",
    "Accumulators stay pressurised after the pumps stop: discharge or isolate automatically at "
    "shutdown, and discharge before disassembly.",
    "Protect the accumulator with a relief valve set at or below its PS.",
    "Design support only: a competent person checks it against local codes and standards.",
)


def litre(v: float) -> float:
    """Volume [m³] → [L]."""
    return float(to_unit(v, "L", "volume"))


def celsius(T: float) -> float:
    """Temperature [K] → [°C]."""
    return float(kelvin_to_celsius(T))


def check_positive(name: str, value: float, shown: float, unit: str, *, zero: bool = False):
    """Refuse a value that is not finite and > 0 (or ≥ 0 with ``zero``), naming it in ``unit``.

    Parameters
    ----------
    name : str
        What the value is, for the message.
    value : float
        The value in SI units, [SI].
    shown : float
        The same value in ``unit`` for the message, [unit].
    unit : str
        The unit the message shows.
    zero : bool
        Accept zero.
    """
    ok = math.isfinite(value) and (value >= 0 if zero else value > 0)
    if not ok:
        sign = "≥ 0" if zero else "> 0"
        raise SizingError(f"{name} must be a finite value {sign} {unit}; got {shown:g} {unit}")


def resolve_precharge(
    precharge: float | None,
    acc_type: str | AccumulatorType,
    p_low: float,
    T_rule: float,
    model: str,
) -> tuple[float, bool]:
    """Precharge at 20 °C: the given one, or the type's rule applied at ``T_rule``.

    .. math:: p_0(T_{rule}) = f\\, p_{low} - \\Delta p

    Parameters
    ----------
    precharge : float or None
        Given precharge at 20 °C, absolute, [Pa].
    acc_type : str or AccumulatorType
        Accumulator type whose rule applies.
    p_low : float
        Lowest working pressure the accumulator sees, absolute, [Pa].
    T_rule : float
        Temperature at which the rule must hold (the hottest, where the precharge is
        highest), [K].
    model : {"real", "ideal"}
        Gas model.

    Returns
    -------
    tuple of (float, bool)
        Precharge at 20 °C, absolute [Pa], and True when it came from the rule.

    Raises
    ------
    SizingError
        The given precharge is not above ambient, or the rule leaves none above ambient.
    """
    if precharge is not None:
        if not (math.isfinite(precharge) and precharge > P_AMBIENT):
            raise SizingError(f"precharge must be above ambient; got {bar_gauge(precharge):g} bar")
        return float(precharge), False
    t = parse_type(acc_type)
    p_hot = float(max_precharge_for_min_pressure(t, p_low, rules_for(t)))
    if not p_hot > P_AMBIENT:
        raise SizingError(
            f"{t.value}: the precharge rule leaves no precharge above ambient for a lowest "
            f"working pressure of {bar_gauge(p_low):g} bar; give a precharge"
        )
    return float(reference_precharge(p_hot, T_rule, model)), True


def type_report(
    acc_type: str | AccumulatorType,
    p0_ref: float,
    p_low: float,
    p_high: float,
    T_min: float,
    T_max: float,
    gas_volume: float,
    model: str,
    max_allowable_pressure: float | None,
) -> dict:
    """Limits, shell volume and category hint of one accumulator type for a duty.

    Parameters
    ----------
    acc_type : str or AccumulatorType
        Accumulator type.
    p0_ref : float
        Precharge at 20 °C, absolute, [Pa].
    p_low, p_high : float
        Lowest and highest pressure the accumulator sees, absolute, [Pa].
    T_min, T_max : float
        Temperature range, [K].
    gas_volume : float
        Gas volume V0, [m³].
    model : {"real", "ideal"}
        Gas model.
    max_allowable_pressure : float or None
        Vessel PS, absolute, [Pa].

    Returns
    -------
    dict
        ``type``, ``admissible``, ``reasons`` (list of str), ``shell_volume_l`` and
        ``pressure_equipment`` (None without PS).
    """
    t = parse_type(acc_type)
    rules = rules_for(t)
    violations: list[Violation] = check_limits(
        t,
        p0_ref,
        p_low,
        p_high,
        T_min,
        T_max,
        rules=rules,
        model=model,
        max_allowable_pressure=max_allowable_pressure,
    )
    shell = float(shell_volume(t, gas_volume, rules))
    pe = None
    if max_allowable_pressure is not None and np.isfinite(shell) and shell > 0:
        ps = bar_gauge(max_allowable_pressure)
        category, note = pressure_equipment_category(ps, litre(shell))
        pe = {"ps_bar": ps, "volume_l": litre(shell), "category": category, "note": note}
    return {
        "type": t.value,
        "admissible": not violations,
        "reasons": [v.message for v in violations],
        "shell_volume_l": litre(shell),
        "pressure_equipment": pe,
    }
