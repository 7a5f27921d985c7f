"""Event loop of the time-domain verification: controllers, special steps, cycles, steady state.

:func:`run_cycle` carries a :class:`Controller` through one cycle: it lets
:func:`~._integrator.propagate` integrate the rest of the cycle at once with the pump
state fixed, then cuts that pass at the first step where the controller switches (threshold
crossing, placed within the step by linear interpolation of its signal) or where the smooth
path ends - the relief valve opens, the bank runs empty, a piston reaches its end stop.  Those
steps are integrated one by one (:func:`scalar_step`: explicit Heun substeps sized by the
relief valve's stiffness, the same exponential map for the temperature).
:func:`run_periodic` repeats cycles until the periodic steady state.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from stowflow.errors import SimulationError
from stowflow.physics.nitrogen import KAPPA
from stowflow.simulation._integrator import (
    Pass,
    Plant,
    Record,
    State,
    accept,
    propagate,
    scalar_gas,
    start_state,
)

__all__ = [
    "BUDGET_STEPS",
    "MAX_PERIOD",
    "OIL_TOL",
    "PASS_STEPS",
    "SUBSTEP_BUDGET",
    "TEMPERATURE_TOL",
    "VECTOR_SUBSTEP_COST",
    "Budget",
    "Controller",
    "Orbit",
    "max_cycles_for",
    "run_cycle",
    "run_periodic",
    "scalar_step",
]

#: Periodic steady state: change of the stored oil between cycle starts, fraction of the
#: bank's gas volume, [-].
OIL_TOL = 1e-6
#: Periodic steady state: change of the gas temperature between cycle starts, [K].
TEMPERATURE_TOL = 0.01
#: Longest periodic orbit looked for, in cycles (a pressure switch on a pump only a little
#: larger than the mean demand loads once every many machine cycles), [-].
MAX_PERIOD = 40
#: Scalar substeps: relief-valve stiffness × substep at most this, [-] (explicit Heun).
_STIFF_STEP = 0.2
#: Scalar substeps: relative gas-volume change per substep at most this, [-].
_VOLUME_STEP = 0.002
_EPS = 1e-12
#: Work one run (one controller at one temperature, cycle after cycle to the periodic steady
#: state) may take, in scalar substeps (:func:`scalar_step`), [-].  The demo designs take a
#: few thousand; a stiff plant (a pump of 10⁵ L/min on a bank of a few litres) would take
#: hours and is stopped after a few seconds with a :class:`~stowflow.errors.SimulationError`.
SUBSTEP_BUDGET = 200_000
#: Cycle length the budget is set for: a longer cycle gets :data:`SUBSTEP_BUDGET` per this
#: many steps (the same work per step), [-].
BUDGET_STEPS = 1_000
#: Most steps one vectorised pass (:func:`propagate`) integrates at once, [-].  A pass is cut
#: at the first switch and the rest integrated again, so on a long cycle with many switches
#: whole-remainder passes would cost steps × switches; passes of at most this many steps keep
#: the work proportional to the steps.  Cycles up to this length integrate exactly as in one
#: pass.
PASS_STEPS = 4_096
#: What one substep of the vectorised pass (:func:`propagate`, per step and part
#: of a pass) costs against one scalar substep, [-] (measured: about 50 times cheaper).
VECTOR_SUBSTEP_COST = 0.02


class Budget:
    """The work left to one run, in scalar substeps (see :data:`SUBSTEP_BUDGET`).

    Parameters
    ----------
    plant : Plant
        The run's fixed data (named in the message).
    limit : float, optional
        Substeps allowed, [-] (default :data:`SUBSTEP_BUDGET`, per :data:`BUDGET_STEPS`
        steps of a longer cycle).
    """

    def __init__(self, plant: Plant, limit: float | None = None) -> None:
        self.plant, self.used = plant, 0.0
        if limit is None:
            limit = SUBSTEP_BUDGET * max(1.0, plant.n / BUDGET_STEPS)
        self.limit = float(limit)

    def spend(self, substeps: float) -> None:
        """Count ``substeps`` [-]; raise SimulationError once the budget is exceeded."""
        self.used += substeps
        if self.used > self.limit:
            p = self.plant
            volume = f"{p.volume * 1e3:.4g} L" if p.charge is not None else "no accumulator"
            raise SimulationError(
                f"the time-domain simulation needs more than {self.limit:,.0f} substeps for one "
                f"run (pump {p.qp * 6e4:.4g} L/min against a gas volume of {volume}, step "
                f"{p.dt:g} s, at {p.T_wall - 273.15:.1f} °C); expected a plant it can integrate "
                "in reasonable time: check the pump, the accumulator and the relief setting"
            )


def scalar_step(
    plant: Plant, st: State, k: int, parts, budget: Budget | None = None
) -> tuple[State, dict]:
    """Integrate grid step k part by part with the relief valve and the oil limits.

    Explicit Heun substeps on the oil (relief flow :math:`K (p - p_c)^+`) with the same
    exponential map for the temperature (:func:`~._integrator.sub_map` for one substep, in
    plain floats); used where the smooth path does not apply.

    Parameters
    ----------
    plant : Plant
        The run's fixed data.
    st : State
        State at the start of the step.
    k : int
        Step index, [-].
    parts : sequence of (float, float)
        (duration [s], pump delivery over its full flow [-]) of the step's parts.
    budget : Budget, optional
        The run's work budget, charged with the substeps taken.

    Returns
    -------
    tuple
        The state at the step end and a dict of the step's record entries.
    """
    ch = plant.charge
    Vg, pa, pc = ch.volume, plant.p_ambient, plant.relief
    K = plant.relief_gain
    Tw, tau = plant.T_wall, plant.tau
    adiabatic = math.isinf(tau)
    pg = scalar_gas(ch.model, ch.mass, ch.volume)
    d = float(plant.demand[k])
    S, T, p, G = st.S, st.T, st.p, st.G
    p_lo = p_hi = p
    w_pump = w_cons = w_relief = v_relief = v_unmet = 0.0
    out_max = -math.inf
    stop = False
    hi = min(plant.stop, Vg * (1.0 - 1e-6))
    e = om = f = 0.0

    def advance(G, r, hs):
        """One substep of the oil at flow r [m³/s] and the temperature map with Γ = G."""
        S_try = S + r * hs
        unmet = excess = 0.0
        if S_try < 0.0:
            unmet, S_new = -S_try, 0.0
        elif S_try > hi:
            excess, S_new = S_try - hi, hi
        else:
            S_new = S_try
        Vb = Vg - S_new
        ratio = ((Vg - S) / Vb) ** G
        if adiabatic:
            T_new = ratio * T
        else:
            r_eff = (S_new - S) / hs
            T_new = e * ratio * T + Tw * (om + G * r_eff * tau * f / Vb)
        p_new, G_new = pg(Vb, T_new)
        return S_new, T_new, p_new, G_new, unmet, excess

    for h, u in parts:
        if h <= 0:
            continue
        q_in = plant.qp * u
        out_max = max(out_max, d - (plant.qp if u >= 1.0 else 0.0))
        V = Vg - S
        stiff = K * KAPPA * max(p, pc) / max(V, _EPS)
        n = max(
            4, math.ceil(h * stiff / _STIFF_STEP), math.ceil(abs(q_in - d) * h / V / _VOLUME_STEP)
        )
        n = min(n, 20_000)
        if budget is not None:
            budget.spend(n)
        hs = h / n
        if not adiabatic:
            x = hs / tau
            e = math.exp(-x)
            om = -math.expm1(-x)
            f = om - x * e
        for _ in range(n):
            # K·max(0, p − p_c) and min/max below as comparisons: the same floats, fewer calls
            over = p - pc
            qr0 = K * (over if over > 0.0 else 0.0)
            pred = advance(G, q_in - d - qr0, hs)
            over = pred[2] - pc
            qr1 = K * (over if over > 0.0 else 0.0)
            qr = 0.5 * (qr0 + qr1)
            r = q_in - d - qr
            if S == 0.0 and pred[0] == 0.0 and r * hs <= 0.0:
                # An empty bank that stays empty: the gas volume does not change, so Γ drops
                # out of the temperature map and the corrector lands where the predictor did.
                S1, T1, p1, G1 = pred[:4]
                unmet, excess = max(0.0, -(S + r * hs)), 0.0
            else:
                S1, T1, p1, G1, unmet, excess = advance(0.5 * (G + pred[3]), r, hs)
            line = p1
            if excess > 0.0:  # piston at its end stop: the excess goes over the relief
                line = max(p1, pc + excess / hs / K)
                stop = True
            pbar = 0.5 * (p + line) - pa
            w_pump += q_in * hs * pbar
            w_cons += (d * hs - unmet) * pbar
            w_relief += (qr * hs) * pbar + excess * (line - pa)
            v_relief += qr * hs + excess
            v_unmet += unmet
            if line < p_lo:
                p_lo = line
            if line > p_hi:
                p_hi = line
            S, T, p, G = S1, T1, p1, G1
    # The state after the step is its last part's (an empty last part carries a controller's
    # state, e.g. the schedule's cut-out latch).
    u_end = parts[-1][1] if parts else st.u
    out = dict(
        p_lo=p_lo,
        p_hi=p_hi,
        w_pump=w_pump,
        w_cons=w_cons,
        w_relief=w_relief,
        v_relief=v_relief,
        v_unmet=v_unmet,
        out_max=out_max,
        stop=stop,
    )
    return State(S, T, p, G, int(u_end)), out


# --------------------------------------------------------------------------- controllers
class Controller:
    """A load/unload controller: what the pump does in each step.

    Subclasses implement :meth:`plan` (the open-loop plan of the remaining steps for a pump
    state) and may implement :meth:`find_switch` (where a state-dependent switch occurs).
    """

    #: Name as listed in :data:`stowflow.simulation.verify.CONTROLLERS`.
    name = "controller"

    def initial_u(self) -> int:
        """Pump load state at the first cycle start, [-]."""
        return 1

    def plan(self, plant: Plant, k: int, u: int):
        """Plans of steps k … N−1 for pump state u: (h1 [s], u1 [-], u2 [-]) arrays."""
        raise NotImplementedError

    def window(self, plant: Plant, k: int, u: int, steps: int):
        """Plans of steps k … k+steps−1 only (fewer at the cycle end): :meth:`plan` cut;
        the controllers here build no more than that."""
        return tuple(a[:steps] for a in self.plan(plant, k, u))

    def find_switch(self, plant: Plant, st: State, ps: Pass) -> tuple[int, float] | None:
        """First step j of the pass and fraction θ ∈ [0, 1] within it where the pump switches."""
        return None

    def switch_at_end(self, plant: Plant, st: State) -> bool:
        """Whether the pump switches at a step end reached by :func:`scalar_step`."""
        return False

    def setpoints(self) -> dict:
        """Switch settings (absolute pressures [Pa], stroke fractions [-])."""
        return {}


# --------------------------------------------------------------------------- one cycle
def run_cycle(
    plant: Plant,
    ctrl: Controller,
    st: State,
    T_guess: np.ndarray,
    substeps: int | None = None,
    budget: Budget | None = None,
) -> tuple[Record, State]:
    """Simulate one cycle from state ``st``; return its record and the end state.

    Parameters
    ----------
    plant : Plant
        The run's fixed data.
    ctrl : Controller
        The controller.
    st : State
        State at the cycle start.
    T_guess : numpy.ndarray
        Guess of the step-end gas temperatures (e.g. the previous cycle's), [K].
    substeps : int, optional
        Substeps per part; default the plant's.
    budget : Budget, optional
        The run's work budget (default: a new one of :data:`SUBSTEP_BUDGET` for this cycle).

    Returns
    -------
    tuple of (Record, State)

    Raises
    ------
    SimulationError
        The budget is exceeded.
    """
    n = plant.n
    budget = Budget(plant) if budget is None else budget
    n_sub = substeps or plant.substeps
    rec = Record.empty(n)
    rec.start = st
    k = 0
    override = None
    while k < n:
        h1, u1, u2 = ctrl.window(plant, k, st.u, PASS_STEPS)
        cut = k + h1.size < n  # this pass ends before the cycle does
        if override is not None:
            h1[0], u1[0], u2[0] = override
        w = k + h1.size
        ps = propagate(plant, st, h1, u1, u2, plant.demand[k:w], T_guess[k:w], substeps)
        m = ps.S_end.size
        budget.spend(VECTOR_SUBSTEP_COST * 2 * n_sub * max(m, 1))
        special = None
        over = (ps.p_end > plant.relief) | (ps.p_b > plant.relief)
        if over.any():
            special = int(np.argmax(over))
        elif ps.truncated:
            special = m
        sw = ctrl.find_switch(plant, st, ps)
        if sw is not None and (special is None or sw[0] <= special):
            j, theta = sw
            if j == 0 and override is not None:
                # Switched back within the step it switched in (chatter): the second switch
                # is placed at the step end.
                st = accept(rec, k, ps, 1, st, plant)
                st = State(st.S, st.T, st.p, st.G, 1 - int(ps.u2[0]))
                k += 1
                override = None
                continue
            u_old = int(ps.u1[j])  # pump state going into step j
            st = accept(rec, k, ps, j, st, plant)
            override = (theta * plant.dt, u_old, 1 - u_old)
            st = State(st.S, st.T, st.p, st.G, 1 - u_old)
            k += j
            continue
        if special is None:
            st = accept(rec, k, ps, m, st, plant)
            if not cut:
                break
            k += m
            override = None
            continue
        st = accept(rec, k, ps, special, st, plant)
        k += special
        plan = (float(h1[special]), float(u1[special]), float(u2[special]))
        override = None
        # Step by step while the relief valve is open or the oil sits at a limit.
        while True:
            parts = ((plan[0], plan[1]), (plant.dt - plan[0], plan[2]))
            st, info = scalar_step(plant, st, k, parts, budget)
            rec.S[k], rec.T[k], rec.p[k] = st.S, st.T, st.p
            rec.h1[k], rec.u1[k], rec.u2[k] = plan
            for key, value in info.items():
                getattr(rec, key)[k] = value
            if ctrl.switch_at_end(plant, st):
                st = State(st.S, st.T, st.p, st.G, 1 - st.u)
            k += 1
            at_limit = st.S <= 0.0 or st.S >= min(plant.stop, plant.cap)
            if k >= n or not (info["v_relief"] > 0 or st.p >= plant.relief or at_limit):
                break
            h1, u1, u2 = ctrl.window(plant, k, st.u, 1)
            plan = (float(h1[0]), float(u1[0]), float(u2[0]))
    return rec, st


# --------------------------------------------------------------------------- cycles
@dataclass
class Orbit:
    """The periodic steady state (or the last cycles when none was found).

    Attributes
    ----------
    records : list of Record
        The cycles of the orbit (``period`` of them; or the last ones simulated).
    cycles : int
        Cycles simulated, [-].
    periodic : bool
        True when the steady-state criterion was met.
    period : int
        Cycles per period of the orbit, [-].
    end : State
        State after the last cycle.
    notes : list of str
        Remarks (acceleration used, cap reached).
    """

    records: list
    cycles: int
    periodic: bool
    period: int
    end: State
    notes: list = field(default_factory=list)


def _close(a: State, b: State, volume: float) -> bool:
    """The steady-state criterion between two cycle-start states (volume [m³])."""
    return a.u == b.u and abs(a.S - b.S) <= OIL_TOL * volume and abs(a.T - b.T) <= TEMPERATURE_TOL


def max_cycles_for(plant: Plant) -> int:
    """Cap on the cycles simulated to reach the periodic steady state, [-].

    Enough for the gas temperature to relax from 100 K off to :data:`TEMPERATURE_TOL`
    (:math:`\\tau/T_c \\ln(10^4)` cycles) plus room for two orbits of :data:`MAX_PERIOD`.
    """
    relax = 0.0 if math.isinf(plant.tau) else plant.tau / plant.duration * math.log(1e4)
    return int(min(400, max(24, math.ceil(relax) + 2 * MAX_PERIOD + 4)))


def run_periodic(
    plant: Plant,
    ctrl: Controller,
    st: State,
    T_guess: np.ndarray | None = None,
    *,
    max_cycles: int | None = None,
    accelerate: bool = True,
) -> Orbit:
    """Simulate cycle after cycle until the periodic steady state.

    Criterion: the state at a cycle start (pump state, stored oil within
    :data:`OIL_TOL` × gas volume, gas temperature within :data:`TEMPERATURE_TOL`) repeats the
    state P cycles earlier, P = 1 … :data:`MAX_PERIOD`.  The slow relaxation of the gas
    temperature is accelerated by Aitken's Δ² extrapolation of the cycle-start temperature
    when three consecutive cycles switched alike; the criterion is then met by plain cycles.

    Parameters
    ----------
    plant : Plant
        The run's fixed data.
    ctrl : Controller
        The controller.
    st : State
        State at the first cycle start.
    T_guess : numpy.ndarray, optional
        Guess of the step-end temperatures, [K]; default the wall temperature.
    max_cycles : int, optional
        Cap on the cycles, [-]; default :func:`max_cycles_for`.
    accelerate : bool
        Use the temperature extrapolation.

    Returns
    -------
    Orbit

    Raises
    ------
    SimulationError
        The run exceeds its work budget, :data:`SUBSTEP_BUDGET` substeps.
    """
    cap = max_cycles or max_cycles_for(plant)
    guess = np.full(plant.n, plant.T_wall) if T_guess is None else np.array(T_guess, float)
    starts = [st]
    records: list[Record] = []
    notes: list[str] = []
    last_jump = -10
    budget = Budget(plant)
    for c in range(cap):
        rec, st = run_cycle(plant, ctrl, st, guess, budget=budget)
        records.append(rec)
        if len(records) > 2 * MAX_PERIOD:
            records.pop(0)
        guess = rec.T
        starts.append(st)
        for P in range(1, min(MAX_PERIOD, len(starts) - 1) + 1):
            if _close(st, starts[-1 - P], plant.volume):
                return Orbit(records[-P:], c + 1, True, P, st, notes)
        if accelerate and c - last_jump >= 3 and len(starts) >= 4:
            t0, t1, t2 = (s.T for s in starts[-3:])
            same = all(s.u == st.u for s in starts[-3:]) and _switches_alike(records[-2:])
            d1, d2 = t1 - t0, t2 - t1
            if same and abs(d2) > TEMPERATURE_TOL and d1 != 0.0:
                ratio = d2 / d1
                if 0.2 < ratio < 0.995:
                    jump = d2 * ratio / (1.0 - ratio)
                    st = start_state(plant, st.S, st.T + jump, st.u)
                    guess = guess + jump
                    starts[-1] = st
                    last_jump = c
                    if not notes:
                        notes.append("gas-temperature relaxation accelerated (Aitken Δ²)")
    window = records[-min(len(records), MAX_PERIOD) :]
    notes.append(f"no periodic state within {cap} cycles; figures over the last {len(window)}")
    return Orbit(window, cap, False, len(window), st, notes)


def _switches_alike(recs: list[Record]) -> bool:
    """True when the cycles switched the pump equally often (for the extrapolation)."""
    counts = [
        int(np.count_nonzero(r.u1 != r.u2)) + int(np.count_nonzero(r.u2[:-1] != r.u1[1:]))
        for r in recs
    ]
    return len(set(counts)) <= 1
