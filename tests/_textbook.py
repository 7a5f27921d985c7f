"""Reference physics for the tests, written from the textbooks and sharing no code with stowflow.

Every function here is what a reader would write from the source named beside it: nitrogen
straight from CoolProp's PropsSI (sources.COOLPROP on sources.SPAN_2000) or the ideal-gas law
with κ = 1.4 (sources.CENGEL_BOLES_2015), and the right-hand side of the thermal
time-constant energy equation of sources.OTIS_POURMOVAHED_1985.  Nothing is imported from
stowflow, so a test that compares the code with these functions compares two independent
calculations.  SI units throughout (Pa absolute, K, m³, kg).
"""

from __future__ import annotations

import functools

from CoolProp.CoolProp import PropsSI

__all__ = [
    "GAMMA",
    "R_N2",
    "T_20C",
    "density",
    "heating_factor",
    "isentrope_density",
    "otis_pourmovahed_rate",
    "pressure",
]

#: Specific gas constant of nitrogen, [J/(kg·K)]: R = 8.314462618 J/(mol·K) (sources.CODATA_2018)
#: over M = 28.01348 g/mol (the molar mass of sources.SPAN_2000).
R_N2 = 8.314462618 / 28.01348e-3
#: Ratio of specific heats of a diatomic ideal gas, [-] (sources.CENGEL_BOLES_2015).
GAMMA = 1.4
#: 20 °C, the temperature a precharge is stated at, [K].
T_20C = 293.15

_FLUID = "Nitrogen"


@functools.lru_cache(maxsize=200_000)
def _props(out: str, a: str, x: float, b: str, y: float) -> float:
    """One PropsSI call, remembered (the references call the same states many times)."""
    return PropsSI(out, a, x, b, y, _FLUID)


def density(p: float, T: float, model: str = "real") -> float:
    """ρ(p, T) of nitrogen, [kg/m³]: CoolProp, or p/(R T) for the ideal gas."""
    if model == "ideal":
        return p / (R_N2 * T)
    return _props("Dmass", "P", float(p), "T", float(T))


def pressure(rho: float, T: float, model: str = "real") -> float:
    """p(ρ, T) of nitrogen, [Pa]: CoolProp, or ρ R T for the ideal gas."""
    if model == "ideal":
        return rho * R_N2 * T
    return _props("P", "Dmass", float(rho), "T", float(T))


def isentrope_density(p: float, p_start: float, T_start: float, model: str = "real") -> float:
    """Density at p on the isentrope through (p_start, T_start), [kg/m³].

    Real gas: the state at p with the entropy of the start (CoolProp).  Ideal gas: p·V^γ
    constant, ρ = ρ_start (p/p_start)^(1/γ) (sources.CENGEL_BOLES_2015).
    """
    if model == "ideal":
        return density(p_start, T_start, "ideal") * (p / p_start) ** (1.0 / GAMMA)
    s = _props("Smass", "P", float(p_start), "T", float(T_start))
    return _props("Dmass", "P", float(p), "Smass", s)


def heating_factor(p: float, T: float, model: str = "real") -> float:
    """g·α_p·T at (p, T), [-]: how much the refill's heat swells the gas (γ − 1 for the ideal gas).

    g = (∂p/∂T)_v / (ρ c_v) is the factor of the energy equation (sources.OTIS_POURMOVAHED_1985)
    and α_p = (1/v)(∂v/∂T)_p the isobaric expansion coefficient, both from CoolProp.
    """
    if model == "ideal":
        return GAMMA - 1.0
    rho = density(p, T)
    dpdt = _props("d(P)/d(T)|Dmass", "P", float(p), "T", float(T))
    cv = _props("Cvmass", "P", float(p), "T", float(T))
    alpha = _props("ISOBARIC_EXPANSION_COEFFICIENT", "P", float(p), "T", float(T))
    return dpdt / (rho * cv) * alpha * T


def otis_pourmovahed_rate(
    T: float, V: float, dVdt: float, T_wall: float, tau: float, mass: float, model: str = "real"
) -> float:
    """dT/dt of the gas, [K/s], from the energy equation of sources.OTIS_POURMOVAHED_1985.

    .. math:: \\frac{dT}{dt} = \\frac{T_w - T}{\\tau}
        - \\frac{T}{c_v}\\left(\\frac{\\partial p}{\\partial T}\\right)_v \\frac{dv}{dt}

    with v = V/m.  Ideal gas: :math:`(T_w - T)/\\tau - (\\gamma - 1)\\,T\\,\\dot V/V`.
    """
    relax = (T_wall - T) / tau
    if model == "ideal":
        return relax - (GAMMA - 1.0) * T * dVdt / V
    rho = mass / V
    # Direct calls: an ODE solver asks for a new state at every evaluation.
    dpdt = PropsSI("d(P)/d(T)|Dmass", "T", T, "Dmass", rho, _FLUID)
    cv = PropsSI("Cvmass", "T", T, "Dmass", rho, _FLUID)
    return relax - T / cv * dpdt * dVdt / mass
