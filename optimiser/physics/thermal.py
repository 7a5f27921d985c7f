"""Heat exchange of the gas charge: the thermal time-constant model.

The gas exchanges heat with the shell (wall temperature :math:`T_w`) through one lumped
coefficient; the energy equation of the charge of mass m then reads (Otis & Pourmovahed 1985;
Pourmovahed & Otis 1990)

.. math::
    \\frac{dT}{dt} = \\frac{T_w - T}{\\tau}
        - \\frac{T}{c_v}\\left(\\frac{\\partial p}{\\partial T}\\right)_v \\frac{dv}{dt},
    \\qquad \\tau = \\frac{m\\, c_v}{h\\, A_w},\\qquad v = V/m

and for the ideal gas, with :math:`(\\partial p/\\partial T)_v = R_s/v` and
:math:`c_v = R_s/(\\kappa-1)`,

.. math::
    \\frac{dT}{dt} = \\frac{T_w - T}{\\tau} - (\\kappa - 1)\\, T\\, \\frac{\\dot V}{V}.

τ → ∞ gives the adiabatic (isentropic) process, τ → 0 the isothermal one.  τ is held constant
along a stroke, as in the references.  The simulator integrates :func:`temperature_rate`; the
stowflow uses :func:`effective_polytropic_index` to choose a quasi-static process from the
cycle's time scale.

References
----------
.. [1] D. R. Otis, M. Pourmovahed, "An algorithm for computing nonflow gas processes in gas
   springs and hydropneumatic accumulators", ASME J. Dyn. Syst. Meas. Control 107(1), 93-96
   (1985) (title from memory; no DOI checked).
.. [2] A. Pourmovahed, D. R. Otis, "An experimental thermal time-constant correlation for
   hydraulic accumulators", ASME J. Dyn. Syst. Meas. Control 112(1), 116-121 (1990)
   (no DOI checked).
"""

from __future__ import annotations

import numpy as np
from stowflow.errors import SettingsError, SizingError
from stowflow.physics.gas import KAPPA, density, pressure_from_density, state_from_density
from stowflow.units import T_REF

__all__ = [
    "DEFAULT_TIME_CONSTANT",
    "charge_mass",
    "effective_polytropic_index",
    "gas_pressure",
    "linear_volume_change",
    "temperature_rate",
]

#: Default thermal time constant of the gas charge, [s].  From memory: typical τ for
#: litre-size gas volumes is about 1–10 s (low confidence; an editable default, override it
#: with a measured or correlated value, e.g. Pourmovahed & Otis 1990).
DEFAULT_TIME_CONSTANT: float = 5.0

# Composite Gauss–Legendre rule for the ideal-gas solution (8 panels × 16 nodes).
_GL_X, _GL_W = np.polynomial.legendre.leggauss(16)
_PANELS = 8
#: Beyond this many time constants the relaxation kernel e^(−w) is below 1e-26, [-].
_KERNEL_SPAN = 60.0


def _tau(tau) -> np.ndarray:
    arr = np.asarray(tau, dtype=float)
    if not np.all(arr > 0) or np.any(np.isnan(arr)):
        raise SettingsError(
            "thermal time constant must be > 0 s (use a small value for isothermal, "
            "inf for adiabatic)"
        )
    return arr


def temperature_rate(
    T, V_gas, dV_dt, T_wall, tau, mass, model: str = "real", *, method: str = "table"
):
    """Rate of change of the gas temperature, Otis & Pourmovahed energy equation.

    .. math::
        \\frac{dT}{dt} = \\frac{T_w - T}{\\tau}
            - \\frac{T}{c_v}\\left(\\frac{\\partial p}{\\partial T}\\right)_v
              \\frac{\\dot V}{m}

    Parameters
    ----------
    T : array_like
        Gas temperature, [K].
    V_gas : array_like
        Gas volume, [m³].
    dV_dt : array_like
        Rate of change of the gas volume (negative while charging oil), [m³/s].
    T_wall : array_like
        Wall (ambient) temperature, [K].
    tau : array_like
        Thermal time constant, > 0 (``inf`` for adiabatic), [s].
    mass : array_like
        Gas mass, [kg].
    model : {"real", "ideal"}
        Gas model; the ideal form is :math:`-(\\kappa - 1) T \\dot V / V`.
    method : {"table", "direct"}
        Real-gas properties from the table or from CoolProp directly.

    Returns
    -------
    float or numpy.ndarray
        dT/dt, broadcast over the inputs, [K/s].

    References
    ----------
    Otis & Pourmovahed (1985); Pourmovahed & Otis (1990), see the module docstring.

    Examples
    --------
    The ideal-gas form of the energy equation, checked by hand: gas at 30 °C in a 20 °C shell
    with τ = 5 s relaxes at :math:`(T_w - T)/\\tau` = −2 K/s; an adiabatic (τ = ∞) compression
    of 10 % of the volume per second at 20 °C heats it at
    :math:`(\\kappa - 1)\\, T \\cdot 0.1` = 11.73 K/s (Otis & Pourmovahed 1985).

    >>> import math
    >>> from stowflow.units import T_REF
    >>> print(f"{temperature_rate(T_REF + 10, 1e-3, 0.0, T_REF, 5.0, 0.1, 'ideal'):.2f} K/s")
    -2.00 K/s
    >>> print(f"{temperature_rate(T_REF, 1e-3, -1e-4, T_REF, math.inf, 0.1, 'ideal'):.2f} K/s")
    11.73 K/s
    """
    T = np.asarray(T, dtype=float)
    V_gas = np.asarray(V_gas, dtype=float)
    dV_dt = np.asarray(dV_dt, dtype=float)
    relax = (np.asarray(T_wall, dtype=float) - T) / _tau(tau)
    if model == "ideal":
        rate = relax - (KAPPA - 1.0) * T * dV_dt / V_gas
    else:
        mass = np.asarray(mass, dtype=float)
        st = state_from_density(mass / V_gas, T, model, method=method)
        rate = relax - T / st.cv * st.dpdT_v * dV_dt / mass
    return float(rate) if np.ndim(rate) == 0 else rate


