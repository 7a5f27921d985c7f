"""Loss models of pump, motor and drive, and the energy account.

Outside sources are named beside each check; the rest are hand calculations from the formulas
the module states, written out in the test.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from stowflow.physics.machines import (
    ENERGY_PARTS,
    MOTOR_CONSTANT_SHARE,
    DriveLosses,
    EnergyBreakdown,
    MotorLosses,
    PumpLosses,
    energy_account,
    theoretical_torque,
)

REL = 1e-12  # our own arithmetic

# -- Esposito, Fluid Power with Applications (Pearson), examples 5-9 and 5-10 ------------------
# From memory: a pump of 100 cm³/rev at 1000 rpm delivers 0.0015 m³/s at 70 bar and takes
# 120 N·m: volumetric efficiency 90.0 %, theoretical torque 111.4 N·m, mechanical efficiency
# 92.8 %, overall efficiency 83.6 %; its input power is 12.57 kW (example 5-10).
ESPOSITO_D = 100e-6  # m³/rev
ESPOSITO_N = 1000 / 60  # rev/s
ESPOSITO_Q = 0.0015  # m³/s
ESPOSITO_DP = 70e5  # Pa
ESPOSITO_TORQUE = 120.0  # N·m
# The book prints torques to 0.1 N·m, efficiencies to 0.1 %, power to 0.01 kW: half a unit in
# the last digit.
ESPOSITO_TORQUE_TOL = 0.05
ESPOSITO_EFF_TOL = 0.0005
ESPOSITO_KW_TOL = 0.005


def _esposito_pump() -> PumpLosses:
    """The model through the example's measured point (efficiencies from its data)."""
    volumetric = ESPOSITO_Q / (ESPOSITO_D * ESPOSITO_N)
    mechanical = theoretical_torque(ESPOSITO_D, ESPOSITO_DP) / ESPOSITO_TORQUE
    return PumpLosses.from_rated(
        ESPOSITO_D, ESPOSITO_N, ESPOSITO_DP, volumetric, volumetric * mechanical
    )


def test_esposito_5_9_theoretical_torque():
    # Esposito, Fluid Power with Applications, example 5-9 (from memory): T_T = 111.4 N·m.
    assert theoretical_torque(ESPOSITO_D, ESPOSITO_DP) == pytest.approx(
        111.4, abs=ESPOSITO_TORQUE_TOL
    )


def test_esposito_5_9_efficiencies_of_the_pump_model():
    # Esposito, Fluid Power with Applications, example 5-9 (from memory): η_v = 90.0 %,
    # η_m = 92.8 %, η_o = 83.6 % at the measured point; the model goes through that point.
    pump = _esposito_pump()
    ev, em, eo = pump.efficiencies(ESPOSITO_DP)
    assert ev == pytest.approx(0.900, abs=ESPOSITO_EFF_TOL)
    assert em == pytest.approx(0.928, abs=ESPOSITO_EFF_TOL)
    assert eo == pytest.approx(0.836, abs=ESPOSITO_EFF_TOL)
    assert float(pump.delivered(1.0, ESPOSITO_N, ESPOSITO_DP)) == pytest.approx(ESPOSITO_Q)
    assert float(pump.torque(1.0, ESPOSITO_N, ESPOSITO_DP)) == pytest.approx(ESPOSITO_TORQUE)


def test_esposito_5_10_pump_input_power():
    # Esposito, Fluid Power with Applications, example 5-10 (from memory): pump input 12.57 kW.
    shaft = float(_esposito_pump().shaft_power(1.0, ESPOSITO_N, ESPOSITO_DP))
    assert shaft / 1e3 == pytest.approx(12.57, abs=ESPOSITO_KW_TOL)
    # Regression pin of our own full-precision value: 120 N·m × 2π × 1000/60 rev/s.
    assert shaft == pytest.approx(120.0 * 2 * math.pi * 1000 / 60, rel=REL)


