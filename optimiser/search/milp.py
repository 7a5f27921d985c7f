"""The schedule model: a Pyomo MILP for one component family, solved by HiGHS.

With the pump, the accumulator bank and its precharge fixed (levels 1 and 2 of the objective
are settled by :mod:`stowflow.search.screen`), this model chooses the load state of the pump in
every step so that the stored oil stays between its bounds, the bank's discharge limit
holds, the pump keeps its minimum loaded and unloaded dwell and its limit on load events per
hour, and the electrical energy per cycle is least.

Formulation (per block ``b`` of ``B`` steps; ``B = 1`` is full resolution)
---------------------------------------------------------------------------
* ``u_b`` ∈ {0, 1} load state, ``r_b`` ∈ [0, Q_p·u_b] the pump flow returned to tank within
  the block (the unloading valve opens part-way through it, as a pressure switch does; a
  step is never a reason to overfill the store), ``S_b`` stored oil at the block end, cyclic:
  ``S_{-1} = S_{NB-1}``.
* Balance: :math:`S_b = S_{b-1} + n_b\\Delta t\\,(Q_p u_b - r_b) - \\sum_{t\\in b} d_t\\Delta t`.
* Bounds at every step inside the block, exact for a block-constant load state and spill:
  :math:`L_k \\le S_{b-1} + k\\Delta t (Q_p u_b - r_b) - D_k \\le U`.  Only the vertices of the
  upper convex hull of the points ``(k, L_k + D_k)`` and ``(k, −D_k)`` can bind, so only those
  rows are built (certified block aggregation: any solution is feasible at full resolution).
* Load and unload events ``v_b − w_b = u_b − u_{b-1}`` with the turn-on/turn-off
  inequalities of Rajan & Takriti for minimum up and down times, written with running
  counters ``C_b = C_{b-1} + v_b`` (window sums are differences of two counters).
* Load events per hour: whole cycles in the hour times the events per cycle plus the events
  in the remaining window.
* Valves (``valves``): ``"switch"`` lets the unloading valve open part-way through any
  loaded block, as an ideal pressure switch does at a full store; where the next block is
  loaded too that hides an unload and a load inside the block, which the caller counts
  (:func:`hidden_load_events`).  ``"strict"`` allows the part-way opening only in the last
  block of a loaded stretch (:math:`r_b \\le Q_p(1-u_{b+1})`, no hidden event) and lets a
  loaded pump spill over the relief valve only from a full store (``q_b ≤ Q_p y_b``,
  ``S_b ≥ U y_b``, ``y_b`` ∈ {0, 1}), at the relief setting's pressure.  The strict model is
  the one a tight switching limit needs (a 4 s cycle with at most 360 load events an hour
  allows none): the pump then stays loaded and the relief valve takes the excess.
* Energy, from the energy balance of the gas: over a periodic cycle the gas gives back what
  it took (:math:`\\oint p\\,dV = 0` for a fixed p–V map), so the pump's hydraulic work equals
  the work the machine draws at the accumulator pressure:
  :math:`E = \\sum_t d_t\\,p_g(\\bar S_t)\\,\\Delta t/(\\eta_o\\eta_m) +
  \\sum_t (1-f_t) P_{standby}\\Delta t` with ``f_t`` the loaded fraction of the step.  This is
  linear in the store: the convex gas curve :math:`p_g(S)` enters through its chords (an
  epigraph, exact at the chord ends), and no product of the load state with the store is
  needed.

References
----------
D. Rajan and S. Takriti, "Minimum up/down polytopes of the unit commitment problem with start-up
costs", IBM Research Report RC23628, 2005.

G. P. McCormick, "Computability of global solutions to factorable nonconvex programs: Part I —
Convex underestimating problems", Mathematical Programming 10 (1976) 147–175,
doi:10.1007/BF01580665.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field

import numpy as np

# pyomo.core is all the model needs (pyomo.environ would also load every solver plugin); the
# standard-form compiler hands the model to HiGHS.
import pyomo.core as pyo
from stowflow.search.schedule import run_store, window_steps
from stowflow.units import BAR, LITRE

__all__ = [
    "VALVE_MODES",
    "ScheduleProblem",
    "ScheduleSolution",
    "block_layout",
    "hidden_load_events",
    "solve_schedule",
]

#: The model's volume unit is the litre: L per m³, [1/m³] (1000 exactly).
_PER_LITRE = 1.0 / LITRE
#: The objective is in kJ: kJ per J, [kJ/J].
_OBJECTIVE_SCALE = 1e-3


@dataclass(frozen=True)
class ScheduleProblem:
    """Data of the schedule model (SI).

    Attributes
    ----------
    dt : float
        Step length, [s].
    demand : numpy.ndarray
        Demand per step, [m³/s].
    lower : numpy.ndarray
        Least stored oil at each step end, [m³].
    upper : float
        Most stored oil, [m³].
    qp : float
        Effective pump flow, [m³/s].
    discharge_limit : float
        Largest flow the bank delivers or takes, [m³/s] (inf: none).
    pressure_cuts : tuple[tuple[float, float], ...]
        Chords of the gauge pressure over the store, :math:`p_g(S) \\ge a_j + b_j S`:
        ``a_j`` in [Pa], ``b_j`` in [Pa/m³].  Their maximum is the piecewise-linear
        interpolant of the convex gas curve.
    relief_gauge : float
        Relief valve setting, gauge, [Pa]: oil spilled over it costs the pump this pressure.
    efficiency : float
        Pump overall times motor efficiency, [-].
    unloaded_power : float
        Electrical power while unloaded, [W].
    min_up, min_down : int
        Least loaded / unloaded steps, [-].
    max_events_per_hour : float | None
        Most load events in any hour, [1/h].
    """

    dt: float
    demand: np.ndarray
    lower: np.ndarray
    upper: float
    qp: float
    discharge_limit: float
    pressure_cuts: tuple[tuple[float, float], ...]
    relief_gauge: float
    efficiency: float
    unloaded_power: float
    min_up: int = 1
    min_down: int = 1
    max_events_per_hour: float | None = None

    @property
    def n(self) -> int:
        """Steps, [-]."""
        return int(self.demand.size)

    def gauge_pressure(self, oil) -> np.ndarray:
        """Piecewise-linear gauge pressure of the model at stored oil ``oil`` [m³], [Pa]."""
        oil = np.asarray(oil, float)
        return np.max([a + b * oil for a, b in self.pressure_cuts], axis=0)

    def energy(self, u, oil, returned, relief=0.0) -> float:
        """Energy per cycle of a full-resolution schedule by the model's own law, [J].

        Parameters
        ----------
        u : array_like
            Load state per step, [-].
        oil : array_like
            Stored oil at each step end (periodic), [m³].
        returned : array_like
            Pump flow returned to tank by the unloading valve within a step, [m³/s].
        relief : array_like
            Flow over the relief valve per step, [m³/s].
        """
        u = np.asarray(u, float)
        oil = np.asarray(oil, float)
        mid = 0.5 * (np.roll(oil, 1) + oil)
        hyd = self.demand * self.gauge_pressure(mid) + np.asarray(relief) * self.relief_gauge
        idle = (1 - u + np.asarray(returned, float) / self.qp) * self.unloaded_power
        return float((hyd.sum() / self.efficiency + idle.sum()) * self.dt)


@dataclass(frozen=True)
class ScheduleSolution:
    """Solved schedule.

    Attributes
    ----------
    u : numpy.ndarray
        Load state per step, 0/1, [-].
    oil : numpy.ndarray
        Stored oil at each step end (periodic), [m³].
    spill : numpy.ndarray
        Pump flow returned to tank by the unloading valve within each step, [m³/s] (only in
        the last step of a loaded stretch).
    relief : numpy.ndarray
        Flow over the relief valve per step (store full, pump loaded), [m³/s].
    energy : float
        Objective: electrical energy per cycle, [J].
    bound : float
        Best lower bound on it, [J].
    gap : float
        Relative gap, [-].
    status : str
        ``"optimal"`` (within the gap), ``"feasible"`` (time limit), ``"warm"`` (the solver
        returned nothing better than the warm start) or ``"failed"``.
    block : int
        Steps per block, [-].
    build_time, solve_time : float
        Wall-clock times, [s].
    """

    u: np.ndarray
    oil: np.ndarray
    spill: np.ndarray
    energy: float
    bound: float
    gap: float
    status: str
    block: int
    build_time: float
    solve_time: float
    relief: np.ndarray = field(default_factory=lambda: np.empty(0))


@dataclass(frozen=True)
class _HighsRun:
    objective: float | None  # best feasible objective (None: no solution)
    bound: float  # best bound (nan when unknown)
    optimal: bool


def _solve_highs(m, warm: bool, *, time_limit: float, mip_gap: float, threads: int):
    """Solve the Pyomo model ``m`` with HiGHS and load the values into its variables.

    Pyomo's standard-form compiler turns the model into sparse arrays (in about a fifth of the
    time a persistent solver interface takes to load it, measured on the 640-step demo), which
    go to HiGHS through highspy.  ``warm``: the variables' current values are a feasible
    start.  Every option is set on every solve.
    """
    import highspy
    from pyomo.common.tee import capture_output
    from pyomo.repn.plugins.standard_form import LinearStandardFormCompiler

    info = LinearStandardFormCompiler().write(m, mixed_form=True)
    cols = info.columns
    A = info.A.tocsc()
    rhs = np.asarray(info.rhs, float)
    kind = np.array([r.bound_type for r in info.rows], dtype=int)
    # bound_type 0: A x = rhs; 1: A x <= rhs; -1: A x >= rhs (mixed form keeps the signs)
    row_lo = np.where(kind == -1, rhs, np.where(kind == 0, rhs, -highspy.kHighsInf))
    row_up = np.where(kind == 1, rhs, np.where(kind == 0, rhs, highspy.kHighsInf))
    lb = np.array([-highspy.kHighsInf if v.lb is None else v.lb for v in cols], float)
    ub = np.array([highspy.kHighsInf if v.ub is None else v.ub for v in cols], float)
    lp = highspy.HighsLp()
    lp.num_col_, lp.num_row_ = len(cols), A.shape[0]
    lp.col_cost_ = np.asarray(info.c.toarray()[0], float)
    lp.offset_ = float(np.asarray(info.c_offset).ravel()[0]) if np.size(info.c_offset) else 0.0
    lp.col_lower_, lp.col_upper_ = lb, ub
    lp.row_lower_, lp.row_upper_ = row_lo, row_up
    lp.a_matrix_.format_ = highspy.MatrixFormat.kColwise
    lp.a_matrix_.start_ = A.indptr
    lp.a_matrix_.index_ = A.indices
    lp.a_matrix_.value_ = A.data
    lp.integrality_ = [
        highspy.HighsVarType.kInteger if v.is_integer() else highspy.HighsVarType.kContinuous
        for v in cols
    ]
    try:
        with capture_output(capture_fd=True):  # HiGHS prints a banner when it is made
            h = highspy.Highs()
            h.setOptionValue("output_flag", False)
    except RuntimeError as exc:
        # Pyomo's output capture reports a Ctrl+C that lands inside it as a RuntimeError
        # ("KeyboardInterrupt: ..."): give the interruption back as what it is.
        if "KeyboardInterrupt" in str(exc):
            raise KeyboardInterrupt from exc
        raise
    for key, value in (
        ("threads", int(threads)),
        ("time_limit", float(time_limit)),
        ("mip_rel_gap", float(mip_gap)),
        ("mip_abs_gap", 1e-9),
        ("random_seed", 0),
    ):
        h.setOptionValue(key, value)
    h.passModel(lp)
    if warm:
        start = highspy.HighsSolution()
        start.col_value = [0.0 if v.value is None else float(v.value) for v in cols]
        h.setSolution(start)
    h.run()
    status = h.getModelStatus()
    result = h.getInfo()
    if result.primal_solution_status != 2:  # no feasible solution
        return _HighsRun(None, math.nan, False)
    values = h.getSolution().col_value
    for v, x in zip(cols, values, strict=True):
        v.set_value(float(x), skip_validation=True)
    bound = float(result.mip_dual_bound)
    return _HighsRun(
        float(result.objective_function_value),
        bound if math.isfinite(bound) else math.nan,
        status == highspy.HighsModelStatus.kOptimal,
    )


#: The valve models of :func:`solve_schedule`.
VALVE_MODES = ("switch", "strict")


def hidden_load_events(u, returned, qp: float) -> int:
    """Load events per cycle hidden inside steps, [-].

    A loaded step that returns flow to tank part-way (``returned`` [m³/s] above a millionth
    of the pump flow ``qp`` [m³/s]) and is followed by a loaded step unloads and loads again
    inside the step: one load event that the step's load state does not show.
    """
    u = np.asarray(u).astype(int)
    nxt = np.roll(u, -1)
    part = np.asarray(returned, float) > 1e-6 * qp
    return int(np.count_nonzero((u == 1) & part & (nxt == 1)))


def block_layout(n: int, block: int) -> list[tuple[int, int]]:
    """Split ``n`` steps into consecutive blocks of ``block`` steps (last one shorter)."""
    return [(s, min(s + block, n)) for s in range(0, n, block)]


def _upper_hull(c: np.ndarray) -> list[int]:
    """Indices of the upper convex hull of the points (k+1, c[k]), k = 0…len−1."""
    hull: list[int] = []
    for k in range(c.size):
        while len(hull) >= 2:
            i, j = hull[-2], hull[-1]
            # drop j if it lies on or below the segment i→k
            if (c[j] - c[i]) * (k - i) <= (c[k] - c[i]) * (j - i) + 1e-18:
                hull.pop()
            else:
                break
        hull.append(k)
    return hull


def _window(counter, b: int, length: int, nb: int):
    """Sum of the last ``length`` events up to block ``b`` (cyclic) from a running counter."""
    if length <= 0:
        return 0
    length = min(length, nb)
    start = b - length  # counter index just before the window
    if start >= 0:
        return counter[b] - counter[start]
    if start == -1:
        return counter[b]
    # wraps: events in blocks nb+start+1 … nb-1 plus 0 … b
    return counter[b] + counter[nb - 1] - counter[nb + start]


def _labels_ok(ub, up_blocks, down_blocks, sp, block, n, dt) -> bool:
    """Whether block labels keep the dwell and event limits (used to relabel idle blocks)."""
    from stowflow.search.schedule import _max_window_events, _run_lengths_ok

    if not _run_lengths_ok(ub, 1, max(up_blocks, 1)) or not _run_lengths_ok(
        ub, 0, max(down_blocks, 1)
    ):
        return False
    if sp.max_events_per_hour is None:
        return True
    full, rest = window_steps(n * dt, dt)
    rest_blocks = math.ceil(rest / block) + (1 if block > 1 and rest else 0)
    return _max_window_events(ub, rest_blocks, full) <= sp.max_events_per_hour + 1e-9


@dataclass(frozen=True)
class _Data:
    """The schedule model's data in its own units (litres, L/s, bar) and block layout."""

    sp: ScheduleProblem
    block: int
    strict: bool
    d_si: np.ndarray  # demand per step, [m³/s]
    d: np.ndarray  # demand per step, [L/s]
    lower: np.ndarray  # least store at each step end, [L]
    upper: float  # most store, [L]
    qp: float  # pump flow, [L/s]
    q_lim: float  # bank discharge limit, [L/s]
    cuts: list[tuple[float, float]]  # chords of the gauge pressure: [bar], [bar/L]
    blocks: list[tuple[int, int]]
    lens: list[int]  # steps per block, [-]
    up_blocks: int  # least loaded blocks where a window constraint is needed, [-]
    down_blocks: int  # least unloaded blocks where a window constraint is needed, [-]

    @property
    def nb(self) -> int:
        """Blocks, [-]."""
        return len(self.blocks)

    @property
    def need_c(self) -> bool:
        """Whether the running counter of load events is needed."""
        return self.up_blocks > 1 or self.sp.max_events_per_hour is not None


