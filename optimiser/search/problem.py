"""A duty cycle prepared for the design search, and the gas process of its discharge.

:func:`make_problem` turns a :class:`~stowflow.cycle.duty.DutyCycle` and the settings into a
:class:`Problem`: the demand per step, the pressure each step requires (line loss and any extra
margin the verification asks for included) and the pressure the store must hold at each step
end.  :func:`resolve_process` chooses the quasi-static gas process of the discharge: a process
that is set is taken as it is; ``auto`` takes the effective polytropic index of the thermal
time-constant model over the cycle's longest discharge.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from stowflow.cycle.duty import DutyCycle
from stowflow.errors import SettingsError
from stowflow.physics import gas
from stowflow.search.settings import DesignSettings
from stowflow.units import BAR, bar_text

#: Gas expansion V2/V1 of the discharge at which the ``auto`` process takes its effective
#: index: a short stroke from the top of the window, where real nitrogen is stiffest (our
#: choice, no published source; 1.5 gives an index about 0.1 lower near 200 bar).
AUTO_EXPANSION = 1.1
#: Runge–Kutta steps of the ``auto`` process's real-gas thermal integration, [-].
AUTO_STEPS = 32
#: Gauge pressure where the ``auto`` process's discharge starts when the caller gives none,
#: [Pa] (200 bar).
AUTO_START = 200 * BAR

__all__ = [
    "AUTO_EXPANSION",
    "AUTO_START",
    "AUTO_STEPS",
    "Problem",
    "make_problem",
    "resolve_process",
]


@dataclass(frozen=True)
class Problem:
    """A cycle prepared for the search (SI).

    Attributes
    ----------
    dt : float
        Step length, [s].
    demand : numpy.ndarray
        Demand per step, [m³/s].
    p_step : numpy.ndarray
        Required pressure of each step plus line loss and any extra margin, absolute, [Pa].
    p_end : numpy.ndarray
        Pressure the store must hold at the end of each step: the larger of the requirements of
        the step and of the next one (the store must meet a step's requirement at its start
        and its end), absolute, [Pa].
    process : gas.Process
        Quasi-static gas process.
    process_note : str
        How the process was chosen.
    settings : DesignSettings
        The settings.
    """

    dt: float
    demand: np.ndarray
    p_step: np.ndarray
    p_end: np.ndarray
    process: gas.Process
    process_note: str
    settings: DesignSettings

    @property
    def n(self) -> int:
        """Number of steps, [-]."""
        return int(self.demand.size)

    @property
    def cycle_time(self) -> float:
        """Cycle duration, [s]."""
        return self.n * self.dt

    @property
    def temperatures(self) -> tuple[float, float]:
        """Coldest and hottest operating temperature, [K]."""
        return (self.settings.t_min, self.settings.t_max)


def _discharge_time(demand: np.ndarray, dt: float) -> float:
    """Longest stretch in which the demand is above its mean, [s] (the bank's discharge)."""
    above = demand > demand.mean() * (1 + 1e-9)
    if not above.any():
        return demand.size * dt
    if above.all():
        return demand.size * dt
    k = int(np.flatnonzero(~above)[0])
    r = np.roll(above, -k)
    best = run = 0
    for a in r:
        run = run + 1 if a else 0
        best = max(best, run)
    return best * dt


def resolve_process(
    demand: np.ndarray, dt: float, settings: DesignSettings, p_start: float | None = None
):
    """Choose the quasi-static gas process of the discharge.

    ``"auto"`` integrates the thermal time-constant model (Otis & Pourmovahed) over the
    cycle's longest discharge, an expansion by :data:`AUTO_EXPANSION` from a gas at rest at
    ``p_start`` and the coldest temperature, and uses the effective polytropic index it gives
    (real nitrogen for the real gas model: about 1.5–1.9 near 200 bar, where an ideal gas
    gives at most 1.4).

    Parameters
    ----------
    demand : numpy.ndarray
        Demand per step, [m³/s].
    dt : float
        Step length, [s].
    settings : DesignSettings
        Settings (process, time constant, gas model).
    p_start : float, optional
        Absolute pressure where the discharge starts, [Pa]: the real gas's index depends on
        it (default :data:`AUTO_START` above ambient).

    Returns
    -------
    (gas.Process, str)
        The process and a sentence saying how it was chosen.
    """
    if settings.process != "auto":
        try:
            proc = gas.parse_process(settings.process)
        except Exception as exc:
            raise SettingsError(f"design settings: process: {exc}") from None
        return proc, f"{proc.kind} (n = {proc.n:.3g}) as set"
    from stowflow.physics import thermal

    t_d = _discharge_time(demand, dt)
    if settings.gas_model == "real":
        p1 = float(p_start) if p_start is not None else settings.p_ambient + AUTO_START
        n_eff = float(
            thermal.effective_polytropic_index(
                t_d,
                settings.time_constant,
                1.0 / AUTO_EXPANSION,
                model="real",
                p_start=p1,
                T_start=settings.t_min,
                steps=AUTO_STEPS,
            )
        )
        where = f" of real nitrogen from {bar_text(p1, settings.p_ambient, '.0f')}"
    else:
        n_eff = float(
            thermal.effective_polytropic_index(
                t_d, settings.time_constant, 1.0 / AUTO_EXPANSION, model="ideal"
            )
        )
        where = " of an ideal gas"
    n_eff = min(max(n_eff, 1.0), 3.0)
    proc = gas.Process("polytropic", n_eff)
    note = (
        f"discharge polytropic n = {n_eff:.3f}{where}: thermal time-constant model (τ = "
        f"{settings.time_constant:g} s) over the longest discharge of {t_d:.3g} s, from a gas "
        "at rest at the top of the window"
    )
    return proc, note


def make_problem(
    cycle: DutyCycle, settings: DesignSettings, extra_pressure: np.ndarray | float = 0.0
) -> Problem:
    """Prepare a cycle for the search.

    Parameters
    ----------
    cycle : DutyCycle
        The duty cycle; it must carry a required pressure.
    settings : DesignSettings
        Design settings.
    extra_pressure : float or numpy.ndarray
        Extra pressure added to the requirement of every step (used when the verification
        tightens the bounds), [Pa].

    Returns
    -------
    Problem
    """
    if cycle.pressure is None:
        raise SettingsError(
            f"{cycle.source}: the cycle has no pressure column; give the minimum working "
            "pressure as an option (e.g. --min-pressure 150bar)"
        )
    p_step = np.asarray(cycle.pressure, float) + settings.line_loss + extra_pressure
    p_end = np.maximum(p_step, np.roll(p_step, -1))
    proc, note = resolve_process(cycle.flow, cycle.dt, settings, float(p_end.max()))
    return Problem(
        dt=float(cycle.dt),
        demand=np.asarray(cycle.flow, float),
        p_step=p_step,
        p_end=p_end,
        process=proc,
        process_note=note,
        settings=settings,
    )
