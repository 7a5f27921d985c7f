"""Nitrogen property table: built once with CoolProp, evaluated with numpy alone.

Why a table
-----------
``import CoolProp`` alone takes about 2.7 s here, and one CoolProp call costs a few µs; the
stowflow evaluates the pressure ↔ gas-volume map for thousands of candidates at once.  So the
real-gas properties of nitrogen (Span et al. 2000 reference equation of state, as implemented
in CoolProp, fluid ``"Nitrogen"``) are sampled once on two regular grids and stored in
``optimiser/data/nitrogen_span2000.npz``.  At run time only numpy is needed.

The grids and their smooth variables
------------------------------------
* ``pT`` grid, axes :math:`x = \\ln p` and :math:`y = \\ln T`: compressibility factor
  :math:`Z = p/(\\rho R_s T)` and specific entropy :math:`s`.
* ``rhoT`` grid, axes :math:`x = \\rho` and :math:`y = \\ln T`: :math:`Z`, :math:`c_v`,
  :math:`(\\partial p/\\partial T)_v/(\\rho R_s)` (1 for an ideal gas), specific internal energy
  :math:`u` and :math:`s + R_s \\ln(\\rho/\\rho_1)` (finite as :math:`\\rho \\to 0`).

:math:`R_s` here is always :data:`R_SPECIFIC` (CODATA 2018 R over the nitrogen molar mass), so
the stored :math:`Z` is a smooth variable of our own: it differs from CoolProp's own Z by the
ratio of the two gas constants (about 6e-6).  Entropy and internal energy carry CoolProp's
default reference state for nitrogen.

Each variable is interpolated with a tensor-product cubic B-spline on the uniform grid
(interpolating, natural end conditions, a few nodes of margin beyond the advertised domain so
that the end conditions do not spoil it).  Only the B-spline coefficients are stored: as many
numbers as grid nodes plus two per axis.

Regenerate with ``python -m stowflow.physics.nitrogen`` (needs CoolProp; takes about a minute).  The
file records the CoolProp version, git revision and the grids it was built with.

References
----------
.. [1] R. Span, E. W. Lemmon, R. T. Jacobsen, W. Wagner, A. Yokozeki, "A reference equation of
   state for the thermodynamic properties of nitrogen for temperatures from 63.151 to 1000 K
   and pressures to 2200 MPa", J. Phys. Chem. Ref. Data 29(6), 1361-1433 (2000),
   doi:10.1063/1.1349047.
.. [2] I. H. Bell, J. Wronski, S. Quoilin, V. Lemort, "Pure and pseudo-pure fluid thermophysical
   property evaluation and the open-source thermophysical property library CoolProp",
   Ind. Eng. Chem. Res. 53(6), 2498-2508 (2014), doi:10.1021/ie4033999.
.. [3] C. de Boor, *A Practical Guide to Splines*, revised ed., Springer (2001),
   ISBN 978-0-387-95366-3 (uniform cubic B-splines).
"""

from __future__ import annotations

import atexit
import functools
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from stowflow.errors import SizingError
from stowflow.units import BAR

__all__ = [
    "KAPPA",
    "MOLAR_MASS",
    "R_SPECIFIC",
    "R_UNIVERSAL",
    "TABLE_PATH",
    "Grid2D",
    "N2Table",
    "build_table",
    "direct",
    "fields_rhoT",
    "fit_bspline",
    "isentrope_T_at_p",
    "isentrope_T_at_rho",
    "load_table",
    "z_pT",
]

#: Molar mass of nitrogen N₂, [kg/mol] (Span et al. 2000, Table 2).
MOLAR_MASS: float = 28.01348e-3
#: Molar gas constant, [J/(mol·K)] (CODATA 2018, exact in the 2019 SI).
R_UNIVERSAL: float = 8.314462618
#: Specific gas constant of nitrogen, [J/(kg·K)].
R_SPECIFIC: float = R_UNIVERSAL / MOLAR_MASS
#: Ratio of specific heats of the ideal diatomic gas, c_p/c_v = 7/5, [-] (kinetic theory with
#: rotational degrees of freedom; N₂ ideal-gas c_p/c_v is 1.400 near 300 K).
KAPPA: float = 1.4

#: Newton iterations on ln T stop when the step is below this, [-].
_NEWTON_TOL = 1e-12
_NEWTON_MAX = 40

