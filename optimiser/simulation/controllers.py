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

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from stowflow.simulation._integrator import Pass, Plant, State
from stowflow.simulation._loop import Controller

__all__ = [
    "HysteresisController",
    "ScheduleController",
    "SwitchSearch",
    "derive_switch",
]

#: Most full evaluations (both temperatures) of the bisection, [-].
MAX_EVALUATIONS = 7


class ScheduleController(Controller):
    """The design's load/unload schedule, followed open loop.

    In each step the pump delivers the schedule's flow, ``fraction × full flow``, spread
    evenly over the step, so that the stored oil follows the schedule model's straight line
    between step ends (:mod:`stowflow.search.schedule`).  Physically: where the fraction is below 1
    the unloading valve opens part-way through the step and the pump idles at the standby
    pressure for ``(1 − fraction)·dt`` (its energy is counted so); for the switching limits
    each such step counts as one unload and one load (the fewest the valve can make).

    Parameters
    ----------
    fraction : numpy.ndarray
        Per step, the schedule's delivery over the full pump flow, [-].
    """

    name = "schedule"

    def __init__(self, fraction: np.ndarray) -> None:
        self.fraction = np.asarray(fraction, dtype=float)

    def plan(self, plant: Plant, k: int, u: int):
        """One part per step, delivering ``fraction`` of the full flow."""
        return self.window(plant, k, u, plant.n - k)

    def window(self, plant: Plant, k: int, u: int, steps: int):
        """:meth:`plan` of steps k … k+steps−1 only."""
        f = self.fraction[k : k + steps]
        return np.full(f.size, plant.dt), f.copy(), np.zeros(f.size)


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
        notes.append(f"switch setting bracketed to {b - a:.3g} after {evals} simulations")
    return a, pay_a, notes
