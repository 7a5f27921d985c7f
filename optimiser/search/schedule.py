"""Load/unload schedules on the cycle's grid: store balance, a fast greedy rule, an exact checker.

The accumulator bank is a store of oil ``S`` between a lower bound ``L[t]`` (the oil needed for
the required pressure at the end of step ``t``) and an upper bound ``U`` (the oil at the unload
pressure).  With the pump delivering ``Q_p·u[t]`` and the machine drawing ``d[t]``, the store
follows

.. math::
    S_t = \\min\\left(U,\\; S_{t-1} + (Q_p u_t - d_t)\\,\\Delta t\\right)

where the excess over ``U`` is spilled (relief or unloading within the step).  The cycle
repeats, so the state of interest is the periodic steady state.  Everything here is exact
arithmetic on the grid (no physics beyond the store balance); the stowflow uses it for its
warm start and fallback, and the tests use :func:`check_schedule` as the independent judge of
every schedule the stowflow returns.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from stowflow.units import HOUR, LITRE, LPM

__all__ = [
    "ScheduleCheck",
    "StoreRun",
    "check_schedule",
    "cooling_loss",
    "deficit_from_full",
    "greedy_schedule",
    "level_draws",
    "lowest_trajectory",
    "refill_memory",
    "run_store",
    "switch_counts",
]

_EPS = 1e-12


def deficit_from_full(net: np.ndarray) -> np.ndarray | None:
    """Periodic deficit below a full store when the pump stays loaded and spills the excess.

    With ``D_t = U − S_t`` the capped store balance becomes Lindley's recursion
    :math:`D_t = \\max(0, D_{t-1} - n_t)` with ``n_t`` the net inflow of step ``t``.  It does
    not depend on ``U``, which is what makes storage sizing linear in the gas volume.

    Parameters
    ----------
    net : numpy.ndarray
        Net inflow volume into the store per step, (pump − demand)·Δt, [m³].

    Returns
    -------
    numpy.ndarray or None
        Deficit at the end of each step in the periodic steady state, [m³]; None when the net
        inflow over a cycle is negative (the store drains: no periodic state).
    """
    net = np.asarray(net, dtype=float)
    total = float(net.sum())
    scale = float(np.abs(net).sum()) or 1.0
    if total < -1e-12 * scale:
        return None
    # Two passes of the recursion from D = 0: with a non-negative net per cycle the deficit
    # reaches zero at least once per cycle, so the second pass is the periodic state.
    c = np.concatenate(([0.0], np.cumsum(np.concatenate((net, net)))))
    d = np.maximum.accumulate(c) - c
    return d[net.size + 1 :]


def refill_memory(deficit: np.ndarray, dt: float, tau: float) -> np.ndarray:
    """Recent refill of the store, weighted by how long ago it came in, [m³] (periodic).

    The oil the store gains in each step (the fall of the deficit) heats its gas; the heat
    leaves through the wall with the time constant τ.  Linearised, the gas's excess
    temperature follows the refill through a first-order lag, so it is proportional to

    .. math::
        E(t) = \\int_{-\\infty}^{t} r(s)\\, e^{-(t - s)/\\tau}\\, ds, \\qquad
        E_t = a\\,E_{t-1} + \\Delta S_t\\,\\frac{\\tau}{\\Delta t}(1 - a),
        \\quad a = e^{-\\Delta t/\\tau}

    with ``r`` the refill rate (exact for a rate constant within each step).  A steady refill
    at the rate q gives E = τ·q; a refill much quicker than τ gives E = its volume.

    Parameters
    ----------
    deficit : numpy.ndarray
        Periodic deficit below a full store (:func:`deficit_from_full`), [m³].
    dt : float
        Step length, [s].
    tau : float
        Thermal time constant, [s] (``inf``: the gas never cools, E is not bounded: refused).

    Returns
    -------
    numpy.ndarray
        E at the end of each step in the periodic state, [m³].
    """
    if not (math.isfinite(tau) and tau > 0):
        raise ValueError("refill memory needs a finite time constant > 0")
    d = np.asarray(deficit, dtype=float)
    gain = np.maximum(np.roll(d, 1) - d, 0.0)
    a = math.exp(-dt / tau)
    x = gain * (tau / dt) * (1.0 - a)
    out = np.empty(d.size)

    def sweep(e0: float) -> float:
        # y_t = a·y_{t-1} + x_t in blocks short enough for a^-k to stay finite
        block = max(1, int(50.0 * tau / dt))
        y = e0
        for i in range(0, d.size, block):
            xb = x[i : i + block]
            k = np.arange(1, xb.size + 1)
            w = a**k
            out[i : i + block] = w * (y + np.cumsum(xb / w))
            y = float(out[i + xb.size - 1])
        return y

    end = sweep(0.0)
    # linear in the start value: the periodic start is end / (1 - a^n)
    decay = a**d.size
    sweep(end / (1.0 - decay) if decay < 1.0 else end)
    return out


def cooling_loss(deficit: np.ndarray, memory: np.ndarray) -> np.ndarray:
    """Oil-equivalent heat the gas has lost since the store was last full, [m³].

    When the store was last full (the pump unloading at the unload pressure) its gas held the
    heat ``memory`` of the refills before (:func:`refill_memory`); the unloading stopped the
    fill that much short of the isotherm.  By superposition on the linearised energy
    equation, what the gas has lost of that heat since, less the heat of any refill since,
    is pressure the store now lacks against its isothermal curve:
    :math:`L_t = \\max(0, E_{s(t)} - E_t)`, with s(t) the last full step (L = 0 where the store
    is full).  The cooling of a draw's own expansion is the discharge's polytropic process.

    Parameters
    ----------
    deficit : numpy.ndarray
        Periodic deficit below a full store (:func:`deficit_from_full`), [m³].
    memory : numpy.ndarray
        :func:`refill_memory` of the same deficits, [m³].

    Returns
    -------
    numpy.ndarray
        L per step, [m³].
    """
    d = np.asarray(deficit, dtype=float)
    e = np.asarray(memory, dtype=float)
    n = d.size
    full = d <= 0
    if not full.any():
        return np.zeros(n)
    # index of the last full step at or before t, cyclically
    twice = np.concatenate((full, full))
    last = np.maximum.accumulate(np.where(twice, np.arange(2 * n), -1))[n:] % n
    return np.where(full, 0.0, np.maximum(0.0, e[last] - e))


def level_draws(
    deficit: np.ndarray, loss: np.ndarray | None, inverse: np.ndarray, levels: int
) -> list[tuple[np.ndarray, np.ndarray]]:
    """Per pressure level, the (deficit, loss) pairs that can set the most it asks, [m³].

    A level's draw on the store for a heating factor h ≥ 0 is
    :math:`\\max_t (D_t + h L_t)` over its steps with a deficit (L: :func:`cooling_loss`).
    Only the upper convex hull of the points :math:`(L_t, D_t)` can attain that maximum, so
    each level keeps those.

    Parameters
    ----------
    deficit, loss : numpy.ndarray
        :func:`deficit_from_full` and :func:`cooling_loss` per step (None: zero).
    inverse : numpy.ndarray
        Level index of each step, [-].
    levels : int
        Number of levels, [-].

    Returns
    -------
    list of (D, L) array pairs
        Empty arrays for a level without a deficit.
    """
    d = np.asarray(deficit, float)
    e = np.zeros(d.size) if loss is None else np.asarray(loss, float)
    out = []
    for k in range(levels):
        m = (inverse == k) & (d > 0)
        dk, ek = d[m], e[m]
        if dk.size == 0:
            out.append((dk, ek))
            continue
        # upper hull for slopes h in [0, inf): from the largest D (h = 0) towards the
        # largest E, keeping the points where the envelope turns
        order = np.lexsort((-ek, -dk))
        hull: list[int] = []
        for i in order:
            if hull and ek[i] <= ek[hull[-1]]:
                continue  # dominated: no more E for less D
            while len(hull) >= 2:
                j0, j1 = hull[-2], hull[-1]
                # j1 is redundant when the line through j0 and i passes above it
                cross = (ek[j1] - ek[j0]) * (dk[i] - dk[j0]) - (dk[j1] - dk[j0]) * (ek[i] - ek[j0])
                if cross >= 0:
                    hull.pop()
                else:
                    break
            hull.append(i)
        idx = np.array(hull, int)
        out.append((dk[idx], ek[idx]))
    return out


@dataclass(frozen=True)
class StoreRun:
    """Periodic store trajectory of a given schedule.

    Attributes
    ----------
    oil : numpy.ndarray
        Stored oil at the end of each step, [m³].
    spill : numpy.ndarray
        Flow spilled over the upper bound in each step, [m³/s].
    start : float
        Stored oil at the start of the cycle (= end of the last step), [m³].
    """

    oil: np.ndarray
    spill: np.ndarray
    start: float


def run_store(u, demand, qp: float, dt: float, upper: float) -> StoreRun | None:
    """Periodic store trajectory for schedule ``u``, spilling above ``upper``.

    Parameters
    ----------
    u : array_like
        Pump load state per step, 0/1, [-].
    demand : array_like
        Demand flow per step, [m³/s].
    qp : float
        Effective pump flow, [m³/s].
    dt : float
        Step length, [s].
    upper : float
        Upper bound of the store, [m³].

    Returns
    -------
    StoreRun or None
        None when the schedule pumps less than the cycle draws (no periodic state).  When it
        pumps exactly as much and never reaches ``upper``, the trajectory is the one that
        touches ``upper`` once (the fullest periodic state).
    """
    u = np.asarray(u, dtype=float)
    demand = np.asarray(demand, dtype=float)
    net = (qp * u - demand) * dt
    deficit = deficit_from_full(net)
    if deficit is None:
        return None
    oil = upper - deficit
    prev = np.roll(oil, 1)
    spill_vol = prev + net - oil
    spill_vol[spill_vol < 0] = 0.0  # rounding noise only
    return StoreRun(oil=oil, spill=spill_vol / dt, start=float(oil[-1]))


def _cyclic_max_plus(base: np.ndarray, step: np.ndarray, backward: bool) -> np.ndarray:
    """One cyclic pass of :math:`x_t = \\max(b_t, x_{t\\pm1} - c)` over three laps.

    Backward: :math:`x_t = \\max(b_t, x_{t+1} - s_{t+1})`; forward:
    :math:`x_t = \\max(b_t, x_{t-1} - s_t)`.  Solved in closed form with cumulative sums.
    """
    n = base.size
    b3 = np.tile(base, 3)
    s3 = np.tile(step, 3)
    if backward:
        # x_t = max_{k ≥ t} (b_k − Σ_{j=t+1..k} s_j) = G_t + max_{k ≥ t}(b_k − G_k), G = cumsum(s)
        g = np.cumsum(s3)
        v = b3 - g
        best = np.maximum.accumulate(v[::-1])[::-1]
        x = best + g
    else:
        # x_t = max_{k ≤ t} (b_k − Σ_{j=k+1..t} s_j) = −G_t + max_{k ≤ t}(b_k + G_k)
        g = np.cumsum(s3)
        v = b3 + g
        best = np.maximum.accumulate(v)
        x = best - g
    return x[n : 2 * n]


def lowest_trajectory(u, demand, lower, upper: float, qp: float, dt: float) -> StoreRun | None:
    """The lowest periodic store trajectory a schedule allows, with the least pressure.

    Within a loaded step the pump may be unloaded part-way (as a pressure switch does), so the
    store may rise by at most :math:`(Q_p u_t - d_t)\\Delta t` and falls by at least
    :math:`d_t\\Delta t - Q_p u_t\\Delta t`, i.e. it may fall by up to :math:`d_t\\Delta t`.
    These are difference constraints with a lower bound, so their pointwise least solution
    exists whenever any does; it is found by alternating cyclic max-plus passes.  It stores
    the least oil at every step, so the pump works against the lowest pressure.

    Parameters
    ----------
    u : array_like
        Load state per step, 0/1, [-].
    demand : array_like
        Demand flow per step, [m³/s].
    lower : array_like
        Least stored oil at each step end, [m³].
    upper : float
        Most stored oil, [m³].
    qp : float
        Effective pump flow, [m³/s].
    dt : float
        Step length, [s].

    Returns
    -------
    StoreRun or None
        ``spill`` is the pump flow returned to tank in each step, [m³/s]; None when no
        periodic trajectory stays within the bounds.
    """
    u = np.asarray(u, float)
    demand = np.asarray(demand, float)
    lower = np.broadcast_to(np.asarray(lower, float), demand.shape).astype(float)
    rise = (qp * u - demand) * dt  # most the store can gain in a step
    fall = demand * dt  # most it can lose in a step
    if rise.sum() < -1e-12 * (np.abs(rise).sum() + 1e-30):
        return None
    x = lower.copy()
    for _ in range(4 * demand.size + 4):
        nxt = np.maximum(x, _cyclic_max_plus(x, rise, backward=True))
        nxt = np.maximum(nxt, _cyclic_max_plus(nxt, fall, backward=False))
        if np.all(nxt <= x + 1e-15) or np.any(nxt > upper + 1e-9 * max(upper, 1e-9)):
            x = nxt
            break
        x = nxt
    if np.any(x > upper + 1e-9 * max(upper, 1e-9)):
        return None
    delta = x - np.roll(x, 1)
    spill = np.maximum(qp * u - demand - delta / dt, 0.0)
    return StoreRun(oil=x, spill=spill, start=float(x[-1]))


def switch_counts(u) -> tuple[int, int]:
    """Load and unload events of a cyclic schedule, [-] each."""
    u = np.asarray(u).astype(int)
    du = u - np.roll(u, 1)
    return int((du == 1).sum()), int((du == -1).sum())


def _run_lengths_ok(u: np.ndarray, value: int, least: int) -> bool:
    """Every cyclic run of ``value`` lasts at least ``least`` steps."""
    if least <= 1 or u.min() == u.max():
        return True
    # rotate so the sequence starts at a change
    k = int(np.flatnonzero(u != np.roll(u, 1))[0])
    r = np.roll(u, -k)
    edges = np.flatnonzero(np.diff(np.concatenate(([r[0] ^ 1], r, [r[-1] ^ 1]))) != 0)
    starts, ends = edges[:-1], edges[1:]
    for s, e in zip(starts, ends, strict=True):
        if r[s] == value and e - s < least:
            return False
    return True


def _max_window_events(u: np.ndarray, window: int, full_cycles: int) -> int:
    """Most load events in any window of ``full_cycles`` cycles plus ``window`` steps."""
    n = u.size
    events = ((u - np.roll(u, 1)) == 1).astype(int)
    per_cycle = int(events.sum())
    if window <= 0:
        return full_cycles * per_cycle
    ext = np.concatenate((events, events))
    c = np.concatenate(([0], np.cumsum(ext)))
    w = min(window, n)
    sums = c[w : w + n] - c[0:n]
    return full_cycles * per_cycle + int(sums.max())


@dataclass(frozen=True)
class ScheduleCheck:
    """Verdict of :func:`check_schedule`.

    Attributes
    ----------
    ok : bool
        True when every limit holds.
    problems : tuple[str, ...]
        One plain sentence per broken limit.
    run : StoreRun | None
        The periodic store trajectory (None when none exists).
    """

    ok: bool
    problems: tuple[str, ...]
    run: StoreRun | None


def window_steps(cycle_time: float, dt: float, horizon: float = HOUR) -> tuple[int, int]:
    """Split a horizon into whole cycles plus a partial window of steps.

    Parameters
    ----------
    cycle_time : float
        Cycle duration, [s].
    dt : float
        Step length, [s].
    horizon : float
        Window length, [s] (one hour for "load events per hour").

    Returns
    -------
    (int, int)
        Whole cycles in the window, [-], and the remaining steps, [-].
    """
    full = math.floor(horizon / cycle_time + 1e-9)
    rest = horizon - full * cycle_time
    return full, math.ceil(rest / dt - 1e-9)


def check_schedule(
    u,
    demand,
    lower,
    upper: float,
    qp: float,
    dt: float,
    *,
    min_up: int = 1,
    min_down: int = 1,
    max_events_per_hour: float | None = None,
    discharge_limit: float = math.inf,
    tol: float = 1e-9,
) -> ScheduleCheck:
    """Independent check of a schedule at full resolution.

    Parameters
    ----------
    u : array_like
        Load state per step, 0/1, [-].
    demand : array_like
        Demand flow per step, [m³/s].
    lower : array_like
        Least stored oil at the end of each step, [m³].
    upper : float
        Most stored oil, [m³].
    qp : float
        Effective pump flow, [m³/s].
    dt : float
        Step length, [s].
    min_up, min_down : int
        Least consecutive loaded / unloaded steps, [-].
    max_events_per_hour : float, optional
        Most load events in any hour, [1/h].
    discharge_limit : float
        Largest flow the bank may deliver, [m³/s].
    tol : float
        Volume tolerance, [m³].

    Returns
    -------
    ScheduleCheck
    """
    u = np.rint(np.asarray(u, dtype=float)).astype(int)
    demand = np.asarray(demand, dtype=float)
    lower = np.broadcast_to(np.asarray(lower, dtype=float), demand.shape)
    problems: list[str] = []
    run = run_store(u, demand, qp, dt, upper)
    if run is None:
        problems.append("the pump delivers less oil over the cycle than the machine draws")
    else:
        short = lower - run.oil
        k = int(np.argmax(short))
        if short[k] > tol:
            problems.append(
                f"stored oil {run.oil[k] / LITRE:.4f} L at step {k} is below the "
                f"{lower[k] / LITRE:.4f} L the required pressure needs"
            )
        # net flow out of the bank within each step
        out = demand - qp * u + run.spill
        j = int(np.argmax(out))
        if out[j] > discharge_limit * (1 + 1e-9) + 1e-12:
            problems.append(
                f"bank discharge {out[j] / LPM:.1f} L/min at step {j} exceeds its limit "
                f"{discharge_limit / LPM:.1f} L/min"
            )
    if not _run_lengths_ok(u, 1, min_up):
        problems.append(f"a loaded stretch is shorter than {min_up} steps")
    if not _run_lengths_ok(u, 0, min_down):
        problems.append(f"an unloaded stretch is shorter than {min_down} steps")
    if max_events_per_hour is not None:
        full, rest = window_steps(u.size * dt, dt)
        worst = _max_window_events(u, rest, full)
        if worst > max_events_per_hour + 1e-9:
            problems.append(
                f"{worst} load events in one hour exceed the limit {max_events_per_hour:g}"
            )
    return ScheduleCheck(ok=not problems, problems=tuple(problems), run=run)


def _required_levels(lower: np.ndarray, demand: np.ndarray, qp: float, dt: float) -> np.ndarray:
    """Least store at each step end from which staying loaded keeps every later bound.

    Backward recursion :math:`R_t = \\max(L_t, R_{t+1} - (Q_p - d_{t+1})\\Delta t)`, iterated
    around the cycle until it repeats.
    """
    n = demand.size
    gain = (qp - demand) * dt
    r = lower.copy()
    for _ in range(3):
        changed = False
        nxt = r[0]
        for t in range(n - 1, -1, -1):
            val = max(lower[t], nxt - gain[(t + 1) % n])
            if val > r[t] + 1e-15:
                r[t] = val
                changed = True
            nxt = r[t]
        if not changed:
            break
    return r


@dataclass(frozen=True)
class _Levels:
    """Per-step data of the last-moment rule as Python lists (the step loop runs on scalars,
    where lists beat numpy indexing): store gain when loaded and loss when unloaded [m³], the
    required level and the idle thresholds for one and for ``min_down`` steps [m³]."""

    gain: list[float]
    loss: list[float]
    req: list[float]
    idle_1: list[float]
    idle_down: list[float]


def _last_moment(
    fill: float, levels: _Levels, upper: float, min_up: int, min_down: int
) -> np.ndarray | None:
    """The last-moment rule with the fill target ``fill`` of the free room, [-], run around
    the cycle until its start state repeats (at most 12 laps); the last lap's load states."""
    n = len(levels.gain)
    gain, loss, req_l = levels.gain, levels.loss, levels.req
    idle_1_l, idle_down_l = levels.idle_1, levels.idle_down
    u_prev, run_len, level = 1, min_up, upper
    last = None
    seen: set[tuple] = set()
    for _ in range(12):
        key = (u_prev, min(run_len, max(min_up, min_down)), round(level / (upper or 1.0), 9))
        if key in seen:
            break
        seen.add(key)
        u = [0] * n
        for t in range(n):
            if u_prev == 1:
                load = run_len < min_up
                if not load:
                    target = req_l[t - 1]
                    target = target + fill * (upper - target)
                    load = level < target - 1e-12 or level < idle_down_l[t]
            else:
                load = run_len >= min_down and level < idle_1_l[t]
            u[t] = int(load)
            level = min(upper, level + (gain[t] if load else -loss[t]))
            run_len = run_len + 1 if load == u_prev else 1
            u_prev = int(load)
        last = np.array(u, dtype=int)
    return last


