"""Pushing gas above the bottles' pressure: a gas booster, or a piston accumulator as a pump.

Both are a cylinder with a swept volume :math:`V_s` and a clearance (dead) volume :math:`V_d`,
modelled stroke by stroke with every state settled at the ambient temperature (slow strokes;
Boyle on the clearance), so at one temperature the densities decide every valve:

* **intake**: the cylinder (:math:`V_s + V_d`) equalises with the bottle when the gas left in it
  has re-expanded below the bottle's density (check valve);
* **push**: the cylinder shrinks to :math:`V_d` into the receiver (check valve), or stops where
  the receiver reaches a density limit (a transfer pump cannot push above its oil pressure).

A **gas booster** of pressure ratio r has :math:`V_d = V_s/(r - 1)`: its delivery falls to zero
exactly at :math:`p_{out} = r\\,p_{in}` (ideal gas).  A **piston accumulator as a transfer
pump** draws gas from the bottle while its oil side drains, is isolated, and pushes the gas on
by pumping oil in; its dead volume is what is left on the gas side at the end stop and its
limit is the oil pressure.

Near a stall the delivery per stroke falls towards zero, so the next bottle is taken once a
stroke moves less than :data:`MIN_YIELD` of the gas its swept volume holds at the bottle's
density (our own rule of operation, no published source).

References
----------
.. [1] Y. A. Çengel, M. A. Boles, *Thermodynamics: An Engineering Approach*, 8th ed.,
   McGraw-Hill (2015), ISBN 978-0-07-339817-4 (reciprocating compressors, clearance and
   volumetric efficiency; Boyle's law).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["MAX_STROKES", "MIN_YIELD", "StrokePlan", "stroke_transfer"]

#: A stroke loop stops after this many strokes, [-].
MAX_STROKES = 200_000
#: Take the next bottle once a stroke delivers less than this share of its swept content, [-]
#: (our own rule of operation, no published source).
MIN_YIELD = 0.25


@dataclass(frozen=True)
class StrokePlan:
    """Result of :func:`stroke_transfer`.

    Attributes
    ----------
    method : str
        ``"booster"`` or ``"transfer pump"``.
    strokes : int
        Strokes done, [-].
    reached : bool
        True when the target mass is in.
    receiver_mass : float
        Nitrogen in the receiver at the end, [kg].
    cylinder_mass : float
        Nitrogen left in the cylinder at the end, [kg].
    bottle_masses : tuple of float
        Nitrogen left in each bottle, [kg].
    strokes_per_bottle : tuple of int
        Strokes drawn from each bottle, [-].
    stop_reason : str
        Why the strokes stopped.
    """

    method: str
    strokes: int
    reached: bool
    receiver_mass: float
    cylinder_mass: float
    bottle_masses: tuple[float, ...]
    strokes_per_bottle: tuple[int, ...]
    stop_reason: str


def stroke_transfer(
    m_r: float,
    V_r: float,
    target_mass: float,
    bottle_masses,
    V_b: float,
    V_s: float,
    V_d: float,
    *,
    rho_limit: float = math.inf,
    rho_residual: float = 0.0,
    m_cylinder: float = 0.0,
    count_cylinder: bool = False,
    min_yield: float = MIN_YIELD,
    method: str = "booster",
) -> StrokePlan:
    """Pump gas from bottles into a receiver stroke by stroke, all settled at one temperature.

    .. math::
        \\rho_{in} = \\frac{m_c + m_b}{V_s + V_d + V_b}, \\qquad
        \\rho_{end} = \\min\\left(\\frac{m_c + m_r}{V_d + V_r}, \\rho_{lim}\\right)

    Parameters
    ----------
    m_r, V_r : float
        Receiver mass [kg] and volume [m³].
    target_mass : float
        Mass at which to stop, [kg].
    bottle_masses : sequence of float
        Nitrogen in each bottle, used in order, [kg].
    V_b : float
        Volume of one bottle, [m³].
    V_s, V_d : float
        Swept and clearance (dead) volume of the cylinder, [m³].
    rho_limit : float
        Highest receiver density the push can reach, [kg/m³] (transfer pump: the density at the
        oil pressure).
    rho_residual : float
        Density to leave in each bottle, [kg/m³].
    m_cylinder : float
        Gas in the cylinder at its full volume at the start, [kg].
    count_cylinder : bool
        The cylinder is part of the filled system (an accumulator's own piston unit): its gas
        counts towards the target.
    min_yield : float
        Take the next bottle once a stroke delivers less than this share of
        :math:`\\rho_b V_s`, [-].
    method : str
        Label of the method.

    Returns
    -------
    StrokePlan
        Strokes, end state and why it stopped.
    """
    bottles = [float(m) for m in bottle_masses]
    per_bottle = [0] * len(bottles)
    m_c, strokes, k = float(m_cylinder), 0, 0
    v_full = V_s + V_d
    reason = "target reached"

    def held() -> float:
        return m_r + (m_c if count_cylinder else 0.0)

    while held() < target_mass:
        if k >= len(bottles):
            reason = "every bottle is used as far as this method can"
            if m_r / V_r >= rho_limit * (1 - 1e-9):
                reason = "the oil pressure limits the receiver"
            break
        if strokes >= MAX_STROKES:
            reason = f"stopped after {MAX_STROKES} strokes"
            break
        rho_b = bottles[k] / V_b
        if rho_b <= rho_residual:
            k += 1
            continue
        if m_c / v_full < rho_b:  # intake from the bottle
            take = (m_c + bottles[k]) / (v_full + V_b) * v_full - m_c
            if count_cylinder and held() + take >= target_mass:  # the last, partial intake
                take = target_mass - held()
                bottles[k], m_c = bottles[k] - take, m_c + take
                strokes, per_bottle[k] = strokes + 1, per_bottle[k] + 1
                break
            bottles[k], m_c = bottles[k] - take, m_c + take
        # The push ends at V_d, or earlier where the oil pressure stops the piston; the gas left
        # in the cylinder, m_c − delivered, re-expands at the next intake.
        rho_end = min((m_c + m_r) / (V_d + V_r), rho_limit)
        delivered = rho_end * V_r - m_r
        if not delivered > 0.0:
            k += 1
            continue
        strokes, per_bottle[k] = strokes + 1, per_bottle[k] + 1
        if not count_cylinder and m_r + delivered >= target_mass:  # stop part-way at the target
            m_c -= target_mass - m_r
            m_r = target_mass
            break
        m_r, m_c = m_r + delivered, m_c - delivered
        if delivered < min_yield * rho_b * V_s:
            k += 1
    return StrokePlan(
        method=method,
        strokes=strokes,
        reached=held() >= target_mass,
        receiver_mass=m_r,
        cylinder_mass=m_c,
        bottle_masses=tuple(bottles),
        strokes_per_bottle=tuple(per_bottle),
        stop_reason=reason,
    )