def _model_data(sp: ScheduleProblem, block: int, strict: bool) -> _Data:
    """The model's data: SI scaled to litres, L/s and bar, and the blocks of ``block`` steps."""
    # The model works in litres, L/s and bar so that the solver's absolute tolerances (1e-7)
    # are far below anything that matters; results go back to SI at the end.
    vs, ps = _PER_LITRE, BAR
    d_si = np.asarray(sp.demand, float)
    blocks = block_layout(sp.n, block)
    return _Data(
        sp=sp,
        block=block,
        strict=strict,
        d_si=d_si,
        d=d_si * vs,
        lower=np.asarray(sp.lower, float) * vs,
        upper=sp.upper * vs,
        qp=sp.qp * vs,
        q_lim=sp.discharge_limit * vs,
        cuts=[(a / ps, b / ps / vs) for a, b in sp.pressure_cuts],
        blocks=blocks,
        lens=[e - s for s, e in blocks],
        up_blocks=math.ceil(sp.min_up / block) if sp.min_up > block else 0,
        down_blocks=math.ceil(sp.min_down / block) if sp.min_down > block else 0,
    )


def _add_variables(m, data: _Data) -> None:
    """Per block: load state ``u``, flow returned to tank ``r``, flow over the relief ``q``,
    store full ``y`` (strict valves), stored oil ``S``, load and unload events ``v``/``w``,
    gauge pressure ``pi``; the running event counters ``C``/``Cw`` where limits need them."""
    B = range(data.nb)
    qp, upper = data.qp, data.upper
    m.u = pyo.Var(B, domain=pyo.Binary)
    m.r = pyo.Var(B, bounds=(0.0, qp))  # returned to tank by the unloading valve
    # over the relief valve, from a full store (strict valves only)
    m.q = pyo.Var(B, bounds=(0.0, qp if data.strict else 0.0))
    if data.strict:
        m.y = pyo.Var(B, domain=pyo.Binary)  # store full at the block end (relief may open)
    # The store's bounds at block ends are variable bounds (no rows); for blocks of one step
    # they are the whole story.
    s_lo = [float(data.lower[e - 1]) if e - st == 1 else 0.0 for st, e in data.blocks]
    m.S = pyo.Var(B, bounds=lambda _m, b: (max(s_lo[b], 0.0), upper))
    m.v = pyo.Var(B, bounds=(0.0, 1.0))
    m.w = pyo.Var(B, bounds=(0.0, 1.0))
    m.pi = pyo.Var(B, bounds=(0.0, None))  # gauge pressure at the mean store of the block
    if data.need_c:
        m.C = pyo.Var(B, bounds=(0.0, data.nb))
    if data.down_blocks > 1:
        m.Cw = pyo.Var(B, bounds=(0.0, data.nb))


