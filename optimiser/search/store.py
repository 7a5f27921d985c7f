"""The store curve of a bank on the design's quasi-static gas law, and the bank's bounds.

A bank of gas volume ``V0`` holds the oil fraction ``S/V0`` at a pressure: its gas, of the mass
the precharge fixes at 20 °C, is charged at rest to the top of the window
(:func:`top_pressure`) at the wall temperature, then discharged along the problem's process
(:func:`stored_fraction`, inverted by :func:`stored_pressure`).  The gas a refill warmed holds
back oil (:func:`charge_heating`).  :func:`bank_lower` and :func:`bank_upper` give the least and
the most oil a bank may hold, as a fraction of its nominal volume (gas-over-oil keeps its
residual oil), per precharge of a :class:`PrechargeGrid`, at each temperature: the screen
(:mod:`stowflow.search.screen`) and the schedule data (:mod:`stowflow.search.designer`) are
both built on them.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from stowflow.physics import accumulator as acc
from stowflow.physics import gas
from stowflow.search.problem import Problem
from stowflow.search.settings import DesignSettings
from stowflow.units import T_REF

__all__ = [
    "PrechargeGrid",
    "bank_lower",
    "bank_upper",
    "charge_heating",
    "stored_fraction",
    "stored_pressure",
    "top_pressure",
]


def top_pressure(settings: DesignSettings, p_max) -> np.ndarray | float:
    """Where a discharge starts under an unload pressure, absolute, [Pa].

    The pressure switch's load point below ``p_max`` (its differential,
    :meth:`DesignSettings.switch_band`), taken at the low end of its repeatability
    (:meth:`DesignSettings.worst_setting`): a switched pump lets the store drift down to it
    before loading again, so the machine may start drawing there.
    """
    p_max = np.asarray(p_max, float)
    load = settings.worst_setting(p_max - settings.switch_band(p_max))
    # A stated differential wider than a low unload pressure leaves no load point above
    # ambient: such a store holds nothing (the bounds then rule it out).
    return _out(np.maximum(load, settings.p_ambient))


def _out(a: np.ndarray):
    return float(a) if np.ndim(a) == 0 else a


@dataclass(frozen=True)
class PrechargeGrid:
    """Precharges with their gas density and their pressure at each temperature.

    Attributes
    ----------
    p0 : numpy.ndarray
        Precharges at 20 °C, absolute, (P,), [Pa].
    rho : numpy.ndarray
        Gas density at rest, (P,), [kg/m³].
    at : dict
        Temperature [K] -> precharge at that temperature (isochoric), (P,), [Pa].
    """

    p0: np.ndarray
    rho: np.ndarray
    at: dict

    @classmethod
    def of(cls, problem: Problem, p0, temperatures=()) -> PrechargeGrid:
        """The grid for precharges ``p0`` [Pa] at the operating and the given temperatures."""
        if isinstance(p0, cls):
            return p0
        model = problem.settings.gas_model
        p0 = np.atleast_1d(np.asarray(p0, float))
        rho = np.asarray(gas.density(p0, T_REF, model), float)
        temps = {*problem.temperatures, *temperatures}
        return cls(
            p0, rho, {t: np.asarray(gas.pressure_from_density(rho, t, model)) for t in temps}
        )

    def head(self, n: int) -> PrechargeGrid:
        """The first ``n`` precharges."""
        return PrechargeGrid(self.p0[:n], self.rho[:n], {t: v[:n] for t, v in self.at.items()})

    def precharge_at(self, problem: Problem, T: float) -> np.ndarray:
        """Precharge at temperature T, absolute, [Pa]."""
        if T not in self.at:
            self.at[T] = np.asarray(
                gas.pressure_from_density(self.rho, T, problem.settings.gas_model)
            )
        return self.at[T]


def _iso_ratio(p: np.ndarray, rho0: np.ndarray, T: float, model: str) -> np.ndarray:
    """Gas volume over nominal volume on the isotherm T: min(ρ0/ρ(p, T), 1) [-]."""
    u, inv = np.unique(p, return_inverse=True)
    rho = np.asarray(gas.density(u, T, model), float)[inv].reshape(p.shape)
    return np.minimum(rho0 / rho, 1.0)


def stored_fraction(problem: Problem, p, p0, T: float, p_top, rho0=None) -> np.ndarray | float:
    """Oil fraction S/V0 the store holds at pressure p on the design's quasi-static curve.

    The gas, of the mass the precharge ``p0`` (20 °C) fixes, is charged at rest to
    ``p_top`` at the wall temperature T (isothermal: the pump fills slowly), then discharged
    from there along ``problem.process``.  Above ``p_top`` the store follows the isotherm.
    An isothermal process is the isotherm throughout.

    Parameters
    ----------
    problem : Problem
        For the process and the gas model.
    p : array_like
        Absolute pressure, [Pa].
    p0 : array_like
        Precharge at 20 °C, absolute, [Pa].
    T : float
        Wall temperature, [K].
    p_top : array_like
        Where the discharge starts, absolute, [Pa].
    rho0 : array_like, optional
        The gas density at rest of ``p0`` (saves its computation), [kg/m³].

    Returns
    -------
    float or numpy.ndarray
        Oil fraction in [0, 1), broadcast over p, p0 and p_top, [-].
    """
    model = problem.settings.gas_model
    if rho0 is None:
        rho0 = gas.density(p0, T_REF, model)
    p, rho0, p_top = np.broadcast_arrays(*(np.asarray(a, float) for a in (p, rho0, p_top)))
    v = np.array(_iso_ratio(p, rho0, T, model), dtype=float)
    below = p < p_top
    if problem.process.kind != "isothermal" and np.any(below):
        v_top = _iso_ratio(p_top[below], rho0[below], T, model)
        pb, tb = p[below], p_top[below]
        if problem.process.kind == "polytropic" or model == "ideal":
            r = np.asarray(gas.expansion_ratio(pb, tb, T, problem.process, model), float)
        else:  # the real isentrope is costly per point: each distinct pair once
            pairs, inv = np.unique(np.stack((pb, tb), axis=1), axis=0, return_inverse=True)
            r = np.asarray(
                gas.expansion_ratio(pairs[:, 0], pairs[:, 1], T, problem.process, model), float
            )[inv.ravel()]
        v[below] = np.minimum(v_top * r, 1.0)
    return _out(1.0 - v)


def stored_pressure(problem: Problem, frac, p0, T: float, p_top) -> np.ndarray | float:
    """Pressure at the oil fraction ``frac`` (inverse of :func:`stored_fraction`), [Pa]."""
    model = problem.settings.gas_model
    iso = gas.ISOTHERMAL
    if problem.process.kind == "isothermal":
        return gas.pressure_at_oil_fraction(frac, p0, T, iso, model)
    frac, p0, p_top = np.broadcast_arrays(*(np.asarray(a, float) for a in (frac, p0, p_top)))
    v = 1.0 - frac
    v_top = np.asarray(gas.gas_volume_ratio(p_top, p0, T, iso, model), float)
    p = np.asarray(gas.pressure_at_oil_fraction(frac, p0, T, iso, model), float).copy()
    below = v > v_top
    if np.any(below):
        p[below] = gas.pressure_after_expansion(
            v[below] / v_top[below], p_top[below], T, problem.process, model
        )
    return _out(p)


def charge_heating(problem: Problem, p_top, T: float) -> np.ndarray | float:
    """Heating factor :math:`g\\,\\alpha_p T` of the gas at the top of the window, [-].

    Oil pumped into the store heats its gas.  The Otis & Pourmovahed energy equation
    (:func:`stowflow.physics.thermal.temperature_rate`), linearised about the wall temperature,
    gives the gas's excess temperature as a first-order lag of the refill rate r:

    .. math::
        \\frac{d}{dt}\\frac{T - T_w}{T} = -\\frac{1}{\\tau}\\frac{T - T_w}{T}
            + g\\,\\frac{r}{V}, \\qquad g = \\frac{(\\partial p/\\partial T)_v}{\\rho\\, c_v}

    (g = κ − 1 for an ideal gas).  At a given pressure a gas ΔT warmer than at rest fills
    :math:`\\Delta V = V\\alpha_p\\,\\Delta T` more, so its heat counts as oil:

    .. math:: \\Delta V = g\\,(\\alpha_p T)\\, E, \\qquad
        E = \\int r(s)\\, e^{-(t - s)/\\tau}\\, ds

    with E from :func:`stowflow.search.schedule.refill_memory` (τ·q for a steady refill at the
    rate q).  The pump unloads at the unload pressure with the gas still warm; the heat the
    gas loses after that (:func:`stowflow.search.schedule.cooling_loss`) is pressure the store
    lacks.  This function returns :math:`g\\,\\alpha_p T` (κ − 1 for an ideal gas).  Only the
    ``auto`` process carries it (a process that is set is taken as the whole gas law):
    0 otherwise.

    Parameters
    ----------
    problem : Problem
        For the settings (gas model, process).
    p_top : array_like
        Unload pressure, absolute, [Pa].
    T : float
        Wall temperature, [K].

    Returns
    -------
    float or numpy.ndarray
        :math:`g\\,\\alpha_p T`, broadcast over ``p_top``, [-].
    """
    s = problem.settings
    p_top = np.asarray(p_top, float)
    if s.process != "auto":
        return _out(np.zeros(p_top.shape))
    model = s.gas_model
    p, inv = np.unique(p_top, return_inverse=True)
    rho = np.asarray(gas.density(p, T, model), float)
    st = gas.state_from_density(rho, np.full(rho.shape, float(T)), model)
    g = np.asarray(st.dpdT_v) / (rho * np.asarray(st.cv))
    d = 1e-3  # relative temperature step for α_p T = (∂ ln V/∂ ln T)_p
    alpha_t = (rho / np.asarray(gas.density(p, T * (1 + d), model), float) - 1.0) / d
    return _out((g * alpha_t)[inv].reshape(p_top.shape))


def bank_lower(
    problem: Problem,
    acc_type: str,
    p0,
    p_levels: np.ndarray,
    rules,
    temperatures: tuple[float, ...] | None,
    p_max: np.ndarray,
) -> np.ndarray:
    """Least oil fraction of a bank for each required pressure level, at each temperature.

    At temperature ``T`` the precharge, stated at 20 °C, has become ``p0(T)`` (isochoric);
    the store must hold at least the oil that gives each required pressure after a
    discharge from the top of the window (:func:`stored_fraction`, :func:`top_pressure`)
    and at least the oil the type's precharge rule asks for (the working pressure must stay
    above the precharge by the type's margin).  The fraction is of the nominal volume: the
    gas fills only :func:`stowflow.physics.accumulator.gas_share` of it (gas-over-oil keeps
    its residual oil, the rule ``stowflow size`` applies), and the oil counted is the oil the
    bank can give, above that residual.

    Parameters
    ----------
    problem : Problem
        The prepared cycle.
    acc_type : str
        Accumulator type.
    p0 : numpy.ndarray or PrechargeGrid
        Precharges at 20 °C, absolute, shape (P,), [Pa].
    p_levels : numpy.ndarray
        Distinct pressures the store must hold, absolute, shape (K,), [Pa].
    rules : TypeRules
        Rules of the accumulator type.
    temperatures : tuple of float or None
        Temperatures, [K]; None: the coldest and hottest operating temperature.
    p_max : numpy.ndarray
        Unload pressure of each precharge (:func:`bank_upper`), (P,) or, one row per unload
        limit, (A, P), [Pa].

    Returns
    -------
    numpy.ndarray
        (T, P, K), or (T, A, P, K), oil over nominal volume, [-].
    """
    temps = temperatures or problem.temperatures
    grid = PrechargeGrid.of(problem, p0, temps)
    share = acc.gas_share(acc_type, rules)
    top = np.asarray(top_pressure(problem.settings, p_max), float)[..., None]
    lower = np.empty((len(temps), *top.shape[:-1], p_levels.size))
    for i, t_k in enumerate(temps):
        floor = acc.min_working_pressure_for_precharge(
            acc_type, grid.precharge_at(problem, t_k), rules
        )
        need = np.maximum(p_levels[None, :], np.asarray(floor)[:, None])
        lower[i] = share * stored_fraction(
            problem, need, grid.p0[:, None], t_k, top, grid.rho[:, None]
        )
    return lower


def bank_upper(
    problem: Problem,
    acc_type: str,
    p0,
    p_allowed: float,
    p_levels: np.ndarray,
    rules,
    temperatures: tuple[float, ...] | None = None,
    *,
    level: str = "unload",
) -> tuple[np.ndarray, np.ndarray]:
    """Most oil fraction of a bank at its unload pressure (gas at rest), at each temperature.

    Of the nominal volume, like :func:`bank_lower` (the gas fills the type's
    :func:`stowflow.physics.accumulator.gas_share` of it).

    Parameters
    ----------
    problem, acc_type, p0, p_levels, rules, temperatures
        As for :func:`bank_lower`.
    p_allowed : float or numpy.ndarray
        Highest unload pressure the pump, motor, relief and shell allow, absolute, [Pa];
        shape (A,) for several at once.
    level : str
        ``"unload"``: the oil at the unload pressure, the most a schedule may store.
        ``"load"``: the oil at the pressure switch's load point (:func:`top_pressure`), the
        least a switched store is sure to hold when a draw begins: a pressure switch keeps
        the store anywhere between its two settings, so the sizing counts from the lower.

    Returns
    -------
    (upper, p_max)
        ``upper`` (T, P) or (T, A, P), oil over nominal volume [-]; ``p_max`` (P,) or
        (A, P): unload pressure after the type's own limits (the pressure ratio counts at the
        coldest temperature, where the precharge is lowest), [Pa].  Combinations the type
        rules out have ``upper = -inf``.
    """
    s = problem.settings
    temps = temperatures or problem.temperatures
    grid = PrechargeGrid.of(problem, p0, temps)
    p0_cold = grid.precharge_at(problem, s.t_min)
    p_type = acc.max_pressure_for_precharge(acc_type, p0_cold, rules)
    p_max = np.minimum(np.asarray(p_allowed, float)[..., None], p_type)
    if np.ndim(p_allowed) == 0:
        p_max = p_max.reshape(p_type.shape)
    ok = (p_max >= p_levels.max() - 1e-6) & (p_max > p0_cold)
    upper = np.empty((len(temps), *p_max.shape))
    p_full = p_max if level == "unload" else np.asarray(top_pressure(s, p_max), float)
    share = acc.gas_share(acc_type, rules)
    for i, t_k in enumerate(temps):
        frac = share * (1.0 - _iso_ratio(p_full, grid.rho, t_k, s.gas_model))
        upper[i] = np.where(ok, frac, -np.inf)
    return upper, p_max
