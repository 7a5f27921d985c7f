"""Costs: energy cost, present value, payback, and the comparison with the pump-only supplies.

Outside sources are named beside each check.  Hand-built designs use round numbers so that
every expected value is a line of arithmetic written in the test.
"""

from __future__ import annotations

import argparse
import math
import re

import numpy as np
import pandas as pd
import pytest
from hypothesis import given
from hypothesis import strategies as st
from stowflow.catalogue import AccumulatorOption, MotorOption, PumpOption
from stowflow.cli._costopts import add_cost_options, cost_settings_from_args
from stowflow.costs.comparison import (
    OPTION_KEYS,
    CostSettings,
    annual_energy_cost,
    annuity_factor,
    compare,
    discounted_payback,
    electrical_power,
    present_value,
    simple_payback,
)
from stowflow.cycle.duty import cycle_from_arrays
from stowflow.errors import SettingsError, UnitsError
from stowflow.io.quantities import parse_energy_price
from stowflow.search.solution import Bank, Baseline, Design
from stowflow.simulation.verify import ControllerRun, Verification
from stowflow.units import si_factor

KWH = si_factor("kWh", "energy")  # J per kWh
HOUR = si_factor("h", "time")  # s per hour

# sources.ESPOSITO_2009 prints three significant digits for the motor input (14.8 kW): half a
# unit in the last digit, 0.05 kW.  The yearly cost ($4,884) is the rounded 14.8 kW × 3000 h ×
# 0.11 $/kWh, so the rounding of 14.8 kW carries into it: 0.05 kW × 3000 h × 0.11 $/kWh = 16.5 $.
ESPOSITO_POWER_TOL_KW = 0.05
ESPOSITO_COST_TOL = 0.05 * 3000 * 0.11
# Present-value tables print the annuity factor to four decimals.
PV_TABLE_TOL = 5e-5
REL = 1e-12  # for our own arithmetic


# -- sources.ESPOSITO_2009, example 5-10 ------------------------------------------------------


def test_esposito_5_10_motor_input_power():
    # sources.ESPOSITO_2009, example 5-10 (from memory): the pump of example 5-9 takes
    # 12.57 kW; with a motor of 85 % efficiency the motor input is 14.8 kW.
    p_el = electrical_power(12.57e3, 0.85)
    assert p_el / 1e3 == pytest.approx(14.8, abs=ESPOSITO_POWER_TOL_KW)


def test_esposito_5_10_yearly_energy_cost():
    # sources.ESPOSITO_2009, example 5-10 (from memory): 3000 h a year at 0.11 $/kWh cost about
    # $4,884 a year.
    s = CostSettings(energy_price=0.11 / KWH, operating_time=3000 * HOUR, currency="$")
    cost = annual_energy_cost(electrical_power(12.57e3, 0.85), s)
    assert cost == pytest.approx(4884.0, abs=ESPOSITO_COST_TOL)


def test_esposito_5_10_regression_full_precision():
    # Regression pin of our own full-precision value (not from a source):
    # 12.57 kW / 0.85 × 3000 h × 0.11 $/kWh = 4880.117647... $.
    s = CostSettings(energy_price=0.11 / KWH, operating_time=3000 * HOUR)
    assert annual_energy_cost(electrical_power(12.57e3, 0.85), s) == pytest.approx(
        12.57 / 0.85 * 3000 * 0.11, rel=REL
    )


def test_electrical_power_rejects_bad_efficiency():
    with pytest.raises(SettingsError, match=r"motor efficiency must lie in \(0, 1\]"):
        electrical_power(1e3, 1.2)


# -- present value of an annuity ------------------------------------------------------------


def test_annuity_factor_against_discounted_cash_flows():
    # sources.BREALEY_MYERS_ALLEN, present value of an annuity (standard relation):
    # PV = C·[1/r − 1/(r(1+r)^t)].  Hand calculation as the sum of the discounted payments,
    # C/(1+r) + C/(1+r)² + … + C/(1+r)^10, at r = 8 %.
    r, n, c = 0.08, 10, 1000.0
    by_hand = sum(c / (1 + r) ** t for t in range(1, n + 1))
    assert present_value(c, r, n) == pytest.approx(by_hand, rel=REL)


def test_annuity_factor_against_printed_table():
    # Present-value-of-annuity tables (the appendix of sources.BREALEY_MYERS_ALLEN, from
    # memory): 10 years at 8 % → 6.7101; 5 years at 5 % → 4.3295.
    assert annuity_factor(0.08, 10) == pytest.approx(6.7101, abs=PV_TABLE_TOL)
    assert annuity_factor(0.05, 5) == pytest.approx(4.3295, abs=PV_TABLE_TOL)