#: Where the generated table lives (committed with the package).
TABLE_PATH: Path = Path(__file__).parent / "data" / "nitrogen_span2000.npz"

# The grids: (name, x axis, y axis).  Limits are the *advertised* domain; MARGIN extra nodes are
# sampled beyond each end (except at rho = 0, which is a natural boundary of the rhoT grid).
MARGIN = 4
GRID_PT = {
    "x": ("ln_p", np.log(0.4 * BAR), np.log(700 * BAR), 0.15),  # ln(p / Pa)
    "y": ("ln_T", np.log(180.0), np.log(900.0), 0.035),  # ln(T / K)
    "fields": ("Z", "s"),
}
GRID_RHOT = {
    "x": ("rho", 0.0, 700.0, 15),  # kg/m³
    "y": ("ln_T", np.log(180.0), np.log(900.0), 0.035),
    "fields": ("Z", "cv", "dpdT_ratio", "u", "s_res"),
}


# --------------------------------------------------------------------------- spline kernel
@dataclass(frozen=True)
class Grid2D:
    """Tensor-product uniform cubic B-splines of several fields on one regular grid.

    Attributes
    ----------
    x0, hx : float
        First node and spacing of the x axis (nodes x0 + i·hx, i = 0 … nx−1), [axis unit].
    y0, hy : float
        Same for the y axis, [axis unit].
    shape : tuple[int, int]
        Number of coefficients per axis, (nx + 2, ny + 2), [-].
    coef : dict[str, numpy.ndarray]
        Flattened coefficients of each field, length (nx + 2)·(ny + 2), [field unit].
    """

    x0: float
    hx: float
    y0: float
    hy: float
    shape: tuple[int, int]
    coef: dict

    def evaluate(self, x, y, names: tuple[str, ...], *, with_dy: bool = False) -> dict:
        """Values of the fields ``names`` at broadcast points (x, y), optionally also ∂/∂y.

        Points outside the node range are extrapolated with the end cell's polynomial; callers
        check the advertised domain first.

        Parameters
        ----------
        x, y : array_like
            Coordinates, [axis units].
        names : tuple of str
            Fields to evaluate.
        with_dy : bool
            Also return ``name + "_dy"``, the derivative along y, [field unit / y unit].

        Returns
        -------
        dict[str, numpy.ndarray]
            One array per field (and derivative), with the broadcast shape of x and y.
        """
        x, y = np.broadcast_arrays(np.asarray(x, dtype=float), np.asarray(y, dtype=float))
        shape = x.shape
        i, tx = _cell((x.ravel() - self.x0) / self.hx, self.shape[0] - 2)
        j, ty = _cell((y.ravel() - self.y0) / self.hy, self.shape[1] - 2)
        stride = self.shape[1]
        offs = (np.arange(4)[:, None] * stride + np.arange(4)[None, :]).ravel()
        idx = (i * stride + j)[:, None] + offs
        wx = _bspline_weights(tx)
        weights = {"": np.einsum("na,nb->nab", wx, _bspline_weights(ty)).reshape(-1, 16)}
        if with_dy:
            dwy = _bspline_weights(ty, derivative=True) / self.hy
            weights["_dy"] = np.einsum("na,nb->nab", wx, dwy).reshape(-1, 16)
        out = {}
        for name in names:
            vals = np.take(self.coef[name], idx)
            for suffix, w in weights.items():
                out[name + suffix] = np.einsum("nk,nk->n", vals, w).reshape(shape)
        return out


def _cell(u: np.ndarray, n: int) -> tuple[np.ndarray, np.ndarray]:
    """Cell index (0 … n−2) and local coordinate t of the scaled coordinate u."""
    i = np.clip(np.floor(u), 0, n - 2).astype(np.intp)
    return i, u - i


def _bspline_weights(t: np.ndarray, derivative: bool = False) -> np.ndarray:
    """The four uniform cubic B-spline weights (or their derivatives d/dt) at t, shape (N, 4)."""
    w = np.empty((t.size, 4))
    t2 = t * t
    if derivative:
        w[:, 0] = -((1.0 - t) ** 2) / 2
        w[:, 1] = (3 * t2 - 4 * t) / 2
        w[:, 2] = (-3 * t2 + 2 * t + 1) / 2
        w[:, 3] = t2 / 2
    else:
        t3 = t2 * t
        w[:, 0] = (1.0 - t) ** 3 / 6
        w[:, 1] = (3 * t3 - 6 * t2 + 4) / 6
        w[:, 2] = (-3 * t3 + 3 * t2 + 3 * t + 1) / 6
        w[:, 3] = t3 / 6
    return w


