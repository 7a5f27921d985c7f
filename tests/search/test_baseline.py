"""The pump-only alternatives: hand calculations from the stated formulas, the least-power
choice, the unloading in idle stretches, and every demo cycle priced.

The formulas are those of :mod:`stowflow.search.baseline` (operation) and
:mod:`stowflow.physics.machines` (losses), written out again here with round numbers: the
pump's leakage k_L = (1 − η_v) D n_r / Δp_r, friction c_f = (1 − s_d)(η_v/η_o − 1), drag
torque M_d = s_d · D Δp_r / 2π · (η_v/η_o − 1); shaft power x D n Δp (1 + c_f) + 2π M_d n²/n_r;
motor input shaft + a·s + b·τ² with a = 0.36 L_r, b = 0.64 L_r; drive input motor input +
L_d (0.25 + 0.75 ι).  Demo data is never an expected value here.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from stowflow.catalogue import (
    Catalogue,
    DriveOption,
    MotorOption,
    PumpOption,
    default_catalogue_path,
    load_catalogue,
)
from stowflow.cycle.duty import load_cycle
from stowflow.search.baseline import (
    KINDS,
    compensated_baseline,
    fixed_baseline,
    idle_unloading,
    load_sensing_baseline,
    pump_only_alternatives,
    variable_speed_baseline,
)
from stowflow.search.settings import DesignSettings
from stowflow.units import BAR, LPM, P_AMBIENT

REL = 1e-9  # our own arithmetic, summed over a few steps
BREAKDOWN_REL = 1e-3  # the bar: the parts sum to the electrical energy within 0.1 %
REPO = Path(__file__).resolve().parents[2]

# A round pump: 100 cm³/rev at 1500 rpm (25 rev/s), efficiencies stated at 250 bar.
D, N, DP_R, EV, EO = 100e-6, 25.0, 250e5, 0.95, 0.90
LOSS = EV / EO - 1  # torque loss over ideal torque at the rated point
K_L = (1 - EV) * D * N / DP_R
C_F = 0.7 * LOSS
M_D = 0.3 * D * DP_R / (2 * math.pi) * LOSS
Q_C = 1.0 * LPM  # default control flow of a variable pump


def _pump(control="fixed", displacement=D, price=1000.0, **kw):
    return PumpOption(
        displacement, N, P_AMBIENT + DP_R, EV, EO, price, f"{control} {displacement}", control,
        **kw,
    )  # fmt: skip


MOTORS = (
    MotorOption(30e3, 0.93, 1500.0, "motor 30"),
    MotorOption(50e3, 0.95, 2000.0, "motor 50"),
    MotorOption(75e3, 0.95, 3000.0, "motor 75"),
)
DRIVES = (DriveOption(50e3, 0.97, 2500.0, "drive 50"), DriveOption(75e3, 0.97, 3500.0, "drive 75"))


def _catalogue(*pumps):
    return Catalogue((), tuple(pumps), MOTORS, drives=DRIVES)


def _shaft(x, n, dp):
    return x * D * n * dp * (1 + C_F) + 2 * math.pi * M_D * n**2 / N


def _motor_in(motor_kw, eff, shaft, s=1.0):
    lr = motor_kw * 1e3 * (1 / eff - 1)
    tau = shaft / s / (motor_kw * 1e3)
    return shaft + 0.36 * lr * s + 0.64 * lr * tau**2


# The cycle: three steps of 10 s; demand 60, 120 and 0 L/min at 150, 100 and 50 bar; the
# line-loss allowance (5 bar) makes the requirement 155, 105, 55 bar.
DT = 10.0
DEMAND = np.array([60.0, 120.0, 0.0]) * LPM
CONSUMER = np.array([150.0, 100.0, 50.0]) * BAR
SETTINGS = DesignSettings()
P_REQ = CONSUMER + SETTINGS.line_loss
SET = float(P_REQ.max())  # 155 bar gauge
RELIEF = SET + max(SETTINGS.relief_margin * SET, SETTINGS.relief_margin_min)  # 170.5 bar


def _run(fn, *pumps):
    return fn(DEMAND, P_REQ + P_AMBIENT, DT, _catalogue(*pumps), SETTINGS, CONSUMER + P_AMBIENT)


def test_compensated_by_hand():
    b = _run(compensated_baseline, _pump("pressure-compensated"))
    # stroke x = (Q_d + Q_c + k_L Δp) / (D n) at Δp = 155 bar
    x = (DEMAND + Q_C + K_L * SET) / (D * N)
    shaft = _shaft(x, N, SET)
    # the motor covers full stroke at 155 bar: 2.5 L/s × 155 bar × (1 + c_f) + drag ≈ 41 kW
    assert _shaft(1.0, N, SET) == pytest.approx(b.shaft_power_peak, rel=REL)
    assert 30e3 < b.shaft_power_peak < 50e3 and b.motor.name == "motor 50"
    e = float(np.sum(_motor_in(50, 0.95, shaft)) * DT)
    assert b.energy_per_cycle == pytest.approx(e, rel=REL)
    bd = b.breakdown
    assert bd.useful == pytest.approx(float(np.sum(DEMAND * CONSUMER)) * DT, rel=REL)
    assert bd.throttling == pytest.approx(float(np.sum(DEMAND * (SET - CONSUMER))) * DT, rel=REL)
    assert bd.relief == pytest.approx(3 * Q_C * SET * DT, rel=REL)  # the control flow
    assert bd.pump == pytest.approx(
        float(np.sum(shaft - (DEMAND + Q_C) * SET)) * DT, rel=REL
    )  # leakage, friction and drag: the standby loss at zero stroke is in here
    assert bd.standby == 0 and bd.gas_heat == 0 and bd.drive == 0
    assert bd.total == pytest.approx(bd.electrical, rel=REL)
    assert b.pressure == pytest.approx(SET + P_AMBIENT) and b.capex == 1000.0 + 2000.0


def test_load_sensing_by_hand():
    b = _run(load_sensing_baseline, _pump("load-sensing"))
    # supply min(p_req + 15 bar, 155 bar) = 155, 120, 70 bar
    supply = np.minimum(P_REQ + 15 * BAR, SET)
    assert supply / BAR == pytest.approx([155.0, 120.0, 70.0])
    x = (DEMAND + Q_C + K_L * supply) / (D * N)
    shaft = _shaft(x, N, supply)
    assert b.energy_per_cycle == pytest.approx(
        float(np.sum(_motor_in(50, 0.95, shaft)) * DT), rel=REL
    )
    assert b.breakdown.throttling == pytest.approx(
        float(np.sum(DEMAND * (supply - CONSUMER))) * DT, rel=REL
    )


def test_variable_speed_by_hand():
    b = _run(variable_speed_baseline, _pump("fixed", min_speed=5.0))
    # speed n = (Q_d + k_L Δp)/D between 5 rev/s and 25 rev/s; the idle step wants 0.775 rev/s,
    # so it runs at 5 rev/s and the pressure rises to the relief setting: spill
    # D·5 − k_L·Δp_relief over the relief valve.
    want = (DEMAND + K_L * SET) / D
    assert want[2] < 5.0 < want[0] < want[1] < N
    speed = np.array([want[0], want[1], 5.0])
    supply = np.array([SET, SET, RELIEF])
    spill = D * 5.0 - K_L * RELIEF
    shaft = _shaft(1.0, speed, supply)
    # the motor's rated torque covers the largest torque: at the relief setting
    torque_power = shaft * N / speed
    assert b.shaft_power_peak == pytest.approx(max(torque_power.max(), _shaft(1, N, SET)))
    assert b.motor.name == "motor 50" and b.drive.name == "drive 50"
    s = speed / N
    motor_in = _motor_in(50, 0.95, shaft, s)
    ld = 50e3 * (1 / 0.97 - 1)
    drive_in = motor_in + ld * (0.25 + 0.75 * (shaft / s) / 50e3)
    assert b.energy_per_cycle == pytest.approx(float(np.sum(drive_in)) * DT, rel=REL)
    bd = b.breakdown
    assert bd.relief == pytest.approx(spill * RELIEF * DT, rel=REL)
    assert bd.drive == pytest.approx(float(np.sum(drive_in - motor_in)) * DT, rel=REL)
    assert bd.total == pytest.approx(bd.electrical, rel=REL)
    assert b.capex == 1000.0 + 2000.0 + 2500.0


def test_fixed_with_unloading_by_hand():
    b = _run(fixed_baseline, _pump("fixed"))
    # Loaded: full flow D n − k_L Δp_relief at the relief setting; the idle step (10 s ≥ 1 s
    # least unloaded dwell; 120 cycles an hour allow 3 load events a cycle) unloads at 5 bar.
    full = D * N - K_L * RELIEF
    sb = SETTINGS.standby_pressure
    shaft = np.array([_shaft(1, N, RELIEF)] * 2 + [_shaft(1, N, sb)])
    assert b.shaft_power_peak == pytest.approx(_shaft(1, N, RELIEF), rel=REL)
    motor = b.motor
    assert motor.name == "motor 50"
    assert b.energy_per_cycle == pytest.approx(
        float(np.sum(_motor_in(50, 0.95, shaft))) * DT, rel=REL
    )
    bd = b.breakdown
    assert bd.relief == pytest.approx(float(np.sum((full - DEMAND[:2]) * RELIEF)) * DT, rel=REL)
    assert bd.standby == pytest.approx((D * N - K_L * sb) * sb * DT, rel=REL)
    assert b.pressure == pytest.approx(RELIEF + P_AMBIENT)


def test_the_least_power_pump_wins():
    # Two compensated pumps deliver the peak: the smaller needs the 50 kW motor, the larger
    # (160 cm³/rev: 4 L/s × 155 bar ≈ 64 kW) the 75 kW one.
    small, big = _pump("pressure-compensated"), _pump("pressure-compensated", 160e-6, 900.0)
    b = _run(compensated_baseline, big, small)
    assert b.pump is small and b.motor.rated_power == 50e3


def test_alternatives_say_why_they_are_missing():
    cat = _catalogue(_pump("fixed"))
    bs = pump_only_alternatives(DEMAND, CONSUMER + P_AMBIENT, DT, cat, SETTINGS)
    assert [b.kind for b in bs] == list(KINDS)
    assert bs[0].pump is not None and bs[2].pump is not None
    assert "no pressure-compensated pump" in bs[1].reason
    assert "no load-sensing pump" in bs[3].reason
    no_drive = Catalogue((), (_pump("fixed"),), MOTORS)
    vs = variable_speed_baseline(DEMAND, P_REQ + P_AMBIENT, DT, no_drive, SETTINGS)
    assert vs.reason == "no drive ([[drive]]) in the catalogue" and math.isnan(vs.capex)


@pytest.mark.parametrize(
    ("demand", "limits", "expected"),
    [
        # two idle stretches (3 and 2 steps); no event limit: both unload
        ([1, 0, 0, 0, 1, 1, 0, 0, 1, 1], {"max_load_events_per_hour": None}, [1, 2, 3, 6, 7]),
        # 10 s cycle, 360/h → one event a cycle: the longer stretch only
        ([1, 0, 0, 0, 1, 1, 0, 0, 1, 1], {}, [1, 2, 3]),
        # a stretch shorter than the least unloaded dwell (1 s against 1.5 s) stays loaded
        (
            [1, 0, 1, 1, 1, 1, 1, 1, 1, 1],
            {"max_load_events_per_hour": None, "min_unloaded_dwell": 1.5},
            [],
        ),
        # a loaded stretch of 1 step (< 2 s least loaded dwell) between two idle ones: only one
        (
            [1, 0, 0, 0, 1, 0, 0, 1, 1, 1],
            {"max_load_events_per_hour": None, "min_loaded_dwell": 2.0},
            [1, 2, 3],
        ),
        # an idle stretch wrapping round the cycle's end
        ([0, 0, 1, 1, 1, 1, 1, 1, 0, 0], {}, [0, 1, 8, 9]),
    ],
)
def test_idle_unloading_keeps_the_switching_limits(demand, limits, expected):
    s = DesignSettings(**limits)
    out = idle_unloading(np.array(demand, float), 1.0, s)
    assert list(np.flatnonzero(out)) == expected


@pytest.mark.parametrize("name", sorted(p.stem for p in (REPO / "duty_cycles").glob("*.csv")))
def test_every_demo_cycle_gets_three_priced_alternatives_whose_parts_add_up(name):
    # The bar: at least three pump-only alternatives on every bundled demo cycle, and
    # the parts of each energy breakdown sum to the electrical energy within 0.1 %.
    cycle = load_cycle(REPO / "duty_cycles" / f"{name}.csv")
    cat = load_catalogue(default_catalogue_path())
    bs = pump_only_alternatives(np.asarray(cycle.flow), cycle.pressure, cycle.dt, cat, SETTINGS)
    priced = [b for b in bs if b.pump is not None]
    assert {b.kind for b in priced} >= {"fixed", "compensated", "variable-speed"}
    for b in priced:
        bd = b.breakdown
        assert bd.total == pytest.approx(bd.electrical, rel=BREAKDOWN_REL), b.kind
        assert bd.electrical == pytest.approx(b.energy_per_cycle, rel=REL)
        assert min(bd.parts.values()) >= 0.0, b.kind
        useful = float(np.sum(np.asarray(cycle.flow) * (cycle.pressure - cycle.p_ambient)))
        assert bd.useful == pytest.approx(useful * cycle.dt, rel=REL)