def test_annuity_factor_without_discounting_is_the_number_of_years():
    assert annuity_factor(0.0, 7) == 7.0


@given(
    rate=st.floats(0.001, 0.3),
    years=st.integers(1, 40),
)
def test_annuity_factor_is_below_the_years_and_grows_with_them(rate, years):
    a = annuity_factor(rate, years)
    assert 0 < a < years
    assert annuity_factor(rate, years + 1) > a
    assert a < 1 / rate  # the perpetuity bound


# -- payback -------------------------------------------------------------------------------


def test_simple_payback_hand_calculation():
    assert simple_payback(3000.0, 1500.0) == pytest.approx(2.0, rel=REL)


def test_payback_is_zero_when_cheaper_up_front():
    assert simple_payback(-100.0, 50.0) == 0.0
    assert discounted_payback(-100.0, 50.0, 0.05) == 0.0
    assert simple_payback(0.0, 0.0) == 0.0


def test_payback_never_when_nothing_is_saved():
    assert simple_payback(100.0, 0.0) is None
    assert simple_payback(100.0, -5.0) is None
    assert discounted_payback(100.0, -5.0, 0.05) is None


def test_discounted_payback_solves_the_annuity_equation():
    # Extra capex equal to three years of discounted savings pays back in exactly 3 years
    # (present value of an annuity, sources.BREALEY_MYERS_ALLEN).
    r, s = 0.07, 1000.0
    extra = s * (1 / 1.07 + 1 / 1.07**2 + 1 / 1.07**3)
    assert discounted_payback(extra, s, r) == pytest.approx(3.0, rel=1e-10)


def test_discounted_payback_never_when_beyond_the_perpetuity():
    # A saving s a year is worth at most s/r today: extra capex above that is never repaid.
    assert discounted_payback(25_000.0, 1000.0, 0.05) is None
    assert simple_payback(25_000.0, 1000.0) == pytest.approx(25.0)


@given(
    extra=st.floats(1.0, 1e6),
    saving=st.floats(1.0, 1e6),
    rate=st.floats(0.001, 0.2),
)
def test_discounted_payback_never_before_simple(extra, saving, rate):
    simple = simple_payback(extra, saving)
    disc = discounted_payback(extra, saving, rate)
    assert simple is not None
    assert disc is None or disc >= simple * (1 - 1e-9)


# -- settings --------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("changes", "match"),
    [
        ({"energy_price": -1.0}, "energy price must be ≥ 0"),
        ({"operating_time": 0.0}, "operating time must be > 0 h"),
        ({"operating_time": 9000 * 3600.0}, "at most 8766 h"),
        ({"cycle_time": -3.0}, "cycle time must be > 0 s"),
        ({"years": 0}, "years must be a whole number ≥ 1"),
        ({"years": 2.5}, "years must be a whole number"),
        ({"discount_rate": 2.0}, "discount rate must lie in"),
        ({"installation_factor": 0.0}, "installation factor must be > 0"),
        ({"currency": "x" * 20}, "currency label"),
    ],
)
def test_cost_settings_refuse_bad_values(changes, match):
    with pytest.raises(SettingsError, match=match):
        CostSettings(**changes)


def test_cost_settings_show_the_price_per_kwh():
    assert CostSettings(energy_price=0.3 / KWH).energy_price_per_kwh == pytest.approx(0.3)
    assert CostSettings().as_dict()["hours_per_year"] == pytest.approx(4000.0)


# -- compare ----------------------------------------------------------------------------------


def _parts():
    acc = AccumulatorOption("bladder", 0.010, 331e5, 0.0, 1000.0, "acc 10 L")
    pump = PumpOption(20e-6, 24.0, 251e5, 0.95, 0.9, 500.0, "pump 20")
    motor = MotorOption(7500.0, 0.9, 800.0, "motor 7.5", "IE3")
    big_pump = PumpOption(100e-6, 24.0, 251e5, 0.95, 0.9, 2000.0, "pump 100")
    big_motor = MotorOption(30000.0, 0.93, 2500.0, "motor 30", "IE3")
    return acc, pump, motor, big_pump, big_motor


def _cycle(duration: float = 10.0):
    n = 5
    return cycle_from_arrays(duration / n, np.full(n, 1e-4), np.full(n, 100e5), name="hand")


def _design(feasible: bool = True, energy: float = 200e3):
    acc, pump, motor, big_pump, big_motor = _parts()
    baselines = (
        Baseline("fixed", big_pump, big_motor, 150e5, 1.0e6),
        Baseline("compensated", None, None, 140e5, math.nan, reason="no compensated pump"),
    )
    if not feasible:
        return Design(
            "infeasible", "no pump covers the mean demand", None, None, None, math.nan,
            math.nan, math.nan, "isothermal", pd.DataFrame(), math.nan, math.nan, math.nan,
            {}, 1000.0, baselines,
        )  # fmt: skip
    return Design(
        "optimal", None, Bank(acc, 2, 90e5), pump, motor, 100e5, 200e5, 220e5, "isothermal",
        pd.DataFrame(), energy, 0.0, energy, {}, 1000.0, baselines,
    )  # fmt: skip


