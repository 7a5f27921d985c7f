"""Single-point sizing: the gas volume that exchanges a given oil volume across the temperatures.

For a precharge :math:`p_{0,ref}` at 20 °C, the oil fraction stored at pressure p and operating
temperature T is :math:`f(p, T) = 1 - V/V_0`.  The gas volume that exchanges the oil volume ΔV
between the minimum and maximum working pressures is

.. math::
    V_0 = \\max_{T \\in [T_{min}, T_{max}]}
          \\frac{\\Delta V}{f(p_{max}, T) - f(p_{min}, T)}

The default duty (``charge="slow"``) is the usual one and the one ``stowflow design`` models:
the pump charges the accumulator slowly, so the gas reaches :math:`p_2` at rest at the wall
temperature (isothermal, :func:`stowflow.physics.gas.oil_fraction`), and the machine then
draws the oil fast, the gas following the chosen process from :math:`p_2` down to
:math:`p_1` (:func:`stowflow.physics.gas.expansion_ratio`).  For the ideal gas and a
polytropic discharge:

.. math::
    \\Delta V = V_0 \\frac{p_0}{p_2}\\Big[\\Big(\\frac{p_2}{p_1}\\Big)^{1/n} - 1\\Big]
            = V_0 \\Big[\\Big(\\frac{p_0}{p_1}\\Big)^{1/n}
              \\Big(\\frac{p_0}{p_2}\\Big)^{1 - 1/n} - \\frac{p_0}{p_2}\\Big]

with :math:`p_0 = p_0(T)`.  An adiabatic discharge gives back less oil than Boyle's law, and
less than a gas compressed along the same adiabat from the precharge would (that gas is hot
and larger at :math:`p_2`): ``charge="fast"`` keeps that model, both strokes along the process
from the precharge, the textbook law :math:`\\Delta V = V_0 [(p_0/p_1)^{1/n} - (p_0/p_2)^{1/n}]`,
for duties whose charge is as fast as their discharge.  The cold end lowers the precharge (and
so the stored oil); the hot end raises it towards the minimum working pressure (the precharge
rule).  Every type's limits are checked
(:func:`stowflow.physics.accumulator.check_limits`).  Without a given precharge each type gets the
highest precharge its rule allows at the hottest temperature.

References
----------
.. [1] A. Esposito, *Fluid Power with Applications*, 7th ed., Pearson (2009),
   ISBN 978-0-13-513690-4, accumulator chapter (Boyle's-law sizing).
.. [2] Y. A. Çengel, M. A. Boles, *Thermodynamics: An Engineering Approach*, 8th ed.,
   McGraw-Hill (2015), ISBN 978-0-07-339817-4 (polytropic processes).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import NamedTuple

import numpy as np
from stowflow.errors import SizingError
from stowflow.physics.accumulator import (
    AccumulatorType,
    TypeRules,
    Violation,
    check_limits,
    max_precharge_for_min_pressure,
    parse_type,
    pressure_equipment_category,
    rules_for,
    shell_volume,
)
from stowflow.physics.gas import (
    ISOTHERMAL,
    Process,
    density,
    end_temperature,
    expansion_ratio,
    gas_volume_ratio,
    oil_fraction,
    parse_process,
    precharge_at,
    reference_precharge,
    temperature_from_density,
)
from stowflow.units import P_AMBIENT, T_REF, bar_gauge, kelvin_to_celsius, to_unit

__all__ = ["CHARGES", "SizingResult", "TypeSizing", "size_accumulator"]

#: How the accumulator is charged: ``slow`` (the pump fills it, the gas reaches the maximum
#: working pressure at rest at the wall temperature; the usual duty) or ``fast`` (the charge
#: follows the process from the precharge like the discharge), [-].
CHARGES: tuple[str, ...] = ("slow", "fast")
#: Temperatures evaluated across the range (plus 20 °C when inside it), [-].
N_TEMPERATURES = 21
_GOLDEN = (math.sqrt(5.0) - 1.0) / 2.0


def _litre(v):
    return to_unit(v, "L", "volume")


@dataclass(frozen=True)
class TypeSizing:
    """Sizing of one accumulator type.

    Attributes
    ----------
    type : AccumulatorType
        The type.
    precharge_ref : float
        Precharge at 20 °C, absolute, [Pa].
    precharge_by_rule : bool
        True when the precharge came from the type's rule (none was given).
    required_gas_volume : float
        Gas volume V0 at the worst temperature, [m³] (nan when no precharge is possible).
    worst_temperature : float
        Temperature that needs the largest V0, [K].
    shell_volume : float
        Shell volume (gas-over-oil adds its residual oil), [m³].
    temperatures : numpy.ndarray
        Temperatures evaluated, [K].
    precharge_at_T : numpy.ndarray
        Precharge at each temperature, absolute, [Pa].
    fraction_at_min, fraction_at_max : numpy.ndarray
        Oil fraction stored at p_min and p_max at each temperature, [-].
    gas_temperature_at_max : numpy.ndarray
        Gas temperature at p_max at each temperature, [K]: the wall temperature after a slow
        charge, the end of the process from the precharge after a fast one.
    gas_temperature_at_min : numpy.ndarray
        Gas temperature at p_min after the discharge along the process, [K].
    required_at_T : numpy.ndarray
        Gas volume that each temperature alone would need, [m³].
    violations : tuple of Violation
        Broken limits; empty when the type is admissible.
    notes : tuple of str
        Remarks that are not violations (e.g. the swept volume a piston unit needs).
    """

    type: AccumulatorType
    precharge_ref: float
    precharge_by_rule: bool
    required_gas_volume: float
    worst_temperature: float
    shell_volume: float
    temperatures: np.ndarray = field(repr=False)
    precharge_at_T: np.ndarray = field(repr=False)
    fraction_at_min: np.ndarray = field(repr=False)
    fraction_at_max: np.ndarray = field(repr=False)
    gas_temperature_at_max: np.ndarray = field(repr=False)
    gas_temperature_at_min: np.ndarray = field(repr=False)
    required_at_T: np.ndarray = field(repr=False)
    violations: tuple[Violation, ...] = ()
    notes: tuple[str, ...] = ()

    @property
    def admissible(self) -> bool:
        """True when no limit is broken."""
        return not self.violations

    def rows(self) -> list[dict]:
        """Per-temperature table in trade units (°C, bar gauge, L) for the worst-case V0."""
        v0 = self.required_gas_volume
        return [
            {
                "temperature_c": kelvin_to_celsius(float(t)),
                "precharge_bar": bar_gauge(float(p0)),
                "oil_at_min_pressure_l": _litre(v0 * float(fmin)),
                "oil_at_max_pressure_l": _litre(v0 * float(fmax)),
                "oil_exchange_l": _litre(v0 * float(fmax - fmin)),
                "required_gas_volume_l": _litre(float(need)),
                "gas_temperature_at_max_pressure_c": kelvin_to_celsius(float(tg)),
                "gas_temperature_at_min_pressure_c": kelvin_to_celsius(float(tg1)),
            }
            for t, p0, fmin, fmax, tg, tg1, need in zip(
                self.temperatures,
                self.precharge_at_T,
                self.fraction_at_min,
                self.fraction_at_max,
                self.gas_temperature_at_max,
                self.gas_temperature_at_min,
                self.required_at_T,
                strict=True,
            )
        ]

    def as_dict(self) -> dict:
        """JSON-ready summary in trade units."""
        return {
            "precharge_bar_at_20c": bar_gauge(self.precharge_ref),
            "precharge_by_rule": self.precharge_by_rule,
            "required_gas_volume_l": _litre(self.required_gas_volume),
            "shell_volume_l": _litre(self.shell_volume),
            "worst_temperature_c": kelvin_to_celsius(self.worst_temperature),
            "admissible": self.admissible,
            "reasons": [v.message for v in self.violations],
            "notes": list(self.notes),
        }


@dataclass(frozen=True)
class SizingResult:
    """Result of :func:`size_accumulator`.

    Attributes
    ----------
    oil_volume : float
        Oil volume to exchange, [m³].
    p_min, p_max : float
        Working pressure window, absolute, [Pa].
    T_min, T_max : float
        Operating temperature range, [K].
    process : Process
        Gas process of the discharge (and of the charge when ``charge`` is ``"fast"``).
    model : str
        Gas model, ``"real"`` or ``"ideal"``.
    charge : str
        ``"slow"`` (isothermal charge) or ``"fast"`` (charge along the process), see
        :data:`CHARGES`.
    precharge : float or None
        Given precharge at 20 °C, absolute, [Pa]; None when set by each type's rule.
    max_allowable_pressure : float or None
        PS for the category hint, absolute, [Pa].
    cases : tuple of TypeSizing
        One sizing per type considered.
    governing : TypeSizing
        The admissible type with the smallest required gas volume.
    """

    oil_volume: float
    p_min: float
    p_max: float
    T_min: float
    T_max: float
    process: Process
    model: str
    charge: str
    precharge: float | None
    max_allowable_pressure: float | None
    cases: tuple[TypeSizing, ...]
    governing: TypeSizing

    @property
    def required_gas_volume(self) -> float:
        """Worst-case gas volume V0 of the governing type, [m³]."""
        return self.governing.required_gas_volume

    @property
    def admissible_types(self) -> list[str]:
        """Types that meet every limit."""
        return [c.type.value for c in self.cases if c.admissible]

    @property
    def rejected_types(self) -> dict[str, str]:
        """Types that break a limit → the reasons, one string."""
        return {
            c.type.value: "; ".join(v.message for v in c.violations)
            for c in self.cases
            if not c.admissible
        }

    def pressure_equipment(self) -> dict | None:
        """Category hint for one vessel of the governing shell volume at PS, or None."""
        if self.max_allowable_pressure is None:
            return None
        ps = bar_gauge(self.max_allowable_pressure)
        vol = _litre(self.governing.shell_volume)
        category, note = pressure_equipment_category(ps, vol)
        return {"ps_bar": ps, "volume_l": vol, "category": category, "note": note}

    def as_dict(self) -> dict:
        """JSON-ready result in trade units (bar gauge, L, °C)."""
        g = self.governing
        real_isentrope = self.model == "real" and self.process.kind == "adiabatic"
        return {
            "schema": "stowflow.size/1",
            "gas_model": self.model,
            "process": self.process.kind,
            "polytropic_index": None if real_isentrope else self.process.n,
            "charge": self.charge,
            "temperature_c": {
                "min": kelvin_to_celsius(self.T_min),
                "max": kelvin_to_celsius(self.T_max),
                "precharge_reference": kelvin_to_celsius(T_REF),
            },
            "oil_volume_l": _litre(self.oil_volume),
            "min_pressure_bar": bar_gauge(self.p_min),
            "max_pressure_bar": bar_gauge(self.p_max),
            "precharge_bar_at_20c": bar_gauge(g.precharge_ref),
            "precharge_by_rule": self.precharge is None,
            "required_gas_volume_l": _litre(g.required_gas_volume),
            "governing_type": g.type.value,
            "worst_temperature_c": kelvin_to_celsius(g.worst_temperature),
            "admissible_types": self.admissible_types,
            "rejected_types": self.rejected_types,
            "temperatures": g.rows(),
            "types": {c.type.value: c.as_dict() for c in self.cases},
            "pressure_equipment": self.pressure_equipment(),
        }


def _validate(oil_volume, p_min, p_max, precharge, T_min, T_max) -> None:
    if not (np.isfinite(oil_volume) and oil_volume > 0):
        raise SizingError(f"oil volume to exchange must be > 0 L; got {_litre(oil_volume):g} L")
    for name, p in (("minimum working pressure", p_min), ("maximum working pressure", p_max)):
        if not (np.isfinite(p) and p > P_AMBIENT):
            raise SizingError(
                f"{name} must be above ambient (> 0 bar gauge); got {bar_gauge(p):g} bar"
            )
    if not p_max > p_min:
        raise SizingError(
            f"maximum working pressure {bar_gauge(p_max):g} bar must exceed the minimum "
            f"{bar_gauge(p_min):g} bar (gauge)"
        )
    if precharge is not None:
        if not (np.isfinite(precharge) and precharge > P_AMBIENT):
            raise SizingError(f"precharge must be above ambient; got {bar_gauge(precharge):g} bar")
        if not precharge < p_min:
            raise SizingError(
                f"precharge {bar_gauge(precharge):g} bar at 20 °C must be below the minimum "
                f"working pressure {bar_gauge(p_min):g} bar (gauge), or no oil is stored at p_min"
            )
    if not (T_min > 0 and T_max >= T_min and np.isfinite(T_max)):
        raise SizingError(
            f"temperature range {kelvin_to_celsius(T_min):g} … {kelvin_to_celsius(T_max):g} °C "
            "is not a range above absolute zero"
        )


def _temperature_grid(T_min: float, T_max: float, step: float | None = None) -> np.ndarray:
    """The temperatures sized at, [K]: ``N_TEMPERATURES`` evenly spread, or every ``step``
    [K] from ``T_min`` with ``T_max`` added; 20 °C added inside the range."""
    if step is not None and T_max > T_min:
        n = int(np.floor((T_max - T_min) / step + 1e-9)) + 1
        ts = T_min + step * np.arange(n)
        if T_max - ts[-1] > 1e-9:
            ts = np.append(ts, T_max)
    else:
        ts = np.linspace(T_min, T_max, N_TEMPERATURES if T_max > T_min else 1)
    if T_min < T_REF < T_max:
        ts = np.unique(np.append(ts, T_REF))
    return ts


def _worst(df_of_T, ts: np.ndarray, df: np.ndarray) -> tuple[float, float]:
    """Temperature [K] with the smallest stored-oil fraction difference, and that value."""
    k = int(np.argmin(df))
    if k in (0, len(ts) - 1):
        return float(ts[k]), float(df[k])
    a, b = float(ts[k - 1]), float(ts[k + 1])  # golden-section refinement, interior minimum
    c, d = b - _GOLDEN * (b - a), a + _GOLDEN * (b - a)
    fc, fd = df_of_T(c), df_of_T(d)
    while b - a > 1e-4:
        if fc < fd:
            b, d, fd = d, c, fc
            c = b - _GOLDEN * (b - a)
            fc = df_of_T(c)
        else:
            a, c, fc = c, d, fd
            d = a + _GOLDEN * (b - a)
            fd = df_of_T(d)
    t_best, f_best = (c, fc) if fc < fd else (d, fd)
    return (t_best, f_best) if f_best < df[k] else (float(ts[k]), float(df[k]))


class _Duty(NamedTuple):
    """The duty every type is sized for (SI, absolute pressures)."""

    oil_volume: float
    p_min: float
    p_max: float
    T_min: float
    T_max: float
    process: Process
    model: str
    ps: float | None
    charge: str
    step: float | None = None


def _fractions(p_min: float, p_max: float, p0_ref: float, T, ctx: _Duty) -> tuple:
    """Oil fractions at p_min and p_max and gas temperatures there [K], broadcast over T.

    Slow charge: the gas is charged at rest to p_max at T (the isotherm), then discharged
    along the process (:func:`stowflow.physics.gas.expansion_ratio`), never beyond V0.  Fast
    charge: both pressures on the process from the precharge.
    """
    proc, model = ctx.process, ctx.model
    if ctx.charge == "fast":
        f = oil_fraction(np.array([[p_min], [p_max]]), p0_ref, T, proc, model)
        t = end_temperature(np.array([[p_min], [p_max]]), p0_ref, T, proc, model)
        return f[0], f[1], t[0], t[1]
    T = np.asarray(T, float)
    v_top = np.asarray(gas_volume_ratio(p_max, p0_ref, T, ISOTHERMAL, model), float)
    r = np.asarray(expansion_ratio(p_min, p_max, T, proc, model), float)
    v_low = np.minimum(v_top * r, 1.0)
    rho_low = np.asarray(density(p_max, T, model), float) / r
    t_low = np.asarray(temperature_from_density(rho_low, p_min, model), float)
    return 1.0 - v_low, 1.0 - v_top, t_low, np.broadcast_to(T, v_top.shape)


def _physics(p0_ref: float, ctx: _Duty) -> dict:
    """Fractions, worst temperature and V0 for one precharge (shared by the types)."""
    oil_volume, p_min, p_max, T_min, T_max = ctx[:5]
    model = ctx.model
    ts = _temperature_grid(T_min, T_max, ctx.step)
    fmin, fmax, t_min_gas, t_max_gas = (
        np.atleast_1d(np.asarray(a, float)) for a in _fractions(p_min, p_max, p0_ref, ts, ctx)
    )

    def df_of_T(t):
        f1, f2, _, _ = _fractions(p_min, p_max, p0_ref, t, ctx)
        return float(f2 - f1)

    t_worst, df_worst = _worst(df_of_T, ts, fmax - fmin)
    if not df_worst > 0:
        p0_w = bar_gauge(float(precharge_at(p0_ref, t_worst, model)))
        raise SizingError(
            f"at {kelvin_to_celsius(t_worst):.4g} °C the precharge {p0_w:.4g} bar reaches the "
            "maximum working pressure, so no oil is exchanged; lower the precharge or the top "
            "temperature"
        )
    with np.errstate(divide="ignore"):
        need = np.where(fmax > fmin, oil_volume / (fmax - fmin), np.inf)
    return {
        "temperatures": ts,
        "fraction_at_min": fmin,
        "fraction_at_max": fmax,
        "worst_temperature": float(t_worst),
        "required_gas_volume": float(oil_volume / df_worst),
        "required_at_T": need,
        "precharge_at_T": np.atleast_1d(precharge_at(p0_ref, ts, model)),
        "gas_temperature_at_max": t_max_gas.copy(),
        "gas_temperature_at_min": t_min_gas,
    }


def _size_one(acc_type, p0_ref, by_rule, rules, phys, ctx: _Duty) -> TypeSizing:
    _, p_min, p_max, T_min, T_max = ctx[:5]
    model, ps = ctx.model, ctx.ps
    violations = tuple(
        check_limits(
            acc_type,
            p0_ref,
            p_min,
            p_max,
            T_min,
            T_max,
            rules=rules,
            model=model,
            max_allowable_pressure=ps,
        )
    )
    v0 = phys["required_gas_volume"]
    notes = []
    if acc_type is AccumulatorType.PISTON_BOTTLES:
        exchange = v0 * float(np.max(phys["fraction_at_max"] - phys["fraction_at_min"]))
        notes.append(f"the piston unit's swept volume must be at least {_litre(exchange):.4g} L")
    if rules.residual_oil_fraction > 0:
        notes.append(
            f"shell volume includes {rules.residual_oil_fraction:.0%} residual oil that "
            "never leaves (common practice, no published source)"
        )
    return TypeSizing(
        type=acc_type,
        precharge_ref=float(p0_ref),
        precharge_by_rule=by_rule,
        shell_volume=float(shell_volume(acc_type, v0, rules)),
        violations=violations,
        notes=tuple(notes),
        **phys,
    )


def size_accumulator(
    oil_volume: float,
    p_min: float,
    p_max: float,
    *,
    precharge: float | None = None,
    process: Process | str = "adiabatic",
    model: str = "real",
    T_min: float = T_REF,
    T_max: float | None = None,
    types: list[str] | None = None,
    overrides: dict[str, dict] | None = None,
    max_allowable_pressure: float | None = None,
    charge: str = "slow",
    temperature_step: float | None = None,
) -> SizingResult:
    """Gas volume, precharge and admissible types for one energy-storage duty.

    .. math::
        V_0 = \\max_T \\frac{\\Delta V}{f(p_{max}, T) - f(p_{min}, T)}

    By default (``charge="slow"``) the pump charges the accumulator slowly, so the gas sits at
    p_max at the wall temperature (isothermal), and the machine draws the oil along
    ``process``: the usual duty, and the one ``stowflow design`` models.

    Parameters
    ----------
    oil_volume : float
        Oil volume ΔV to exchange between p_min and p_max, [m³].
    p_min, p_max : float
        Minimum and maximum working pressure, absolute, [Pa].
    precharge : float, optional
        Precharge at 20 °C, absolute, [Pa]; by default each type's rule sets it at the
        hottest temperature.
    process : Process or str
        Gas process of the discharge (``"adiabatic"``: a fast one; ``"isothermal"``,
        ``"polytropic:1.3"``), and of the charge too when ``charge="fast"``.
    model : {"real", "ideal"}
        Gas model.
    T_min : float
        Lowest operating temperature, [K].
    T_max : float, optional
        Highest operating temperature, [K]; default ``T_min``.
    types : list of str, optional
        Types to consider; default all.
    overrides : dict, optional
        Per type, catalogue ``[limits.<type>]`` overrides (see
        :func:`stowflow.physics.accumulator.rules_for`).
    max_allowable_pressure : float, optional
        Vessel PS, absolute, [Pa]: checked, and used for the category hint.
    charge : {"slow", "fast"}
        ``"slow"``: isothermal charge to p_max, then the discharge along ``process``;
        ``"fast"``: both strokes along ``process`` from the precharge (a charge as fast as
        the discharge).
    temperature_step : float, optional
        Step of the per-temperature rows, [K] (default: 21 rows across the range).  The
        worst temperature is refined between the rows either way.

    Returns
    -------
    SizingResult
        Per-type sizing; the governing type is the admissible one with the smallest gas
        volume.

    Raises
    ------
    SizingError
        Impossible input (precharge ≥ p_min, p_max ≤ p_min, ΔV ≤ 0, pressures not above
        ambient, an unknown charge) or no type admissible (the message gives every type's
        reason).
    """
    T_max = T_min if T_max is None else T_max
    if charge not in CHARGES:
        raise SizingError(f"charge '{charge}' is unknown; use one of {', '.join(CHARGES)}")
    _validate(oil_volume, p_min, p_max, precharge, T_min, T_max)
    proc = parse_process(process)
    chosen = [parse_type(t) for t in types] if types else list(AccumulatorType)
    overrides = overrides or {}
    if temperature_step is not None and not temperature_step > 0:
        raise SizingError(f"temperature step must be above 0 K; got {temperature_step:g} K")
    ctx = _Duty(
        oil_volume,
        p_min,
        p_max,
        T_min,
        T_max,
        proc,
        model,
        max_allowable_pressure,
        charge,
        temperature_step,
    )
    cases, cache = [], {}
    for t in chosen:
        rules: TypeRules = rules_for(t, overrides.get(t.value))
        p0_ref = precharge
        if p0_ref is None:
            p0_hot = float(max_precharge_for_min_pressure(t, p_min, rules))
            if not p0_hot > P_AMBIENT:
                raise SizingError(
                    f"{t.value}: the precharge rule leaves no precharge above ambient for a "
                    f"minimum working pressure of {bar_gauge(p_min):g} bar; give a precharge"
                )
            p0_ref = float(reference_precharge(p0_hot, T_max, model))
        if p0_ref not in cache:
            cache[p0_ref] = _physics(p0_ref, ctx)
        cases.append(_size_one(t, p0_ref, precharge is None, rules, cache[p0_ref], ctx))
    admissible = [c for c in cases if c.admissible]
    if not admissible:
        reasons = "; ".join(v.message for c in cases for v in c.violations)
        raise SizingError(f"no accumulator type admits this duty: {reasons}")
    governing = min(admissible, key=lambda c: c.required_gas_volume)
    return SizingResult(
        oil_volume=float(oil_volume),
        p_min=float(p_min),
        p_max=float(p_max),
        T_min=float(T_min),
        T_max=float(T_max),
        process=proc,
        model=model,
        charge=charge,
        precharge=None if precharge is None else float(precharge),
        max_allowable_pressure=max_allowable_pressure,
        cases=tuple(cases),
        governing=governing,
    )