def test_pump_losses_by_hand_at_another_pressure():
    # Hand calculation from the stated model: D = 50 cm³/rev, n_r = 25 rev/s, rated 200 bar,
    # η_v = 0.95, η_o = 0.90, drag share 0.3.
    D, n, dp_r = 50e-6, 25.0, 200e5
    pump = PumpLosses.from_rated(D, n, dp_r, 0.95, 0.90, 0.3)
    # k_L = 0.05 × 50e-6 × 25 / 200e5 = 3.125e-12 m³/(s·Pa)
    assert pump.leakage == pytest.approx(0.05 * D * n / dp_r, rel=REL)
    loss = 0.95 / 0.90 - 1  # torque loss over ideal torque at rated: 1/η_hm − 1
    assert pump.friction == pytest.approx(0.7 * loss, rel=REL)
    assert pump.drag_torque == pytest.approx(0.3 * D * dp_r / (2 * math.pi) * loss, rel=REL)
    # At 100 bar, full stroke: leakage halves, delivered = D·n − k_L·Δp.
    dp = 100e5
    q = D * n - 0.05 * D * n / 2
    assert float(pump.delivered(1.0, n, dp)) == pytest.approx(q, rel=REL)
    ideal = D * dp / (2 * math.pi)
    torque = ideal * (1 + 0.7 * loss) + 0.3 * D * dp_r / (2 * math.pi) * loss
    assert float(pump.torque(1.0, n, dp)) == pytest.approx(torque, rel=REL)
    ev, em, _ = pump.efficiencies(dp)
    assert ev > 0.95 and em < 0.90 / 0.95  # leakage falls, the drag share weighs more
    # Half stroke at half speed: drag torque scales with speed, friction with the stroke.
    t_half = 0.5 * ideal * (1 + 0.7 * loss) + 0.5 * pump.drag_torque
    assert float(pump.torque(0.5, n / 2, dp)) == pytest.approx(t_half, rel=REL)
    assert float(pump.shaft_power(0.5, n / 2, dp)) == pytest.approx(
        2 * math.pi * n / 2 * t_half, rel=REL
    )
    # The stroke and the speed that deliver a flow include the leakage.
    assert float(pump.stroke_for(0.3 * D * n, dp)) == pytest.approx(0.3 + 0.025, rel=REL)
    assert float(pump.speed_for(0.3 * D * n, dp)) == pytest.approx(n * 0.325, rel=REL)


def test_pump_fit_recovers_the_model_from_its_own_points():
    # Points made by a known model are fitted back exactly (least squares with no residual).
    truth = PumpLosses.from_rated(28e-6, 24.0, 250e5, 0.93, 0.85, 0.4)
    points = [(dp, *truth.efficiencies(dp)[::2]) for dp in (50e5, 120e5, 250e5)]
    fit = PumpLosses.fit(28e-6, 24.0, points)
    for name in ("leakage", "drag_torque", "friction"):
        assert getattr(fit, name) == pytest.approx(getattr(truth, name), rel=1e-9)


def test_motor_part_load_peaks_near_three_quarter_load():
    # U.S. DOE, Motor Challenge fact sheet "Determining Electric Motor Load and Efficiency":
    # "Maximum efficiency is usually near 75% of rated load".  The default constant-loss share
    # puts the peak there: sqrt(k0 / (1 − k0)) = sqrt(0.36 / 0.64) = 0.75.
    motor = MotorLosses.from_rated(15e3, 0.921)  # IE3 15 kW (IEC 60034-30-1)
    load = np.linspace(0.05, 1.25, 1201)
    assert load[np.argmax(motor.efficiency(load))] == pytest.approx(0.75, abs=0.001)
    assert math.sqrt(MOTOR_CONSTANT_SHARE / (1 - MOTOR_CONSTANT_SHARE)) == pytest.approx(0.75)


@pytest.mark.parametrize(("kw", "eff"), [(0.75, 0.825), (15, 0.921), (160, 0.958)])
def test_motor_part_load_falls_below_half_load(kw, eff):
    # U.S. DOE fact sheet "Determining Electric Motor Load and Efficiency": motors are
    # designed to run at 50 % to 100 % of rated load, and "a motor's efficiency tends to
    # decrease dramatically below about 50 % load".  The curve falls faster below half load
    # than above it, and keeps falling towards no load.  (IE3 efficiencies at rated load,
    # IEC 60034-30-1.)
    motor = MotorLosses.from_rated(kw * 1e3, eff)
    e = {x: float(motor.efficiency(x)) for x in (0.1, 0.25, 0.5, 1.0)}
    assert e[1.0] == pytest.approx(eff, rel=REL)
    assert abs(e[1.0] - e[0.5]) < e[0.5] - e[0.25] < e[0.25] - e[0.1]


def test_motor_losses_by_hand():
    # IEC 60034-2-1 summation of losses as the module states it: L = a·s + b·τ², with
    # a = 0.36·L_r, b = 0.64·L_r, L_r = P_r (1/η_r − 1).  A 10 kW motor of 90 %:
    # L_r = 1111.1 W; at half torque and full speed L = 400 + 711.1 × 0.25 = 577.8 W.
    motor = MotorLosses.from_rated(10e3, 0.9)
    lr = 10e3 * (1 / 0.9 - 1)
    assert float(motor.losses(0.5)) == pytest.approx(0.36 * lr + 0.64 * lr * 0.25, rel=REL)
    assert float(motor.input_power(5e3)) == pytest.approx(5e3 + 0.36 * lr + 0.16 * lr, rel=REL)
    # Half speed, the same torque (2.5 kW out): constant losses halve.
    assert float(motor.input_power(2.5e3, 0.5)) == pytest.approx(
        2.5e3 + 0.18 * lr + 0.16 * lr, rel=REL
    )