def _collocation_inverse(n: int) -> np.ndarray:
    """Matrix mapping node values (n) to B-spline coefficients (n + 2), not-a-knot ends.

    Not-a-knot: the third derivative is continuous across the second and the second-to-last
    node, which keeps the O(h⁴) accuracy up to the ends (de Boor 2001, ch. IV).
    """
    a = np.zeros((n + 2, n + 2))
    a[0, 0:5] = (-1.0, 4.0, -6.0, 4.0, -1.0)
    for k in range(n):
        a[k + 1, k : k + 3] = (1 / 6, 4 / 6, 1 / 6)
    a[n + 1, n - 3 : n + 2] = (-1.0, 4.0, -6.0, 4.0, -1.0)
    return np.linalg.inv(a)[:, 1 : n + 1]


def fit_bspline(values: np.ndarray) -> np.ndarray:
    """Coefficients (nx + 2, ny + 2) of the interpolating cubic B-spline through node values.

    Parameters
    ----------
    values : numpy.ndarray
        Values at the nodes of a regular grid, shape (nx, ny), nx, ny ≥ 4, [field unit].

    Returns
    -------
    numpy.ndarray
        Tensor-product B-spline coefficients, shape (nx + 2, ny + 2), [field unit].

    Examples
    --------
    Uniform cubic B-splines sum to one (partition of unity; de Boor 2001, ch. IX), so the
    coefficients of a constant field are that constant:

    >>> import numpy as np
    >>> c = fit_bspline(np.full((6, 5), 2.5))
    >>> c.shape, bool(np.allclose(c, 2.5))
    ((8, 7), True)
    """
    nx, ny = values.shape
    return _collocation_inverse(nx) @ values @ _collocation_inverse(ny).T


# --------------------------------------------------------------------------- the table
@dataclass(frozen=True)
class N2Table:
    """The loaded nitrogen table: one spline per field and the advertised domains.

    Attributes
    ----------
    pT : Grid2D
        Fields on (ln p [ln Pa], ln T [ln K]): ``Z`` [-], ``s`` [J/(kg·K)].
    rhoT : Grid2D
        Fields on (ρ [kg/m³], ln T [ln K]): ``Z`` [-], ``cv`` [J/(kg·K)], ``dpdT_ratio`` [-],
        ``u`` [J/kg], ``s_res`` [J/(kg·K)].
    p_range, T_range, rho_range : tuple[float, float]
        Advertised domain, [Pa], [K], [kg/m³].
    meta : dict[str, str]
        Build information (CoolProp version, grids).
    """

    pT: Grid2D
    rhoT: Grid2D
    p_range: tuple[float, float]
    T_range: tuple[float, float]
    rho_range: tuple[float, float]
    r_eos: float
    meta: dict

    def in_pT(self, p, T) -> np.ndarray:
        """True where (p [Pa], T [K]) lies in the advertised pT domain."""
        return (
            (p >= self.p_range[0])
            & (p <= self.p_range[1])
            & (T >= self.T_range[0])
            & (T <= self.T_range[1])
        )

    def in_rhoT(self, rho, T) -> np.ndarray:
        """True where (ρ [kg/m³], T [K]) lies in the advertised ρT domain."""
        return (
            (rho >= self.rho_range[0])
            & (rho <= self.rho_range[1])
            & (T >= self.T_range[0])
            & (T <= self.T_range[1])
        )