def gas_pressure(mass, V_gas, T, model: str = "real", *, method: str = "table"):
    """Gas pressure from mass, volume and temperature, :math:`p = p(m/V, T)`.

    Parameters
    ----------
    mass : array_like
        Gas mass, [kg].
    V_gas : array_like
        Gas volume, [m³].
    T : array_like
        Gas temperature, [K].
    model : {"real", "ideal"}
        Gas model.
    method : {"table", "direct"}
        Real-gas properties from the table or from CoolProp directly.

    Returns
    -------
    float or numpy.ndarray
        Absolute pressure, [Pa].

    Examples
    --------
    1.14842 kg of nitrogen in 10 L at 20 °C (114.842 kg/m³) is at 100 bar absolute
    (CoolProp 8.0.0, Span et al. 2000):

    >>> from stowflow.units import BAR, LITRE, T_REF
    >>> print(f"{gas_pressure(1.14842, 10 * LITRE, T_REF) / BAR:.2f} bar")
    100.00 bar
    """
    rho = np.asarray(mass, dtype=float) / np.asarray(V_gas, dtype=float)
    return pressure_from_density(rho, T, model, method=method)


def charge_mass(p0_ref, V0, model: str = "real", *, method: str = "table"):
    """Nitrogen mass of a charge: precharge p0_ref at 20 °C in the nominal volume V0.

    .. math:: m = \\rho(p_{0,ref}, 293.15\\ \\mathrm{K})\\, V_0

    Parameters
    ----------
    p0_ref : array_like
        Precharge at 20 °C, absolute, [Pa].
    V0 : array_like
        Nominal gas volume, [m³].
    model : {"real", "ideal"}
        Gas model.
    method : {"table", "direct"}
        Real-gas properties from the table or from CoolProp directly.

    Returns
    -------
    float or numpy.ndarray
        Gas mass, [kg].

    Examples
    --------
    A 10 L charge at 100 bar absolute and 20 °C holds 1.148 kg of nitrogen
    (ρ = 114.842 kg/m³, CoolProp 8.0.0, Span et al. 2000):

    >>> from stowflow.units import BAR, LITRE
    >>> print(f"{charge_mass(100 * BAR, 10 * LITRE):.3f} kg")
    1.148 kg
    """
    return density(p0_ref, T_REF, model, method=method) * np.asarray(V0, dtype=float)


def _ideal_temperature_ratio(r, vr, theta0):
    """Ideal gas, linear volume change: T_end/T_w for duration/τ = r and V1/V2 = vr.

    Exact solution of the linear ODE with the integrating factor
    :math:`e^{rt}(V/V_1)^{\\kappa-1}` (t scaled by the duration):

    .. math::
        \\theta(1) = \\frac{\\theta_0 e^{-r} + \\int_0^r e^{-w}\\, q(1 - w/r)\\, dw}{q(1)},
        \\qquad q(t) = (V(t)/V_1)^{\\kappa - 1}

    The integral is evaluated with a composite Gauss–Legendre rule.
    """
    r, vr, theta0 = np.broadcast_arrays(r, vr, theta0)
    span = np.minimum(r, _KERNEL_SPAN)[..., None]
    edges = np.linspace(0.0, 1.0, _PANELS + 1)
    nodes = ((edges[:-1, None] + edges[1:, None]) / 2 + (_GL_X / 2)[None, :] / _PANELS).ravel()
    weights = np.tile(_GL_W / (2 * _PANELS), _PANELS)
    w = span * nodes  # (..., K) in [0, span]
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(r[..., None] > 0, 1.0 - w / r[..., None], 1.0)
    v_rel = 1.0 + (1.0 / vr[..., None] - 1.0) * t  # V(t)/V1
    q = v_rel ** (KAPPA - 1.0)
    integral = (np.exp(-w) * q * weights).sum(-1) * span[..., 0]
    q1 = (1.0 / vr) ** (KAPPA - 1.0)
    return (theta0 * np.exp(-r) + integral) / q1