def _balance_rows(m, data: _Data, b: int) -> None:
    """Store balance of block ``b``, and the pump's returned and relief flow within its
    delivery."""
    s, e = data.blocks[b]
    nb_dt = data.lens[b] * data.sp.dt
    prev = m.S[b - 1] if b else m.S[data.nb - 1]
    dv = float(data.d[s:e].sum() * data.sp.dt)
    add = m.cons.add
    add(m.S[b] == prev + nb_dt * data.qp * m.u[b] - nb_dt * (m.r[b] + m.q[b]) - dv)
    add(m.r[b] + m.q[b] <= data.qp * m.u[b])


def _strict_valve_rows(m, data: _Data, b: int) -> None:
    """Strict valves: the unloading valve opens part-way through the last block of a loaded
    stretch only (one unload event, no extra load event); the relief valve spills only from
    a full store."""
    qp, add = data.qp, m.cons.add
    # w of the next block is the unload event at this block's end; with the event bounds
    # below it equals u_b(1 − u_{b+1}) at integer points and is tighter than 1 − u_{b+1} in
    # the relaxation.
    add(m.r[b] <= qp * (m.w[b + 1] if b + 1 < data.nb else m.w[0]))
    add(m.q[b] <= qp * m.y[b])
    add(m.y[b] <= m.u[b])
    add(m.S[b] >= data.upper * m.y[b])


