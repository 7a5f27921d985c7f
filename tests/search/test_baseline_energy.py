"""The pump-only supplies' energy per cycle against hand calculations.

One hand-worked cycle (test input, not data): four 2 s steps drawing 0, 60, 30, 0 L/min at
100 bar gauge (line loss included), 10 % wear margin on the pump's flow, relief margin
max(10 %, 5 bar) (the defaults; common practice, no published source).  Made-up catalogue
rows; the expected numbers are worked out in the docstrings from the stated models:

* fixed pump: always loaded against its relief valve, shaft power Q·p_relief/η_o over the
  whole cycle, over the motor efficiency;
* pressure-compensated pump: delivers the demand plus its leakage (1 − η_v)·Q/η_v at the
  compensator setting, over η_o and the motor efficiency.
"""

from __future__ import annotations

import numpy as np
import pytest
from stowflow.catalogue import Catalogue, MotorOption, PumpOption
from stowflow.search.baseline import compensated_baseline, fixed_baseline
from stowflow.search.settings import DesignSettings
from stowflow.units import BAR, LPM, P_AMBIENT

SPEED = 1450 / 60  # [rev/s]
DT = 2.0
DEMAND = np.array([0.0, 60.0, 30.0, 0.0]) * LPM
REQUIRED = np.full(4, 100 * BAR + P_AMBIENT)
SETTINGS = DesignSettings(flow_margin=0.1)


def _pump(lpm, eta_v, eta_o, control="fixed"):
    """A pump delivering ``lpm`` L/min (displacement × speed × η_v)."""
    disp = lpm * LPM / (SPEED * eta_v)
    return PumpOption(disp, SPEED, 250 * BAR + P_AMBIENT, eta_v, eta_o, 10 * lpm, f"{lpm}", control)


CATALOGUE = Catalogue(
    accumulators=(),
    pumps=(
        _pump(50, 0.95, 0.90),  # 50 × 0.9 = 45 L/min worn < 60: out
        _pump(70, 0.95, 0.90),
        _pump(100, 0.95, 0.92),
        _pump(50, 0.95, 0.85, "pressure-compensated"),  # out as well
        _pump(70, 0.95, 0.85, "pressure-compensated"),
    ),
    motors=tuple(MotorOption(kw * 1e3, 0.91, 100 * kw, f"{kw} kW") for kw in (11, 15, 22)),
)


def test_fixed_pump_with_relief_by_hand():
    """Relief 100 + max(10, 5) = 110 bar gauge.  Pumps whose worn flow covers the 60 L/min
    peak: the 70 and 100 L/min rows (63 and 90 L/min worn).  Shaft power at 110 bar:
    70 L/min at η_o 0.90 → 1.16667e-3 m³/s × 110e5 Pa / 0.90 = 14 259.3 W → 15 kW motor;
    70 L/min compensated at 0.85 → 15 098.0 W → 22 kW; 100 L/min at 0.92 → 19 927.5 W →
    22 kW.  So the fixed 70 L/min pump on 15 kW.  Energy per 8 s cycle:
    14 259.3 W / 0.91 × 8 s = 125 356 J."""
    b = fixed_baseline(DEMAND, REQUIRED, DT, CATALOGUE, SETTINGS)
    assert b.reason is None
    assert b.pressure == pytest.approx(110 * BAR + P_AMBIENT, rel=1e-12)
    assert b.motor.rated_power == 15e3
    assert b.pump.flow == pytest.approx(70 * LPM, rel=1e-12)
    assert b.pump.control == "fixed" and b.pump.overall_efficiency == 0.90
    shaft = 70 * LPM * 110 * BAR / 0.90
    assert shaft / 0.91 * 4 * DT == pytest.approx(125356, rel=1e-5)  # the docstring's numbers
    assert b.energy_per_cycle == pytest.approx(shaft / 0.91 * 4 * DT, rel=1e-12)
    assert b.shaft_power_peak == pytest.approx(shaft, rel=1e-12)


def test_compensated_pump_by_hand():
    """Compensator at the 100 bar requirement.  The 70 L/min compensated pump (63 worn ≥ 60)
    at full flow: 1.16667e-3 × 100e5 / 0.85 = 13 725.5 W → 15 kW.  Leakage at zero stroke:
    (1 − 0.95) × 70 / 0.95 = 3.6842 L/min.  Delivered per cycle: (0 + 60 + 30 + 0) L/min × 2 s
    = 3 L, plus leakage 3.6842 L/min × 8 s = 0.49123 L: 3.49123 L × 100e5 Pa = 34 912.3 J of
    shaft work at η_o = 0.85 → 41 073.3 J, over η_m = 0.91 → 45 135.5 J."""
    b = compensated_baseline(DEMAND, REQUIRED, DT, CATALOGUE, SETTINGS)
    assert b.reason is None
    assert b.pump.control == "pressure-compensated"
    assert b.pressure == pytest.approx(100 * BAR + P_AMBIENT, rel=1e-12)
    assert b.motor.rated_power == 15e3
    leak = (1 - 0.95) * 70 * LPM / 0.95
    volume = float(np.sum(DEMAND) * DT) + leak * 4 * DT
    by_hand = volume * 100 * BAR / 0.85 / 0.91
    assert by_hand == pytest.approx(45135.5, rel=1e-5)  # the docstring's numbers
    assert b.energy_per_cycle == pytest.approx(by_hand, rel=1e-12)
    assert b.shaft_power_peak == pytest.approx(70 * LPM * 100 * BAR / 0.85, rel=1e-12)
