"""Pump-only supplies from the same catalogue: the alternatives an accumulator must beat.

Each is a design of its own: among the catalogue's pumps that deliver the peak flow with the
same wear margin as the design (``DesignSettings.flow_margin``) and are rated for the supply's
relief setting, the one whose smallest covering motor has the least rating, then the least
price.  A motor covers a pump when its rated torque covers the largest torque the pump asks
(at rated speed that is the largest shaft power); a drive covers the motor's rating.  Shaft
power, motor and drive input come from the loss models of :mod:`stowflow.physics.machines`
(part-load efficiencies), and every supply's energy is split by
:func:`~stowflow.physics.machines.energy_account`.  Pressures: the consumer's own (``p_c``),
the requirement with the line-loss allowance (``p_req``), the highest requirement
``p_set = max p_req`` and its relief setting ``p_rel``.

(a) ``"fixed"`` **fixed pump, unloading valve and relief valve.**  Loaded, the pump delivers
its full flow at ``p_rel``; the machine takes what it needs and the rest goes over the relief
valve.  In the stretches where the machine takes nothing, an unloading valve lets the pump
circulate at the standby pressure, as far as the switching limits allow (least loaded and
unloaded dwell, load events per hour; the longest stretches first).  The motor covers full
flow at ``p_rel``.

(b) ``"compensated"`` **pressure-compensated variable pump.**  The compensator holds
``p_set``; the stroke delivers the demand plus the control flow and the leakage at
``p_set``, :math:`x = (Q_d + Q_c + k_L\\Delta p)/(D n)`.  At zero demand the pump still
pays its leakage and drag at ``p_set`` (its standby loss) and the control flow (its
compensator loss).  The motor covers full stroke at ``p_set``.

(c) ``"variable-speed"`` **fixed pump on a variable-speed drive.**  The drive holds ``p_set``
by the speed, which follows the demand, :math:`n = (Q_d + k_L\\Delta p)/D`, between the pump's
lowest speed and its rated speed.  Where the demand is below what the lowest speed delivers,
the pressure rises to ``p_rel`` and the excess goes over the relief valve.  The motor's rated
torque covers the largest torque (at ``p_rel`` where the relief valve opens); the drive covers
the motor's rating.

(d) ``"load-sensing"`` **load-sensing variable pump.**  The pump holds its margin above the
requirement, capped by its compensator at ``p_set``: ``min(p_req + Δp_LS, p_set)``; the stroke
as in (b).  The motor covers full stroke at ``p_set``.

The same pressure setting, relief margin and standby pressure as the design's
(``DesignSettings``); the response of valves, compensators and drives is not modelled.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from stowflow.catalogue import Catalogue, DriveOption, MotorOption
from stowflow.physics.machines import energy_account
from stowflow.search.settings import DesignSettings
from stowflow.search.solution import Baseline
from stowflow.units import BAR, HOUR, LITRE, LPM, bar_text

__all__ = [
    "KINDS",
    "compensated_baseline",
    "fixed_baseline",
    "idle_unloading",
    "load_sensing_baseline",
    "pump_only_alternatives",
    "smallest_drive",
    "smallest_motor",
    "variable_speed_baseline",
]

#: The pump-only supplies, in the order the report shows them.
KINDS: tuple[str, ...] = ("fixed", "compensated", "variable-speed", "load-sensing")

#: Catalogue control of the pumps each kind may use.
_CONTROL = {
    "fixed": "fixed",
    "compensated": "pressure-compensated",
    "variable-speed": "fixed",
    "load-sensing": "load-sensing",
}
_WORDS = {
    "fixed": "pump",
    "compensated": "pressure-compensated pump",
    "variable-speed": "pump",
    "load-sensing": "load-sensing pump",
}


def smallest_motor(catalogue: Catalogue, shaft_power: float) -> MotorOption | None:
    """Smallest (then cheapest) motor whose rating covers ``shaft_power`` [W]."""
    fits = [m for m in catalogue.motors if m.rated_power >= shaft_power * (1 - 1e-12)]
    if not fits:
        return None
    return min(fits, key=lambda m: (m.rated_power, m.price))


def smallest_drive(catalogue: Catalogue, motor_power: float) -> DriveOption | None:
    """Smallest (then cheapest) drive whose rating covers a motor of ``motor_power`` [W]."""
    fits = [d for d in catalogue.drives if d.rated_power >= motor_power * (1 - 1e-12)]
    if not fits:
        return None
    return min(fits, key=lambda d: (d.rated_power, d.price))


def idle_unloading(demand: np.ndarray, dt: float, settings: DesignSettings) -> np.ndarray:
    """Steps in which an unloading valve may unload a pump-only supply's pump.

    The idle stretches (no demand; the cycle repeats, so a stretch may wrap round its end) at
    least ``min_unloaded_dwell`` long, the longest first, as long as the loaded time between
    two unloaded stretches stays at least ``min_loaded_dwell`` and the load events stay
    within ``max_load_events_per_hour`` (the cycle running back to back).

    Parameters
    ----------
    demand : numpy.ndarray
        Demand per step, [m³/s].
    dt : float
        Step length, [s].
    settings : DesignSettings
        The switching limits.

    Returns
    -------
    numpy.ndarray
        True where the pump is unloaded, [-].
    """
    n = demand.size
    idle = demand <= 0.0
    out = np.zeros(n, bool)
    if idle.all():
        return ~out
    if not idle.any():
        return out
    start = int(np.argmin(idle))  # a loaded step: runs no longer wrap from here
    order = np.roll(np.arange(n), -start)
    runs, k = [], 0
    while k < n:
        if idle[order[k]]:
            j = k
            while j < n and idle[order[j]]:
                j += 1
            runs.append((k, j))
            k = j
        else:
            k += 1
    runs = [r for r in runs if (r[1] - r[0]) * dt >= settings.min_unloaded_dwell * (1 - 1e-9)]
    limit = settings.max_load_events_per_hour
    most = len(runs) if limit is None else math.floor(limit * n * dt / HOUR + 1e-9)
    chosen: list[tuple[int, int]] = []
    for run in sorted(runs, key=lambda r: (r[0] - r[1], r[0])):
        if len(chosen) >= most:
            break
        trial = sorted([*chosen, run])
        gaps = [(trial[(i + 1) % len(trial)][0] - trial[i][1]) % n for i in range(len(trial))]
        if min(gaps) * dt >= settings.min_loaded_dwell * (1 - 1e-9):
            chosen = trial
    for a, b in chosen:
        out[order[a:b]] = True
    return out


@dataclass(frozen=True)
class _Operation:
    """One pump running one cycle: per-step arrays, gauge pressures, [m³/s], [Pa], [W]."""

    supply: np.ndarray
    delivered: np.ndarray
    relief: np.ndarray
    standby_flow: np.ndarray
    shaft: np.ndarray
    speed: np.ndarray  # fraction of rated speed
    sizing: float  # largest torque × rated angular speed, [W]
    notes: tuple[str, ...] = ()


def _fixed_run(pump, demand, ctx) -> _Operation:
    losses, n_r = pump.losses, pump.speed
    dp = ctx.relief_gauge
    unloaded = ctx.unloaded
    full = float(losses.delivered(1.0, n_r, dp))
    loaded_shaft = float(losses.shaft_power(1.0, n_r, dp))
    idle_shaft = float(losses.shaft_power(1.0, n_r, ctx.standby))
    delivered = np.where(unloaded, 0.0, full)
    ones = np.ones(demand.size)
    idle_time = float(unloaded.sum() * ctx.dt)
    if idle_time > 0:
        note = (
            f"unloaded at {ctx.standby / BAR:g} bar in the idle stretches for {idle_time:.3g} s "
            f"of the {demand.size * ctx.dt:.4g} s cycle; loaded, the excess over the relief "
            "valve"
        )
    else:
        note = (
            "always loaded (no idle stretch the switching limits let the pump unload in); the "
            "excess over the relief valve"
        )
    return _Operation(
        supply=np.full(demand.size, dp),
        delivered=delivered,
        relief=np.where(unloaded, 0.0, full - demand),
        standby_flow=np.where(unloaded, float(losses.delivered(1.0, n_r, ctx.standby)), 0.0),
        shaft=np.where(unloaded, idle_shaft, loaded_shaft),
        speed=ones,
        sizing=loaded_shaft,
        notes=(note,),
    )


def _variable_run(pump, demand, ctx, supply: np.ndarray) -> _Operation:
    losses, n_r = pump.losses, pump.speed
    q_c = pump.control_flow
    stroke = np.minimum(losses.stroke_for(demand + q_c, supply), 1.0)
    return _Operation(
        supply=supply,
        delivered=demand + q_c,
        relief=np.full(demand.size, q_c),
        standby_flow=np.zeros(demand.size),
        shaft=losses.shaft_power(stroke, n_r, supply),
        speed=np.ones(demand.size),
        sizing=float(losses.shaft_power(1.0, n_r, ctx.set_gauge)),
    )


def _compensated_run(pump, demand, ctx) -> _Operation:
    op = _variable_run(pump, demand, ctx, np.full(demand.size, ctx.set_gauge))
    note = (
        f"compensator at {ctx.set_gauge / BAR:.1f} bar; control flow "
        f"{pump.control_flow / LPM:g} L/min"
    )
    return _Operation(**{**op.__dict__, "notes": (note,)})


def _load_sensing_run(pump, demand, ctx) -> _Operation:
    supply = np.minimum(ctx.required_gauge + pump.load_sensing_margin, ctx.set_gauge)
    op = _variable_run(pump, demand, ctx, supply)
    note = (
        f"{pump.load_sensing_margin / BAR:g} bar above the requirement, capped by the "
        f"compensator at {ctx.set_gauge / BAR:.1f} bar; control flow "
        f"{pump.control_flow / LPM:g} L/min"
    )
    return _Operation(**{**op.__dict__, "notes": (note,)})


def _variable_speed_run(pump, demand, ctx) -> _Operation:
    losses, n_r, n_min = pump.losses, pump.speed, pump.lowest_speed
    want = losses.speed_for(demand, ctx.set_gauge)
    speed = np.clip(want, n_min, n_r)
    spill = np.maximum(losses.delivered(1.0, n_min, ctx.relief_gauge) - demand, 0.0)
    spills = (want < n_min) & (spill > 0)
    supply = np.where(spills, ctx.relief_gauge, ctx.set_gauge)
    relief = np.where(spills, spill, 0.0)
    shaft = losses.shaft_power(1.0, speed, supply)
    torque_power = shaft * n_r / speed  # torque × rated angular speed
    full = float(losses.shaft_power(1.0, n_r, ctx.set_gauge))
    note = (
        f"speed {float(speed.min()) * 60:.0f}–{float(speed.max()) * 60:.0f} rpm (lowest "
        f"{n_min * 60:.0f} rpm), drive holding {ctx.set_gauge / BAR:.1f} bar"
    )
    if spills.any():
        note += (
            f"; below the lowest speed's flow the pressure rises to the relief setting and "
            f"{float(np.sum(relief) * ctx.dt) / LITRE:.3g} L per cycle go over the relief valve"
        )
    return _Operation(
        supply=supply,
        delivered=demand + relief,
        relief=relief,
        standby_flow=np.zeros(demand.size),
        shaft=shaft,
        speed=speed / n_r,
        sizing=max(full, float(torque_power.max())),
        notes=(note,),
    )


_RUNS = {
    "fixed": _fixed_run,
    "compensated": _compensated_run,
    "variable-speed": _variable_speed_run,
    "load-sensing": _load_sensing_run,
}


@dataclass(frozen=True)
class _Context:
    """The cycle and settings every pump-only supply works to (gauge pressures, [Pa])."""

    dt: float
    consumer_gauge: np.ndarray
    required_gauge: np.ndarray
    set_gauge: float
    relief: float  # absolute
    relief_gauge: float
    standby: float
    unloaded: np.ndarray


def _context(demand, p_required, p_consumer, dt, settings) -> _Context:
    s = settings
    pa = s.p_ambient
    p_set = float(np.max(p_required))
    relief = s.relief_setting(p_set)
    return _Context(
        dt=dt,
        consumer_gauge=np.asarray(p_consumer, float) - pa,
        required_gauge=np.asarray(p_required, float) - pa,
        set_gauge=p_set - pa,
        relief=relief,
        relief_gauge=relief - pa,
        standby=s.standby_pressure,
        unloaded=idle_unloading(demand, dt, s),
    )


def _electrical(op: _Operation, motor: MotorOption, drive: DriveOption | None):
    """Motor input and electrical input per step, [W]."""
    motor_in = motor.losses.input_power(op.shaft, op.speed)
    if drive is None:
        return motor_in, motor_in
    current = (op.shaft / op.speed) / drive.rated_power  # torque × rated speed / rating
    return motor_in, drive.losses.input_power(motor_in, current)


def _baseline(
    kind: str,
    demand: np.ndarray,
    p_required: np.ndarray,
    dt: float,
    catalogue: Catalogue,
    settings: DesignSettings,
    p_consumer: np.ndarray | None = None,
) -> Baseline:
    s = settings
    demand = np.asarray(demand, float)
    p_required = np.asarray(p_required, float)
    if p_consumer is None:
        p_consumer = p_required - s.line_loss
    ctx = _context(demand, p_required, p_consumer, dt, s)
    peak = float(demand.max())
    rating = ctx.relief
    pumps = [
        p
        for p in catalogue.pumps
        if p.control == _CONTROL[kind]
        and p.flow * (1.0 - s.flow_margin) >= peak * (1 - 1e-12)
        and p.max_pressure >= rating
    ]
    setting = ctx.relief if kind == "fixed" else ctx.set_gauge + s.p_ambient
    if not pumps:
        return Baseline(
            kind,
            None,
            None,
            setting,
            math.nan,
            reason=f"no {_WORDS[kind]} in the catalogue delivers the peak flow "
            f"{peak / LPM:.1f} L/min with its relief valve at "
            f"{bar_text(rating, s.p_ambient, '.0f')}",
        )
    if kind == "variable-speed" and not catalogue.drives:
        return Baseline(
            kind, None, None, setting, math.nan, reason="no drive ([[drive]]) in the catalogue"
        )
    best = None
    for pump in sorted(pumps, key=lambda p: (p.flow, p.price)):
        op = _RUNS[kind](pump, demand, ctx)
        motor = smallest_motor(catalogue, op.sizing)
        drive = None
        if motor is not None and kind == "variable-speed":
            drive = smallest_drive(catalogue, motor.rated_power)
            if drive is None:
                continue
        if motor is None:
            continue
        price = pump.price + motor.price + (drive.price if drive is not None else 0.0)
        key = (motor.rated_power, price)
        if best is None or key < best[0]:
            best = (key, pump, motor, drive, op)
    if best is None:
        what = "motor and drive" if kind == "variable-speed" else "motor"
        return Baseline(
            kind,
            None,
            None,
            setting,
            math.nan,
            reason=f"no {what} in the catalogue drives a {_WORDS[kind]} for the peak flow at "
            f"{bar_text(rating, s.p_ambient, '.0f')}",
        )
    _, pump, motor, drive, op = best
    motor_in, electrical = _electrical(op, motor, drive)
    account = energy_account(
        dt,
        demand=demand,
        consumer=ctx.consumer_gauge,
        supply=op.supply,
        delivered=op.delivered,
        electrical=electrical,
        shaft=op.shaft,
        motor_input=motor_in,
        relief=op.relief,
        standby_flow=op.standby_flow,
        standby_pressure=ctx.standby,
    )
    return Baseline(
        kind,
        pump,
        motor,
        setting,
        account.electrical,
        shaft_power_peak=op.sizing,
        drive=drive,
        breakdown=account,
        notes=op.notes,
    )


def fixed_baseline(demand, p_required, dt, catalogue, settings, p_consumer=None) -> Baseline:
    """Pump-only supply (a): fixed pump for the peak flow, unloading and relief valve.

    Parameters
    ----------
    demand : numpy.ndarray
        Demand per step, [m³/s].
    p_required : numpy.ndarray
        Required pressure per step with line loss, absolute, [Pa].
    dt : float
        Step length, [s].
    catalogue : Catalogue
        Components.
    settings : DesignSettings
        Relief margin, standby pressure, switching limits, wear margin, ambient pressure.
    p_consumer : numpy.ndarray, optional
        The consumer's own pressure per step, absolute, [Pa]; default ``p_required`` less
        the line-loss allowance.

    Returns
    -------
    Baseline
    """
    return _baseline("fixed", demand, p_required, dt, catalogue, settings, p_consumer)


def compensated_baseline(demand, p_required, dt, catalogue, settings, p_consumer=None):
    """Pump-only supply (b): pressure-compensated variable pump (parameters as
    :func:`fixed_baseline`; only ``control = "pressure-compensated"`` pumps qualify)."""
    return _baseline("compensated", demand, p_required, dt, catalogue, settings, p_consumer)


def variable_speed_baseline(demand, p_required, dt, catalogue, settings, p_consumer=None):
    """Pump-only supply (c): fixed pump on a variable-speed drive (parameters as
    :func:`fixed_baseline`; fixed pumps and a ``[[drive]]`` row qualify)."""
    return _baseline("variable-speed", demand, p_required, dt, catalogue, settings, p_consumer)


def load_sensing_baseline(demand, p_required, dt, catalogue, settings, p_consumer=None):
    """Pump-only supply (d): load-sensing variable pump (parameters as
    :func:`fixed_baseline`; only ``control = "load-sensing"`` pumps qualify)."""
    return _baseline("load-sensing", demand, p_required, dt, catalogue, settings, p_consumer)


def pump_only_alternatives(
    demand: np.ndarray,
    p_consumer: np.ndarray,
    dt: float,
    catalogue: Catalogue,
    settings: DesignSettings,
) -> tuple[Baseline, ...]:
    """Every pump-only supply of :data:`KINDS`, in that order.

    Parameters
    ----------
    demand : numpy.ndarray
        Demand per step, [m³/s].
    p_consumer : numpy.ndarray
        The consumer's pressure per step, absolute, [Pa]; the line-loss allowance is added.
    dt : float
        Step length, [s].
    catalogue : Catalogue
        Components.
    settings : DesignSettings
        The design's settings.

    Returns
    -------
    tuple of Baseline
    """
    p_consumer = np.asarray(p_consumer, float)
    p_required = p_consumer + settings.line_loss
    return tuple(
        _baseline(k, demand, p_required, dt, catalogue, settings, p_consumer) for k in KINDS
    )