def _inner_bound_rows(m, data: _Data, b: int) -> None:
    """The store's bounds at the steps inside block ``b``: only the vertices of the upper
    convex hulls can bind (none for a block of one step)."""
    s, e = data.blocks[b]
    if data.lens[b] <= 1:
        return
    dt, qp, add = data.sp.dt, data.qp, m.cons.add
    prev = m.S[b - 1] if b else m.S[data.nb - 1]
    dcum = np.cumsum(data.d[s:e]) * dt  # demand volume after k+1 steps
    for k in _upper_hull(data.lower[s:e] + dcum):
        kk = (k + 1) * dt
        add(prev + kk * qp * m.u[b] - kk * (m.r[b] + m.q[b]) >= float(data.lower[s + k] + dcum[k]))
    for k in _upper_hull(-dcum):
        kk = (k + 1) * dt
        add(prev + kk * qp * m.u[b] - kk * (m.r[b] + m.q[b]) <= float(data.upper + dcum[k]))


def _discharge_rows(m, data: _Data, b: int) -> None:
    """The bank's discharge limit in block ``b``, delivering and taking oil (where it can
    bind)."""
    if not math.isfinite(data.q_lim):
        return
    s, e = data.blocks[b]
    qp, q_lim, add = data.qp, data.q_lim, m.cons.add
    dmax, dmin = float(data.d[s:e].max()), float(data.d[s:e].min())
    if dmax + qp > q_lim:
        add(dmax + m.r[b] + m.q[b] - qp * m.u[b] <= q_lim)
    if qp - dmin > q_lim:
        add(qp * m.u[b] - dmin - m.r[b] - m.q[b] <= q_lim)