@functools.cache
def load_table(path: str | None = None) -> N2Table | None:
    """Load the table (cached); ``None`` when the file is missing (callers fall back).

    Parameters
    ----------
    path : str, optional
        Table file; default :data:`TABLE_PATH`.

    Returns
    -------
    N2Table or None
        The splines, or None if there is no table file.

    Examples
    --------
    The committed table records the CoolProp release it was built with (regression example,
    the project's own file):

    >>> load_table().meta["coolprop_version"]
    '8.0.0'
    """
    file = Path(path) if path else TABLE_PATH
    if not file.exists():
        return None
    with np.load(file, allow_pickle=False) as data:
        grids = {}
        for grid in ("pT", "rhoT"):
            x0, hx, y0, hy = (float(v) for v in data[f"{grid}_axes"])
            names = str(data[f"{grid}_fields"]).split(",")
            coef = {name: data[f"{grid}_{name}"].astype(float) for name in names}
            shape = next(iter(coef.values())).shape
            coef = {name: c.ravel() for name, c in coef.items()}
            grids[grid] = Grid2D(x0, hx, y0, hy, (int(shape[0]), int(shape[1])), coef)
        dom = data["domain"].astype(float)
        data_r_eos = float(data["R_eos"])
        meta = {k[5:]: str(data[k]) for k in data.files if k.startswith("meta_")}
    return N2Table(
        grids["pT"],
        grids["rhoT"],
        (dom[0], dom[1]),
        (dom[2], dom[3]),
        (dom[4], dom[5]),
        float(data_r_eos),
        meta,
    )


# --------------------------------------------------------------------------- direct CoolProp
@functools.cache
def _abstract_state():
    import CoolProp.CoolProp as CP

    # Let the state go at exit, while CoolProp can still free it (otherwise its bindings
    # report it as leaked when the interpreter skips the last collection: cli.entry).
    atexit.register(_abstract_state.cache_clear)
    return CP, CP.AbstractState("HEOS", "Nitrogen")


def direct(inputs: str, a, b, outputs: tuple[str, ...]) -> tuple[np.ndarray, ...]:
    """Evaluate nitrogen properties with CoolProp directly (slow; tests and fallback).

    Parameters
    ----------
    inputs : str
        ``"PT"`` (p [Pa], T [K]), ``"DT"`` (ρ [kg/m³], T [K]) or ``"PS"`` (p [Pa],
        s [J/(kg·K)]) or ``"DS"`` (ρ [kg/m³], s [J/(kg·K)]).
    a, b : array_like
        The two inputs, broadcast together, [see ``inputs``].
    outputs : tuple of str
        Any of ``"p"`` [Pa], ``"T"`` [K], ``"rho"`` [kg/m³], ``"s"`` [J/(kg·K)],
        ``"u"`` [J/kg], ``"cv"`` [J/(kg·K)], ``"dpdT_v"`` [Pa/K].

    Returns
    -------
    tuple of numpy.ndarray
        One array per output, with the broadcast shape of ``a`` and ``b``.

    Examples
    --------
    Nitrogen at 100 bar absolute and 20 °C: CoolProp 8.0.0 (Span et al. 2000 equation of
    state) gives ρ = 114.842 kg/m³.

    >>> from stowflow.units import BAR, T_REF
    >>> (rho,) = direct("PT", 100 * BAR, T_REF, ("rho",))
    >>> print(f"{float(rho):.3f} kg/m³")
    114.842 kg/m³
    """
    cp_mod, st = _abstract_state()
    pair = {
        "PT": cp_mod.PT_INPUTS,
        "DT": cp_mod.DmassT_INPUTS,
        "PS": cp_mod.PSmass_INPUTS,
        "DS": cp_mod.DmassSmass_INPUTS,
    }[inputs]
    getters = {
        "p": st.p,
        "T": st.T,
        "rho": st.rhomass,
        "s": st.smass,
        "u": st.umass,
        "cv": st.cvmass,
        "dpdT_v": lambda: st.first_partial_deriv(cp_mod.iP, cp_mod.iT, cp_mod.iDmass),
    }
    a, b = np.broadcast_arrays(np.asarray(a, dtype=float), np.asarray(b, dtype=float))
    out = [np.empty(a.shape) for _ in outputs]
    for idx in np.ndindex(a.shape):
        try:
            st.update(pair, a[idx], b[idx])  # CoolProp's order: (p, T), (rho, T), (p, s), (rho, s)
            for k, name in enumerate(outputs):
                out[k][idx] = getters[name]()
        except ValueError:  # CoolProp: a state the equation of state cannot evaluate
            raise SizingError(
                f"nitrogen state outside the range of its equation of state (Span et al. 2000): "
                f"{_state_text(inputs, float(a[idx]), float(b[idx]))}; expected a state of "
                "the gas in an accumulator (check the pressures, volumes and flows)"
            ) from None
    return tuple(out)


