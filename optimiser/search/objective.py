"""What the search puts first: the designer's objective, the category cap and the type order.

The search is lexicographic.  :data:`OBJECTIVES` name its first levels:

* ``"power"`` (default): least installed motor power, then least capex;
* ``"capex"``: least capex (catalogue prices of bank, pump and motor), then least power;
* ``"tco"``: least total cost of ownership, capex plus the present value of the energy,
  ``capex + energy_value · E`` with ``E`` the energy per cycle under an ideal pressure switch
  (:attr:`DesignSettings.energy_value`, set from the cost settings), then least power;
* ``"volume"``: least gas volume of the bank (a supply with an accumulator before a pump-only
  one: the pump-only supplies are the comparison's alternatives), then least power, then capex.

The last level is always the energy per cycle of the schedule model.  Candidates tied on the
first levels are narrowed to the most preferred accumulator type (``prefer_types``) before the
energy decides.  ``max_category`` caps the pressure-equipment category hint of one vessel
(:func:`stowflow.physics.accumulator.pressure_equipment_category`).

With an objective other than ``"power"`` the search may reach a large pump on a small bank,
which the least-power order never meets (its motor grows with the pump).  A pressure switch
cannot hold such a supply to its least loaded time, so :func:`switch_holds` drops a precharge
whose switch band holds less oil than the pump delivers in ``min_loaded_dwell`` (Boyle, at the
precharge's temperature: an estimate; the time-domain verification judges the real switch).

This module orders candidates; the energy comes from the designer.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import replace

import numpy as np
from stowflow.physics import accumulator as acc
from stowflow.units import BAR, LITRE

__all__ = [
    "CATEGORIES",
    "OBJECTIVES",
    "RUNNERS_UP",
    "category_allowed",
    "choose",
    "gas_volume",
    "order_key",
    "switch_holds",
    "vessel_category",
]

#: The objectives the designer may choose, the default first.
OBJECTIVES: tuple[str, ...] = ("power", "capex", "tco", "volume")
#: Pressure-equipment categories in rising order (the hint's words).
CATEGORIES: tuple[str, ...] = ("outside scope", "SEP", "I", "II", "III", "IV")
#: Runner-up designs the result lists beside the chosen one.
RUNNERS_UP = 4
#: Candidates priced one by one for the TCO order (see :func:`_tco_pool`).
TCO_POOL = 24
#: Relative tolerance within which two objective values tie, [-].
TIE_RTOL = 1e-9


def vessel_category(option, p_ambient: float) -> str:
    """The pressure-equipment category hint of one vessel of a catalogue row.

    Parameters
    ----------
    option : AccumulatorOption
        The row (its PS, absolute [Pa], and nominal volume [m³]).
    p_ambient : float
        Ambient pressure, [Pa].

    Returns
    -------
    str
        One of :data:`CATEGORIES`.
    """
    ps = (option.max_pressure - p_ambient) / BAR
    return acc.pressure_equipment_category(ps, option.nominal_volume / LITRE)[0]


def category_allowed(option, max_category: str | None, p_ambient: float) -> bool:
    """Whether a row's vessel is at or below the category cap (always, without a cap)."""
    if max_category is None:
        return True
    return CATEGORIES.index(vessel_category(option, p_ambient)) <= CATEGORIES.index(max_category)


def gas_volume(cand, rules: dict | None = None) -> float:
    """Gas volume at precharge of a candidate's bank, [m³] (0 for a pump-only supply)."""
    if cand.option is None:
        return 0.0
    r = (rules or {}).get(cand.option.type)
    return cand.count * acc.nominal_gas_volume(cand.option.type, cand.option.nominal_volume, r)


def switch_holds(cand, settings, rules: dict | None = None):
    """The candidate with only the precharges whose switch band holds the least loaded time.

    Parameters
    ----------
    cand : Candidate
        With its precharges and unload pressures, absolute, [Pa].
    settings : DesignSettings
        Switch differential and repeatability, least loaded time [s].
    rules : dict, optional
        Type rules by type name.

    Returns
    -------
    Candidate or None
        None when no precharge holds.

    Notes
    -----
    The oil between the switch's load point :math:`p_l` (the differential below the unload
    pressure :math:`p_u`, at the low end of its repeatability) and :math:`p_u` is, by Boyle,
    :math:`V_0 p_0 (1/p_l - 1/p_u)`; it must be at least :math:`Q_p t_{min}`.
    """
    if cand.option is None or settings.min_loaded_dwell <= 0:
        return cand
    p0, pu = np.asarray(cand.precharges, float), np.asarray(cand.p_max, float)
    pl = settings.worst_setting(pu - settings.switch_band(pu))
    band = gas_volume(cand, rules) * p0 * (1.0 / pl - 1.0 / pu)
    keep = band >= cand.pump.flow * settings.min_loaded_dwell
    if not np.any(keep):
        return None
    if np.all(keep):
        return cand
    return replace(cand, precharges=p0[keep], p_max=pu[keep])