def _event_rows(m, data: _Data, b: int) -> None:
    """Load and unload events of block ``b`` from its change of load state."""
    add = m.cons.add
    u_prev = m.u[b - 1] if b else m.u[data.nb - 1]
    add(m.v[b] - m.w[b] == m.u[b] - u_prev)
    if data.strict:  # an event needs the state change (valid, and tightens the relaxation)
        add(m.v[b] <= m.u[b])
        add(m.v[b] <= 1 - u_prev)
        add(m.w[b] <= u_prev)
        add(m.w[b] <= 1 - m.u[b])


def _pressure_rows(m, data: _Data, b: int) -> None:
    """Epigraph of the convex gas curve at the block's mean store (only where oil is drawn:
    elsewhere the pressure does not enter the energy)."""
    s, e = data.blocks[b]
    if data.d[s:e].sum() > 0:
        prev = m.S[b - 1] if b else m.S[data.nb - 1]
        for a_j, b_j in data.cuts:
            m.cons.add(m.pi[b] >= a_j + b_j * 0.5 * (prev + m.S[b]))


def _add_block_constraints(m, data: _Data) -> None:
    """Every block's own rows, block after block."""
    for b in range(data.nb):
        _balance_rows(m, data, b)
        if data.strict:
            _strict_valve_rows(m, data, b)
        _inner_bound_rows(m, data, b)
        _discharge_rows(m, data, b)
        _event_rows(m, data, b)
        _pressure_rows(m, data, b)