def linear_volume_change(
    duration,
    tau,
    V1,
    V2,
    mass,
    T_start,
    model: str = "ideal",
    *,
    T_wall=None,
    method: str = "table",
    steps: int | None = None,
) -> tuple:
    """Gas temperature and pressure after a volume change at constant rate from V1 to V2.

    Integrates :func:`temperature_rate` over :math:`V(t) = V_1 + (V_2 - V_1)\\,t/\\Delta t`.
    Ideal gas: exact solution by quadrature (vectorised).  Real gas: scipy's stiff Radau
    integrator per element (rtol 1e-10).

    Parameters
    ----------
    duration : array_like
        Duration of the stroke, > 0, [s].
    tau : array_like
        Thermal time constant, > 0 (``inf``: adiabatic), [s].
    V1, V2 : array_like
        Gas volume at start and end, > 0, [m³].
    mass : array_like
        Gas mass, [kg].
    T_start : array_like
        Gas temperature at the start, [K].
    model : {"ideal", "real"}
        Gas model.
    T_wall : array_like, optional
        Wall temperature, [K]; default ``T_start``.
    method : {"table", "direct"}
        Real-gas properties from the table or from CoolProp directly.
    steps : int, optional
        Real gas: integrate with this many classical Runge–Kutta steps (vectorised, without
        scipy) instead of Radau; 32 steps give the effective index within 1e-7 of Radau for
        durations of 0.1–16 τ (tests/physics/test_thermal.py).

    Returns
    -------
    tuple of (float or numpy.ndarray)
        Gas temperature [K] and absolute pressure [Pa] at the end.

    Examples
    --------
    In the adiabatic limit (τ = ∞) the real gas expanding from 200 bar absolute at 20 °C to
    1.464 times its volume follows the isentrope to 100 bar and 239.4 K (CoolProp 8.0.0, Span
    et al. 2000; 1.464 is given to 3 decimals, so 0.1 bar and 0.1 K here); the ideal gas
    halved in volume ends at :math:`T\\, 2^{\\kappa - 1}` = 386.8 K (Çengel & Boles 2015,
    isentropic relations).

    >>> import math
    >>> from stowflow.physics.gas import density
    >>> from stowflow.units import BAR, T_REF
    >>> rho1 = density(200 * BAR, T_REF)
    >>> T2, p2 = linear_volume_change(1.0, math.inf, 1.0, 1.464, rho1, T_REF, "real")
    >>> print(f"{T2:.1f} K, {p2 / BAR:.1f} bar")
    239.4 K, 100.0 bar
    >>> T2, _ = linear_volume_change(1.0, math.inf, 1.0, 0.5, 1.0, T_REF, "ideal")
    >>> print(f"{T2:.1f} K")
    386.8 K
    """
    tau = _tau(tau)
    duration = np.asarray(duration, dtype=float)
    if not np.all(duration > 0):
        raise SizingError("stroke duration must be > 0 s")
    V1, V2, mass, T_start = (np.asarray(a, dtype=float) for a in (V1, V2, mass, T_start))
    T_wall = T_start if T_wall is None else np.asarray(T_wall, dtype=float)
    if model == "ideal":
        theta = _ideal_temperature_ratio(duration / tau, V1 / V2, T_start / T_wall)
        T_end = theta * T_wall
    else:
        args = (duration, tau, V1, V2, mass, T_start, T_wall, method)
        T_end = _real_linear_rk4(*args, steps) if steps else _real_linear(*args)
    p_end = gas_pressure(mass, V2, T_end, model, method=method)
    return (float(T_end) if np.ndim(T_end) == 0 else T_end), p_end


def _real_linear_rk4(duration, tau, V1, V2, mass, T_start, T_wall, method, steps):
    """:func:`_real_linear` with ``steps`` classical Runge–Kutta steps, all elements at once."""
    duration, tau, V1, V2, mass, T, T_wall = np.broadcast_arrays(
        duration, tau, V1, V2, mass, T_start, T_wall
    )
    h = duration / steps
    rate = (V2 - V1) / duration

    def f(t, T):
        return temperature_rate(T, V1 + rate * t, rate, T_wall, tau, mass, "real", method=method)

    T, t = T.astype(float), np.zeros(duration.shape)
    for _ in range(int(steps)):
        k1 = f(t, T)
        k2 = f(t + h / 2, T + h / 2 * k1)
        k3 = f(t + h / 2, T + h / 2 * k2)
        k4 = f(t + h, T + h * k3)
        T = T + h / 6 * (k1 + 2 * k2 + 2 * k3 + k4)
        t = t + h
    return T