def _state_text(inputs: str, a: float, b: float) -> str:
    """A state of :func:`direct`'s inputs in trade units (bar absolute, °C)."""
    first = f"{a / 1e5:.4g} bar absolute" if inputs[0] == "P" else f"{a:.4g} kg/m³"
    second = f"{b - 273.15:.4g} °C" if inputs[1] == "T" else f"entropy {b:.4g} J/(kg·K)"
    return f"{first} at {second}"


# ----------------------------------------------------------------- evaluation with fallback
def z_pT(p: np.ndarray, T: np.ndarray, method: str) -> np.ndarray:
    """Z [-] at (p [Pa], T [K]) from the table; CoolProp directly where outside it.

    Parameters
    ----------
    p : numpy.ndarray
        Absolute pressure, [Pa].
    T : numpy.ndarray
        Temperature, [K].
    method : {"table", "direct"}
        Tabulated fast path or direct CoolProp calls.

    Returns
    -------
    numpy.ndarray
        :math:`Z = p/(\\rho R_s T)` with :math:`R_s` = :data:`R_SPECIFIC`, [-].

    Examples
    --------
    At 100 bar absolute and 20 °C, CoolProp 8.0.0 (Span et al. 2000) gives Z = 1.0008 (its
    own gas constant differs from CODATA 2018 by about 6e-6, below the digits shown):

    >>> import numpy as np
    >>> from stowflow.units import BAR, T_REF
    >>> print(f"{float(z_pT(np.array(100 * BAR), np.array(T_REF), 'table')):.4f}")
    1.0008
    """
    p, T = np.broadcast_arrays(p, T)
    tab = load_table() if method == "table" else None
    if tab is None:
        return p / (direct("PT", p, T, ("rho",))[0] * R_SPECIFIC * T)
    z = tab.pT.evaluate(np.log(p), np.log(T), ("Z",))["Z"]
    out = ~tab.in_pT(p, T)
    if out.any():
        z[out] = p[out] / (direct("PT", p[out], T[out], ("rho",))[0] * R_SPECIFIC * T[out])
    return z


def fields_rhoT(rho: np.ndarray, T: np.ndarray, method: str, fields: tuple[str, ...]):
    """Fields of the (ρ, T) grid: Z [-], cv [J/(kg·K)], dpdT_ratio [-], u [J/kg], s [J/(kg·K)].

    Parameters
    ----------
    rho : numpy.ndarray
        Density, [kg/m³].
    T : numpy.ndarray
        Temperature, [K].
    method : {"table", "direct"}
        Tabulated fast path or direct CoolProp calls.
    fields : tuple of str
        Any of ``"Z"``, ``"cv"``, ``"dpdT_ratio"``, ``"u"``, ``"s"``.

    Returns
    -------
    tuple of numpy.ndarray
        One array per field, with the broadcast shape of ``rho`` and ``T``.

    Examples
    --------
    Isochoric heat capacity at 114.842 kg/m³ and 20 °C (100 bar absolute): CoolProp 8.0.0
    (Span et al. 2000) gives 765.98 J/(kg·K).

    >>> import numpy as np
    >>> from stowflow.units import T_REF
    >>> (cv,) = fields_rhoT(np.array(114.842), np.array(T_REF), "table", ("cv",))
    >>> print(f"{float(cv):.1f} J/(kg·K)")
    766.0 J/(kg·K)
    """
    rho, T = np.broadcast_arrays(rho, T)
    tab = load_table() if method == "table" else None
    res = {}
    inside = np.zeros(rho.shape, bool) if tab is None else tab.in_rhoT(rho, T)
    if tab is not None:
        names = tuple("s_res" if f == "s" else f for f in fields)
        res = tab.rhoT.evaluate(rho, np.log(T), names)
        if "s" in fields:
            res["s"] = res.pop("s_res") - tab.r_eos * np.log(rho)
    else:
        res = {f: np.empty(rho.shape) for f in fields}
    if not inside.all():
        o = ~inside
        names = {"Z": "p", "cv": "cv", "dpdT_ratio": "dpdT_v", "u": "u", "s": "s"}
        vals = direct("DT", rho[o], T[o], tuple(names[f] for f in fields))
        for f, v in zip(fields, vals, strict=True):
            if f == "Z":
                v = v / (rho[o] * R_SPECIFIC * T[o])
            elif f == "dpdT_ratio":
                v = v / (rho[o] * R_SPECIFIC)
            res[f][o] = v
    return tuple(res[f] for f in fields)