def _add_dwell_constraints(m, data: _Data) -> None:
    """Running counters of load and unload events, and the minimum up and down times of
    Rajan & Takriti as window sums over them."""
    B, nb, add = range(data.nb), data.nb, m.cons.add
    if data.need_c:
        for b in B:
            add(m.C[b] == (m.C[b - 1] if b else 0) + m.v[b])
    if data.down_blocks > 1:
        for b in B:
            add(m.Cw[b] == (m.Cw[b - 1] if b else 0) + m.w[b])
    if data.up_blocks > 1:
        for b in B:
            add(_window(m.C, b, data.up_blocks, nb) <= m.u[b])
    if data.down_blocks > 1:
        for b in B:
            add(_window(m.Cw, b, data.down_blocks, nb) <= 1 - m.u[b])


def _add_event_limit(m, data: _Data) -> None:
    """Load events per hour: whole cycles in the hour times the events per cycle, plus the
    events in the remaining window."""
    sp, nb = data.sp, data.nb
    if sp.max_events_per_hour is None:
        return
    full, rest = window_steps(sp.n * sp.dt, sp.dt)
    k_max = float(sp.max_events_per_hour)
    if rest <= 0:
        m.cons.add(full * m.C[nb - 1] <= k_max)
    else:
        rest_blocks = min(math.ceil(rest / data.block) + (1 if data.block > 1 else 0), nb)
        for b in range(nb):
            m.cons.add(full * m.C[nb - 1] + _window(m.C, b, rest_blocks, nb) <= k_max)


