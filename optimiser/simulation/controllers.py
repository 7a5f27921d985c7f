"""Load/unload controllers of the time-domain verification and how their settings are derived.

Three controllers decide, step by step, whether the fixed pump delivers into the bank:

* :class:`ScheduleController` - the stowflow's own schedule, open loop: in each step the pump
  delivers what the schedule delivers; where that is less than its full flow the unloading
  valve opens part-way through the step;
* :class:`HysteresisController` with the **pressure** signal - a pressure switch: unload when
  the pressure reaches ``unload_above``, load again when it falls to ``load_below``;
* :class:`HysteresisController` with the **stroke** signal - a position switch on a piston
  accumulator: the same on the piston's stroke fraction (stored oil / oil of the full stroke).

Settings of the switches (:func:`derive_switch`): the unload point is the design's maximum
working pressure (for the position switch: the highest stored oil of the design's schedule);
the load point is the *highest* one, in the range from the cycle's highest requirement up to a
narrowest band, at which the switching limits (load events per hour, least loaded and unloaded
dwell) hold at the coldest and the hottest temperature.  A higher load point keeps the store
fuller, so this rule gives the most pressure margin the switching limits allow; it is found by
bisection on full simulations.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from stowflow.simulation._integrator import Pass, Plant, State
from stowflow.simulation._loop import Controller
from stowflow.units import to_unit

__all__ = [
    "HysteresisController",
    "ScheduleController",
    "SwitchSearch",
    "derive_switch",
]

#: Most full evaluations (both temperatures) of the bisection, [-].
MAX_EVALUATIONS = 7


class ScheduleController(Controller):
    """The design's load/unload schedule, followed open loop, with a high-pressure cut-out.

    In each step the pump delivers ``fraction × full flow`` of the run's pump (catalogue or
    worn), spread evenly over the step, so that the stored oil follows the schedule model's
    straight line between step ends (:mod:`stowflow.search.schedule`).  Physically: where the
    fraction is below 1 the unloading valve opens part-way through the step and the pump idles
    at the standby pressure for ``(1 − fraction)·dt`` (its energy is counted so); for the
    switching limits each such step counts as one unload and one load (the fewest the valve
    can make).

    With ``cut_out`` the schedule is a timed load schedule with a latching high-pressure
    cut-out, the way a control system runs one: the pump loads at each planned load start and
    unloads at the planned end of the loaded stretch, or earlier when the pressure reaches the
    cut-out; after a cut-out it stays unloaded until the next planned load start.  A pump
    that delivers more than the schedule was planned for (a new pump against a schedule
    planned for a worn one) so unloads early instead of pushing its surplus over the relief
    valve, and the cut-out makes no load event of its own.  The cut-out acts in fully loaded
    steps.

    Parameters
    ----------
    fraction : numpy.ndarray
        Per step, the schedule's delivery over the flow it was planned with, [-].
    cut_out : float, optional
        Where the cut-out acts, absolute, [Pa] (None: open loop throughout).
    nominal : float, optional
        The cut-out setting as stated, when it acts elsewhere within its repeatability;
        :meth:`setpoints` reports it, [Pa].  Default: ``cut_out``.
    min_off : float
        Least time the pump stays unloaded after a cut-out, [s] (the least unloaded dwell).
    """

    name = "schedule"

    def __init__(
        self,
        fraction: np.ndarray,
        cut_out: float | None = None,
        nominal: float | None = None,
        min_off: float = 0.0,
    ) -> None:
        self.fraction = np.asarray(fraction, dtype=float)
        self.cut_out = None if cut_out is None else float(cut_out)
        self.nominal = self.cut_out if nominal is None else float(nominal)
        self.min_off = float(min_off)
        loaded = self.fraction > 0.0
        n = self.fraction.size
        # next_start[k]: the first load start ≥ k (n: none left in the cycle).  A loaded
        # stretch starts where the step before is unloaded; a schedule loaded throughout
        # starts at the cycle start (the machine's cycle signal re-arms the cut-out).
        always = bool(loaded.all())
        nxt = np.full(n + 1, n, dtype=int)
        for k in range(n - 1, -1, -1):
            nxt[k] = k if loaded[k] and (not loaded[k - 1] or (k == 0 and always)) else nxt[k + 1]
        self._next_start, self._always = nxt, always
        self._latched_in: int | None = None  # step of a cut-out found in the last pass
        self._plan_k = 0  # first step of the last plan
        self._prev_u = 1  # state given to the last plan
        self._rearm = -np.inf  # earliest reload after the last cut-out, from cycle start, [s]

    def initial_u(self) -> int:
        """Armed (1): the pump follows the schedule until a cut-out latches it (0)."""
        self._rearm, self._prev_u, self._latched_in = -np.inf, 1, None
        return 1

    def plan(self, plant: Plant, k: int, u: int):
        """One part per step, delivering ``fraction`` of the full flow; the state (second,
        empty part) is 1 while armed and 0 from a cut-out to the next load start."""
        return self.window(plant, k, u, plant.n - k)

    def window(self, plant: Plant, k: int, u: int, steps: int):
        """:meth:`plan` of steps k … k+steps−1 only."""
        f = self.fraction[k : k + steps].copy()
        armed = np.ones(f.size)
        if self.cut_out is not None:
            if k == 0 and self._latched_in != 0:  # a new cycle
                self._rearm -= plant.n * plant.dt
            if u == 0 and self._prev_u == 1 and self._latched_in is None:
                # Latched at the end of the step before, stepping through the relief valve.
                self._rearm = k * plant.dt + self.min_off
            if u == 0:
                first = k + 1 if self._latched_in == k else k
                stop = int(self._next_start[min(first, self.fraction.size)])
                if self._always and stop < self.fraction.size:
                    # Re-armed at the cycle start, but not before the least unloaded dwell.
                    stop = max(stop, min(math.ceil(self._rearm / plant.dt - 1e-9), plant.n))
                f[: max(0, stop - k)] = 0.0
                armed[: max(0, stop - k)] = 0.0
        self._latched_in, self._plan_k, self._prev_u = None, k, u
        return np.full(f.size, plant.dt), f, armed

    def find_switch(self, plant: Plant, st: State, ps: Pass) -> tuple[int, float] | None:
        """The first fully loaded, armed step whose pressure reaches the cut-out, and where in
        the step (linear interpolation)."""
        if self.cut_out is None or ps.p_end.size == 0:
            return None
        cond = (ps.u1 >= 1.0) & (ps.u2 >= 1.0) & (ps.h1 >= plant.dt) & (ps.p_end >= self.cut_out)
        if not cond.any():
            return None
        j = int(np.argmax(cond))
        p0 = float(st.p) if j == 0 else float(ps.p_end[j - 1])
        den = float(ps.p_end[j]) - p0
        theta = 1.0 if den <= 0.0 else min(1.0, max(0.0, (self.cut_out - p0) / den))
        self._latched_in = self._plan_k + j
        self._rearm = (self._latched_in + theta) * plant.dt + self.min_off
        self._prev_u = 0
        return j, theta

    def switch_at_end(self, plant: Plant, st: State) -> bool:
        """At a step end reached step by step: an armed pump at or above the cut-out latches
        (:meth:`plan` re-arms it at the next planned load start)."""
        return self.cut_out is not None and st.u == 1 and st.p >= self.cut_out

    def setpoints(self) -> dict:
        """``cut_out`` [Pa] (the stated setting) when the schedule has one."""
        return {} if self.cut_out is None else {"cut_out": self.nominal}


class HysteresisController(Controller):
    """Two-point (hysteresis) switch: unload at ``off``, load at ``on`` (``on`` < ``off``).

    Parameters
    ----------
    name : str
        ``"pressure-switch"`` or ``"position-switch"``.
    signal : str
        ``"pressure"`` (gas = line pressure, absolute [Pa]) or ``"stroke"`` (stored oil over
        the oil of the full piston stroke, [-]).
    on, off : float
        Load below ``on``, unload above ``off``, in the signal's unit: where the switch acts.
    nominal : tuple of float, optional
        The settings as stated (``(on, off)``), when the switch acts elsewhere within its
        repeatability; :meth:`setpoints` reports these.  Default: ``(on, off)``.
    """

    def __init__(
        self, name: str, signal: str, on: float, off: float, nominal: tuple | None = None
    ) -> None:
        if signal not in ("pressure", "stroke"):
            raise ValueError(f"signal '{signal}' is not 'pressure' or 'stroke'")
        if not on < off:
            raise ValueError(f"switch band is empty: load below {on:g} ≥ unload above {off:g}")
        self.name, self.signal, self.on, self.off = name, signal, float(on), float(off)
        self.nominal = (self.on, self.off) if nominal is None else tuple(map(float, nominal))

    def initial_u(self) -> int:
        """Start just unloaded, with the store full (see :func:`~.verify.verify`)."""
        return 0

    def _y(self, plant: Plant, S, p):
        return p if self.signal == "pressure" else np.asarray(S) / plant.stroke

    def plan(self, plant: Plant, k: int, u: int):
        """The pump keeps its state ``u`` for the rest of the cycle until a switch."""
        return self.window(plant, k, u, plant.n - k)

    def window(self, plant: Plant, k: int, u: int, steps: int):
        """:meth:`plan` of steps k … k+steps−1 only."""
        n = max(0, min(steps, plant.n - k))
        return np.full(n, plant.dt), np.full(n, float(u)), np.full(n, float(u))

    def find_switch(self, plant: Plant, st: State, ps: Pass) -> tuple[int, float] | None:
        """First threshold crossing; the fraction within the step by linear interpolation."""
        if ps.S_end.size == 0:
            return None
        y = self._y(plant, ps.S_end, ps.p_end)
        loaded = ps.u2 == 1
        cond = np.where(loaded, y >= self.off, y <= self.on)
        if not cond.any():
            return None
        j = int(np.argmax(cond))
        y0 = float(self._y(plant, st.S, st.p)) if j == 0 else float(y[j - 1])
        thr = self.off if loaded[j] else self.on
        den = float(y[j]) - y0
        theta = 1.0 if den == 0.0 else min(1.0, max(0.0, (thr - y0) / den))
        return j, theta

    def switch_at_end(self, plant: Plant, st: State) -> bool:
        """Threshold test at a step end."""
        y = float(self._y(plant, st.S, st.p))
        return (st.u == 1 and y >= self.off) or (st.u == 0 and y <= self.on)

    def setpoints(self) -> dict:
        """``load_below``/``unload_above`` [Pa] or ``*_stroke`` [-], as stated."""
        on, off = self.nominal
        if self.signal == "pressure":
            return {"load_below": on, "unload_above": off}
        return {"load_below_stroke": on, "unload_above_stroke": off}


@dataclass(frozen=True)
class SwitchSearch:
    """Where :func:`derive_switch` looks for the load point.

    Attributes
    ----------
    off : float
        Unload point, [Pa] or [-].
    lowest : float
        Lowest load point considered (the widest band), [Pa] or [-].
    highest : float
        Highest load point considered (the narrowest band), [Pa] or [-].
    resolution : float
        Bisection stops when the bracket is narrower, [Pa] or [-].
    """

    off: float
    lowest: float
    highest: float
    resolution: float


def derive_switch(
    search: SwitchSearch,
    evaluate: Callable[[float], tuple[bool, object]],
    max_evaluations: int = MAX_EVALUATIONS,
) -> tuple[float, object, list[str]]:
    """Highest load point whose simulations keep the switching limits.

    Tries the narrowest band first (done when it holds), then the widest (when that breaks the
    limits, no band does: the widest is returned and its runs fail), then bisects.  Assumes
    that narrowing the band never reduces the switching frequency (true for a two-point
    switch on a store with one fill and one drain phase per period).

    Parameters
    ----------
    search : SwitchSearch
        The range and the resolution.
    evaluate : callable
        ``evaluate(on) -> (limits_hold, payload)`` - simulates both temperatures.
    max_evaluations : int
        Most calls of ``evaluate``, [-].

    Returns
    -------
    tuple
        The load point [Pa] or [-], the payload of its evaluation, notes.
    """
    notes: list[str] = []
    ok_hi, pay_hi = evaluate(search.highest)
    if ok_hi or search.highest <= search.lowest:
        return search.highest, pay_hi, notes
    ok_lo, pay_lo = evaluate(search.lowest)
    if not ok_lo:
        notes.append("no switch band in the searched range keeps the switching limits")
        return search.lowest, pay_lo, notes
    a, pay_a, b = search.lowest, pay_lo, search.highest
    evals = 2
    while evals < max_evaluations and b - a > search.resolution:
        mid = 0.5 * (a + b)
        ok, pay = evaluate(mid)
        evals += 1
        if ok:
            a, pay_a = mid, pay
        else:
            b = mid
    if b - a > search.resolution:
        notes.append(
            f"switch setting known to within {to_unit(b - a, 'bar', 'pressure'):.2f} bar after "
            f"{evals} simulations"
        )
    return a, pay_a, notes