def _real_linear(duration, tau, V1, V2, mass, T_start, T_wall, method):
    from scipy.integrate import solve_ivp

    b = np.broadcast_arrays(duration, tau, V1, V2, mass, T_start, T_wall)
    out = np.empty(b[0].shape)
    for idx in np.ndindex(out.shape):
        dur, ta, v1, v2, m, t0, tw = (float(a[idx]) for a in b)
        rate = (v2 - v1) / dur

        def rhs(t, y, v1=v1, rate=rate, tw=tw, ta=ta, m=m):
            return [temperature_rate(y[0], v1 + rate * t, rate, tw, ta, m, "real", method=method)]

        sol = solve_ivp(rhs, (0.0, dur), [t0], method="Radau", rtol=1e-10, atol=1e-9)
        if not sol.success:  # pragma: no cover - Radau does not fail on this smooth ODE
            raise SizingError(f"thermal integration failed: {sol.message}")
        out[idx] = sol.y[0, -1]
    return out


def effective_polytropic_index(
    duration,
    tau,
    volume_ratio,
    model: str = "ideal",
    *,
    p_start=None,
    T_start=T_REF,
    T_wall=None,
    method: str = "table",
    steps: int | None = None,
):
    """Polytropic index that a linear stroke of given duration actually follows.

    Integrates the energy equation for a volume change at constant rate from V1 to
    V2 = V1/volume_ratio and returns

    .. math:: n_{eff} = \\frac{\\ln(p_2/p_1)}{\\ln(V_1/V_2)}

    which tends to κ (ideal gas) for duration ≪ τ and to 1 for duration ≫ τ.

    Parameters
    ----------
    duration : array_like
        Duration of the compression or expansion, [s].
    tau : array_like
        Thermal time constant, [s] (see :data:`DEFAULT_TIME_CONSTANT`).
    volume_ratio : array_like
        V1/V2: > 1 for a compression (charging), < 1 for an expansion, ≠ 1, [-].
    model : {"ideal", "real"}
        Gas model.  The ideal-gas result depends on duration/τ and V1/V2 only.
    p_start : float, optional
        Absolute pressure at the start, [Pa]; required for the real gas.
    T_start : float
        Gas temperature at the start, [K].
    T_wall : float, optional
        Wall temperature, [K]; default ``T_start``.
    method : {"table", "direct"}
        Real-gas properties from the table or from CoolProp directly.
    steps : int, optional
        Real gas: fixed Runge–Kutta steps instead of Radau (see :func:`linear_volume_change`).

    Returns
    -------
    float or numpy.ndarray
        Effective polytropic index, [-].

    Examples
    --------
    The limits of the model (Otis & Pourmovahed 1985): a stroke short against τ follows the
    adiabatic :math:`\\kappa` = 1.4, a long one Boyle's law, n = 1.  In between, halving the
    gas volume in one time constant gives n = 1.274 (our own value, a regression example).

    >>> import math
    >>> print(f"{effective_polytropic_index(1.0, math.inf, 2.0):.3f}")
    1.400
    >>> print(f"{effective_polytropic_index(1e4, 1e-4, 2.0):.3f}")
    1.000
    >>> print(f"{effective_polytropic_index(5.0, 5.0, 2.0):.3f}")
    1.274
    """
    vr = np.asarray(volume_ratio, dtype=float)
    if not np.all((vr > 0) & (vr != 1.0)):
        raise SizingError("volume ratio V1/V2 must be > 0 and not 1")
    if model == "ideal":
        rho1 = 1.0  # the ideal-gas answer does not depend on the density
        p1 = None
    else:
        if p_start is None:
            raise SettingsError("the real-gas effective index needs p_start (absolute, Pa)")
        rho1 = density(p_start, T_start, model, method=method)
        p1 = np.asarray(p_start, dtype=float)
    _, p_end = linear_volume_change(
        duration,
        tau,
        1.0,
        1.0 / vr,
        rho1,
        T_start,
        model,
        T_wall=T_wall,
        method=method,
        steps=steps,
    )
    if p1 is None:
        p1 = gas_pressure(rho1, 1.0, T_start, "ideal")
    n = np.log(np.asarray(p_end) / p1) / np.log(vr)
    return float(n) if np.ndim(n) == 0 else n