def _add_objective(m, data: _Data) -> None:
    """Electrical energy per cycle, in kJ (:data:`_OBJECTIVE_SCALE`)."""
    sp, dt, qp = data.sp, data.sp.dt, data.qp
    ps = BAR
    hyd = BAR / _PER_LITRE  # W per (L/s × bar)
    eta = sp.efficiency
    m.obj = pyo.Objective(
        expr=_OBJECTIVE_SCALE
        * sum(
            dt
            * (
                float(data.d[s:e].sum()) * hyd * m.pi[b] / eta
                + data.lens[b] * m.q[b] * hyd * (sp.relief_gauge / ps) / eta
                + data.lens[b] * sp.unloaded_power * (1 - m.u[b] + m.r[b] / qp)
            )
            for b, (s, e) in enumerate(data.blocks)
        ),
        sense=pyo.minimize,
    )


def _build(data: _Data):
    """The Pyomo model: variables, then constraints, then the objective."""
    m = pyo.ConcreteModel("stowflow_schedule")
    _add_variables(m, data)
    m.cons = pyo.ConstraintList()
    _add_block_constraints(m, data)
    _add_dwell_constraints(m, data)
    _add_event_limit(m, data)
    _add_objective(m, data)
    return m


def _warm_start(m, data: _Data, warm_u) -> float:
    """Load a full-resolution schedule as the MIP start; return its energy by the model's
    law, [J] (nan when the store has no periodic run under it)."""
    sp, vs, qp, upper = data.sp, _PER_LITRE, data.qp, data.upper
    run = run_store(warm_u, data.d_si, sp.qp, sp.dt, sp.upper)
    if run is None:
        return math.nan
    wu = np.asarray(warm_u, float)
    oil = run.oil * vs
    prev_oil = np.roll(oil, 1)
    dv = wu - np.roll(wu, 1)
    cv = np.cumsum(np.maximum(dv, 0))
    cw = np.cumsum(np.maximum(-dv, 0))
    for b in range(data.nb):
        m.u[b].value = float(wu[b])
        m.S[b].value = float(min(max(oil[b], 0.0), upper))
        spill_b = float(min(max(run.spill[b] * vs, 0.0), qp * wu[b]))
        if data.strict:  # the warm start spills over the relief valve, from a full store
            m.r[b].value = 0.0
            m.q[b].value = spill_b
            m.y[b].value = 1.0 if spill_b > 0 else 0.0
        else:
            m.r[b].value = spill_b
            m.q[b].value = 0.0
        m.v[b].value = float(max(dv[b], 0))
        m.w[b].value = float(max(-dv[b], 0))
        if data.need_c:
            m.C[b].value = float(cv[b])
        if data.down_blocks > 1:
            m.Cw[b].value = float(cw[b])
        mid = 0.5 * (prev_oil[b] + oil[b])
        m.pi[b].value = float(max(0.0, max(a + bb * mid for a, bb in data.cuts)))
    if data.strict:
        return sp.energy(wu, run.oil, 0.0, run.spill)
    return sp.energy(wu, run.oil, run.spill)


