"""Nitrogen in the accumulator: ideal and real gas, precharge temperature, p–V maps.

Conventions: pressures are **absolute** [Pa], temperatures [K], volumes [m³].  The precharge
``p0_ref`` is stated at :data:`stowflow.units.T_REF` = 293.15 K (20 °C) with no oil in the
accumulator; the gas volume then is the nominal volume V0.  The mass of nitrogen is fixed by
that state.

Two gas models:

* ``"ideal"``: :math:`p = \\rho R_s T` with :math:`\\kappa = 1.4`;
* ``"real"``: the Span et al. (2000) reference equation of state (CoolProp fluid
  ``"Nitrogen"``), read from a precomputed table (:mod:`stowflow.physics.nitrogen`) so that no
  CoolProp import is needed on the fast path.  Points outside the table domain (p 0.4–700 bar,
  T 180–900 K, ρ ≤ 700 kg/m³) are computed with CoolProp directly; ``method="direct"`` forces
  that everywhere.

Three processes (:class:`Process`): isothermal at T, adiabatic (for the real gas: isentropic on
the real equation of state; for the ideal gas :math:`pV^\\kappa` = const) and polytropic
:math:`pV^n` = const.  The quasi-static map starts at the precharge state at the operating
temperature, :math:`(p_0(T), T, V_0)`, where :math:`p_0(T)` follows the isochore through
:math:`(p_{0,ref}, T_{ref})`.

References
----------
.. [1] R. Span, E. W. Lemmon, R. T. Jacobsen, W. Wagner, A. Yokozeki, "A reference equation of
   state for the thermodynamic properties of nitrogen for temperatures from 63.151 to 1000 K
   and pressures to 2200 MPa", J. Phys. Chem. Ref. Data 29(6), 1361-1433 (2000),
   doi:10.1063/1.1349047.
.. [2] Y. A. Çengel, M. A. Boles, *Thermodynamics: An Engineering Approach*, 8th ed.,
   McGraw-Hill (2015), ISBN 978-0-07-339817-4 (ideal-gas, isentropic and polytropic relations).
.. [3] E. Tiesinga, P. J. Mohr, D. B. Newell, B. N. Taylor, "CODATA recommended values of the
   fundamental physical constants: 2018", Rev. Mod. Phys. 93, 025010 (2021),
   doi:10.1103/RevModPhys.93.025010 (R = 8.314462618 J/(mol·K)).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal, NamedTuple

import numpy as np
from stowflow.errors import SettingsError, SizingError
from stowflow.physics.nitrogen import (
    KAPPA,
    MOLAR_MASS,
    R_SPECIFIC,
    R_UNIVERSAL,
    fields_rhoT,
    isentrope_T_at_p,
    isentrope_T_at_rho,
    z_pT,
)
from stowflow.units import T_REF

__all__ = [
    "ADIABATIC",
    "GAS_MODELS",
    "ISOTHERMAL",
    "KAPPA",
    "MOLAR_MASS",
    "PROCESS_KINDS",
    "R_SPECIFIC",
    "R_UNIVERSAL",
    "GasState",
    "Process",
    "compressibility",
    "density",
    "end_temperature",
    "expansion_ratio",
    "gas_volume_ratio",
    "oil_fraction",
    "parse_process",
    "precharge_at",
    "pressure_after_expansion",
    "pressure_at_oil_fraction",
    "pressure_from_density",
    "reference_precharge",
    "state_from_density",
    "temperature_from_density",
]

GasModel = Literal["ideal", "real"]
Method = Literal["table", "direct"]

#: The gas models, [-].
GAS_MODELS: tuple[str, ...] = ("ideal", "real")
#: The process kinds, [-].
PROCESS_KINDS: tuple[str, ...] = ("isothermal", "adiabatic", "polytropic")
#: Accepted range of a polytropic index.  n < 1 would need heat added during a compression;
#: n > 3 is far above nitrogen's isentropic exponent anywhere in accumulator service.
_N_RANGE = (1.0, 3.0)
#: Fixed-point iterations stop when the relative step is below this, [-].
_NEWTON_TOL = 1e-12
_NEWTON_MAX = 40


@dataclass(frozen=True)
class Process:
    """A quasi-static gas process.

    Attributes
    ----------
    kind : str
        ``"isothermal"``, ``"adiabatic"`` or ``"polytropic"``.
    n : float
        Polytropic index, [-]: 1 for isothermal, :data:`KAPPA` for adiabatic (ideal gas; the
        real gas follows its isentrope instead), the given n for polytropic.
    """

    kind: str
    n: float = float("nan")

    def __post_init__(self) -> None:
        if self.kind not in PROCESS_KINDS:
            raise SettingsError(
                f"process '{self.kind}' is unknown; use isothermal, adiabatic or polytropic:N"
            )
        n = {"isothermal": 1.0, "adiabatic": KAPPA}.get(self.kind, self.n)
        if self.kind != "polytropic" and not (np.isnan(self.n) or self.n == n):
            raise SettingsError(
                f"a {self.kind} process has n = {n:g}; for n = {self.n:g} use polytropic:{self.n:g}"
            )
        if not (_N_RANGE[0] <= n <= _N_RANGE[1]):
            raise SettingsError(
                f"polytropic index n = {n:g} is outside {_N_RANGE[0]:g}…{_N_RANGE[1]:g} "
                "(n < 1 needs heat added while compressing)"
            )
        object.__setattr__(self, "n", float(n))

    def __str__(self) -> str:
        return f"polytropic:{self.n:g}" if self.kind == "polytropic" else self.kind


#: Isothermal process (Boyle), n = 1.
ISOTHERMAL = Process("isothermal")
#: Adiabatic process: isentropic (real gas) or n = κ (ideal gas).
ADIABATIC = Process("adiabatic")


def parse_process(text: str | Process) -> Process:
    """Read ``"isothermal"``, ``"adiabatic"`` (alias ``"isentropic"``) or ``"polytropic:1.3"``.

    Parameters
    ----------
    text : str or Process
        The process; a :class:`Process` is returned unchanged.

    Returns
    -------
    Process
        The parsed process.

    Raises
    ------
    SettingsError
        Unknown kind, missing or bad index.

    Examples
    --------
    The project's own spelling of a process (regression example, no published source):

    >>> parse_process("polytropic:1.3").n
    1.3
    >>> str(parse_process("isentropic"))
    'adiabatic'
    """
    if isinstance(text, Process):
        return text
    word = str(text).strip().lower()
    if word == "isentropic":
        word = "adiabatic"
    kind, sep, rest = word.partition(":")
    if kind == "polytropic":
        if not sep or not rest.strip():
            raise SettingsError("polytropic needs its index, e.g. polytropic:1.3")
        try:
            n = float(rest)
        except ValueError:
            raise SettingsError(f"polytropic index '{rest}' is not a number") from None
        return Process("polytropic", n)
    if sep:
        raise SettingsError(f"process '{text}': only polytropic takes an index (polytropic:1.3)")
    return Process(kind)


class GasState(NamedTuple):
    """Thermodynamic state of nitrogen at given density and temperature (arrays).

    Attributes
    ----------
    p : numpy.ndarray
        Pressure, [Pa].
    cv : numpy.ndarray
        Isochoric specific heat capacity, [J/(kg·K)].
    dpdT_v : numpy.ndarray
        :math:`(\\partial p/\\partial T)_v`, [Pa/K].
    u : numpy.ndarray
        Specific internal energy, [J/kg] (real gas: CoolProp's reference state for nitrogen;
        ideal gas: :math:`c_v T`, zero at 0 K).
    """

    p: np.ndarray
    cv: np.ndarray
    dpdT_v: np.ndarray
    u: np.ndarray


# --------------------------------------------------------------------------- validation
def _model(model: str) -> str:
    if model not in GAS_MODELS:
        raise SettingsError(f"gas model '{model}' is unknown; use ideal or real")
    return model


def _positive(name: str, value, unit: str) -> np.ndarray:
    arr = np.asarray(value, dtype=float)
    if not np.all(arr > 0) or not np.all(np.isfinite(arr)):
        bad = arr[~((arr > 0) & np.isfinite(arr))].ravel()[0]
        raise SizingError(f"{name} must be a finite value > 0 {unit} (absolute); got {bad:g}")
    return arr


def _out(arr: np.ndarray):
    """Return a Python float for 0-d results, else the array."""
    return float(arr) if np.ndim(arr) == 0 else arr


# --------------------------------------------------------------------------- state functions
def compressibility(p, T, model: GasModel = "real", *, method: Method = "table"):
    """Compressibility factor :math:`Z = p/(\\rho R_s T)`.

    Parameters
    ----------
    p : array_like
        Absolute pressure, [Pa].
    T : array_like
        Temperature, [K].
    model : {"real", "ideal"}
        Gas model; the ideal gas has Z = 1.
    method : {"table", "direct"}
        Tabulated fast path or direct CoolProp calls.

    Returns
    -------
    float or numpy.ndarray
        Z with :math:`R_s` = :data:`R_SPECIFIC`, [-].

    Examples
    --------
    Nitrogen at 100 bar absolute and 20 °C: CoolProp 8.0.0 (Span et al. 2000) gives
    Z = 1.0008; the ideal gas has Z = 1.

    >>> from stowflow.units import BAR, T_REF
    >>> print(f"{compressibility(100 * BAR, T_REF):.4f}")
    1.0008
    >>> compressibility(100 * BAR, T_REF, "ideal")
    1.0
    """
    p, T = _positive("pressure", p, "Pa"), _positive("temperature", T, "K")
    if _model(model) == "ideal":
        return _out(np.ones(np.broadcast(p, T).shape))
    return _out(z_pT(p, T, method))


def density(p, T, model: GasModel = "real", *, method: Method = "table"):
    """Density of nitrogen.

    .. math:: \\rho = \\frac{p}{Z(p, T)\\, R_s\\, T}

    Parameters
    ----------
    p : array_like
        Absolute pressure, [Pa].
    T : array_like
        Temperature, [K].
    model : {"real", "ideal"}
        Gas model.
    method : {"table", "direct"}
        Tabulated fast path or direct CoolProp calls.

    Returns
    -------
    float or numpy.ndarray
        Density, broadcast over p and T, [kg/m³].

    Notes
    -----
    Table accuracy, 0.5–500 bar and −40…150 °C: better than 1e-6 relative (see
    tests/benchmarks/bench_gas.py).

    Examples
    --------
    Nitrogen at 100 bar absolute and 20 °C: 114.842 kg/m³ by CoolProp 8.0.0 (Span et al.
    2000), shown here to the table's accuracy; the ideal-gas law :math:`p/(R_s T)` (Çengel &
    Boles 2015) gives 114.93 kg/m³.

    >>> from stowflow.units import BAR, T_REF
    >>> print(f"{density(100 * BAR, T_REF):.2f} kg/m³")
    114.84 kg/m³
    >>> print(f"{density(100 * BAR, T_REF, 'ideal'):.2f} kg/m³")
    114.93 kg/m³
    """
    p, T = _positive("pressure", p, "Pa"), _positive("temperature", T, "K")
    z = 1.0 if _model(model) == "ideal" else z_pT(p, T, method)
    return _out(p / (z * R_SPECIFIC * T))


def state_from_density(rho, T, model: GasModel = "real", *, method: Method = "table") -> GasState:
    """Pressure, :math:`c_v`, :math:`(\\partial p/\\partial T)_v` and u at (ρ, T).

    The simulator integrates the gas temperature with these (see :mod:`stowflow.physics.thermal`).
    Ideal gas: :math:`p = \\rho R_s T`, :math:`c_v = R_s/(\\kappa - 1)`,
    :math:`(\\partial p/\\partial T)_v = \\rho R_s`, :math:`u = c_v T`.

    Parameters
    ----------
    rho : array_like
        Density, [kg/m³].
    T : array_like
        Temperature, [K].
    model : {"real", "ideal"}
        Gas model.
    method : {"table", "direct"}
        Tabulated fast path or direct CoolProp calls.

    Returns
    -------
    GasState
        p [Pa], cv [J/(kg·K)], dpdT_v [Pa/K], u [J/kg], each broadcast over rho and T.

    Examples
    --------
    At 114.842 kg/m³ and 20 °C, CoolProp 8.0.0 (Span et al. 2000) gives p = 100.00 bar
    absolute and :math:`c_v` = 765.98 J/(kg·K):

    >>> from stowflow.units import BAR, T_REF
    >>> st = state_from_density(114.842, T_REF)
    >>> print(f"{float(st.p) / BAR:.2f} bar, {float(st.cv):.1f} J/(kg·K)")
    100.00 bar, 766.0 J/(kg·K)
    """
    rho, T = _positive("density", rho, "kg/m³"), _positive("temperature", T, "K")
    rho, T = np.broadcast_arrays(rho, T)
    if _model(model) == "ideal":
        cv = R_SPECIFIC / (KAPPA - 1.0)
        return GasState(rho * R_SPECIFIC * T, np.full(rho.shape, cv), rho * R_SPECIFIC, cv * T)
    z, cv, ratio, u = fields_rhoT(rho, T, method, ("Z", "cv", "dpdT_ratio", "u"))
    return GasState(z * rho * R_SPECIFIC * T, cv, ratio * rho * R_SPECIFIC, u)


def pressure_from_density(rho, T, model: GasModel = "real", *, method: Method = "table"):
    """Pressure from density and temperature, :math:`p = Z(\\rho, T)\\,\\rho R_s T`.

    Parameters
    ----------
    rho : array_like
        Density, [kg/m³].
    T : array_like
        Temperature, [K].
    model : {"real", "ideal"}
        Gas model.
    method : {"table", "direct"}
        Tabulated fast path or direct CoolProp calls.

    Returns
    -------
    float or numpy.ndarray
        Absolute pressure, [Pa].

    Examples
    --------
    114.842 kg/m³ at 20 °C is 100.00 bar absolute (CoolProp 8.0.0, Span et al. 2000):

    >>> from stowflow.units import BAR, T_REF
    >>> print(f"{pressure_from_density(114.842, T_REF) / BAR:.2f} bar")
    100.00 bar
    """
    rho, T = _positive("density", rho, "kg/m³"), _positive("temperature", T, "K")
    if _model(model) == "ideal":
        return _out(rho * R_SPECIFIC * T)
    return _out(fields_rhoT(rho, T, method, ("Z",))[0] * rho * R_SPECIFIC * T)


def temperature_from_density(rho, p, model: GasModel = "real", *, method: Method = "table"):
    """Temperature at which nitrogen of density ρ has pressure p (inverse of the EOS).

    Newton iteration on :math:`\\ln T` with :math:`(\\partial p/\\partial T)_v > 0`.

    Parameters
    ----------
    rho : array_like
        Density, [kg/m³].
    p : array_like
        Absolute pressure, [Pa].
    model : {"real", "ideal"}
        Gas model.
    method : {"table", "direct"}
        Tabulated fast path or direct CoolProp calls.

    Returns
    -------
    float or numpy.ndarray
        Temperature, [K].

    Examples
    --------
    114.842 kg/m³ at 100 bar absolute is at 20 °C (CoolProp 8.0.0, Span et al. 2000):

    >>> from stowflow.units import BAR
    >>> print(f"{temperature_from_density(114.842, 100 * BAR):.2f} K")
    293.15 K
    """
    rho, p = _positive("density", rho, "kg/m³"), _positive("pressure", p, "Pa")
    rho, p = np.broadcast_arrays(rho, p)
    T = p / (rho * R_SPECIFIC)
    if _model(model) == "ideal":
        return _out(T)
    for _ in range(_NEWTON_MAX):
        z, ratio = fields_rhoT(rho, T, method, ("Z", "dpdT_ratio"))
        step = (z * T - p / (rho * R_SPECIFIC)) / (ratio * T)  # Δ ln T
        T = T * np.exp(-step)
        if np.all(np.abs(step) < _NEWTON_TOL):
            break
    return _out(T)


def precharge_at(p0_ref, T, model: GasModel = "real", *, method: Method = "table"):
    """Precharge pressure at temperature T, isochoric from :math:`(p_{0,ref}, T_{ref})`.

    .. math::
        p_0(T) = p(\\rho_0, T), \\quad \\rho_0 = \\rho(p_{0,ref}, T_{ref});
        \\qquad \\text{ideal: } p_0(T) = p_{0,ref}\\, T / T_{ref}

    Parameters
    ----------
    p0_ref : array_like
        Precharge at 20 °C (293.15 K), absolute, [Pa].
    T : array_like
        Temperature, [K].
    model : {"real", "ideal"}
        Gas model.
    method : {"table", "direct"}
        Tabulated fast path or direct CoolProp calls.

    Returns
    -------
    float or numpy.ndarray
        Absolute precharge pressure at T, [Pa].

    Examples
    --------
    A precharge of 100 bar absolute at 20 °C reads 112.58 bar at 50 °C on the real-gas
    isochore (CoolProp 8.0.0, Span et al. 2000) and 110.23 bar for the ideal gas,
    :math:`p\\,T/T_{ref}` (Gay-Lussac's law; Çengel & Boles 2015):

    >>> from stowflow.units import BAR, ZERO_CELSIUS
    >>> print(f"{precharge_at(100 * BAR, ZERO_CELSIUS + 50) / BAR:.2f} bar")
    112.58 bar
    >>> print(f"{precharge_at(100 * BAR, ZERO_CELSIUS + 50, 'ideal') / BAR:.2f} bar")
    110.23 bar
    """
    p0_ref, T = _positive("precharge", p0_ref, "Pa"), _positive("temperature", T, "K")
    if _model(model) == "ideal":
        return _out(p0_ref * T / T_REF)
    rho0 = density(p0_ref, T_REF, model, method=method)
    return pressure_from_density(rho0, T, model, method=method)


def reference_precharge(p0_at_T, T, model: GasModel = "real", *, method: Method = "table"):
    """Precharge at 20 °C that gives ``p0_at_T`` at temperature T (inverse of precharge_at).

    Parameters
    ----------
    p0_at_T : array_like
        Absolute precharge pressure wanted at T, [Pa].
    T : array_like
        Temperature, [K].
    model : {"real", "ideal"}
        Gas model.
    method : {"table", "direct"}
        Tabulated fast path or direct CoolProp calls.

    Returns
    -------
    float or numpy.ndarray
        Absolute precharge at 293.15 K, [Pa].

    Notes
    -----
    The real-gas value is refined by fixed-point iteration on :func:`precharge_at`, so the
    two functions are inverse to rounding, not only to table accuracy.

    Examples
    --------
    A precharge that reads 91.58 bar absolute at 0 °C is 100 bar at 20 °C (CoolProp 8.0.0,
    Span et al. 2000; 91.58 bar is given to 0.01 bar, so 0.1 bar here):

    >>> from stowflow.units import BAR, ZERO_CELSIUS
    >>> print(f"{reference_precharge(91.58 * BAR, ZERO_CELSIUS) / BAR:.1f} bar")
    100.0 bar
    """
    target = _positive("precharge", p0_at_T, "Pa")
    rho0 = density(target, T, model, method=method)
    p0_ref = np.asarray(pressure_from_density(rho0, T_REF, model, method=method), dtype=float)
    if model == "real":  # make it the exact inverse of precharge_at (same table path)
        for _ in range(_NEWTON_MAX):
            step = target / np.asarray(precharge_at(p0_ref, T, model, method=method))
            p0_ref = p0_ref * step
            if np.all(np.abs(step - 1.0) < _NEWTON_TOL):
                break
    return _out(p0_ref)


# --------------------------------------------------------------------------- the p–V map
_MAP_PARAMETERS = """p0_ref : array_like
        Precharge at 20 °C, absolute, [Pa].
    T : array_like
        Operating temperature, the gas temperature before compression, [K].
    process : Process or str
        Gas process, e.g. ``"isothermal"``, ``"adiabatic"``, ``"polytropic:1.3"``.
    model : {"real", "ideal"}
        Gas model.
    method : {"table", "direct"}
        Tabulated fast path or direct CoolProp calls.
"""


def _map_doc(func):
    """Fill the parameters that every p–V map function shares into its docstring."""
    if func.__doc__:  # None under python -OO
        func.__doc__ = func.__doc__.replace("<map parameters>\n", _MAP_PARAMETERS)
    return func


def _map(p, p0_ref, T, process, model, method, want_T=False):
    """Volume ratio V/V0 [-] and (if wanted) gas temperature [K] after compressing to p."""
    proc = parse_process(process)
    _model(model)
    p = _positive("pressure", p, "Pa")
    p0_ref = _positive("precharge", p0_ref, "Pa")
    T = _positive("temperature", T, "K")
    p, p0_ref, T = (a.copy() for a in np.broadcast_arrays(p, p0_ref, T))
    p0T = np.asarray(precharge_at(p0_ref, T, model, method=method), dtype=float)
    ratio = np.ones(p.shape)
    t_end = T.copy()
    m = p > p0T
    if not m.any():
        return ratio, t_end
    pm, p0m, Tm = p[m], p0T[m], T[m]
    ideal_ratio = p0m / pm
    if proc.kind == "polytropic" or model == "ideal":
        ratio[m] = ideal_ratio ** (1.0 / proc.n)
        if model == "ideal":
            t_end[m] = Tm * (pm / p0m) ** ((proc.n - 1.0) / proc.n)
        elif want_T:  # p·V^n = const on the real EOS: T from (rho, p)
            rho2 = density(p0_ref[m], T_REF, "real", method=method) / ratio[m]
            t_end[m] = temperature_from_density(rho2, pm, "real", method=method)
        return ratio, t_end
    rho0 = np.asarray(density(p0_ref[m], T_REF, "real", method=method), dtype=float)
    if proc.kind == "isothermal":
        ratio[m] = rho0 / density(pm, Tm, "real", method=method)
        return ratio, t_end
    s0 = fields_rhoT(rho0, Tm, method, ("s",))[0]
    T2 = isentrope_T_at_p(pm, s0, Tm * (pm / p0m) ** ((KAPPA - 1) / KAPPA), method)
    ratio[m] = rho0 / density(pm, T2, "real", method=method)
    t_end[m] = T2
    return ratio, t_end


@_map_doc
def gas_volume_ratio(
    p,
    p0_ref,
    T,
    process: Process | str = ISOTHERMAL,
    model: GasModel = "real",
    *,
    method: Method = "table",
):
    """Gas volume over nominal volume, V/V0, after charging the accumulator to pressure p.

    The gas starts at :math:`(p_0(T), T, V_0)` (precharge mass fixed at 20 °C, isochoric to T)
    and follows the process:

    .. math::
        \\frac{V}{V_0} = \\frac{\\rho_0}{\\rho(p, T_2)}, \\qquad
        T_2 = \\begin{cases} T & \\text{isothermal} \\\\
        T: s(p, T_2) = s(\\rho_0, T) & \\text{adiabatic, real gas}\\end{cases}

    and :math:`V/V_0 = (p_0(T)/p)^{1/n}` for the polytropic process and for every ideal-gas
    process (n = 1 isothermal, n = κ adiabatic).  For :math:`p \\le p_0(T)` no oil is stored
    and the ratio is 1.

    Parameters
    ----------
    p : array_like
        Absolute gas (= oil) pressure, [Pa].
    <map parameters>

    Returns
    -------
    float or numpy.ndarray
        V/V0, broadcast over p, p0_ref and T, in (0, 1], [-].

    Notes
    -----
    Real-gas polytropic means :math:`pV^n` = const starting at the real-gas precharge
    :math:`p_0(T)`; only the isentrope uses the real equation of state along the path.

    Examples
    --------
    Isentropic compression from a 90 bar absolute precharge at 20 °C to 200 bar: the real gas
    keeps 0.6195 of its volume (CoolProp 8.0.0, Span et al. 2000), the ideal gas
    :math:`(p_0/p)^{1/\\kappa}` = 0.5653 (Çengel & Boles 2015, isentropic relations), and
    Boyle's law gives 90/200 = 0.45:

    >>> from stowflow.units import BAR, T_REF
    >>> print(f"{gas_volume_ratio(200 * BAR, 90 * BAR, T_REF, 'adiabatic'):.4f}")
    0.6195
    >>> print(f"{gas_volume_ratio(200 * BAR, 90 * BAR, T_REF, 'adiabatic', 'ideal'):.4f}")
    0.5653
    >>> print(f"{gas_volume_ratio(200 * BAR, 90 * BAR, T_REF, 'isothermal', 'ideal'):.4f}")
    0.4500
    """
    return _out(_map(p, p0_ref, T, process, model, method)[0])


@_map_doc
def oil_fraction(
    p,
    p0_ref,
    T,
    process: Process | str = ISOTHERMAL,
    model: GasModel = "real",
    *,
    method: Method = "table",
):
    """Stored oil volume over nominal volume, :math:`S/V_0 = 1 - V/V_0`.

    Parameters
    ----------
    p : array_like
        Absolute pressure, [Pa].
    <map parameters>

    Returns
    -------
    float or numpy.ndarray
        Oil fraction in [0, 1), [-].

    Examples
    --------
    The car-crusher accumulator of A. Esposito, *Fluid Power with Applications*, 7th ed.,
    Pearson (2009), accumulator chapter (inputs and result from memory): precharge 1200 psia,
    working pressures 1800 and 3000 psia, 2827 in³ of oil, Boyle's law → 45.9 US gal of gas.

    >>> from stowflow.units import T_REF, si_factor
    >>> psi = si_factor("psi", "pressure")
    >>> f1, f2 = (oil_fraction(p * psi, 1200 * psi, T_REF, "isothermal", "ideal")
    ...           for p in (1800, 3000))
    >>> v0 = 2827 * si_factor("in3", "volume") / (f2 - f1)
    >>> print(f"{v0 / si_factor('gal', 'volume'):.1f} US gal")
    45.9 US gal
    """
    return _out(1.0 - _map(p, p0_ref, T, process, model, method)[0])


@_map_doc
def end_temperature(
    p,
    p0_ref,
    T,
    process: Process | str = ISOTHERMAL,
    model: GasModel = "real",
    *,
    method: Method = "table",
):
    """Gas temperature after the quasi-static compression from :math:`(p_0(T), T)` to p.

    Isothermal: T.  Ideal gas and polytropic: :math:`T (p/p_0)^{(n-1)/n}` (ideal) or the real
    EOS at :math:`(\\rho, p)` (real polytropic).  Real adiabatic: the isentrope.

    Parameters
    ----------
    p : array_like
        Absolute pressure, [Pa].
    <map parameters>

    Returns
    -------
    float or numpy.ndarray
        Gas temperature, [K] (T itself where p ≤ p0(T)).

    Examples
    --------
    Isentropic compression from 90 to 200 bar absolute, starting at 20 °C, ends at 370.6 K for
    the real gas (CoolProp 8.0.0, Span et al. 2000) and at
    :math:`T (p/p_0)^{(\\kappa-1)/\\kappa}` = 368.3 K for the ideal gas (Çengel & Boles 2015,
    isentropic relations):

    >>> from stowflow.units import BAR, T_REF
    >>> print(f"{end_temperature(200 * BAR, 90 * BAR, T_REF, 'adiabatic'):.1f} K")
    370.6 K
    >>> print(f"{end_temperature(200 * BAR, 90 * BAR, T_REF, 'adiabatic', 'ideal'):.1f} K")
    368.3 K
    """
    return _out(_map(p, p0_ref, T, process, model, method, want_T=True)[1])


@_map_doc
def pressure_at_oil_fraction(
    s,
    p0_ref,
    T,
    process: Process | str = ISOTHERMAL,
    model: GasModel = "real",
    *,
    method: Method = "table",
):
    """Pressure at which the accumulator holds the oil fraction s (inverse of oil_fraction).

    .. math::
        \\rho = \\frac{\\rho_0}{1 - s}, \\qquad p = p(\\rho, T_2), \\qquad
        \\text{polytropic / ideal: } p = p_0(T)\\,(1 - s)^{-n}

    Parameters
    ----------
    s : array_like
        Oil fraction S/V0 in [0, 1), [-].
    <map parameters>

    Returns
    -------
    float or numpy.ndarray
        Absolute pressure, [Pa]; :math:`p_0(T)` at s = 0.

    Examples
    --------
    The inverse of the isentrope of :func:`gas_volume_ratio`: with 1 − 0.6195 of the volume
    filled with oil the gas is at 200 bar absolute (CoolProp 8.0.0, Span et al. 2000; 0.6195
    is given to 4 decimals, so 0.1 bar here).  Boyle's law: 90 bar/(1 − 0.55) = 200 bar.

    >>> from stowflow.units import BAR, T_REF
    >>> p = pressure_at_oil_fraction(1 - 0.6195, 90 * BAR, T_REF, "adiabatic")
    >>> print(f"{p / BAR:.1f} bar")
    200.0 bar
    >>> p = pressure_at_oil_fraction(0.55, 90 * BAR, T_REF, "isothermal", "ideal")
    >>> print(f"{p / BAR:.1f} bar")
    200.0 bar
    """
    proc = parse_process(process)
    _model(model)
    s = np.asarray(s, dtype=float)
    if not np.all((s >= 0) & (s < 1)):
        bad = s[~((s >= 0) & (s < 1))].ravel()[0]
        raise SizingError(f"oil fraction must be in [0, 1); got {bad:g}")
    p0_ref = _positive("precharge", p0_ref, "Pa")
    T = _positive("temperature", T, "K")
    s, p0_ref, T = np.broadcast_arrays(s, p0_ref, T)
    r = 1.0 - s
    if proc.kind == "polytropic" or model == "ideal":
        return _out(precharge_at(p0_ref, T, model, method=method) * r ** (-proc.n))
    rho0 = np.asarray(density(p0_ref, T_REF, "real", method=method), dtype=float)
    rho = rho0 / r
    if proc.kind == "isothermal":
        return pressure_from_density(rho, T, "real", method=method)
    s0 = fields_rhoT(rho0, T, method, ("s",))[0]
    T2 = isentrope_T_at_rho(rho, s0, T * r ** (1.0 - KAPPA), method)
    return pressure_from_density(rho, T2, "real", method=method)


def expansion_ratio(
    p,
    p_start,
    T_start,
    process: Process | str = ISOTHERMAL,
    model: GasModel = "real",
    *,
    method: Method = "table",
):
    """Gas volume over its start volume, :math:`V/V_s`, after a quasi-static change from a
    gas at rest, :math:`(p_s, T_s)`, to pressure p (an expansion for p < p_s).

    This is the discharge of a charged accumulator: the gas sits at the wall temperature at
    the top of its window and the machine draws oil from it.

    .. math::
        \\frac{V}{V_s} = \\Big(\\frac{p_s}{p}\\Big)^{1/n}
        \\quad\\text{(polytropic; every ideal-gas process)}, \\qquad
        \\frac{V}{V_s} = \\frac{\\rho(p_s, T_s)}{\\rho(p, T_2)}
        \\quad\\text{(real gas: } T_2 = T_s \\text{ isothermal, isentrope adiabatic)}

    Parameters
    ----------
    p : array_like
        Absolute pressure after the change, [Pa].
    p_start : array_like
        Absolute pressure of the gas at rest, [Pa].
    T_start : array_like
        Its temperature, [K].
    process : Process or str
        The process the change follows.
    model : {"real", "ideal"}
        Gas model.
    method : {"table", "direct"}
        Tabulated fast path or direct CoolProp calls.

    Returns
    -------
    float or numpy.ndarray
        :math:`V/V_s` (> 1 for an expansion), broadcast over the inputs, [-].

    Examples
    --------
    Isentropic expansion from 200 to 100 bar absolute of a gas at rest at 20 °C: the real gas
    grows 1.464-fold (CoolProp 8.0.0, Span et al. 2000), the ideal gas
    :math:`2^{1/\\kappa}` = 1.641-fold (Çengel & Boles 2015, isentropic relations):

    >>> from stowflow.units import BAR, T_REF
    >>> print(f"{expansion_ratio(100 * BAR, 200 * BAR, T_REF, 'adiabatic'):.3f}")
    1.464
    >>> print(f"{expansion_ratio(100 * BAR, 200 * BAR, T_REF, 'adiabatic', 'ideal'):.3f}")
    1.641
    """
    proc = parse_process(process)
    _model(model)
    p = _positive("pressure", p, "Pa")
    p_s = _positive("start pressure", p_start, "Pa")
    T_s = _positive("temperature", T_start, "K")
    p, p_s, T_s = np.broadcast_arrays(p, p_s, T_s)
    if proc.kind == "polytropic" or model == "ideal":
        return _out((p_s / p) ** (1.0 / proc.n))
    rho_s = np.asarray(density(p_s, T_s, "real", method=method), dtype=float)
    if proc.kind == "isothermal":
        return _out(rho_s / np.asarray(density(p, T_s, "real", method=method), dtype=float))
    s0 = fields_rhoT(rho_s, T_s, method, ("s",))[0]
    T2 = isentrope_T_at_p(p, s0, T_s * (p / p_s) ** ((KAPPA - 1) / KAPPA), method)
    return _out(rho_s / np.asarray(density(p, T2, "real", method=method), dtype=float))


def pressure_after_expansion(
    ratio,
    p_start,
    T_start,
    process: Process | str = ISOTHERMAL,
    model: GasModel = "real",
    *,
    method: Method = "table",
):
    """Pressure at the volume ratio :math:`V/V_s` (inverse of :func:`expansion_ratio`).

    Parameters
    ----------
    ratio : array_like
        :math:`V/V_s`, > 0, [-].
    p_start, T_start, process, model, method
        As for :func:`expansion_ratio`.

    Returns
    -------
    float or numpy.ndarray
        Absolute pressure, [Pa].

    Examples
    --------
    The inverse of :func:`expansion_ratio`'s example: at 1.464 times its start volume the real
    gas is at 100 bar absolute (CoolProp 8.0.0, Span et al. 2000; 1.464 is given to 3
    decimals, so 0.1 bar here).  Boyle's law halves the pressure when the volume doubles.

    >>> from stowflow.units import BAR, T_REF
    >>> p = pressure_after_expansion(1.464, 200 * BAR, T_REF, "adiabatic")
    >>> print(f"{p / BAR:.1f} bar")
    100.0 bar
    >>> p = pressure_after_expansion(2.0, 200 * BAR, T_REF, "isothermal", "ideal")
    >>> print(f"{p / BAR:.1f} bar")
    100.0 bar
    """
    proc = parse_process(process)
    _model(model)
    r = _positive("volume ratio", ratio, "-")
    p_s = _positive("start pressure", p_start, "Pa")
    T_s = _positive("temperature", T_start, "K")
    r, p_s, T_s = np.broadcast_arrays(r, p_s, T_s)
    if proc.kind == "polytropic" or model == "ideal":
        return _out(p_s * r ** (-proc.n))
    rho = np.asarray(density(p_s, T_s, "real", method=method), dtype=float) / r
    if proc.kind == "isothermal":
        return pressure_from_density(rho, T_s, "real", method=method)
    s0 = fields_rhoT(rho * r, T_s, method, ("s",))[0]
    T2 = isentrope_T_at_rho(rho, s0, T_s * r ** (1.0 - KAPPA), method)
    return pressure_from_density(rho, T2, "real", method=method)