def order_key(cand, objective: str, *, energy: float = math.nan, energy_value: float = 0.0,
              rules: dict | None = None) -> tuple:  # fmt: skip
    """The lexicographic key of a candidate under an objective (smaller is better).

    Parameters
    ----------
    cand : Candidate
        Pump, motor, bank row and count, capex.
    objective : str
        One of :data:`OBJECTIVES`.
    energy : float
        Energy per cycle under an ideal pressure switch, [J] (``"tco"`` only).
    energy_value : float
        Present value of one joule per cycle over the horizon, [currency/J].
    rules : dict, optional
        Type rules by type name (gas share of gas-over-oil).

    Returns
    -------
    tuple of float
    """
    power, capex = float(cand.motor.rated_power), float(cand.capex)
    if objective == "capex":
        return (capex, power)
    if objective == "tco":
        e = energy if math.isfinite(energy) else math.inf
        return (capex + energy_value * e, power, capex)
    if objective == "volume":
        return (0.0 if cand.option is not None else 1.0, gas_volume(cand, rules), power, capex)
    return (power, capex)


def _tied(a: tuple, b: tuple) -> bool:
    return all(
        x == y or abs(x - y) <= TIE_RTOL * max(abs(x), abs(y)) for x, y in zip(a, b, strict=True)
    )


def _type_rank(cand, prefer: Sequence[str]) -> int:
    if cand.option is None:
        return len(prefer) + 1
    t = cand.option.type
    return prefer.index(t) if t in prefer else len(prefer)


def _same_set(a, b) -> bool:
    return (a.pump, a.motor, a.option, a.count) == (b.pump, b.motor, b.option, b.count)


def _tco_pool(candidates, value: float, energy: Callable) -> list:
    """The candidates worth pricing one by one for the TCO order.

    The energy of a supply depends mostly on its pump and motor; the bank moves it less.  So
    the energy of each pump and motor pair is estimated once, on its cheapest bank, and the
    :data:`TCO_POOL` candidates with the least TCO by that estimate are kept (each is then
    priced with its own energy).  A heuristic, not a bound: stated in the report's notes.
    """
    pairs: dict[tuple, object] = {}
    for c in candidates:
        k = (id(c.pump), id(c.motor))
        if k not in pairs or c.capex < pairs[k].capex:
            pairs[k] = c
    pair_energy = {k: energy(c) for k, c in pairs.items()}
    proxy = sorted(
        candidates, key=lambda c: c.capex + value * pair_energy[(id(c.pump), id(c.motor))]
    )
    return proxy[:TCO_POOL]


def choose(
    candidates,
    settings,
    energy: Callable,
    rules: dict | None = None,
    *,
    ties: Sequence | None = None,
):
    """Order the candidates by the settings' objective: the ties at the top, the runners-up.

    Parameters
    ----------
    candidates : sequence of Candidate
        Every combination the screen found that meets the cycle.
    settings : DesignSettings
        ``objective``, ``prefer_types`` and ``energy_value``.
    energy : callable
        ``energy(candidate) -> J``: energy per cycle under an ideal pressure switch (called
        for every candidate with ``"tco"``, else only for the runners-up).
    rules : dict, optional
        Type rules by type name.
    ties : sequence of Candidate, optional
        The top ties when the caller has them already (the screen's, for ``"power"``).

    Returns
    -------
    ties : list of Candidate
        The candidates tied at the top, narrowed to the most preferred type.
    runners_up : list of (Candidate, float)
        The next :data:`RUNNERS_UP` component sets in order, each with its energy [J].
    """
    obj = settings.objective
    cache: dict[int, float] = {}

    def e_of(c) -> float:
        if id(c) not in cache:
            cache[id(c)] = float(energy(c))
        return cache[id(c)]

    def key(c) -> tuple:
        e = e_of(c) if obj == "tco" else math.nan
        return order_key(c, obj, energy=e, energy_value=settings.energy_value, rules=rules)

    if obj != "power":
        held = (switch_holds(c, settings, rules) for c in candidates)
        candidates = [c for c in held if c is not None]
    if obj == "tco":
        candidates = _tco_pool(candidates, settings.energy_value, e_of)
    ordered = sorted(candidates, key=key)
    if ties is not None:
        ties = list(ties)
    elif ordered:
        top = key(ordered[0])
        ties = [c for c in ordered if _tied(key(c), top)]
    else:
        return [], []
    prefer = tuple(settings.prefer_types)
    if prefer:
        best = min(_type_rank(c, prefer) for c in ties)
        ties = [c for c in ties if _type_rank(c, prefer) == best]
    runners: list = []
    for c in ordered:
        if len(runners) >= RUNNERS_UP:
            break
        if any(_same_set(c, t) for t in ties) or any(_same_set(c, r) for r, _ in runners):
            continue
        runners.append((c, e_of(c)))
    return ties, runners