def greedy_schedule(
    demand,
    lower,
    upper: float,
    qp: float,
    dt: float,
    *,
    min_up: int = 1,
    min_down: int = 1,
    max_events_per_hour: float | None = None,
    discharge_limit: float = math.inf,
) -> np.ndarray:
    """A feasible load schedule that loads at the last moment (fast warm start and fallback).

    The rule keeps the store as low as the bounds allow: it unloads once the store, drained by
    the coming ``min_down`` unloaded steps, still stays above the level from which loading
    again is always enough; it loads when it must.  When the result breaks the limit on load
    events, it charges further before unloading (fill targets ¼, ½, 1 of the free room).  The
    last resort, always loaded with the excess spilled, is feasible whenever any schedule is.

    Parameters
    ----------
    demand : array_like
        Demand flow per step, [m³/s].
    lower : array_like
        Least stored oil at each step end, [m³].
    upper : float
        Most stored oil, [m³].
    qp : float
        Effective pump flow, [m³/s].
    dt : float
        Step length, [s].
    min_up, min_down : int
        Least loaded / unloaded steps, [-].
    max_events_per_hour : float, optional
        Most load events per hour, [1/h].
    discharge_limit : float
        Largest flow the bank may deliver, [m³/s].

    Returns
    -------
    numpy.ndarray
        Load state per step, 0/1 (int), [-].
    """
    demand = np.asarray(demand, dtype=float)
    lower = np.broadcast_to(np.asarray(lower, dtype=float), demand.shape).copy()
    n = demand.size
    always = np.ones(n, dtype=int)
    req = _required_levels(lower, demand, qp, dt)
    if np.any(req > upper + 1e-12):
        return always
    idle_1 = _idle_threshold(demand, req, dt, 1, discharge_limit)
    idle_down = _idle_threshold(demand, req, dt, max(1, min_down), discharge_limit)
    levels = _Levels(
        ((qp - demand) * dt).tolist(),
        (demand * dt).tolist(),
        req.tolist(),
        idle_1.tolist(),
        idle_down.tolist(),
    )
    for fill in (0.0, 0.25, 0.5, 1.0):
        u = _last_moment(fill, levels, upper, min_up, min_down)
        if u is None:
            continue
        chk = check_schedule(
            u,
            demand,
            lower,
            upper,
            qp,
            dt,
            min_up=min_up,
            min_down=min_down,
            max_events_per_hour=max_events_per_hour,
            discharge_limit=discharge_limit,
        )
        if chk.ok:
            return u
    return always


def _idle_threshold(
    demand: np.ndarray, req: np.ndarray, dt: float, steps: int, discharge_limit: float
) -> np.ndarray:
    """Least store at the start of step ``t`` from which ``steps`` unloaded steps are safe, [m³].

    Unloaded from step ``t`` for ``k`` steps the store falls by the cumulative demand ``C``;
    it must stay at or above ``req`` throughout:
    :math:`s \\ge \\max_{j \\in [t, t+k)} (R_j + C_j) - C_{t-1}`.  Steps whose demand
    exceeds the bank's discharge limit cannot be unloaded at all (threshold +inf).
    """
    from scipy.ndimage import maximum_filter1d

    n = demand.size
    k = min(max(1, steps), n)
    d2 = np.concatenate((demand, demand))
    c = np.cumsum(d2 * dt)
    v = np.concatenate((req, req)) + c
    win = maximum_filter1d(v, size=k, origin=-(k // 2), mode="nearest")[:n]
    c_prev = np.concatenate(([0.0], c[: n - 1]))
    thr = win - c_prev
    too_fast = maximum_filter1d(d2, size=k, origin=-(k // 2), mode="nearest")[:n]
    thr[too_fast > discharge_limit * (1 + 1e-12)] = np.inf
    return thr - 1e-12
