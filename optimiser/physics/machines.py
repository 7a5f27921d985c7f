"""Losses of the machines that turn electricity into flow: pump, electric motor, drive.

Three loss models, each set from the catalogue's rated figures or fitted to the catalogue's
points, and one energy account that every supply's energy and heat load is read from.

**Pump** (a positive-displacement pump of displacement :math:`D` at speed :math:`n`, stroke
fraction :math:`x` of a variable pump, gauge pressure rise :math:`\\Delta p`): the loss
structure of Wilson's model, with laminar leakage that grows with pressure, a friction torque
that grows with the pump's ideal torque, and a drag torque that grows with speed:

.. math::
    Q = x D n - k_L\\,\\Delta p, \\qquad
    M = \\frac{x D \\Delta p}{2\\pi}(1 + c_f) + M_d \\frac{n}{n_r}, \\qquad
    P_{shaft} = 2\\pi n M = x D n\\,\\Delta p\\,(1 + c_f) + 2\\pi M_d \\frac{n^2}{n_r}

From the catalogue's volumetric and overall efficiency :math:`\\eta_v, \\eta_o` at the rated
pressure :math:`\\Delta p_r`, full stroke and rated speed :math:`n_r`, with the mechanical
efficiency :math:`\\eta_{hm} = \\eta_o/\\eta_v` and a share :math:`s_d` of the torque loss
that does not depend on pressure:

.. math::
    k_L = \\frac{(1 - \\eta_v) D n_r}{\\Delta p_r}, \\qquad
    M_d = s_d\\,\\frac{D \\Delta p_r}{2\\pi}\\Big(\\frac{1}{\\eta_{hm}} - 1\\Big), \\qquad
    c_f = (1 - s_d)\\Big(\\frac{1}{\\eta_{hm}} - 1\\Big)

so the model reproduces the catalogue exactly at the rated point.  Catalogue points
(pressure, volumetric, overall efficiency at full stroke and rated speed) replace the rated
pair: :math:`k_L` and :math:`(M_d, c_f)` are then fitted by least squares (not negative).

**Motor** (rated output :math:`P_r`, efficiency :math:`\\eta_r`): the summation of separated
losses of IEC 60034-2-1: constant losses (iron, friction and windage) taken in proportion to
speed, load losses (stator and rotor :math:`I^2R`, additional load losses) in proportion to
the square of the torque:

.. math::
    L_m = a\\,\\frac{n}{n_r} + b\\,\\tau^2, \\qquad \\tau = \\frac{M}{M_r}, \\qquad
    a = k_0 L_r,\\; b = (1 - k_0) L_r,\\; L_r = P_r\\Big(\\frac{1}{\\eta_r} - 1\\Big)

At rated speed the efficiency :math:`\\tau/(\\tau + (k_0 + (1-k_0)\\tau^2) L_r/P_r)` peaks at
:math:`\\tau^* = \\sqrt{k_0/(1-k_0)}`; :data:`MOTOR_CONSTANT_SHARE` puts the peak at 75 % load,
where the U.S. DOE fact sheet places it.  Catalogue points (load fraction, efficiency) replace
:math:`k_0`: :math:`a, b` are fitted by least squares (not negative).

**Drive** (variable-frequency drive of rated output :math:`P_{d,r}`, efficiency
:math:`\\eta_{d,r}`): a constant loss plus a loss in proportion to the output current, taken
in proportion to the motor's torque (magnetising current neglected):

.. math::
    L_d = L_{d,r}\\big(k_d + (1 - k_d)\\,\\iota\\big), \\qquad
    \\iota = \\frac{M\\,\\omega_r}{P_{d,r}}

Catalogue points (load fraction, efficiency at rated speed) replace :math:`k_d` by a least
squares fit.

**Energy account** (:func:`energy_account`): per step, the electrical input is split into the
useful work at the consumer (demand × consumer pressure), throttling (demand × the supply
pressure above the consumer's), relief and compensator flow (× supply pressure), standby
circulation of an unloaded pump, the net work into an accumulator over the cycle (the heat
its gas gives to the wall), pump, motor and drive losses.  The parts are computed from flows
and pressures and the electrical input from the loss models, separately: their sum matches
only when the flows balance.

References
----------
.. [1] W. E. Wilson, "Performance criteria for positive-displacement pumps and fluid motors",
   Trans. ASME 71 (1949) 115-120 (loss structure: leakage ∝ Δp, friction ∝ Δp, drag ∝ n;
   from memory).
.. [2] IEC 60034-2-1:2014, Rotating electrical machines - Part 2-1: Standard methods for
   determining losses and efficiency from tests (summation of separated losses).
.. [3] U.S. Department of Energy, Motor Challenge, "Determining Electric Motor Load and
   Efficiency", fact sheet DOE/GO-10097-517 (1997): "Maximum efficiency is usually near 75 %
   of rated load" (the document number from memory).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, fields
from typing import ClassVar

import numpy as np

__all__ = [
    "DRIVE_CONSTANT_SHARE",
    "ENERGY_PARTS",
    "MOTOR_CONSTANT_SHARE",
    "PUMP_DRAG_SHARE",
    "DriveLosses",
    "EnergyBreakdown",
    "MotorLosses",
    "PumpLosses",
    "energy_account",
    "theoretical_torque",
]

#: Share of a motor's rated losses that does not depend on load: 0.36 puts the peak of the
#: efficiency at 75 % load, sqrt(0.36/0.64) = 0.75 (U.S. DOE fact sheet, "Determining Electric
#: Motor Load and Efficiency": maximum efficiency usually near 75 % of rated load).
MOTOR_CONSTANT_SHARE = 0.36

#: Share of a pump's torque loss at rated pressure that does not depend on pressure (drag of
#: the oil at speed): from memory, a pump takes a few per cent of its rated torque to turn
#: unloaded.
PUMP_DRAG_SHARE = 0.3

#: Share of a drive's rated losses that does not depend on its current (control, fans,
#: DC link): from memory.
DRIVE_CONSTANT_SHARE = 0.25

#: The parts of an energy breakdown, in the order the report stacks them.
ENERGY_PARTS: tuple[str, ...] = (
    "useful",
    "throttling",
    "relief",
    "standby",
    "gas_heat",
    "pump",
    "motor",
    "drive",
)


def theoretical_torque(displacement: float, dp: float) -> float:
    """Ideal torque of a pump: displacement × pressure rise / 2π, [N·m].

    Parameters
    ----------
    displacement : float
        Displacement per revolution, [m³/rev].
    dp : float
        Pressure rise (gauge outlet pressure), [Pa].

    Examples
    --------
    Esposito, *Fluid Power with Applications*, example 5-9 (from memory): 100 cm³/rev at
    70 bar, theoretical torque 111.4 N·m.

    >>> round(theoretical_torque(100e-6, 70e5), 1)
    111.4
    """
    return displacement * dp / (2.0 * math.pi)


def _nonneg_line(x: np.ndarray, y: np.ndarray) -> tuple[float, float]:
    """Least-squares intercept and slope of y = a + b·x with a, b ≥ 0."""
    x, y = np.asarray(x, float), np.asarray(y, float)
    if x.size >= 2 and np.ptp(x) > 0:
        b, a = np.polyfit(x, y, 1)
        if a >= 0 and b >= 0:
            return float(a), float(b)
    # One of the two at zero: the better of the two one-parameter fits.
    b_only = float(max(np.dot(x, y) / max(np.dot(x, x), 1e-300), 0.0))
    a_only = float(max(np.mean(y), 0.0))
    err_b = float(np.sum((y - b_only * x) ** 2))
    err_a = float(np.sum((y - a_only) ** 2))
    return (0.0, b_only) if err_b <= err_a else (a_only, 0.0)


@dataclass(frozen=True)
class PumpLosses:
    """Loss model of a positive-displacement pump (module docstring).

    Attributes
    ----------
    displacement : float
        Largest displacement per revolution, [m³/rev].
    speed : float
        Rated speed, [rev/s].
    leakage : float
        Leakage coefficient k_L: leakage flow per pressure rise, [m³/(s·Pa)].
    drag_torque : float
        Drag torque M_d at rated speed, [N·m].
    friction : float
        Friction torque over ideal torque c_f, [-].

    Examples
    --------
    Through the rated point (hand calculation from the stated model: at 250 bar the catalogue's
    95 % and 90 %; at 100 bar the leakage is 2 % and the drag weighs more):

    >>> pump = PumpLosses.from_rated(100e-6, 25.0, 250e5, 0.95, 0.90)
    >>> [round(x, 3) for x in pump.efficiencies(250e5)]
    [0.95, 0.947, 0.9]
    >>> [round(x, 3) for x in pump.efficiencies(100e5)]
    [0.98, 0.925, 0.907]
    """

    displacement: float
    speed: float
    leakage: float
    drag_torque: float
    friction: float

    @classmethod
    def from_rated(
        cls,
        displacement: float,
        speed: float,
        dp_rated: float,
        volumetric: float,
        overall: float,
        drag_share: float = PUMP_DRAG_SHARE,
    ) -> PumpLosses:
        """The model through the catalogue's rated point.

        Parameters
        ----------
        displacement : float
            [m³/rev].
        speed : float
            Rated speed, [rev/s].
        dp_rated : float
            Pressure rise at which the efficiencies hold, [Pa].
        volumetric, overall : float
            Volumetric and overall efficiency there, [-].
        drag_share : float
            Share of the torque loss that does not depend on pressure, [-].
        """
        loss = 1.0 / (overall / volumetric) - 1.0  # torque loss over ideal torque
        return cls(
            displacement=displacement,
            speed=speed,
            leakage=(1.0 - volumetric) * displacement * speed / dp_rated,
            drag_torque=drag_share * theoretical_torque(displacement, dp_rated) * loss,
            friction=(1.0 - drag_share) * loss,
        )

    @classmethod
    def fit(
        cls, displacement: float, speed: float, points: Sequence[tuple[float, float, float]]
    ) -> PumpLosses:
        """The model fitted to points (pressure rise [Pa], volumetric [-], overall [-]).

        The leakage coefficient is the least-squares slope of the leakage flow over pressure
        (through zero); drag and friction are the least-squares line of the torque loss over
        the ideal torque, neither negative.
        """
        dp = np.array([p[0] for p in points], float)
        ev = np.array([p[1] for p in points], float)
        eo = np.array([p[2] for p in points], float)
        q_leak = (1.0 - ev) * displacement * speed
        k = float(max(np.dot(q_leak, dp) / np.dot(dp, dp), 0.0))
        ideal = displacement * dp / (2.0 * math.pi)
        drag, friction = _nonneg_line(ideal, ideal * (ev / eo - 1.0))
        return cls(displacement, speed, k, drag, friction)

    @property
    def theoretical_flow(self) -> float:
        """Displacement × rated speed, [m³/s]."""
        return self.displacement * self.speed

    def leak(self, dp):
        """Leakage flow at the pressure rise ``dp`` [Pa], [m³/s]."""
        return self.leakage * np.maximum(dp, 0.0)

    def delivered(self, stroke, speed, dp):
        """Flow delivered at stroke fraction [-], speed [rev/s], pressure rise [Pa], [m³/s]."""
        return np.maximum(stroke * self.displacement * speed - self.leak(dp), 0.0)

    def torque(self, stroke, speed, dp):
        """Shaft torque, [N·m]."""
        ideal = stroke * self.displacement * np.maximum(dp, 0.0) / (2.0 * math.pi)
        return ideal * (1.0 + self.friction) + self.drag_torque * speed / self.speed

    def shaft_power(self, stroke, speed, dp):
        """Shaft input power, [W]."""
        return 2.0 * math.pi * speed * self.torque(stroke, speed, dp)

    def stroke_for(self, flow, dp, speed=None):
        """Stroke fraction that delivers ``flow`` [m³/s] at ``dp`` [Pa] and ``speed``, [-]."""
        n = self.speed if speed is None else speed
        return (flow + self.leak(dp)) / (self.displacement * n)

    def speed_for(self, flow, dp):
        """Speed at full stroke that delivers ``flow`` [m³/s] at ``dp`` [Pa], [rev/s]."""
        return (flow + self.leak(dp)) / self.displacement

    def efficiencies(self, dp, stroke=1.0, speed=None) -> tuple[float, float, float]:
        """Volumetric, mechanical and overall efficiency at one operating point, [-]."""
        n = self.speed if speed is None else speed
        q = float(self.delivered(stroke, n, dp))
        ev = q / (stroke * self.displacement * n)
        em = float(theoretical_torque(stroke * self.displacement, dp) / self.torque(stroke, n, dp))
        return ev, em, ev * em


@dataclass(frozen=True)
class _LoadLosses:
    """Losses a + b·load^k of a machine of rated output ``rated`` [W] (k = ``_POWER``)."""

    rated: float
    constant: float
    variable: float

    #: Exponent of the load in the variable losses, and the default constant share.
    _POWER: ClassVar[int] = 1
    _SHARE: ClassVar[float] = 0.0

    @classmethod
    def from_rated(cls, rated: float, efficiency: float, constant_share: float | None = None):
        """The model through the rated efficiency [-] with the constant-loss share [-]
        (default: the class's)."""
        share = cls._SHARE if constant_share is None else constant_share
        losses = rated * (1.0 / efficiency - 1.0)
        return cls(rated, share * losses, (1.0 - share) * losses)

    @classmethod
    def fit(cls, rated: float, points: Sequence[tuple[float, float]]):
        """The model fitted by least squares (neither part negative) to points (load fraction
        [-], efficiency [-]) at rated speed."""
        x = np.array([p[0] for p in points], float)
        eff = np.array([p[1] for p in points], float)
        a, b = _nonneg_line(x**cls._POWER, x * rated * (1.0 / eff - 1.0))
        return cls(rated, a, b)

    @property
    def rated_losses(self) -> float:
        """Losses at rated load and speed, [W]."""
        return self.constant + self.variable

    def efficiency(self, load) -> np.ndarray:
        """Efficiency at the load fraction ``load`` [-] and rated speed, [-]."""
        out = np.asarray(load, float) * self.rated
        return out / (out + self.losses(load))


@dataclass(frozen=True)
class MotorLosses(_LoadLosses):
    """Loss model of an electric motor (module docstring): constant + load² losses.

    Attributes
    ----------
    rated : float
        Rated output, [W].
    constant : float
        Constant losses at rated speed (a), [W].
    variable : float
        Load losses at rated torque (b), [W].

    Examples
    --------
    An IE3 15 kW motor (92.1 % at rated load, IEC 60034-30-1): best near 75 % load (U.S. DOE
    fact sheet "Determining Electric Motor Load and Efficiency"), lower at a quarter load.

    >>> m = MotorLosses.from_rated(15e3, 0.921)
    >>> round(float(m.efficiency(0.75)), 4), round(float(m.efficiency(0.25)), 3)
    (0.9239, 0.879)
    """

    _POWER: ClassVar[int] = 2
    _SHARE: ClassVar[float] = MOTOR_CONSTANT_SHARE

    def losses(self, load, speed=1.0):
        """Losses at the torque fraction ``load`` [-] and speed fraction ``speed`` [-], [W]."""
        tau = np.asarray(load, float)
        return self.constant * np.asarray(speed, float) + self.variable * tau**2

    def input_power(self, shaft, speed=1.0):
        """Electrical input for the shaft output ``shaft`` [W] at speed fraction [-], [W]."""
        shaft = np.asarray(shaft, float)
        s = np.maximum(np.asarray(speed, float), 1e-12)
        return shaft + self.losses(shaft / (self.rated * s), s)


@dataclass(frozen=True)
class DriveLosses(_LoadLosses):
    """Loss model of a variable-frequency drive (module docstring): constant + current.

    Attributes
    ----------
    rated : float
        Rated output, [W].
    constant : float
        Losses that do not depend on the current, [W].
    variable : float
        Losses in proportion to the current at rated current, [W].

    Examples
    --------
    A 97 % drive at a quarter of its current (hand calculation: losses 0.25 + 0.75 × 0.25 of
    the rated 464 W):

    >>> round(float(DriveLosses.from_rated(15e3, 0.97).efficiency(0.25)), 3)
    0.949
    """

    _POWER: ClassVar[int] = 1
    _SHARE: ClassVar[float] = DRIVE_CONSTANT_SHARE

    def losses(self, load):
        """Losses at the current fraction ``load`` [-], [W]."""
        return self.constant + self.variable * np.asarray(load, float)

    def input_power(self, output, current):
        """Input for the output ``output`` [W] at the current fraction ``current`` [-], [W]."""
        return np.asarray(output, float) + self.losses(current)


# -- the energy account ---------------------------------------------------------------------


@dataclass(frozen=True)
class EnergyBreakdown:
    """Where one cycle's electrical energy goes, [J per cycle].

    Attributes
    ----------
    useful : float
        Demand × consumer pressure: the work the machine takes.
    throttling : float
        Demand × (supply pressure − consumer pressure): lost between the supply and the
        consumer (the line-loss allowance included).
    relief : float
        Relief-valve and compensator (control) flow × supply pressure.
    standby : float
        Flow an unloaded pump circulates × its standby pressure.
    gas_heat : float
        Net work into the accumulator over the cycle: the heat its gas gives to the wall.
    pump, motor, drive : float
        Losses of the pump (leakage, friction, drag), the motor and the drive.
    electrical : float
        Electrical input from the loss models, computed on its own.
    duration : float
        Cycle length, [s].
    """

    useful: float
    throttling: float
    relief: float
    standby: float
    gas_heat: float
    pump: float
    motor: float
    drive: float
    electrical: float
    duration: float

    @property
    def parts(self) -> dict[str, float]:
        """The parts in :data:`ENERGY_PARTS` order, [J]."""
        return {k: float(getattr(self, k)) for k in ENERGY_PARTS}

    @property
    def total(self) -> float:
        """Sum of the parts, [J] (equals ``electrical`` when the flows balance)."""
        return float(sum(self.parts.values()))

    @property
    def heat_load(self) -> float:
        """Mean heat put into the oil while the cycle runs, [W].

        Throttling, relief and compensator flow, standby circulation and pump losses end as
        heat in the oil; the motor's and the drive's losses go to the air, the gas's heat to
        the accumulator shell, the useful work to the machine.
        """
        return (self.throttling + self.relief + self.standby + self.pump) / self.duration

    @staticmethod
    def mean(items: Sequence[EnergyBreakdown]) -> EnergyBreakdown:
        """The field-by-field mean of several breakdowns of the same cycle."""
        names = [f.name for f in fields(EnergyBreakdown)]
        return EnergyBreakdown(**{k: float(np.mean([getattr(b, k) for b in items])) for k in names})


def energy_account(
    dt: float,
    *,
    demand,
    consumer,
    supply,
    delivered,
    electrical,
    shaft,
    motor_input,
    relief=0.0,
    bank_in=0.0,
    standby_flow=0.0,
    standby_pressure=0.0,
) -> EnergyBreakdown:
    """Split one cycle's electrical energy into its parts (module docstring).

    Every argument but ``dt`` is a value per step (an array of the cycle's steps, or a scalar
    for all of them); pressures are gauge.

    Parameters
    ----------
    dt : float
        Step length, [s].
    demand : array_like
        Flow the machine takes, [m³/s].
    consumer : array_like
        Pressure the machine needs, gauge, [Pa].
    supply : array_like
        Pressure of the supply line while the pump delivers, gauge, [Pa].
    delivered : array_like
        Mean flow the pump puts into the line, [m³/s]: demand + relief + bank_in.
    electrical : array_like
        Mean electrical input, [W].
    shaft : array_like
        Mean pump shaft power, [W].
    motor_input : array_like
        Mean motor input power, [W] (the drive's output; equal to ``electrical`` without one).
    relief : array_like
        Flow over the relief valve and the compensator's control flow, [m³/s].
    bank_in : array_like
        Flow into the accumulator (negative out of it), [m³/s].
    standby_flow : array_like
        Mean flow an unloaded pump circulates, [m³/s].
    standby_pressure : float
        Pressure of that circulation, gauge, [Pa].

    Returns
    -------
    EnergyBreakdown

    Examples
    --------
    One second: 1 L/s to a machine at 80 bar from a line at 100 bar, 1 L/s over the relief
    valve; shaft 22 kW, motor input 24 kW (hand calculation: 8 kJ useful, 2 kJ throttled,
    10 kJ relieved, 2 kJ pump and 2 kJ motor losses).

    >>> acc = energy_account(1.0, demand=1e-3, consumer=80e5, supply=100e5, delivered=2e-3,
    ...                      electrical=24e3, shaft=22e3, motor_input=24e3, relief=1e-3)
    >>> {k: round(v / 1e3, 3) for k, v in acc.parts.items() if v}
    {'useful': 8.0, 'throttling': 2.0, 'relief': 10.0, 'pump': 2.0, 'motor': 2.0}
    >>> round(acc.total / acc.electrical, 12)
    1.0
    """
    demand = np.asarray(demand, float)
    n = demand.size

    def total(values) -> float:
        return float(np.sum(np.broadcast_to(np.asarray(values, float), (n,))) * dt)

    supply = np.asarray(supply, float)
    consumer = np.asarray(consumer, float)
    hydraulic = np.asarray(delivered, float) * supply + np.asarray(standby_flow) * standby_pressure
    return EnergyBreakdown(
        useful=total(demand * consumer),
        throttling=total(demand * (supply - consumer)),
        relief=total(np.asarray(relief, float) * supply),
        standby=total(np.asarray(standby_flow, float) * standby_pressure),
        gas_heat=total(np.asarray(bank_in, float) * supply),
        pump=total(np.asarray(shaft, float) - hydraulic),
        motor=total(np.asarray(motor_input, float) - np.asarray(shaft, float)),
        drive=total(np.asarray(electrical, float) - np.asarray(motor_input, float)),
        electrical=total(electrical),
        duration=n * dt,
    )