def isentrope_T_at_p(p, s0, T_guess, method):
    """Temperature [K] on the isentrope s0 [J/(kg·K)] at pressure p [Pa] (Newton in ln T).

    Parameters
    ----------
    p : array_like
        Absolute pressure, [Pa].
    s0 : array_like
        Specific entropy of the isentrope, [J/(kg·K)] (CoolProp's reference state).
    T_guess : array_like
        Starting temperature of the Newton iteration, [K].
    method : {"table", "direct"}
        Tabulated fast path or direct CoolProp calls.

    Returns
    -------
    numpy.ndarray
        Temperature, [K].

    Examples
    --------
    Isentropic compression from 90 to 200 bar absolute, starting at 20 °C: CoolProp 8.0.0
    (Span et al. 2000) gives 370.6 K at the end.

    >>> import numpy as np
    >>> from stowflow.physics.gas import density
    >>> from stowflow.units import BAR, T_REF
    >>> rho1 = np.array(density(90 * BAR, T_REF))
    >>> (s0,) = fields_rhoT(rho1, np.array(T_REF), "table", ("s",))
    >>> print(f"{float(isentrope_T_at_p(200 * BAR, s0, 360.0, 'table')):.1f} K")
    370.6 K
    """
    return _isentrope_T("PS", p, s0, T_guess, method)


def isentrope_T_at_rho(rho, s0, T_guess, method):
    """Temperature [K] on the isentrope s0 [J/(kg·K)] at density rho [kg/m³].

    Parameters
    ----------
    rho : array_like
        Density, [kg/m³].
    s0 : array_like
        Specific entropy of the isentrope, [J/(kg·K)] (CoolProp's reference state).
    T_guess : array_like
        Starting temperature of the Newton iteration, [K].
    method : {"table", "direct"}
        Tabulated fast path or direct CoolProp calls.

    Returns
    -------
    numpy.ndarray
        Temperature, [K].

    Examples
    --------
    The isentrope from 90 bar absolute and 20 °C reaches 200 bar at 0.6195 of the start
    volume and 370.6 K (CoolProp 8.0.0, Span et al. 2000):

    >>> import numpy as np
    >>> from stowflow.physics.gas import density
    >>> from stowflow.units import BAR, T_REF
    >>> rho1 = np.array(density(90 * BAR, T_REF))
    >>> (s0,) = fields_rhoT(rho1, np.array(T_REF), "table", ("s",))
    >>> print(f"{float(isentrope_T_at_rho(rho1 / 0.6195, s0, 360.0, 'table')):.1f} K")
    370.6 K
    """
    return _isentrope_T("DS", rho, s0, T_guess, method)


def _isentrope_T(inputs: str, a, s0, T_guess, method: str) -> np.ndarray:
    """Solve s(a, T) = s0 for T with Newton steps in ln T, where ∂s/∂ln T = c_p or c_v > 0.

    ``inputs`` is ``"PS"`` (a = p on the pT grid) or ``"DS"`` (a = ρ on the ρT grid).
    """
    tab = load_table() if method == "table" else None
    if tab is None:
        return direct(inputs, a, s0, ("T",))[0]
    shape = np.broadcast(a, s0, T_guess).shape
    a, s0, T_guess = (np.atleast_1d(v).astype(float) for v in np.broadcast_arrays(a, s0, T_guess))
    if inputs == "PS":
        grid, x, field, target, inside = tab.pT, np.log(a), "s", s0, tab.in_pT
    else:  # s_res = s + R ln ρ on the ρT grid
        grid, x, field, target, inside = (
            tab.rhoT,
            a,
            "s_res",
            s0 + tab.r_eos * np.log(a),
            tab.in_rhoT,
        )
    y = np.log(T_guess)
    lo, hi = np.log(tab.T_range[0]), np.log(tab.T_range[1])
    for _ in range(_NEWTON_MAX):
        yc = np.clip(y, lo, hi)
        v = grid.evaluate(x, yc, (field,), with_dy=True)
        step = (v[field] - target) / v[field + "_dy"]
        y = yc - step
        if np.all(np.abs(step) < _NEWTON_TOL):
            break
    T = np.exp(y)
    out = ~inside(a, T) | ~np.isfinite(T)
    if out.any():
        T[out] = direct(inputs, a[out], s0[out], ("T",))[0]
    return T.reshape(shape)