def test_motor_fit_goes_through_consistent_points():
    # Points made by a + b·x² are fitted back exactly.
    truth = MotorLosses(7500.0, 300.0, 500.0)
    points = [(x, float(truth.efficiency(x))) for x in (0.25, 0.5, 0.75, 1.0)]
    fit = MotorLosses.fit(7500.0, points)
    assert (fit.constant, fit.variable) == (pytest.approx(300.0), pytest.approx(500.0))


def test_drive_losses_by_hand():
    # Drive losses as stated: L = L_r (k_d + (1 − k_d) ι), k_d = 0.25.  A 10 kW drive of
    # 97 %: L_r = 309.3 W; at 40 % current L = 309.3 × (0.25 + 0.75 × 0.4) = 170.1 W.
    drive = DriveLosses.from_rated(10e3, 0.97)
    lr = 10e3 * (1 / 0.97 - 1)
    assert float(drive.losses(0.4)) == pytest.approx(lr * 0.55, rel=REL)
    assert float(drive.input_power(3e3, 0.4)) == pytest.approx(3e3 + lr * 0.55, rel=REL)
    assert float(drive.efficiency(1.0)) == pytest.approx(0.97, rel=REL)
    fit = DriveLosses.fit(10e3, [(x, float(drive.efficiency(x))) for x in (0.25, 0.5, 1.0)])
    assert fit.constant == pytest.approx(drive.constant) and fit.variable == pytest.approx(
        drive.variable
    )


# -- the energy account -----------------------------------------------------------------------


def test_energy_account_by_hand():
    # Two steps of 1 s.  Step 1: the pump delivers 2 L/s at 100 bar, the machine takes 1 L/s
    # at 80 bar, 0.5 L/s go into the accumulator and 0.5 L/s over the relief valve.  Step 2:
    # the machine takes 1 L/s, all from the accumulator (−1 L/s in), the pump circulates 2 L/s
    # at 5 bar.  Shaft 25 kW and 1.2 kW; motor input 27 kW and 2 kW.
    acc = energy_account(
        1.0,
        demand=[1e-3, 1e-3],
        consumer=[80e5, 80e5],
        supply=[100e5, 90e5],
        delivered=[2e-3, 0.0],
        electrical=[27e3, 2e3],
        shaft=[25e3, 1.2e3],
        motor_input=[27e3, 2e3],
        relief=[0.5e-3, 0.0],
        bank_in=[0.5e-3, -1e-3],
        standby_flow=[0.0, 2e-3],
        standby_pressure=5e5,
    )
    assert acc.useful == pytest.approx(8e3 + 8e3)  # 1 L/s × 80 bar, twice
    assert acc.throttling == pytest.approx(2e3 + 1e3)  # 20 bar, then 10 bar
    assert acc.relief == pytest.approx(5e3)
    assert acc.gas_heat == pytest.approx(5e3 - 9e3)  # in at 100 bar, out at 90 bar
    assert acc.standby == pytest.approx(1e3)
    assert acc.pump == pytest.approx((25e3 - 20e3) + (1.2e3 - 1e3))
    assert acc.motor == pytest.approx(2e3 + 0.8e3) and acc.drive == 0.0
    assert acc.electrical == pytest.approx(29e3)
    assert acc.total == pytest.approx(acc.electrical, rel=REL)
    assert acc.heat_load == pytest.approx((3e3 + 5e3 + 1e3 + 5.2e3) / 2.0)
    assert list(acc.parts) == list(ENERGY_PARTS)


def test_energy_account_sum_needs_the_flows_to_balance():
    # A delivered flow that does not equal demand + relief + bank_in leaves a gap of exactly
    # the missing flow × the supply pressure.
    kw = {"consumer": 0.0, "supply": 100e5, "electrical": 3e3, "shaft": 2e3, "motor_input": 3e3}
    acc = energy_account(1.0, demand=[1e-3], delivered=[1.1e-3], **kw)
    assert acc.electrical - acc.total == pytest.approx(0.1e-3 * 100e5)


@given(
    q=st.lists(st.floats(0.0, 5e-3), min_size=3, max_size=3),
    share=st.floats(0.0, 1.0),
    p=st.floats(1e5, 300e5),
)
def test_breakdown_mean_keeps_the_sum(q, share, p):
    def one(scale):
        d = np.array(q) * share
        relief = np.array(q) * (1 - share)
        return energy_account(
            0.1, demand=d, consumer=0.5 * p, supply=p, delivered=d + relief,
            electrical=scale * 1e3, shaft=scale * 800.0, motor_input=scale * 1e3, relief=relief,
        )  # fmt: skip

    m = EnergyBreakdown.mean([one(1.0), one(2.0)])
    assert m.total == pytest.approx(m.electrical, rel=1e-9, abs=1e-9)
    assert m.electrical == pytest.approx(1.5 * one(1.0).electrical, rel=1e-12)