def _read_solution(m, data: _Data, run: _HighsRun, build_time: float, solve_time: float):
    """The solved model back in SI at full resolution."""
    sp, vs, qp, block = data.sp, _PER_LITRE, data.qp, data.block
    B = range(data.nb)
    ub = np.array([round(pyo.value(m.u[b])) for b in B], dtype=int)
    back_b = np.array([min(max(pyo.value(m.r[b]), 0.0), qp * ub[b]) for b in B]) / vs
    relief_b = np.array([min(max(pyo.value(m.q[b]), 0.0), qp * ub[b]) for b in B]) / vs
    # A "loaded" block that returns all its flow to tank is an unloaded block: label it so when
    # the dwell and event limits still hold (ties in energy; the label follows the flow).
    idle = (ub == 1) & (back_b >= sp.qp * (1 - 1e-7))
    if idle.any():
        trial = np.where(idle, 0, ub)
        if _labels_ok(trial, data.up_blocks, data.down_blocks, sp, block, sp.n, sp.dt):
            ub, back_b = trial, np.where(idle, 0.0, back_b)
    u = np.repeat(ub, data.lens)
    spill = np.repeat(back_b, data.lens)
    relief = np.repeat(relief_b, data.lens)
    # Rebuild the full-resolution trajectory from the balance (block-constant flows).
    net = (sp.qp * u - spill - relief - data.d_si) * sp.dt
    oil = float(pyo.value(m.S[data.nb - 1])) / vs + np.cumsum(net)
    energy = run.objective / _OBJECTIVE_SCALE
    bound = run.bound / _OBJECTIVE_SCALE
    gap = abs(energy - bound) / max(abs(energy), 1e-12) if math.isfinite(bound) else math.nan
    return ScheduleSolution(
        u=u,
        oil=oil,
        spill=spill,
        energy=energy,
        bound=bound,
        gap=gap,
        status="optimal" if run.optimal else "feasible",
        block=block,
        build_time=build_time,
        solve_time=solve_time,
        relief=relief,
    )


def solve_schedule(
    sp: ScheduleProblem,
    *,
    warm_u: np.ndarray | None = None,
    block: int = 1,
    mip_gap: float = 1e-3,
    time_limit: float = 60.0,
    threads: int = 1,
    valves: str = "switch",
) -> ScheduleSolution:
    """Build and solve the schedule MILP.

    Parameters
    ----------
    sp : ScheduleProblem
        Model data.
    warm_u : numpy.ndarray, optional
        A full-resolution schedule that is feasible (e.g. :func:`greedy_schedule`); used as
        the MIP start when ``block == 1``.
    block : int
        Steps per block (1 = full resolution), [-].
    mip_gap : float
        Relative MIP gap, [-].
    time_limit : float
        Solver time limit, [s].
    threads : int
        HiGHS threads (keep one setting per process).
    valves : {"switch", "strict"}
        Where the unloading valve may open part-way and whether the relief valve may spill
        (see the module's formulation notes).

    Returns
    -------
    ScheduleSolution
    """
    if valves not in VALVE_MODES:
        raise ValueError(f"valves must be one of {VALVE_MODES}, not {valves!r}")
    t0 = time.perf_counter()
    data = _model_data(sp, block, valves == "strict")
    m = _build(data)
    warm = warm_u is not None and block == 1
    warm_energy = _warm_start(m, data, warm_u) if warm else math.nan
    build_time = time.perf_counter() - t0

    t1 = time.perf_counter()
    run = _solve_highs(m, warm, time_limit=time_limit, mip_gap=mip_gap, threads=threads)
    solve_time = time.perf_counter() - t1
    if run.objective is None:
        return ScheduleSolution(
            u=np.empty(0),
            oil=np.empty(0),
            spill=np.empty(0),
            energy=warm_energy,
            bound=math.nan,
            gap=math.nan,
            status="failed",
            block=block,
            build_time=build_time,
            solve_time=solve_time,
        )
    return _read_solution(m, data, run, build_time, solve_time)
