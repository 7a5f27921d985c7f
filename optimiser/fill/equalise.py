"""Bottle to accumulator: equalisation settled at ambient, and the warm state right after.

Settled (the valve held open until nothing changes, both at the ambient T): nitrogen is
conserved,

.. math:: \\rho' = \\frac{m_a + m_b}{V_a + V_b}, \\qquad p' = p(\\rho', T)

(ideal gas: :math:`p' = (p_a V_a + p_b V_b)/(V_a + V_b)`).  Right after the flow stops, with
no time for heat exchange, the gas left in the bottle has expanded isentropically and the two
vessels (rigid, adiabatic, no work out) keep their total internal energy:

.. math::
    m_a' u_a' = m_a u_a + m_b u_b - m_b' u(\\rho_b', s_b), \\qquad
    p(\\rho_a', T_a') = p(\\rho_b', T_b')

(well-mixed receiver).  For the ideal gas, U = p V/(κ − 1), so the warm pressure equals the
settled one; for real nitrogen from 200 bar it is lower (the gas cools more on expansion), and
a valve shut at once leaves less gas in the accumulator than waiting does.

References
----------
.. [1] Y. A. Çengel, M. A. Boles, *Thermodynamics: An Engineering Approach*, 8th ed.,
   McGraw-Hill (2015), ISBN 978-0-07-339817-4 (charging and discharging rigid vessels).
.. [2] R. Span et al., J. Phys. Chem. Ref. Data 29(6), 1361-1433 (2000),
   doi:10.1063/1.1349047.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from stowflow.physics.gas import KAPPA, density, pressure_from_density, state_from_density
from stowflow.physics.nitrogen import fields_rhoT, isentrope_T_at_rho
from stowflow.units import bar_gauge, kelvin_to_celsius

__all__ = ["MAX_BOTTLES", "adiabatic_transfer", "bottles_needed", "cascade", "pressure"]

#: Newton iterations for T(ρ, u) stop below this relative step, [-].
_T_TOL = 1e-12
#: Direct cascades stop counting fresh bottles here, [-].
MAX_BOTTLES = 10_000


def pressure(rho: float, T: float, model: str) -> float:
    """Absolute pressure [Pa] of nitrogen at density ρ [kg/m³] and T [K]; 0 for ρ = 0."""
    return float(pressure_from_density(rho, T, model)) if rho > 0 else 0.0


def _temperature_from_energy(rho: float, u: float, T_guess: float, model: str) -> float:
    T = T_guess
    for _ in range(60):
        st = state_from_density(rho, T, model)
        step = (float(st.u) - u) / float(st.cv)
        T -= step
        if abs(step) < _T_TOL * T:
            break
    return T


def _isentrope(rho_from: float, rho_to: float, T: float, model: str) -> float:
    if model == "ideal":
        return T * (rho_to / rho_from) ** (KAPPA - 1.0)
    s = fields_rhoT(np.atleast_1d(rho_from), np.atleast_1d(T), "table", ("s",))[0]
    guess = np.atleast_1d(T * (rho_to / rho_from) ** (KAPPA - 1.0))
    return float(isentrope_T_at_rho(np.atleast_1d(rho_to), s, guess, "table")[0])


def adiabatic_transfer(
    m_a: float, V_a: float, m_b: float, V_b: float, T: float, model: str = "real", dm=None
) -> dict:
    """State right after gas flows from a bottle into a receiver with no time for heat exchange.

    Both start at T.  The gas left in the bottle expands isentropically; the two vessels
    together keep their internal energy:

    .. math:: (m_a + \\Delta m)\\, u_a' = m_a u_a + m_b u_b - (m_b - \\Delta m)\\, u_b'

    Parameters
    ----------
    m_a, V_a : float
        Receiver gas mass [kg] and volume [m³].
    m_b, V_b : float
        Bottle gas mass [kg] and volume [m³].
    T : float
        Starting temperature of both, [K].
    model : {"real", "ideal"}
        Gas model.
    dm : float, optional
        Mass moved, [kg]; default: until the pressures are equal.

    Returns
    -------
    dict
        ``dm`` [kg], receiver ``p_a`` [Pa] and ``T_a`` [K], bottle ``p_b`` [Pa] and
        ``T_b`` [K].
    """
    rho_a, rho_b = m_a / V_a, m_b / V_b
    u_tot = m_a * float(state_from_density(rho_a, T, model).u) + m_b * float(
        state_from_density(rho_b, T, model).u
    )

    def after(x: float) -> dict:
        rb = (m_b - x) / V_b
        tb = _isentrope(rho_b, rb, T, model)
        ma = m_a + x
        ua = (u_tot - (m_b - x) * float(state_from_density(rb, tb, model).u)) / ma
        ta = _temperature_from_energy(ma / V_a, ua, T * (1 + 0.4 * x / ma), model)
        return {
            "dm": x,
            "p_a": pressure(ma / V_a, ta, model),
            "T_a": ta,
            "p_b": pressure(rb, tb, model),
            "T_b": tb,
        }

    if dm is None:
        if not rho_b > rho_a:
            return after(0.0)
        # The warm receiver and the cold bottle meet before the settled split is reached.
        settled = (m_a + m_b) / (V_a + V_b) * V_a - m_a
        from scipy.optimize import brentq  # here: scipy is slow to import and rarely needed

        dm = brentq(lambda x: after(x)["p_a"] - after(x)["p_b"], 0.0, settled, xtol=1e-14 * m_b)
    return after(float(dm))


def cascade(
    V_a: float,
    m_a0: float,
    target_mass: float,
    bottles: int,
    V_b: float,
    p_b: float,
    T: float,
    model: str = "real",
) -> pd.DataFrame:
    """Direct cascade: each fresh bottle alone in turn, settled at T, stopping at the target.

    Parameters
    ----------
    V_a : float
        Gas volume to fill, [m³].
    m_a0 : float
        Nitrogen in it at the start, [kg].
    target_mass : float
        Nitrogen mass of the target precharge, [kg].
    bottles : int
        Number of bottles, [-].
    V_b : float
        Water (gas) volume of one bottle, [m³].
    p_b : float
        Bottle pressure at T, absolute, [Pa].
    T : float
        Ambient temperature during the filling, [K].
    model : {"real", "ideal"}
        Gas model.

    Returns
    -------
    pandas.DataFrame
        One row per bottle used: masses before and after (``…_mass_before [kg]``,
        ``…_mass_after [kg]``), settled pressures (gauge, ``accumulator [bar]``,
        ``bottle_left [bar]``), the warm reading right after the flow stops and what that reads
        once cool if the valve is shut at once (``warm [bar]``, ``warm_temperature [°C]``,
        ``cooled_if_shut_at_once [bar]``), and ``reached`` (bool).
    """
    m_a, m_b0 = float(m_a0), float(density(p_b, T, model)) * V_b
    rows = []
    for k in range(1, bottles + 1):
        if m_a >= target_mass or not m_b0 / V_b > m_a / V_a:
            break
        rho_eq = (m_a + m_b0) / (V_a + V_b)
        reached = rho_eq * V_a >= target_mass
        dm = target_mass - m_a if reached else rho_eq * V_a - m_a
        warm = adiabatic_transfer(m_a, V_a, m_b0, V_b, T, model, dm=None if not reached else dm)
        m_after, b_after = m_a + dm, m_b0 - dm
        rows.append(
            {
                "bottle": k,
                "accumulator_mass_before [kg]": m_a,
                "bottle_mass_before [kg]": m_b0,
                "accumulator_mass_after [kg]": m_after,
                "bottle_mass_after [kg]": b_after,
                "accumulator [bar]": bar_gauge(pressure(m_after / V_a, T, model)),
                "bottle_left [bar]": bar_gauge(pressure(b_after / V_b, T, model)),
                "warm [bar]": bar_gauge(warm["p_a"]),
                "warm_temperature [°C]": float(kelvin_to_celsius(warm["T_a"])),
                "cooled_if_shut_at_once [bar]": bar_gauge(
                    pressure((m_a + warm["dm"]) / V_a, T, model)
                ),
                "reached": bool(reached),
            }
        )
        m_a = m_after
    return pd.DataFrame(rows)


def bottles_needed(
    V_a: float,
    m_a0: float,
    target_mass: float,
    V_b: float,
    p_b: float,
    T: float,
    model: str = "real",
) -> int | None:
    """Fresh bottles a direct cascade needs to reach the target; None when it never can.

    Parameters
    ----------
    V_a, m_a0, target_mass, V_b, p_b, T, model
        As in :func:`cascade` ([m³], [kg], [kg], [m³], [Pa], [K]).

    Returns
    -------
    int or None
        Number of bottles, [-]; 0 when the target is held already; None when the bottle
        pressure does not exceed the target at T, or more than :data:`MAX_BOTTLES` are needed.
    """
    rho_b, rho_t = float(density(p_b, T, model)), target_mass / V_a
    if m_a0 >= target_mass:
        return 0
    if not rho_b > rho_t:
        return None
    m_a, m_b = float(m_a0), rho_b * V_b
    for k in range(1, MAX_BOTTLES + 1):
        m_a = (m_a + m_b) / (V_a + V_b) * V_a
        if m_a >= target_mass:
            return k
    return None