def test_compare_by_hand():
    # Hand calculation: a 10 s cycle run back to back for 1000 h is 360,000 cycles a year.
    s = CostSettings(
        energy_price=0.2 / KWH, operating_time=1000 * HOUR, years=5, discount_rate=0.1,
        installation_factor=1.5, currency="EUR",
    )  # fmt: skip
    c = compare(_design(), None, _cycle(10.0), s)
    assert [o.key for o in c.options] == list(OPTION_KEYS)
    assert c.cycles_per_year == pytest.approx(360_000, rel=REL)
    d, f = c.option("design"), c.option("fixed")
    # capex: (2 × 1000 + 500 + 800) × 1.5 = 4950; baseline (2000 + 2500) × 1.5 = 6750
    assert d.capex == pytest.approx(4950.0, rel=REL)
    assert f.capex == pytest.approx(6750.0, rel=REL)
    # energy: 200 kJ × 360,000 = 72 GJ = 20,000 kWh → 4000 EUR; baseline 1 MJ → 20,000 EUR
    assert d.energy_per_year == pytest.approx(72e9, rel=REL)
    assert d.energy_cost_per_year == pytest.approx(4000.0, rel=REL)
    assert f.energy_cost_per_year == pytest.approx(20_000.0, rel=REL)
    # TCO = capex + C·a(10 %, 5) with a = 3.790787 (sources.BREALEY_MYERS_ALLEN formula)
    a = (1 - 1.1**-5) / 0.1
    assert d.tco == pytest.approx(4950.0 + 4000.0 * a, rel=REL)
    assert d.energy_source == "design schedule model (quasi-static)"
    # mean power 200 kJ / 10 s = 20 kW, motor load 20 kW × 0.9 / 7.5 kW = 2.4 (over-rated)
    assert d.mean_power == pytest.approx(20e3, rel=REL)
    # The design is cheaper to buy and to run: payback at once.
    p = c.payback("fixed")
    assert p.extra_capex == pytest.approx(-1800.0, rel=REL)
    assert p.savings_per_year == pytest.approx(16_000.0, rel=REL)
    assert p.simple_years == 0.0 and p.discounted_years == 0.0
    assert p.installed_power_saved == pytest.approx(22_500.0)
    assert p.note == "costs less to buy and to run" and p.verdict == "cheaper" and p.pays_off
    assert c.payback("compensated") is None
    assert not c.option("compensated").feasible
    assert c.option("compensated").reason == "no compensated pump"
    assert c.reference is p and c.strongest is f and c.recommended == "design"


def test_compare_payback_when_the_design_costs_more():
    # Installation factor 1 and a dearer bank: extra capex 2 × 5000 + 1300 − 4500 = 6800.
    acc = AccumulatorOption("bladder", 0.010, 331e5, 0.0, 5000.0, "dear acc")
    d = _design()
    d = Design(**{**d.__dict__, "bank": Bank(acc, 2, 90e5)})
    s = CostSettings(energy_price=0.2 / KWH, operating_time=1000 * HOUR, discount_rate=0.0)
    p = compare(d, None, _cycle(10.0), s).payback("fixed")
    assert p.extra_capex == pytest.approx(6800.0, rel=REL)
    assert p.simple_years == pytest.approx(6800.0 / 16_000.0, rel=REL)
    assert p.discounted_years == pytest.approx(p.simple_years, rel=REL)  # r = 0


def test_compare_cycle_time_sets_the_cycles_per_year():
    s = CostSettings(operating_time=1000 * HOUR, cycle_time=40.0)
    c = compare(_design(), None, _cycle(10.0), s)
    assert c.cycles_per_year == pytest.approx(90_000, rel=REL)
    assert any("stopped between them" in n for n in c.notes)


def test_compare_refuses_a_cycle_time_shorter_than_the_cycle():
    with pytest.raises(SettingsError, match=r"cycle time 5 s is shorter than the cycle"):
        compare(_design(), None, _cycle(10.0), CostSettings(cycle_time=5.0))


