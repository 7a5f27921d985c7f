"""The exact demand signal of a duty cycle and its resampling onto a uniform time grid.

Both CSV forms describe a piecewise-linear signal: a phase table is piecewise constant (each
phase a segment with equal end values), a sample table is linear between samples.  We keep it
as :class:`Segments` and derive everything from it:

* per-step demand = exact mean of the signal over the step (the volume is conserved);
* per-step required pressure = maximum of the signal over the step (conservative);
* the cycle statistics (peak, mean, RMS, hydraulic power) as exact integrals.

For a linear segment from :math:`(q_0, p_0)` to :math:`(q_1, p_1)` of length :math:`h`:

.. math::

    \\int q\\,dt = h\\,\\frac{q_0 + q_1}{2}, \\qquad
    \\int q^2\\,dt = h\\,\\frac{q_0^2 + q_0 q_1 + q_1^2}{3}, \\qquad
    \\int q\\,p\\,dt = h\\,\\frac{2 q_0 p_0 + q_0 p_1 + q_1 p_0 + 2 q_1 p_1}{6}
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
from stowflow.errors import CycleError
from stowflow.units import abs_to_gauge

if TYPE_CHECKING:  # pragma: no cover - typing only
    from stowflow.cycle.csvtable import RawTable

__all__ = [
    "Segments",
    "Steps",
    "common_step",
    "exact_signal",
    "floor_pressure",
    "peak_product",
    "resample",
    "to_steps",
]


#: Shortest step the grid may have (the glossary's plausible step), [s].
_SMALLEST_STEP = 1e-6


@dataclass(frozen=True)
class Segments:
    """A piecewise-linear signal: segment ``j`` runs from ``t0[j]`` to ``t1[j]``.

    Attributes
    ----------
    t0, t1 : numpy.ndarray
        Start and end of each segment (``t1 > t0``, ``t0[j+1] == t1[j]``), [s].
    q0, q1 : numpy.ndarray
        Flow at the start and end of each segment, [m³/s].
    p0, p1 : numpy.ndarray or None
        Required pressure at the start and end of each segment, gauge, [Pa].
    origin : numpy.ndarray
        Index of the input row each segment comes from, [-].
    """

    t0: np.ndarray
    t1: np.ndarray
    q0: np.ndarray
    q1: np.ndarray
    p0: np.ndarray | None
    p1: np.ndarray | None
    origin: np.ndarray

    @classmethod
    def from_phases(cls, duration, flow, pressure=None) -> Segments:
        """Piecewise-constant signal of a phase table (durations [s], flow [m³/s], gauge [Pa])."""
        t1 = np.cumsum(duration)
        t0 = np.concatenate(([0.0], t1[:-1]))
        p = None if pressure is None else np.asarray(pressure, dtype=float)
        q = np.asarray(flow, dtype=float)
        return cls(t0, t1, q, q, p, p, np.arange(t0.size))

    @classmethod
    def from_samples(cls, time, flow, pressure=None) -> Segments:
        """Linear interpolation between samples (time [s], flow [m³/s], gauge [Pa])."""
        t, q = np.asarray(time, dtype=float), np.asarray(flow, dtype=float)
        p = None if pressure is None else np.asarray(pressure, dtype=float)
        return cls(
            t[:-1],
            t[1:],
            q[:-1],
            q[1:],
            None if p is None else p[:-1],
            None if p is None else p[1:],
            np.arange(t.size - 1),
        )

    @property
    def length(self) -> np.ndarray:
        """Segment lengths, [s]."""
        return self.t1 - self.t0

    @property
    def duration(self) -> float:
        """Length of the whole signal, [s]."""
        return float(self.t1[-1] - self.t0[0])

    def volume(self) -> float:
        """Integral of the flow over the signal, [m³]."""
        return float(np.sum(self.length * (self.q0 + self.q1)) / 2.0)

    def square_integral(self) -> float:
        """Integral of the squared flow, [m⁶/s]."""
        q0, q1 = self.q0, self.q1
        return float(np.sum(self.length * (q0 * q0 + q0 * q1 + q1 * q1)) / 3.0)

    def energy(self) -> float:
        """Integral of flow × gauge pressure (hydraulic energy), [J]; needs pressures."""
        q0, q1, p0, p1 = self.q0, self.q1, self.p0, self.p1
        return float(np.sum(self.length * (2 * q0 * p0 + q0 * p1 + q1 * p0 + 2 * q1 * p1)) / 6.0)


def floor_pressure(seg: Segments, floor: float) -> Segments:
    """Raise the pressure signal to at least ``floor``, splitting segments where it crosses.

    Parameters
    ----------
    seg : Segments
        The signal; without pressures the result carries the constant ``floor``.
    floor : float
        Minimum required pressure, gauge, [Pa].

    Returns
    -------
    Segments
        Piecewise-linear again: ``max(p, floor)`` is linear on each new segment.
    """
    if seg.p0 is None:
        const = np.full(seg.t0.size, float(floor))
        return Segments(seg.t0, seg.t1, seg.q0, seg.q1, const, const, seg.origin)
    p0, p1 = seg.p0, seg.p1
    crossing = (p0 - floor) * (p1 - floor) < 0
    s = np.where(crossing, (floor - p0) / np.where(crossing, p1 - p0, 1.0), 1.0)
    tc = seg.t0 + s * seg.length
    qc = seg.q0 + s * (seg.q1 - seg.q0)
    # every segment becomes [t0, tc] and [tc, t1]; the second has zero length where no crossing
    t0 = np.column_stack((seg.t0, tc)).ravel()
    t1 = np.column_stack((tc, seg.t1)).ravel()
    q0 = np.column_stack((seg.q0, qc)).ravel()
    q1 = np.column_stack((qc, seg.q1)).ravel()
    pc = np.full(p0.size, float(floor))
    pa = np.column_stack((p0, np.where(crossing, pc, p1))).ravel()
    pb = np.column_stack((np.where(crossing, pc, p1), p1)).ravel()
    origin = np.repeat(seg.origin, 2)
    keep = t1 > t0
    return Segments(
        t0[keep],
        t1[keep],
        q0[keep],
        q1[keep],
        np.maximum(pa[keep], floor),
        np.maximum(pb[keep], floor),
        origin[keep],
    )


def peak_product(seg: Segments) -> float:
    """Maximum over the signal of flow × gauge pressure (peak hydraulic power), [W].

    On a segment both factors are linear, so the product is a parabola in the segment
    coordinate; its maximum is at an end or at the vertex when the parabola opens downwards.
    """
    q0, p0 = seg.q0, seg.p0
    dq, dp = seg.q1 - seg.q0, seg.p1 - seg.p0
    a = dq * dp
    with np.errstate(divide="ignore", invalid="ignore"):
        s = np.where(a < 0, -(q0 * dp + p0 * dq) / (2.0 * np.where(a < 0, a, 1.0)), 0.0)
    s = np.clip(s, 0.0, 1.0)
    inner = (q0 + s * dq) * (p0 + s * dp)
    return float(max(np.max(q0 * p0), np.max(seg.q1 * seg.p1), np.max(inner)))


def common_step(duration: np.ndarray, max_steps: int) -> tuple[float, np.ndarray] | None:
    """Largest step that divides every phase boundary, from integer microseconds.

    Parameters
    ----------
    duration : numpy.ndarray
        Phase durations, [s].
    max_steps : int
        Largest acceptable number of steps per cycle, [-].

    Returns
    -------
    tuple of (float, numpy.ndarray) or None
        The step [s] (the greatest common divisor of the durations, hence ≤ the shortest phase)
        and the whole number of steps of each phase [-]; None when a duration is not a whole
        number of microseconds or the grid would need more than ``max_steps`` steps.
    """
    micro = np.asarray(duration, dtype=float) * 1e6
    whole = np.round(micro)
    if np.any(np.abs(micro - whole) > 1e-10 * micro) or np.any(whole < 1):
        return None
    if np.any(whole > 2.0**62):
        return None
    ints = whole.astype(np.int64)
    g = int(np.gcd.reduce(ints))
    counts = ints // g
    if int(counts.sum()) > max_steps:
        return None
    return g / 1e6, counts


def resample(seg: Segments, dt: float, n: int) -> tuple[np.ndarray, np.ndarray | None, np.ndarray]:
    """Put the signal on ``n`` uniform steps of ``dt`` from its start.

    Parameters
    ----------
    seg : Segments
        The exact signal; its duration must equal ``n * dt``.
    dt : float
        Step length, [s].
    n : int
        Number of steps, [-].

    Returns
    -------
    flow : numpy.ndarray
        Mean flow over each step (volume-conserving), [m³/s].
    pressure : numpy.ndarray or None
        Maximum required pressure within each step, gauge, [Pa].
    origin : numpy.ndarray
        Input row of the segment holding each step's midpoint, [-].
    """
    start, end = float(seg.t0[0]), float(seg.t1[-1])
    edges = start + dt * np.arange(n + 1)
    edges[-1] = end
    first = np.clip(np.floor((seg.t0 - start) / dt).astype(np.int64), 0, n - 1)
    last = np.clip(np.ceil((seg.t1 - start) / dt).astype(np.int64) - 1, 0, n - 1)
    last = np.maximum(last, first)
    counts = last - first + 1
    which = np.repeat(np.arange(seg.t0.size), counts)
    offset = np.arange(which.size) - np.repeat(np.cumsum(counts) - counts, counts)
    step = first[which] + offset
    a = np.maximum(seg.t0[which], edges[step])
    b = np.minimum(seg.t1[which], edges[step + 1])
    overlap = np.clip(b - a, 0.0, None)
    h = seg.length[which]
    sa = np.clip((a - seg.t0[which]) / h, 0.0, 1.0)
    sb = np.clip((b - seg.t0[which]) / h, 0.0, 1.0)
    q0, q1 = seg.q0[which], seg.q1[which]
    qa, qb = (1.0 - sa) * q0 + sa * q1, (1.0 - sb) * q0 + sb * q1  # convex: never below 0
    flow = np.bincount(step, weights=overlap * (qa + qb) / 2.0, minlength=n) / dt
    pressure = None
    if seg.p0 is not None:
        # Ignore overlaps that are only float noise at a boundary, but never drop a segment.
        eps = max(1e-9 * dt, 64.0 * float(np.spacing(max(abs(start), abs(end)))))
        biggest = np.maximum.reduceat(overlap, np.cumsum(counts) - counts)
        keep = (overlap > eps) | (overlap >= biggest[which])
        dp = seg.p1[which] - seg.p0[which]
        pa, pb = seg.p0[which] + sa * dp, seg.p0[which] + sb * dp
        pressure = np.full(n, -np.inf)
        np.maximum.at(pressure, step[keep], np.maximum(pa, pb)[keep])
    middle = start + dt * (np.arange(n) + 0.5)
    index = np.clip(np.searchsorted(seg.t1, middle, side="right"), 0, seg.t0.size - 1)
    return flow, pressure, seg.origin[index]


@dataclass(frozen=True)
class Steps:
    """A cycle put on the uniform grid (before any ``min_pressure`` option).

    Attributes
    ----------
    dt : float
        Step length, [s].
    flow : numpy.ndarray
        Mean demand per step, [m³/s].
    pressure : numpy.ndarray or None
        Maximum required pressure per step, gauge, [Pa].
    origin : numpy.ndarray
        Input row whose phase or segment holds each step's midpoint, [-].
    grid : str
        ``exact``, ``averaged`` or ``interpolated``.
    notes : tuple of str
        What the user should know about the grid.
    """

    dt: float
    flow: np.ndarray
    pressure: np.ndarray | None
    origin: np.ndarray
    grid: str
    notes: tuple[str, ...]


def to_steps(raw: RawTable, step: float | None, max_steps: int) -> Steps:
    """Choose the grid and resample the validated input rows onto it.

    Parameters
    ----------
    raw : RawTable
        Validated input rows (SI).
    step : float or None
        Step requested by the user, [s]; it must divide the cycle duration.
    max_steps : int
        Largest number of steps, [-].

    Returns
    -------
    Steps
        The per-step demand [m³/s] and required pressure (gauge) [Pa].
    """
    if raw.form == "phases":
        seg = Segments.from_phases(raw.axis, raw.flow, raw.pressure)
    else:
        seg = Segments.from_samples(raw.axis, raw.flow, raw.pressure)
    notes: list[str] = []
    dt, counts = _grid(raw, seg, step, max_steps, notes)
    if dt < _SMALLEST_STEP:
        raise CycleError(
            f"{raw.source}: the cycle lasts {seg.duration:.6g} s, which gives a step of {dt:.3g} "
            f"s; expected steps of at least {_SMALLEST_STEP:g} s (check the time unit)"
        )
    if raw.form == "samples" and not np.isclose(raw.flow[-1], raw.flow[0], rtol=0.01, atol=0.0):
        notes.append(
            f"the cycle wraps from the last sample (line {int(raw.lines[-1])}) back to the "
            "first with a jump in flow"
        )
    if counts is not None:
        return Steps(
            dt,
            np.repeat(raw.flow, counts),
            None if raw.pressure is None else np.repeat(raw.pressure, counts),
            np.repeat(np.arange(raw.flow.size), counts),
            "exact",
            tuple(notes),
        )
    flow, pressure, origin = resample(seg, dt, round(seg.duration / dt))
    grid = "interpolated" if raw.form == "samples" else "averaged"
    return Steps(dt, flow, pressure, origin, grid, tuple(notes))


def _grid(raw: RawTable, seg: Segments, step, max_steps: int, notes: list[str]):
    """Choose the step [s]; also the steps per phase when every step lies inside one phase."""
    total = seg.duration
    if step is not None:
        if step > total * (1 + 1e-9):
            raise CycleError(
                f"{raw.source}: step {step:g} s is longer than the cycle ({total:g} s); expected "
                "a step <= the cycle duration"
            )
        ratio = total / step
        n = round(ratio)
        if abs(ratio - n) > 1e-6 * ratio:
            lo, hi = total / np.floor(ratio), total / np.ceil(ratio)
            raise CycleError(
                f"{raw.source}: step {step:g} s does not divide the cycle duration {total:g} s, "
                f"found {ratio:.6g} steps; expected a whole number (e.g. {hi:.6g} s or {lo:.6g} s)"
            )
        if n > max_steps:
            raise CycleError(
                f"{raw.source}: step {step:g} s gives {n} steps; expected at most {max_steps} "
                "(choose a longer step or allow more steps: --max-steps)"
            )
        dt = total / n
        if raw.form == "phases":
            counts = raw.axis / dt
            if np.all(np.abs(counts - np.round(counts)) <= 1e-9 * np.maximum(counts, 1)):
                return dt, np.round(counts).astype(np.int64)
            notes.append(
                f"step {dt:g} s does not divide every phase boundary: demand averaged over "
                "each step (volume kept), required pressure = maximum within the step"
            )
        return dt, None
    if raw.form == "phases":
        found = common_step(raw.axis, max_steps)
        if found is not None:
            return found
        shortest = int(np.argmin(raw.axis))
        n = min(_whole_steps(total, float(raw.axis[shortest]), max_steps), max_steps)
        dt = total / n
        notes.append(
            f"phase boundaries share no common step giving at most {max_steps} steps: step "
            f"{dt:.6g} s; demand averaged over each step (volume kept), required pressure = "
            "maximum within the step"
        )
        if dt > raw.axis[shortest] * (1 + 1e-9):
            notes.append(
                f"the phase on line {int(raw.lines[shortest])} ({raw.axis[shortest]:g} s) is "
                f"shorter than the step {dt:.6g} s: its peak demand is averaged"
            )
        return dt, None
    spacing = float(np.min(np.diff(raw.axis)))
    want = _whole_steps(total, spacing, max_steps)
    n = min(want, max_steps)
    dt = total / n
    notes.append(
        f"sample table: demand interpolated linearly between {raw.axis.size} samples; step "
        f"{dt:.6g} s: demand = exact mean over the step, required pressure = maximum within it"
    )
    if want > max_steps:
        notes.append(
            f"step {dt:.6g} s is longer than the closest sample spacing {spacing:.6g} s "
            f"(limit {max_steps} steps): peaks averaged"
        )
    return dt, None


def _whole_steps(total: float, longest_step: float, cap: int) -> int:
    """Fewest whole steps of at most ``longest_step`` [s] in ``total`` [s], [-].

    Any count above ``cap`` [-] is returned as ``cap + 1``.
    """
    ratio = total / longest_step
    if not ratio <= cap:  # also catches an overflow to inf
        return cap + 1
    nearest = round(ratio)
    if abs(ratio - nearest) <= 1e-9 * ratio:
        return max(int(nearest), 1)
    return max(int(np.ceil(ratio)), 1)


def exact_signal(cycle, notes: list[str]) -> Segments:
    """The exact input signal of a :class:`~stowflow.cycle.duty.DutyCycle`, or its steps.

    Parameters
    ----------
    cycle : DutyCycle
        The cycle; its ``table`` holds the input rows in SI.
    notes : list of str
        Gets a note appended when the table does not match the steps (then the steps are
        the signal).

    Returns
    -------
    Segments
        Flow [m³/s] and required pressure, gauge, with ``min_pressure`` applied [Pa].
    """
    t = cycle.table
    gauge = None
    if cycle.pressure is not None and "pressure [Pa]" in t:
        gauge = abs_to_gauge(t["pressure [Pa]"].to_numpy(float), cycle.p_ambient)
    seg = None
    if cycle.form == "phases" and {"duration [s]", "flow [m³/s]"} <= set(t.columns):
        seg = Segments.from_phases(
            t["duration [s]"].to_numpy(float), t["flow [m³/s]"].to_numpy(float), gauge
        )
    elif cycle.form == "samples" and {"time [s]", "flow [m³/s]"} <= set(t.columns) and len(t) > 1:
        seg = Segments.from_samples(
            t["time [s]"].to_numpy(float), t["flow [m³/s]"].to_numpy(float), gauge
        )
    if (
        seg is not None
        and cycle.pressure is not None
        and seg.p0 is None
        and cycle.min_pressure is None
    ):
        seg = None  # pressure set on the steps only
    if seg is not None and cycle.min_pressure is not None:
        seg = floor_pressure(seg, cycle.min_pressure)
    if seg is None or not (
        np.isclose(seg.duration, cycle.duration, rtol=1e-6, atol=0.0)
        and np.isclose(seg.volume(), cycle.volume_per_cycle, rtol=1e-6, atol=1e-15)
    ):
        notes.append("the input table does not match the steps: summary computed from the steps")
        gauge = None if cycle.pressure is None else abs_to_gauge(cycle.pressure, cycle.p_ambient)
        seg = Segments.from_phases(np.full(cycle.n_steps, cycle.dt), cycle.flow, gauge)
    return seg
