"""Sizes of the rest of the supply circuit: the items the search does not choose.

The search picks the accumulators, the pump and the motor from the catalogue; a supply also
needs a non-return valve, a pressure gauge, a cooler, a tank, a return filter and its lines.
This module sizes them from the design by stated rules, each with its source or marked as a
rule of thumb:

* line bore from the flow and a velocity limit (continuity, :math:`d = \\sqrt{4 Q / (\\pi v)}`),
  then the smallest tube of :data:`TUBES` whose bore is at least that and whose pressure
  rating by Barlow's formula reaches the line's highest pressure;
* gauge range: the next range of :data:`GAUGE_RANGES` at or above :data:`GAUGE_FACTOR` × the
  highest working (unload) pressure;
* tank: :data:`TANK_MINUTES` minutes of pump flow plus all the oil the bank holds at the
  unload pressure (the safety block discharges it to the tank at every shutdown), rounded up to
  the R10 series;
* cooler: the mean heat put into the oil (the energy account's heat load) times
  :data:`COOLER_MARGIN`;
* return filter: the consumer's peak flow (pump plus the accumulator's discharge peak) plus the
  pump's flow returned by the unloading valve at the same time.

Everything is SI (Pa absolute where a pressure, m³, m³/s, m, W); the report turns it into
trade units.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from stowflow.units import BAR, LITRE

__all__ = [
    "COOLER_MARGIN",
    "GAUGE_FACTOR",
    "GAUGE_RANGES",
    "LOW_PRESSURE_LINE",
    "TANK_MINUTES",
    "TUBES",
    "TUBE_ALLOWABLE_STRESS",
    "VELOCITY_LIMITS",
    "CircuitSizes",
    "Line",
    "bank_oil_at",
    "circuit_sizes",
    "gauge_range",
    "least_bore",
    "pick_tube",
    "r10_up",
    "tube_rating",
]

#: Velocity limits of the lines, [m/s].  Suction 1.0 and pressure 5.0 m/s lie inside the
#: ranges a fluid-power textbook gives (Esposito, Fluid Power with Applications, 7th ed., 2009,
#: chapter on hydraulic conductors: pump inlet 2-4 ft/s = 0.6-1.2 m/s, working lines 7-20 ft/s
#: = 2.1-6.1 m/s; from memory); return 3.0 m/s is common practice, no published source.
VELOCITY_LIMITS: dict[str, float] = {"suction": 1.0, "pressure": 5.0, "return": 3.0}

#: Highest pressure a suction or return line is rated for, gauge, [Pa] (10 bar: back pressure
#: of a return filter and cooler with margin; common practice, no published source).
LOW_PRESSURE_LINE = 10 * BAR

#: Cold-drawn precision steel tubes for hydraulic lines, (outside diameter, wall) [mm]: sizes
#: commonly stocked to EN 10305-4 (from memory; check the supplier's list).
TUBES: tuple[tuple[float, float], ...] = (
    (6, 1), (8, 1), (8, 1.5), (10, 1), (10, 1.5), (12, 1), (12, 1.5), (12, 2), (14, 2),
    (15, 1.5), (15, 2), (16, 2), (16, 2.5), (18, 1.5), (18, 2), (20, 2), (20, 2.5), (20, 3),
    (22, 1.5), (22, 2), (22, 2.5), (25, 2.5), (25, 3), (25, 4), (28, 2), (28, 3), (30, 3),
    (30, 4), (35, 3), (35, 4), (38, 4), (38, 5), (42, 3), (42, 4), (50, 5), (50, 6),
    (60, 5), (60, 6), (75, 6), (80, 8),
)  # fmt: skip

#: Allowable hoop stress of the tube, [Pa]: yield strength of E235 (235 MPa, EN 10305-4, from
#: memory) over a safety factor of 1.5 on yield for steady pressure (common practice).
TUBE_ALLOWABLE_STRESS = 235e6 / 1.5

#: Gauge full-scale ranges, gauge, [bar]: the 1-1.6-2.5-4-6 series of EN 837-1 (from memory).
GAUGE_RANGES: tuple[float, ...] = (
    1, 1.6, 2.5, 4, 6, 10, 16, 25, 40, 60, 100, 160, 250, 400, 600, 1000,
)  # fmt: skip

#: Gauge range over the highest working pressure, [-] (about 1.5: the pointer then sits near
#: two-thirds of the scale at work; common practice, no published source).
GAUGE_FACTOR = 1.5

#: Minutes of pump flow the tank holds beside the bank's oil, [min] (the "three times the pump
#: flow per minute" rule of open circuits; common practice, no published source).
TANK_MINUTES = 3.0

#: Cooler capacity over the mean heat load, [-] (20 % margin for fouling and the hottest
#: ambient; common practice, no published source).
COOLER_MARGIN = 1.2

#: The R10 preferred numbers of one decade (ISO 3).
_R10 = (1.0, 1.25, 1.6, 2.0, 2.5, 3.15, 4.0, 5.0, 6.3, 8.0)


@dataclass(frozen=True)
class Line:
    """One line of the circuit and its tube.

    Attributes
    ----------
    name : str
        Which line ("pump line", "pressure line", "return line", "suction line").
    flow : float
        Largest flow it carries, [m³/s].
    velocity_limit : float
        Highest mean velocity allowed, [m/s].
    pressure : float
        Highest pressure it must hold, gauge, [Pa].
    least_bore : float
        Inner diameter the velocity limit asks for, [m].
    outside : float
        Chosen tube's outside diameter, [m] (nan when no tube of :data:`TUBES` fits).
    wall : float
        Its wall, [m].
    velocity : float
        Mean velocity in the chosen tube, [m/s].
    rating : float
        Its pressure rating by Barlow's formula, gauge, [Pa].
    """

    name: str
    flow: float
    velocity_limit: float
    pressure: float
    least_bore: float
    outside: float
    wall: float
    velocity: float
    rating: float

    @property
    def bore(self) -> float:
        """Inner diameter of the chosen tube, [m]."""
        return self.outside - 2.0 * self.wall


@dataclass(frozen=True)
class CircuitSizes:
    """The sizes of the circuit's items beyond the catalogue's.

    Attributes
    ----------
    check_valve_flow : float
        Flow the non-return valve passes: the pump's, [m³/s].
    gauge_range : float
        Full scale of the pressure gauge, gauge, [Pa].
    tank_volume : float
        Usable tank volume, [m³] (R10 series).
    tank_least : float
        The rule's volume before rounding, [m³].
    bank_oil : float
        Oil the bank holds at the unload pressure, [m³] (0 without a bank).
    heat_load : float
        Mean heat into the oil, [W] (nan when not computed).
    cooler_capacity : float
        ``heat_load × COOLER_MARGIN``, [W].
    filter_flow : float
        Flow through the return filter, [m³/s].
    peak_demand : float
        Consumer's peak flow, [m³/s].
    lines : tuple[Line, ...]
        Suction, pump, pressure and return lines.
    """

    check_valve_flow: float
    gauge_range: float
    tank_volume: float
    tank_least: float
    bank_oil: float
    heat_load: float
    cooler_capacity: float
    filter_flow: float
    peak_demand: float
    lines: tuple[Line, ...]


def least_bore(flow: float, velocity: float) -> float:
    """Inner diameter at which a flow reaches a mean velocity (continuity).

    Parameters
    ----------
    flow : float
        Volume flow, [m³/s].
    velocity : float
        Mean velocity, [m/s].

    Returns
    -------
    float
        :math:`d = \\sqrt{4 Q / (\\pi v)}`, [m].
    """
    return math.sqrt(4.0 * flow / (math.pi * velocity))


def tube_rating(outside: float, wall: float, stress: float = TUBE_ALLOWABLE_STRESS) -> float:
    """Pressure rating of a tube by Barlow's formula on the outside diameter.

    Parameters
    ----------
    outside : float
        Outside diameter, [m].
    wall : float
        Wall thickness, [m].
    stress : float
        Allowable hoop stress, [Pa].

    Returns
    -------
    float
        :math:`p = 2 \\sigma t / D`, gauge, [Pa].

    Notes
    -----
    The thin-wall hoop stress on the outside diameter errs on the safe side for the thick walls
    of hydraulic tubes; it ignores corrosion and thread allowances and pressure pulsation.
    """
    return 2.0 * stress * wall / outside


def pick_tube(name: str, flow: float, velocity_limit: float, pressure: float) -> Line:
    """The smallest tube of :data:`TUBES` for a flow, a velocity limit and a pressure.

    Parameters
    ----------
    name : str
        The line's name.
    flow : float
        Largest flow, [m³/s].
    velocity_limit : float
        Highest mean velocity, [m/s].
    pressure : float
        Highest pressure, gauge, [Pa].

    Returns
    -------
    Line
        With ``outside`` nan when no listed tube has the bore and the rating.
    """
    d_min = least_bore(flow, velocity_limit)
    for od_mm, t_mm in TUBES:
        od, t = od_mm * 1e-3, t_mm * 1e-3
        rating = tube_rating(od, t)
        if od - 2 * t >= d_min - 1e-12 and rating >= pressure:
            v = flow / (math.pi / 4 * (od - 2 * t) ** 2)
            return Line(name, flow, velocity_limit, pressure, d_min, od, t, v, rating)
    nan = math.nan
    return Line(name, flow, velocity_limit, pressure, d_min, nan, nan, nan, nan)


def gauge_range(p_work: float) -> float:
    """Full scale of a pressure gauge for a highest working pressure.

    Parameters
    ----------
    p_work : float
        Highest working pressure, gauge, [Pa].

    Returns
    -------
    float
        The first range of :data:`GAUGE_RANGES` at or above ``GAUGE_FACTOR · p_work``, gauge,
        [Pa] (the largest range when none is).
    """
    need = GAUGE_FACTOR * p_work / BAR
    return BAR * next((r for r in GAUGE_RANGES if r >= need - 1e-9), GAUGE_RANGES[-1])


def r10_up(value: float) -> float:
    """The R10 preferred number (ISO 3) at or above a positive value, same unit."""
    if not (value > 0 and math.isfinite(value)):
        return value
    decade = 10.0 ** math.floor(math.log10(value))
    for k in (*_R10, 10.0):
        if k * decade >= value * (1 - 1e-9):
            return k * decade
    return 10.0 * decade  # pragma: no cover - the loop ends at 10


def bank_oil_at(gas_volume: float, precharge: float, pressure: float) -> float:
    """Oil a bank holds at a pressure, charged slowly at the precharge's temperature (Boyle).

    Parameters
    ----------
    gas_volume : float
        Gas volume at precharge, [m³].
    precharge : float
        Precharge, absolute, [Pa].
    pressure : float
        Pressure, absolute, [Pa].

    Returns
    -------
    float
        :math:`V_0 (1 - p_0 / p)`, [m³] (0 at or below the precharge).  An isothermal ideal
        gas gives up a little more oil than real nitrogen at these pressures (Z > 1 compresses
        less), so the tank is sized on the safe side.
    """
    return max(gas_volume * (1.0 - precharge / pressure), 0.0)


def circuit_sizes(design, settings, cycle, heat_load: float = math.nan) -> CircuitSizes:
    """Size the circuit's items beyond the catalogue's for a feasible design.

    Parameters
    ----------
    design : Design
        A feasible design (pump, relief setting, unload pressure, bank).
    settings : DesignSettings
        Ambient pressure.
    cycle : DutyCycle
        The consumer's flow, [m³/s].
    heat_load : float
        Mean heat into the oil from the energy account, [W] (nan: not computed).

    Returns
    -------
    CircuitSizes
    """
    pa = settings.p_ambient
    q_pump = float(design.pump.flow)
    peak = float(np.max(cycle.flow)) if np.size(cycle.flow) else 0.0
    relief = float(design.relief) - pa
    oil = 0.0
    if design.bank is not None:
        oil = bank_oil_at(design.bank.gas_volume, design.bank.precharge, float(design.p_max))
    tank_least = TANK_MINUTES * 60.0 * q_pump + oil
    # the pump's flow goes to tank through the unloading valve while the consumer returns oil
    filter_flow = max(peak, q_pump) + (q_pump if design.bank is not None else 0.0)
    v = VELOCITY_LIMITS
    lines = (
        pick_tube("suction line", q_pump, v["suction"], LOW_PRESSURE_LINE),
        pick_tube("pump line", q_pump, v["pressure"], relief),
        pick_tube("pressure line", max(peak, q_pump), v["pressure"], relief),
        pick_tube("return line", filter_flow, v["return"], LOW_PRESSURE_LINE),
    )
    heat = float(heat_load)
    return CircuitSizes(
        check_valve_flow=q_pump,
        gauge_range=gauge_range(float(design.p_max) - pa),
        tank_volume=r10_up(tank_least / LITRE) * LITRE,
        tank_least=tank_least,
        bank_oil=oil,
        heat_load=heat,
        cooler_capacity=heat * COOLER_MARGIN,
        filter_flow=filter_flow,
        peak_demand=peak,
        lines=lines,
    )
