"""The verdict against the strongest alternative, payback words, and the designed supply's
energy read from the verification's runs.

Hand-built designs and traces with round numbers; the expected values are lines of arithmetic
from the stated formulas.  Outside sources are named beside each check.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from stowflow.catalogue import AccumulatorOption, MotorOption, PumpOption
from stowflow.costs import compare, payback_words, verdict
from stowflow.costs.comparison import CostSettings
from stowflow.costs.energy import design_energy
from stowflow.costs.finance import discounted_payback
from stowflow.cycle.duty import cycle_from_arrays
from stowflow.search.solution import Bank, Baseline, Design
from stowflow.simulation.verify import ControllerRun, Verification
from stowflow.units import HOUR, KWH, P_AMBIENT

REL = 1e-12


# -- payback in words ---------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("years", "words"),
    [
        (None, "never"),
        (math.inf, "never"),
        (0.0, "at once"),
        (0.006, "under 1 month"),  # the forming press's old "0.0 years"
        (0.08, "under 1 month"),
        (0.1, "1 month"),
        (0.5, "6 months"),
        (0.95, "11 months"),
        (0.97, "1.0 years"),
        (14.6, "14.6 years"),
    ],
)
def test_payback_words(years, words):
    assert payback_words(years) == words


def test_verdict_costs_less_to_buy_and_to_run():
    assert verdict(-100.0, 50.0, 0.05, 10) == ("cheaper", "costs less to buy and to run", True)
    assert verdict(0.0, 0.0, 0.05, 10)[0] == "cheaper"


def test_verdict_pays_back_within_the_horizon():
    # 3000 extra, 1500 a year: simple 2 years; discounted at 5 %: −ln(1 − 0.05·2)/ln 1.05
    # = 2.16 years (Brealey, Myers & Allen: present value of an annuity).
    code, words, ok = verdict(3000.0, 1500.0, 0.05, 10)
    assert code == "pays-back" and ok
    assert words == "pays back in 2.0 years (2.2 years discounted)"
    assert verdict(3000.0, 36_000.0, 0.0, 10)[1] == "pays back in 1 month"
    assert verdict(10.0, 36_000.0, 0.05, 10)[1] == "pays back in under 1 month"


def test_verdict_beyond_the_horizon_does_not_pay_back():
    # The case of the issue: simple payback 14.6 years, at 5 % discount 26.8 years, beyond a
    # 10-year horizon.  It must not say "pays back" (nor pays_back: true).
    disc = discounted_payback(14_600.0, 1000.0, 0.05)
    assert disc == pytest.approx(-math.log(1 - 0.05 * 14.6) / math.log(1.05), rel=REL)
    code, words, ok = verdict(14_600.0, 1000.0, 0.05, 10)
    assert code == "no-payback" and not ok
    assert words == (
        f"does not pay back within 10 years (simple payback 14.6 years, {disc:.1f} years "
        "discounted)"
    )
    # More to buy and more to run; and beyond the perpetuity s/r.
    assert verdict(100.0, -5.0, 0.05, 10)[1] == (
        "does not pay back within 10 years (it costs more to buy and more to run)"
    )
    assert "never repay" in verdict(25_000.0, 1000.0, 0.05, 10)[1]


def test_verdict_cheaper_to_buy_but_dearer_to_run():
    # 1000 less to buy, 200 a year more to run: over 10 years at 0 % the running cost is 2000
    # more, so it costs more over the horizon; over 3 years 600 < 1000, less.
    code, words, ok = verdict(-1000.0, -200.0, 0.0, 10, "EUR")
    assert code == "cheaper-to-buy" and not ok
    assert (
        words
        == "costs 1,000 EUR less to buy but 200 EUR a year more to run: costs more over 10 years"
    )
    assert verdict(-1000.0, -200.0, 0.0, 3)[2]


# -- compare against the strongest alternative ----------------------------------------------------

KWH_J = KWH


def _parts():
    acc = AccumulatorOption("bladder", 0.010, 331e5, 0.0, 1000.0, "acc 10 L")
    pump = PumpOption(20e-6, 24.0, 251e5, 0.95, 0.9, 500.0, "pump 20")
    motor = MotorOption(7500.0, 0.9, 800.0, "motor 7.5", "IE3")
    return acc, pump, motor


def _design(baselines, energy=200e3, schedule=None):
    acc, pump, motor = _parts()
    return Design(
        "optimal", None, Bank(acc, 2, 90e5), pump, motor, 100e5, 200e5, 220e5, "isothermal",
        pd.DataFrame() if schedule is None else schedule, energy, 0.0, energy, {}, 1000.0,
        baselines,
    )  # fmt: skip


def _cycle(n=5, dt=2.0):
    return cycle_from_arrays(dt, np.full(n, 1e-4), np.full(n, 100e5), name="hand")


def test_the_headline_compares_with_the_least_tco_alternative():
    # Design: capex 2×1000 + 500 + 800 = 3300, 200 kJ a cycle.  Fixed: capex 4500, 1 MJ a
    # cycle (the straw man).  Compensated: capex 3000, 150 kJ a cycle: cheaper to buy and to
    # run than the design, so it is the strongest and the recommendation.
    big_pump = PumpOption(100e-6, 24.0, 251e5, 0.95, 0.9, 2000.0, "pump 100")
    comp = PumpOption(40e-6, 24.0, 251e5, 0.95, 0.9, 1200.0, "comp 40", "pressure-compensated")
    motor30 = MotorOption(30000.0, 0.93, 2500.0, "motor 30", "IE3")
    motor18 = MotorOption(18500.0, 0.93, 1800.0, "motor 18.5", "IE3")
    d = _design(
        (
            Baseline("fixed", big_pump, motor30, 150e5, 1.0e6),
            Baseline("compensated", comp, motor18, 140e5, 150e3),
        )
    )
    s = CostSettings(energy_price=0.2 / KWH_J, operating_time=1000 * HOUR, discount_rate=0.0)
    c = compare(d, None, _cycle(), s)
    assert c.strongest.key == "compensated"
    assert c.recommended == "compensated"
    ref = c.reference
    assert ref.baseline == "compensated" and ref.verdict == "no-payback" and not ref.pays_off
    assert ref.note == "does not pay back within 10 years (it costs more to buy and more to run)"
    # against the straw man it would have said "pays back" – not the headline any more
    assert c.payback("fixed").verdict == "cheaper"
    assert not c.option("variable-speed").feasible
    assert c.option("variable-speed").reason == "not computed"


# -- the designed supply's energy from a trace ---------------------------------------------------


def _trace(loaded, p_end, demand, qp):
    pump_flow = qp * np.asarray(loaded)
    bank_in = pump_flow - np.asarray(demand)
    return pd.DataFrame(
        {
            "pressure [Pa]": p_end,
            "pump_loaded [-]": loaded,
            "pump_flow [m³/s]": pump_flow,
            "relief_flow [m³/s]": np.zeros(len(loaded)),
            "demand [m³/s]": demand,
            "bank_flow [m³/s]": -bank_in,
        },
        index=pd.Index(np.arange(len(loaded)) * 1.0, name="time [s]"),
    )


def test_design_energy_from_the_runs_by_hand():
    # Four steps of 1 s; the machine takes 0.1 L/s at 100 bar (abs) in the first two.  The
    # pump (20 cm³/rev, 24 rev/s, η_v 0.95, η_o 0.90 at 250 bar, delivers 0.456 L/s) is
    # unloaded, unloaded, loaded, half loaded; the line ends each step at 200, 190, 200 and
    # 210 bar (abs).  Step pressure = mean of its start and end (the first starts at the last
    # end): 205, 195, 195, 205 bar abs.
    _, pump, _ = _parts()
    pa = P_AMBIENT
    cycle = cycle_from_arrays(1.0, [1e-4, 1e-4, 0.0, 0.0], np.full(4, 100e5), name="trace")
    qp = pump.flow
    loaded = np.array([0.0, 0.0, 1.0, 0.5])
    demand = np.array([1e-4, 1e-4, 0.0, 0.0])
    p_end = np.array([200e5, 190e5, 200e5, 210e5])
    supply = np.array([205e5, 195e5, 195e5, 205e5]) - pa
    # Pump losses (stated model): leakage k_L = 0.05·D·n/Δp_r; friction c_f = 0.7·(0.95/0.9 − 1);
    # drag M_d = 0.3·D·Δp_r/2π·(0.95/0.9 − 1); shaft at full stroke = D n Δp (1 + c_f) + 2π M_d n;
    # the rated pressure is the pump's maximum, 251 bar abs.
    D, n, dp_r, loss = 20e-6, 24.0, 251e5 - P_AMBIENT, 0.95 / 0.9 - 1
    c_f, m_d, k_l = 0.7 * loss, 0.3 * D * dp_r / (2 * math.pi) * loss, 0.05 * D * n / dp_r
    sb = 5e5

    def shaft(dp):
        return D * n * dp * (1 + c_f) + 2 * math.pi * m_d * n

    def motor_in(p):
        lr = 7500 * (1 / 0.9 - 1)
        return p + 0.36 * lr + 0.64 * lr * (p / 7500) ** 2

    el = loaded * motor_in(shaft(supply)) + (1 - loaded) * motor_in(shaft(sb))
    run = ControllerRun("pressure-switch", 283.15, True, None, 1e5, 0.0, 210e5, 280.0, 300.0,
                        1.0, 10.0, 0.0, 3, _trace(loaded, p_end, demand, qp))  # fmt: skip
    hot = ControllerRun("pressure-switch", 323.15, True, None, 1e5, 0.0, 210e5, 320.0, 340.0,
                        1.0, 10.0, 0.0, 3, _trace(loaded, p_end + 5e5, demand, qp))  # fmt: skip
    v = Verification(True, "pressure-switch", {}, (run, hot), 1e5, None, None, 5.0, "real")
    d = _design(())
    energy, b, source = design_energy(d, Verification(**{**v.__dict__, "runs": (run,)}), cycle, sb)
    assert energy == pytest.approx(float(el.sum()), rel=1e-12)
    assert "time-domain verification, pressure-switch controller" in source
    assert "part-load" in source
    bank_in = qp * loaded - demand
    assert b.gas_heat == pytest.approx(float(np.sum(bank_in * supply)), rel=1e-12)
    assert b.useful == pytest.approx(2 * 1e-4 * (100e5 - pa), rel=1e-12)
    assert b.standby == pytest.approx(float(np.sum((1 - loaded) * (D * n - k_l * sb) * sb)))
    assert b.total == pytest.approx(b.electrical, rel=1e-12)
    # both runs: the mean of their accounts
    both, b2, source2 = design_energy(d, v, cycle, sb)
    one_hot, _, _ = design_energy(d, Verification(**{**v.__dict__, "runs": (hot,)}), cycle, sb)
    assert both == pytest.approx(0.5 * (energy + one_hot), rel=1e-12)
    assert "10 °C and 50 °C" in source2 and b2.total == pytest.approx(b2.electrical)