# --------------------------------------------------------------------------- builder
def _axis(spec: tuple, margin_low: bool) -> np.ndarray:
    _, lo, hi, h = spec
    n_lo = MARGIN if margin_low else 0
    n = round((hi - lo) / h)
    return lo + h * np.arange(-n_lo, n + MARGIN + 1)


def build_table(path: Path = TABLE_PATH) -> dict[str, object]:
    """Sample CoolProp on both grids, fit the splines and write the compressed table.

    Parameters
    ----------
    path : pathlib.Path
        Output file (.npz).

    Returns
    -------
    dict
        Build information written into the file (versions, grid sizes, file size [bytes]).
    """
    import CoolProp

    cp_mod, st = _abstract_state()
    payload: dict[str, np.ndarray] = {}
    st.update(cp_mod.PT_INPUTS, BAR, 300.0)
    r_eos = st.gas_constant() / st.molar_mass()  # the EOS's own R (8.31451 J/(mol·K))
    payload["R_eos"] = np.array(r_eos)

    x = _axis(GRID_PT["x"], margin_low=True)
    y = _axis(GRID_PT["y"], margin_low=True)
    p, T = np.exp(x)[:, None], np.exp(y)[None, :]
    rho, s = direct("PT", p, T, ("rho", "s"))
    fields = {"Z": p / (rho * R_SPECIFIC * T), "s": s}
    _store(payload, "pT", x, y, fields)

    x = _axis(GRID_RHOT["x"], margin_low=False)
    y = _axis(GRID_RHOT["y"], margin_low=True)
    rho = np.maximum(x, 1e-9)[:, None]  # CoolProp needs rho > 0; 1e-9 kg/m³ is the ideal limit
    T = np.exp(y)[None, :]
    pr, cv, dpdt, u, s = direct("DT", rho, T, ("p", "cv", "dpdT_v", "u", "s"))
    fields = {
        "Z": pr / (rho * R_SPECIFIC * T),
        "cv": cv,
        "dpdT_ratio": dpdt / (rho * R_SPECIFIC),
        "u": u,
        "s_res": s + r_eos * np.log(rho),
    }
    _store(payload, "rhoT", x, y, fields)

    payload["domain"] = np.array(
        [
            np.exp(GRID_PT["x"][1]),
            np.exp(GRID_PT["x"][2]),
            np.exp(GRID_PT["y"][1]),
            np.exp(GRID_PT["y"][2]),
            GRID_RHOT["x"][1],
            GRID_RHOT["x"][2],
        ]
    )
    meta = {
        "coolprop_version": CoolProp.__version__,
        "coolprop_gitrevision": cp_mod.get_global_param_string("gitrevision"),
        "fluid": "Nitrogen (HEOS backend, Span et al. 2000)",
        "grid_pT": f"{_describe(GRID_PT['x'], 'Pa')}; {_describe(GRID_PT['y'], 'K')}; "
        f"margin {MARGIN} nodes",
        "grid_rhoT": f"{_describe(GRID_RHOT['x'], 'kg/m3')}; {_describe(GRID_RHOT['y'], 'K')}; "
        f"margin {MARGIN} nodes",
        "R_specific": repr(R_SPECIFIC),
        "builder": "python -m stowflow.physics.nitrogen",
    }
    for k, v in meta.items():
        payload[f"meta_{k}"] = np.array(v)
    path.parent.mkdir(parents=True, exist_ok=True)
    np.savez_compressed(path, **payload)
    load_table.cache_clear()
    meta["file_bytes"] = str(path.stat().st_size)
    del st
    return meta


def _describe(spec: tuple, unit: str) -> str:
    name, lo, hi, h = spec
    if name.startswith("ln_"):
        return f"{name} from ln({np.exp(lo):.6g} {unit}) to ln({np.exp(hi):.6g} {unit}) step {h:g}"
    return f"{name} from {lo:g} to {hi:g} {unit} step {h:g}"


def _store(payload: dict, grid: str, x: np.ndarray, y: np.ndarray, fields: dict) -> None:
    payload[f"{grid}_axes"] = np.array([x[0], x[1] - x[0], y[0], y[1] - y[0]])
    payload[f"{grid}_fields"] = np.array(",".join(fields))
    for name, values in fields.items():
        payload[f"{grid}_{name}"] = fit_bspline(values)


if __name__ == "__main__":  # pragma: no cover - the builder script
    info = build_table()
    for key, value in info.items():
        print(f"{key}: {value}")
