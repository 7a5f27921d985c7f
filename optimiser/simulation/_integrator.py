"""Integrator of the time-domain verification: gas charge, plant, step maps, records.

The state of an accumulator supply is the stored oil S [m³] and the gas temperature T [K]; the
gas volume is :math:`V = V_g - S` with :math:`V_g` the bank's gas volume at precharge, and the
gas mass m is fixed by the precharge at 20 °C.  Within one *part* of a grid step the oil flow
into the bank, :math:`r = Q_p u - d` (pump delivery when loaded minus demand), is constant, so
V is linear in time and the energy equation of the thermal time-constant model (Otis &
Pourmovahed 1985)

.. math::
    \\frac{dT}{dt} = \\frac{T_w - T}{\\tau} - \\Gamma(\\rho, T)\\, T\\, \\frac{\\dot V}{V},
    \\qquad \\Gamma = \\frac{(\\partial p/\\partial T)_v}{\\rho\\, c_v}

(Γ is the Grüneisen parameter; κ − 1 for the ideal gas) is linear in T once Γ is frozen.  With
the integrating factor :math:`T V^{\\Gamma} e^{t/\\tau}` it integrates exactly to

.. math::
    T_1 = T_0 \\left(\\frac{V_a}{V_b}\\right)^{\\Gamma} e^{-h/\\tau}
        + \\frac{T_w}{\\tau}\\int_0^h e^{(t-h)/\\tau}
          \\left(\\frac{V(t)}{V_b}\\right)^{\\Gamma} dt

and, with :math:`(V/V_b)^\\Gamma \\approx 1 + \\Gamma (V - V_b)/V_b` in the heat-input integral
only,

.. math::
    T_1 = a T_0 + b,\\quad a = e^{-x}\\left(\\frac{V_a}{V_b}\\right)^{\\Gamma},\\quad
    b = T_w\\left[1 - e^{-x} + \\frac{\\Gamma r \\tau}{V_b}\\left(1 - e^{-x}(1 + x)\\right)\\right],
    \\quad x = h/\\tau .

This *exponential integrator* is exact in both limits whatever the step: τ → ∞ gives the
isentrope :math:`T V^{\\Gamma}` = const (exact for the ideal gas), τ → 0 gives T = T_w.  Γ is the
mean of its values at the two ends of the step (trapezoid, second order), evaluated with the
end temperatures of the previous iterate: a Picard iteration that stops when the end
temperatures change by less than :data:`PICARD_TOL`.  The pressure then comes from the
equation of state at the end states, linearised in T about the last iterate.  Steps whose
relative gas-volume change exceeds :data:`MAX_VOLUME_STEP` are split into equal substeps.

Every step's maps are computed with numpy for the whole rest of the cycle at once, and the
recurrence :math:`T_{k+1} = a_k T_k + b_k` is solved in closed form with cumulative products.
The event loop (:mod:`stowflow.simulation._loop`) cuts such a pass where a controller switches or
where something leaves the smooth path (relief valve open, bank empty, piston at its stop).

References
----------
.. [1] D. R. Otis, M. Pourmovahed, "An algorithm for computing nonflow gas processes in gas
   springs and hydropneumatic accumulators", ASME J. Dyn. Syst. Meas. Control 107(1), 93-96
   (1985) (title from memory).
.. [2] M. Hochbruck, A. Ostermann, "Exponential integrators", Acta Numerica 19, 209-286
   (2010), doi:10.1017/S0962492910000048 (exponential integrators for stiff linear parts).
.. [3] R. Span et al., J. Phys. Chem. Ref. Data 29(6), 1361-1433 (2000),
   doi:10.1063/1.1349047 (nitrogen equation of state, via :mod:`stowflow.physics.gas`).
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np
from stowflow.physics import gas
from stowflow.physics.nitrogen import KAPPA, R_SPECIFIC, fields_rhoT, load_table
from stowflow.physics.valves import RELIEF_OVERRIDE

__all__ = [
    "MAX_VOLUME_STEP",
    "PICARD_TOL",
    "GasCharge",
    "Pass",
    "Plant",
    "Record",
    "State",
    "accept",
    "propagate",
    "scalar_gas",
    "start_state",
    "sub_map",
]

#: Picard iteration on Γ(ρ, T): stop when the step-end temperatures move less than this, [K].
#: The pressure's linearisation in T then errs by ½·∂²p/∂T²·ΔT², far below 1 Pa.
PICARD_TOL = 0.02
#: Most Picard iterations per pass, [-].
MAX_PICARD = 8
#: Largest relative gas-volume change of one substep, [-]: keeps the linearised heat-input
#: integral's error (≈ Γ(1−Γ)/2·(ΔV/V)² relative) below 1e-5.
MAX_VOLUME_STEP = 0.01
_EPS = 1e-12


# --------------------------------------------------------------------------- gas charge
class _ScalarRhoT:
    """The nitrogen table's (ρ, ln T) B-spline evaluated for one point in plain Python.

    Same coefficients and arithmetic as :meth:`stowflow.physics.nitrogen.Grid2D.evaluate` (which is
    built for arrays and costs ~0.4 ms per call); used only for the rare scalar steps.
    """

    FIELDS = ("Z", "cv", "dpdT_ratio")

    def __init__(self) -> None:
        tab = load_table()
        self.ok = tab is not None
        if not self.ok:  # pragma: no cover - the table ships with the package
            return
        g = tab.rhoT
        self.x0, self.hx, self.y0, self.hy = g.x0, g.hx, g.y0, g.hy
        self.nx, self.ny = g.shape[0] - 2, g.shape[1] - 2
        self.stride = g.shape[1]
        self.coef = [g.coef[f].tolist() for f in self.FIELDS]
        self.rho_range, self.T_range = tab.rho_range, tab.T_range

    @staticmethod
    def _w(t: float) -> tuple[float, float, float, float]:
        t2 = t * t
        t3 = t2 * t
        s = 1.0 - t
        return (
            s * s * s / 6.0,
            (3 * t3 - 6 * t2 + 4) / 6.0,
            (-3 * t3 + 3 * t2 + 3 * t + 1) / 6.0,
            t3 / 6.0,
        )

    def __call__(self, rho: float, T: float) -> tuple[float, float, float] | None:
        """(Z [-], cv [J/(kg·K)], dpdT_ratio [-]) at (ρ [kg/m³], T [K]); None outside."""
        if not (
            self.ok
            and self.rho_range[0] <= rho <= self.rho_range[1]
            and self.T_range[0] <= T <= self.T_range[1]
        ):
            return None
        u = (rho - self.x0) / self.hx
        i = min(max(math.floor(u), 0), self.nx - 2)
        v = (math.log(T) - self.y0) / self.hy
        j = min(max(math.floor(v), 0), self.ny - 2)
        wx, wy = self._w(u - i), self._w(v - j)
        base = i * self.stride + j
        out = []
        for c in self.coef:
            acc = 0.0
            for a in range(4):
                row = base + a * self.stride
                acc += wx[a] * (
                    c[row] * wy[0] + c[row + 1] * wy[1] + c[row + 2] * wy[2] + c[row + 3] * wy[3]
                )
            out.append(acc)
        return out[0], out[1], out[2]


_SCALAR: _ScalarRhoT | None = None


def _scalar_table() -> _ScalarRhoT:
    global _SCALAR
    if _SCALAR is None:
        _SCALAR = _ScalarRhoT()
    return _SCALAR


@functools.lru_cache(maxsize=64)
def scalar_gas(model: str, mass: float, volume: float):
    """``(V, T) -> (p, Γ)`` of a charge for plain floats: :meth:`GasCharge.state1` without
    (∂p/∂T)_V, with the table's spline unrolled (the same arithmetic in the same order, so
    the same floats) - the innermost call of the scalar steps.

    Parameters
    ----------
    model : str
        ``"real"`` or ``"ideal"``.
    mass : float
        Gas mass, [kg].
    volume : float
        Gas volume with no oil stored, [m³].

    Returns
    -------
    callable
        ``pg(V [m³], T [K]) -> (p [Pa], Γ [-])``.
    """
    R = R_SPECIFIC
    if model == "ideal":
        g_ideal = KAPPA - 1.0

        def pg_ideal(V: float, T: float) -> tuple[float, float]:
            dpdT = mass / V * R
            return dpdT * T, g_ideal

        return pg_ideal
    charge = GasCharge(model, mass, volume)
    tab = _scalar_table()
    if not tab.ok:  # pragma: no cover - the table ships with the package

        def pg_fallback(V: float, T: float) -> tuple[float, float]:
            p, _, g = charge.state1(V, T)
            return p, g

        return pg_fallback
    x0, hx, y0, hy = tab.x0, tab.hx, tab.y0, tab.hy
    i_top, j_top, n1 = tab.nx - 2, tab.ny - 2, tab.stride
    n2, n3 = 2 * n1, 3 * n1
    cz, ccv, cr = tab.coef
    (r_lo, r_hi), (t_lo, t_hi) = tab.rho_range, tab.T_range
    log, floor = math.log, math.floor
    cells: dict = {}  # i·stride + j -> the 4 × 4 coefficients of each field at cell (i, j)

    def pg(V: float, T: float) -> tuple[float, float]:
        rho = mass / V
        if not (r_lo <= rho <= r_hi and t_lo <= T <= t_hi):
            p, _, g = charge.state1(V, T)
            return p, g
        u = (rho - x0) / hx
        i = floor(u)
        i = 0 if i < 0 else (i_top if i > i_top else i)
        v = (log(T) - y0) / hy
        j = floor(v)
        j = 0 if j < 0 else (j_top if j > j_top else j)
        t = u - i
        t2 = t * t
        t3 = t2 * t
        s = 1.0 - t
        a0, a1 = s * s * s / 6.0, (3 * t3 - 6 * t2 + 4) / 6.0
        a2, a3 = (-3 * t3 + 3 * t2 + 3 * t + 1) / 6.0, t3 / 6.0
        t = v - j
        t2 = t * t
        t3 = t2 * t
        s = 1.0 - t
        b0, b1 = s * s * s / 6.0, (3 * t3 - 6 * t2 + 4) / 6.0
        b2, b3 = (-3 * t3 + 3 * t2 + 3 * t + 1) / 6.0, t3 / 6.0
        r0 = i * n1 + j
        cell = cells.get(r0)
        if cell is None:
            rows = (r0, r0 + n1, r0 + n2, r0 + n3)
            cell = cells[r0] = tuple(tuple(c[r : r + 4]) for c in (cz, ccv, cr) for r in rows)
        z0, z1, z2, z3, v0, v1, v2, v3, q0, q1, q2, q3 = cell
        z = (
            a0 * (z0[0] * b0 + z0[1] * b1 + z0[2] * b2 + z0[3] * b3)
            + a1 * (z1[0] * b0 + z1[1] * b1 + z1[2] * b2 + z1[3] * b3)
            + a2 * (z2[0] * b0 + z2[1] * b1 + z2[2] * b2 + z2[3] * b3)
            + a3 * (z3[0] * b0 + z3[1] * b1 + z3[2] * b2 + z3[3] * b3)
        )
        cv = (
            a0 * (v0[0] * b0 + v0[1] * b1 + v0[2] * b2 + v0[3] * b3)
            + a1 * (v1[0] * b0 + v1[1] * b1 + v1[2] * b2 + v1[3] * b3)
            + a2 * (v2[0] * b0 + v2[1] * b1 + v2[2] * b2 + v2[3] * b3)
            + a3 * (v3[0] * b0 + v3[1] * b1 + v3[2] * b2 + v3[3] * b3)
        )
        ratio = (
            a0 * (q0[0] * b0 + q0[1] * b1 + q0[2] * b2 + q0[3] * b3)
            + a1 * (q1[0] * b0 + q1[1] * b1 + q1[2] * b2 + q1[3] * b3)
            + a2 * (q2[0] * b0 + q2[1] * b1 + q2[2] * b2 + q2[3] * b3)
            + a3 * (q3[0] * b0 + q3[1] * b1 + q3[2] * b2 + q3[3] * b3)
        )
        dpdT = ratio * rho * R
        return z * rho * R * T, dpdT / (rho * cv)

    return pg


@dataclass(frozen=True)
class GasCharge:
    """The nitrogen charge of a bank: fixed mass in a variable volume.

    Attributes
    ----------
    model : str
        ``"real"`` (Span et al. 2000 via the package's table) or ``"ideal"``.
    mass : float
        Gas mass, [kg].
    volume : float
        Gas volume with no oil stored (bank gas volume at precharge), [m³].
    """

    model: str
    mass: float
    volume: float

    def state(self, V: np.ndarray, T: np.ndarray):
        """Pressure [Pa], (∂p/∂T)_V [Pa/K] and Γ [-] at gas volumes V [m³], temperatures T [K]."""
        rho = self.mass / V
        if self.model == "ideal":
            dpdT = rho * R_SPECIFIC
            return dpdT * T, dpdT, np.full(np.shape(V), KAPPA - 1.0)
        z, cv, ratio = fields_rhoT(rho, T, "table", ("Z", "cv", "dpdT_ratio"))
        dpdT = ratio * rho * R_SPECIFIC
        return z * rho * R_SPECIFIC * T, dpdT, dpdT / (rho * cv)

    def state1(self, V: float, T: float) -> tuple[float, float, float]:
        """Scalar :meth:`state`: (p [Pa], (∂p/∂T)_V [Pa/K], Γ [-])."""
        rho = self.mass / V
        if self.model == "ideal":
            dpdT = rho * R_SPECIFIC
            return dpdT * T, dpdT, KAPPA - 1.0
        f = _scalar_table()(rho, T)
        if f is None:  # outside the table: the gas module falls back to CoolProp
            st = gas.state_from_density(np.array([rho]), np.array([T]), "real")
            return float(st.p[0]), float(st.dpdT_v[0]), float(st.dpdT_v[0] / (rho * st.cv[0]))
        z, cv, ratio = f
        dpdT = ratio * rho * R_SPECIFIC
        return z * rho * R_SPECIFIC * T, dpdT, dpdT / (rho * cv)


# --------------------------------------------------------------------------- the plant
@dataclass(frozen=True)
class Plant:
    """Everything fixed during one simulated run (SI, pressures absolute).

    Attributes
    ----------
    dt : float
        Step of the cycle grid, [s].
    demand : numpy.ndarray
        Flow the machine draws per step, [m³/s].
    required : numpy.ndarray
        Required accumulator pressure per step (line loss included), [Pa].
    qp : float
        Effective pump delivery when loaded, [m³/s].
    T_wall : float
        Wall, oil and ambient temperature of the run, [K].
    tau : float
        Thermal time constant, [s] (``inf``: adiabatic).
    p_ambient : float
        Ambient pressure, [Pa].
    relief : float
        Relief valve cracking pressure, [Pa].
    charge : GasCharge or None
        The bank's gas; None for a pump-only supply.
    stop : float
        Stored oil at which a piston reaches its end stop (inf: none), [m³].
    stroke : float
        Stored oil of the full piston stroke, for the position signal (nan: no piston), [m³].
    cap : float
        Stored oil beyond which the smooth path is not evaluated (gas density 1.5 × that at
        twice the relief setting), [m³].
    substeps : int
        Equal substeps per part of a grid step, [-].
    """

    dt: float
    demand: np.ndarray
    required: np.ndarray
    qp: float
    T_wall: float
    tau: float
    p_ambient: float
    relief: float
    charge: GasCharge | None
    stop: float = math.inf
    stroke: float = math.nan
    cap: float = math.inf
    substeps: int = 1

    @property
    def n(self) -> int:
        """Steps per cycle, [-]."""
        return int(self.demand.size)

    @property
    def duration(self) -> float:
        """Cycle duration, [s]."""
        return self.n * self.dt

    @property
    def relief_gain(self) -> float:
        """Relief flow per pressure above cracking, [m³/(s·Pa)] (:data:`RELIEF_OVERRIDE`)."""
        return self.qp / (RELIEF_OVERRIDE * (self.relief - self.p_ambient))

    @property
    def volume(self) -> float:
        """Bank gas volume with no oil stored, [m³]."""
        return self.charge.volume if self.charge is not None else 0.0


@dataclass(frozen=True)
class State:
    """State at a step boundary.

    Attributes
    ----------
    S : float
        Stored oil, [m³].
    T : float
        Gas temperature, [K].
    p : float
        Gas pressure, [Pa].
    G : float
        Grüneisen parameter Γ at the state, [-].
    u : int
        Pump load state going into the next step (1 loaded, 0 unloaded), [-].
    """

    S: float
    T: float
    p: float
    G: float
    u: int


def start_state(plant: Plant, S: float, T: float, u: int) -> State:
    """A :class:`State` with its pressure and Γ from the equation of state."""
    p, _, g = plant.charge.state1(plant.volume - S, T)
    return State(float(S), float(T), float(p), float(g), int(u))


# --------------------------------------------------------------------------- integrator
def sub_map(h, r, Va, Vb, G, T_wall, tau):
    """Affine map T1 = a·T0 + b of one constant-flow substep (see the module docstring)."""
    ratio = np.power(Va / Vb, G)
    if math.isinf(tau):
        return ratio, np.zeros(np.shape(ratio))
    x = h / tau
    e = np.exp(-x)
    one_minus = -np.expm1(-x)
    f = one_minus - x * e  # 1 − e^{−x}(1 + x) ≥ 0
    return e * ratio, T_wall * (one_minus + G * r * tau * f / Vb)


def _part_map(h, r, Va, Vb, G, T_wall, tau, n):
    """Affine map of one part: n equal substeps composed, in closed form.

    With :math:`V_i = V_a + (V_b - V_a)\\,i/n` the factors telescope,
    :math:`\\prod a_i = e^{-h/\\tau}(V_a/V_b)^{\\Gamma}`, and the offset is
    :math:`\\sum_i b_i \\prod_{j>i} a_j` with
    :math:`\\prod_{j>i} a_j = e^{-(n-1-i)h/(n\\tau)}(V_{i+1}/V_b)^{\\Gamma}`.
    """
    if n == 1:
        return sub_map(h, r, Va, Vb, G, T_wall, tau)
    h, r, Va, Vb, G = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in (h, r, Va, Vb, G)))
    ratio = np.power(Va / Vb, G)
    if math.isinf(tau):
        return ratio, np.zeros(ratio.shape)
    k = np.arange(1, n + 1)  # V_{i+1}, i = 0 … n−1
    V = Va[..., None] + (Vb - Va)[..., None] * (k / n)
    xs = h / (n * tau)
    es = np.exp(-xs)
    one_minus = -np.expm1(-xs)
    fs = one_minus - xs * es
    weight = np.power(es[..., None], n - k) * np.power(V / Vb[..., None], G[..., None])
    inner = one_minus[..., None] + (G * r * tau * fs)[..., None] / V
    return np.exp(-h / tau) * ratio, T_wall * np.sum(weight * inner, axis=-1)


#: Blocks of the vectorised scan keep |ln Π a| below this so that exp() stays finite, [-].
_SCAN_LOG_SPAN = 600.0


def _scan(A: np.ndarray, B: np.ndarray, T0: float) -> np.ndarray:
    """T_k = A_k·T_{k−1} + B_k from T0, for A_k ≥ 0.

    Where A_k underflowed to 0 (τ ≪ step: no memory) the recurrence restarts at B_k.
    """
    zero = A <= 0.0
    if not zero.any():
        return _scan_positive(A, B, T0)
    if zero.all():
        return np.array(B, dtype=float)
    out = np.empty(A.size)
    start, T = 0, T0
    for z in np.flatnonzero(zero).tolist():
        if z > start:
            out[start:z] = _scan_positive(A[start:z], B[start:z], T)
        out[z] = T = float(B[z])
        start = z + 1
    if start < A.size:
        out[start:] = _scan_positive(A[start:], B[start:], T)
    return out


def _scan_positive(A: np.ndarray, B: np.ndarray, T0: float) -> np.ndarray:
    """T_k = A_k·T_{k−1} + B_k from T0, for A_k > 0.

    Closed form :math:`T_k = P_k (T_0 + \\sum_{i \\le k} B_i / P_i)` with
    :math:`P_k = \\prod_{i \\le k} A_i`, in blocks over which :math:`|\\ln P|` stays below
    :data:`_SCAN_LOG_SPAN`; a plain loop when the blocks would be short (τ ≪ step).
    """
    L = np.cumsum(np.log(A))
    n = L.size
    if n and float(np.max(np.abs(L))) < _SCAN_LOG_SPAN:
        P = np.exp(L)
        return P * (T0 + np.cumsum(B / P))
    out = np.empty(n)
    start, base, T = 0, 0.0, T0
    blocks = 0
    while start < n:
        far = np.abs(L[start:] - base) >= _SCAN_LOG_SPAN
        end = start + (int(np.argmax(far)) if far.any() else n - start)
        end = max(end, start + 1)
        blocks += 1
        if blocks > 8 and (end - start) < 32:  # short blocks: finish with the plain loop
            for i in range(start, n):
                T = A[i] * T + B[i]
                out[i] = T
            return out
        P = np.exp(L[start:end] - base)
        out[start:end] = P * (T + np.cumsum(B[start:end] / P))
        T = float(out[end - 1])
        base = float(L[end - 1])
        start = end
    return out


@dataclass
class Pass:
    """Result of :func:`propagate` for steps k … k+m−1 (m may be cut short).

    Arrays are per step: end states, part boundary states and the plan used.
    """

    S_end: np.ndarray
    T_end: np.ndarray
    p_end: np.ndarray
    G_end: np.ndarray
    p_b: np.ndarray
    S_b: np.ndarray
    h1: np.ndarray
    u1: np.ndarray
    u2: np.ndarray
    d: np.ndarray
    truncated: bool  # the step after the last one left the smooth path (oil limits)


def propagate(
    plant: Plant,
    st: State,
    h1: np.ndarray,
    u1: np.ndarray,
    u2: np.ndarray,
    d: np.ndarray,
    T_guess: np.ndarray,
    substeps: int | None = None,
) -> Pass:
    """Integrate consecutive grid steps with fixed plans from state ``st``.

    Parameters
    ----------
    plant : Plant
        The run's fixed data.
    st : State
        State at the start of the first step.
    h1 : numpy.ndarray
        Duration of each step's first part, [s] (the second part lasts dt − h1).
    u1, u2 : numpy.ndarray
        Pump load state in the first and second part, [-].
    d : numpy.ndarray
        Demand of each step, [m³/s].
    T_guess : numpy.ndarray
        Guess of each step's end temperature for Γ, [K].
    substeps : int, optional
        Substeps per part; default the plant's.

    Returns
    -------
    Pass
        End states of the steps up to (not including) the first step whose oil leaves
        [0, min(stop, cap)].
    """
    n_sub = substeps or plant.substeps
    ch = plant.charge
    Vg = ch.volume
    h2 = plant.dt - h1
    r1 = plant.qp * u1 - d
    r2 = plant.qp * u2 - d
    dS1 = r1 * h1
    S_end = st.S + np.cumsum(dS1 + r2 * h2)
    S_start = np.empty_like(S_end)
    S_start[0] = st.S
    S_start[1:] = S_end[:-1]
    S_b = S_start + dS1
    hi = min(plant.stop, plant.cap)
    bad = (np.minimum(S_b, S_end) < 0.0) | (np.maximum(S_b, S_end) > hi)
    truncated = bool(bad.any())
    if truncated:
        m = int(np.argmax(bad))
        S_end, S_start, S_b = S_end[:m], S_start[:m], S_b[:m]
        h1, h2, u1, u2, d, r1, r2 = (a[:m] for a in (h1, h2, u1, u2, d, r1, r2))
        T_guess = T_guess[:m]
    if S_end.size == 0:
        e = np.empty(0)
        return Pass(e, e, e, e, e, e, h1, u1, u2, d, truncated)
    Va, Vb, Ve = Vg - S_start, Vg - S_b, Vg - S_end
    Tw, tau = plant.T_wall, plant.tau
    Tg = np.asarray(T_guess, dtype=float)
    for _ in range(MAX_PICARD):
        pe, dpdT, Ge = ch.state(Ve, Tg)
        Gs = np.empty_like(Ge)
        Gs[0] = st.G
        Gs[1:] = Ge[:-1]
        G = 0.5 * (Gs + Ge)
        a1, b1 = _part_map(h1, r1, Va, Vb, G, Tw, tau, n_sub)
        a2, b2 = _part_map(h2, r2, Vb, Ve, G, Tw, tau, n_sub)
        Te = _scan(a2 * a1, a2 * b1 + b2, st.T)
        if ch.model == "ideal":  # Γ does not depend on T: one pass is exact
            pe, dpdT, Ge = ch.state(Ve, Te)
            Tg = Te
            break
        moved = float(np.max(np.abs(Te - Tg)))
        if moved < PICARD_TOL:
            break
        Tg = Te
    p_end = pe + dpdT * (Te - Tg)
    # Pressure at the part boundary: the end of the first part (or the step's ends).
    p_start = np.empty_like(p_end)
    p_start[0] = st.p
    p_start[1:] = p_end[:-1]
    p_b = np.where(h2 > 0, p_start, p_end)
    two = (h1 > 0) & (h2 > 0)
    if two.any():
        T_start = np.empty_like(Te)
        T_start[0] = st.T
        T_start[1:] = Te[:-1]
        Tb = (np.asarray(a1) * T_start + b1)[two]
        p_b[two] = ch.state(Vb[two], Tb)[0]
    return Pass(S_end, Te, p_end, Ge, p_b, S_b, h1, u1, u2, d, truncated)


# --------------------------------------------------------------------------- records
@dataclass
class Record:
    """One simulated cycle, per grid step (states at the step end).

    Attributes
    ----------
    S, T, p : numpy.ndarray
        Stored oil [m³], gas temperature [K] and pressure [Pa] at the step end.
    p_lo, p_hi : numpy.ndarray
        Least and greatest line pressure within the step, [Pa].
    h1, u1, u2 : numpy.ndarray
        Duration of the first part [s] and the pump load state of both parts [-].
    w_pump, w_cons, w_relief : numpy.ndarray
        Hydraulic work of the pump, delivered to the machine and lost over the relief valve
        (gauge pressures), [J].
    v_relief, v_unmet : numpy.ndarray
        Oil over the relief valve and demand the empty bank could not supply, [m³].
    out_max : numpy.ndarray
        Largest flow out of the bank within the step, [m³/s].
    stop : numpy.ndarray
        True where a piston reached its end stop, [-].
    start : State
        State at the cycle start.
    """

    S: np.ndarray
    T: np.ndarray
    p: np.ndarray
    p_lo: np.ndarray
    p_hi: np.ndarray
    h1: np.ndarray
    u1: np.ndarray
    u2: np.ndarray
    w_pump: np.ndarray
    w_cons: np.ndarray
    w_relief: np.ndarray
    v_relief: np.ndarray
    v_unmet: np.ndarray
    out_max: np.ndarray
    stop: np.ndarray
    start: State | None = None

    @classmethod
    def empty(cls, n: int) -> Record:
        z = [np.zeros(n) for _ in range(14)]
        return cls(*z, np.zeros(n, bool))


def accept(rec: Record, k: int, ps: Pass, m: int, st: State, plant: Plant) -> State:
    """Copy the first m steps of a pass into the record at step k; return the new state."""
    if m <= 0:
        return st
    sl = slice(k, k + m)
    p_end = ps.p_end[:m]
    p_start = np.empty(m)
    p_start[0] = st.p
    p_start[1:] = p_end[:-1]
    p_b = ps.p_b[:m]
    h1 = ps.h1[:m]
    h2 = plant.dt - h1
    u1, u2, d = ps.u1[:m], ps.u2[:m], ps.d[:m]
    pa = plant.p_ambient
    g1 = 0.5 * (p_start + p_b) - pa
    g2 = 0.5 * (p_b + p_end) - pa
    rec.S[sl] = ps.S_end[:m]
    rec.T[sl] = ps.T_end[:m]
    rec.p[sl] = p_end
    rec.p_lo[sl] = np.minimum(np.minimum(p_start, p_end), p_b)
    rec.p_hi[sl] = np.maximum(np.maximum(p_start, p_end), p_b)
    rec.h1[sl], rec.u1[sl], rec.u2[sl] = h1, u1, u2
    rec.w_pump[sl] = plant.qp * (u1 * h1 * g1 + u2 * h2 * g2)
    rec.w_cons[sl] = d * (h1 * g1 + h2 * g2)
    # Largest flow out of the bank: a part delivering less than the full flow has the
    # unloading valve open for a while (the whole demand then comes from the bank).
    out1 = np.where(h1 > 0, d - plant.qp * np.where(u1 >= 1.0, 1.0, 0.0), -np.inf)
    out2 = np.where(h2 > 0, d - plant.qp * np.where(u2 >= 1.0, 1.0, 0.0), -np.inf)
    rec.out_max[sl] = np.maximum(out1, out2)
    i = m - 1
    return State(
        float(ps.S_end[i]),
        float(ps.T_end[i]),
        float(p_end[i]),
        float(ps.G_end[i]),
        int(ps.u2[i]),
    )