def test_compare_uses_the_verified_energy_mean_of_cold_and_hot():
    trace = pd.DataFrame(index=pd.Index([0.0], name="time [s]"))

    def run(ctrl, temp, energy):
        return ControllerRun(ctrl, temp, True, None, 1e5, 0.0, 200e5, 280.0, 330.0, energy,
                             10.0, 0.0, 3, trace)  # fmt: skip

    v = Verification(
        True, "pressure-switch", {"load_below": 150e5, "unload_above": 200e5},
        (run("pressure-switch", 283.15, 180e3), run("pressure-switch", 323.15, 220e3),
         run("schedule", 283.15, 1.0), run("schedule", 323.15, 1.0)),
        1e5, None, None, 5.0, "real",
    )  # fmt: skip
    c = compare(_design(), v, _cycle(10.0), CostSettings())
    d = c.option("design")
    assert d.energy_per_cycle == pytest.approx(200e3, rel=REL)
    assert "pressure-switch" in d.energy_source and "10 °C and 50 °C" in d.energy_source


def test_compare_infeasible_design_keeps_the_reason_and_prices_the_baselines():
    c = compare(_design(feasible=False), None, _cycle(10.0), CostSettings())
    d = c.option("design")
    assert not c.feasible and not d.feasible
    assert c.reason == "no pump covers the mean demand" == d.reason
    assert math.isnan(d.capex) and math.isnan(d.tco)
    assert c.paybacks == () and c.reference is None
    assert c.option("fixed").feasible and c.option("fixed").capex > 0
    assert list(c.cost_timeline().columns) == ["fixed"]


def test_cost_timeline_starts_at_capex_and_ends_at_tco():
    c = compare(_design(), None, _cycle(10.0), CostSettings(years=8))
    tl = c.cost_timeline()
    assert list(tl.index) == list(range(9))
    for o in c.options:
        if o.feasible:
            assert tl[o.key].iloc[0] == pytest.approx(o.capex, rel=REL)
            assert tl[o.key].iloc[-1] == pytest.approx(o.tco, rel=REL)


# -- command-line cost options ------------------------------------------------------------


def _args(*argv):
    parser = argparse.ArgumentParser()
    add_cost_options(parser)
    return cost_settings_from_args(parser.parse_args(list(argv)))


def test_cost_options_parse_values_with_units():
    s = _args(
        "--energy-price", "0.11$/kWh", "--hours-per-year", "3000", "--cycles-per-hour", "120",
        "--years", "15", "--discount-rate", "8%", "--installation-factor", "1.4",
    )  # fmt: skip
    assert s.energy_price_per_kwh == pytest.approx(0.11)
    assert s.currency == "$"
    assert s.operating_time == pytest.approx(3000 * HOUR)
    assert s.cycle_time == pytest.approx(30.0)
    assert (s.years, s.discount_rate, s.installation_factor) == (15, pytest.approx(0.08), 1.4)


def test_cost_options_other_units_and_defaults():
    s = _args("--energy-price", "250 EUR/MWh", "--cycle-time", "1.5min", "--currency", "GBP")
    assert s.energy_price_per_kwh == pytest.approx(0.25)
    assert s.cycle_time == pytest.approx(90.0)
    assert s.currency == "GBP"  # --currency wins over the price's label
    assert _args() == CostSettings()


_PRICE = "expected a price ≥ 0 per energy unit, e.g. 0.25/kWh or 0.11 EUR/kWh"


@pytest.mark.parametrize(
    ("text", "error", "message"),
    [
        ("0.25", UnitsError, f"'0.25' is not a price per energy unit; {_PRICE}"),
        ("cheap/kWh", UnitsError, f"'cheap/kWh' is not a price per energy unit; {_PRICE}"),
        ("0.25/kW", UnitsError, f"'0.25/kW' has the power unit 'kW'; {_PRICE}"),
    ],
)
def test_energy_price_errors(text, error, message):
    with pytest.raises(error, match=f"^{re.escape('--energy-price: ' + message)}$"):
        parse_energy_price(text, "--energy-price")


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (
            ("--cycles-per-hour", "0"),
            "--cycles-per-hour: '0' is not above 0 per hour; expected a rate > 0 per hour, "
            "e.g. 360/h or 6/min",
        ),
        (
            ("--discount-rate", "lots"),
            "--discount-rate: 'lots' is not a percentage or a fraction; expected a fraction "
            "> -50 % and ≤ 100 %, as a percentage or a number, e.g. 10% or 0.1",
        ),
        (
            ("--hours-per-year", "0"),
            "--hours-per-year: '0' is not above 0 h; expected a time > 0 h, a bare number in h "
            "or one with its unit, e.g. 4000",
        ),
        (
            ("--hours-per-year", "9000"),
            "--hours-per-year: cost settings: operating time must be > 0 h and at most 8766 h "
            "per year, got 9000.0 h",
        ),
        (("--years", "ten"), "--years: 'ten' is not a whole number; expected a whole number ≥ 1"),
    ],
)
def test_cost_options_errors_are_one_line(argv, message):
    with pytest.raises(SettingsError, match=f"^{re.escape(message)}$"):
        _args(*argv)
