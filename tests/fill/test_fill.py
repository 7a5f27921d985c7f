"""Nitrogen fill planning: mass conservation, ideal closed forms, strokes, precharge table."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from sources import COOLPROP, SPAN_2000
from stowflow.errors import SizingError
from stowflow.fill import (
    adiabatic_transfer,
    bottles_needed,
    cascade,
    plan_fill,
    precharge_table,
    stroke_transfer,
)
from stowflow.physics.gas import KAPPA, R_SPECIFIC, density, state_from_density
from stowflow.units import P_AMBIENT, T_REF

BAR = 1e5
LITRE = 1e-3
T_FILL = 288.15  # 15 °C
#: Mass conservation of every equalisation step, relative (the brief's requirement).
MASS_RTOL = 1e-9
#: Our own closed forms are exact up to rounding.
CLOSED_FORM_RTOL = 1e-9
#: Real-gas table against CoolProp directly (tests/benchmarks/bench_gas.py: 1e-6) with margin.
TABLE_RTOL = 1e-5
#: sources.COOLPROP's pinned isochore has two decimals of a bar.
REFERENCE_ATOL_BAR = 0.005


def gauge(bar: float) -> float:
    return bar * BAR + P_AMBIENT


def masses(model: str, p_a: float, p_b: float, v_a=50 * LITRE, v_b=50 * LITRE):
    return density(p_a, T_FILL, model) * v_a, density(p_b, T_FILL, model) * v_b


@pytest.mark.parametrize("model", ["real", "ideal"])
def test_every_equalisation_conserves_nitrogen(model):
    m0, _ = masses(model, P_AMBIENT, gauge(200))
    target = density(gauge(250), T_REF, model) * 50 * LITRE  # not reached: all bottles equalise
    steps = cascade(50 * LITRE, m0, target, 5, 40 * LITRE, gauge(200), T_FILL, model)
    assert len(steps) == 5
    before = steps["accumulator_mass_before [kg]"] + steps["bottle_mass_before [kg]"]
    after = steps["accumulator_mass_after [kg]"] + steps["bottle_mass_after [kg]"]
    np.testing.assert_allclose(after, before, rtol=MASS_RTOL)
    # What one step hands on is what the next starts with.
    np.testing.assert_allclose(
        steps["accumulator_mass_before [kg]"].iloc[1:].to_numpy(),
        steps["accumulator_mass_after [kg]"].iloc[:-1].to_numpy(),
        rtol=1e-15,
    )
    # Settled: the bottle is left at the accumulator's pressure.
    np.testing.assert_allclose(steps["bottle_left [bar]"], steps["accumulator [bar]"], rtol=1e-12)


def test_ideal_cascade_is_the_closed_form():
    # Ideal gas, same temperature: p = (p_a·V_a + p_b·V_b)/(V_a + V_b), bottle after bottle.
    v_a, v_b, p_b = 50 * LITRE, 40 * LITRE, gauge(200)
    m0, _ = masses("ideal", P_AMBIENT, p_b)
    steps = cascade(v_a, m0, 1e9, 4, v_b, p_b, T_FILL, "ideal")
    p = P_AMBIENT
    for got in steps["accumulator [bar]"]:
        p = (p * v_a + p_b * v_b) / (v_a + v_b)
        assert got == pytest.approx((p - P_AMBIENT) / BAR, rel=CLOSED_FORM_RTOL)


def test_ideal_adiabatic_equalisation_closed_form():
    # Ideal gas: U = pV/(κ − 1), so the warm pressure equals the closed form above; the bottle
    # gas expands isentropically, T_b' = T (p'/p_b)^((κ−1)/κ); the receiver holds the rest.
    v_a, v_b = 50 * LITRE, 50 * LITRE
    m_a, m_b = masses("ideal", P_AMBIENT, gauge(200), v_a, v_b)
    w = adiabatic_transfer(m_a, v_a, m_b, v_b, T_FILL, "ideal")
    p = (P_AMBIENT * v_a + gauge(200) * v_b) / (v_a + v_b)
    assert w["p_a"] == pytest.approx(p, rel=CLOSED_FORM_RTOL)
    assert w["p_b"] == pytest.approx(p, rel=CLOSED_FORM_RTOL)
    assert w["T_b"] == pytest.approx(T_FILL * (p / gauge(200)) ** ((KAPPA - 1) / KAPPA))
    m_b_left = m_b * (p / gauge(200)) ** (1 / KAPPA)
    assert w["dm"] == pytest.approx(m_b - m_b_left, rel=CLOSED_FORM_RTOL)
    assert w["T_a"] == pytest.approx(p * v_a / ((m_a + w["dm"]) * R_SPECIFIC), rel=1e-9)


@pytest.mark.parametrize("model", ["real", "ideal"])
def test_adiabatic_equalisation_conserves_energy(model):
    v_a, v_b = 50 * LITRE, 50 * LITRE
    m_a, m_b = masses(model, gauge(50), gauge(200), v_a, v_b)
    w = adiabatic_transfer(m_a, v_a, m_b, v_b, T_FILL, model)
    u = lambda rho, t: float(state_from_density(rho, t, model).u)  # noqa: E731
    before = m_a * u(m_a / v_a, T_FILL) + m_b * u(m_b / v_b, T_FILL)
    ma, mb = m_a + w["dm"], m_b - w["dm"]
    after = ma * u(ma / v_a, w["T_a"]) + mb * u(mb / v_b, w["T_b"])
    assert after == pytest.approx(before, rel=1e-9)
    assert w["T_a"] > T_FILL > w["T_b"]


def test_real_adiabatic_equalisation_against_coolprop():
    # The same balance solved live with CoolProp's own functions (sources.SPAN_2000 via
    # sources.COOLPROP, the installed version):
    # 50 L at 1 atm filled from 50 L at 200 bar gauge, both at 15 °C.
    cp = pytest.importorskip("CoolProp.CoolProp")
    from scipy.optimize import brentq

    v = 50 * LITRE
    ra = cp.PropsSI("D", "T", T_FILL, "P", P_AMBIENT, "Nitrogen")
    rb = cp.PropsSI("D", "T", T_FILL, "P", gauge(200), "Nitrogen")
    sb = cp.PropsSI("S", "T", T_FILL, "D", rb, "Nitrogen")
    u_tot = v * (
        ra * cp.PropsSI("U", "T", T_FILL, "D", ra, "Nitrogen")
        + rb * cp.PropsSI("U", "T", T_FILL, "D", rb, "Nitrogen")
    )

    def residual(x):
        rb2 = rb - x / v
        pb2 = cp.PropsSI("P", "D", rb2, "S", sb, "Nitrogen")
        ua2 = (u_tot - rb2 * v * cp.PropsSI("U", "D", rb2, "S", sb, "Nitrogen")) / (ra * v + x)
        return cp.PropsSI("P", "D", ra + x / v, "U", ua2, "Nitrogen") - pb2

    x = brentq(residual, 0.1, 0.6 * rb * v, xtol=1e-12)
    p_ref = cp.PropsSI("P", "D", rb - x / v, "S", sb, "Nitrogen")
    w = adiabatic_transfer(ra * v, v, rb * v, v, T_FILL, "real")
    assert w["p_a"] == pytest.approx(p_ref, rel=TABLE_RTOL)
    assert w["dm"] == pytest.approx(x, rel=TABLE_RTOL)


@settings(max_examples=60, deadline=None)
@given(
    low=st.floats(20.0, 190.0),
    high=st.floats(20.0, 190.0),
    model=st.sampled_from(["real", "ideal"]),
)
def test_bottles_needed_is_monotone_in_the_target(low, high, model):
    low, high = sorted((low, high))
    m0 = density(P_AMBIENT, T_FILL, model) * 50 * LITRE

    def need(bar):
        target = density(gauge(bar), T_REF, model) * 50 * LITRE
        return bottles_needed(50 * LITRE, m0, target, 50 * LITRE, gauge(200), T_FILL, model)

    n_low, n_high = need(low), need(high)
    assert n_low is not None
    assert n_high is None or n_high >= n_low


def test_bottles_needed_matches_the_cascade_and_the_limit():
    m0 = density(P_AMBIENT, T_FILL, "real") * 50 * LITRE
    target = density(gauge(180), T_REF, "real") * 50 * LITRE
    n = bottles_needed(50 * LITRE, m0, target, 50 * LITRE, gauge(200), T_FILL)
    steps = cascade(50 * LITRE, m0, target, 20, 50 * LITRE, gauge(200), T_FILL)
    assert n == len(steps) and bool(steps["reached"].iloc[-1])
    assert steps["accumulator_mass_after [kg]"].iloc[-1] == pytest.approx(target, rel=1e-15)
    # A target above the bottle pressure at the filling temperature cannot be reached.
    high = density(gauge(205), T_REF, "real") * 50 * LITRE
    assert bottles_needed(50 * LITRE, m0, high, 50 * LITRE, gauge(200), T_FILL) is None


def test_booster_stalls_at_its_pressure_ratio_and_conserves_mass():
    # Ideal booster clearance V_d = V_s/(r − 1): delivery stops at p_out = r·p_in (Boyle).
    rho_b = density(gauge(60), T_FILL, "ideal")
    bottles = [rho_b * 50 * LITRE]
    r, v_s = 3.0, 0.5 * LITRE
    m_r0 = density(gauge(150), T_FILL, "ideal") * 50 * LITRE
    sp = stroke_transfer(
        m_r0, 50 * LITRE, 1e9, bottles, 50 * LITRE, v_s, v_s / (r - 1), min_yield=0.0
    )
    assert not sp.reached and sp.strokes > 0
    # Never above r times the bottle's (falling) density.
    assert sp.receiver_mass / (50 * LITRE) <= r * rho_b * (1 + 1e-12)
    total = sp.receiver_mass + sp.cylinder_mass + sum(sp.bottle_masses)
    assert total == pytest.approx(m_r0 + bottles[0], rel=1e-12)


def test_transfer_pump_is_capped_by_the_oil_pressure():
    rho_oil = density(gauge(250), T_FILL, "real")
    bottles = [density(gauge(120), T_FILL, "real") * 50 * LITRE] * 3
    m_r0 = density(gauge(100), T_FILL, "real") * 50 * LITRE
    sp = stroke_transfer(
        m_r0,
        50 * LITRE,
        1e9,
        bottles,
        50 * LITRE,
        10 * LITRE,
        0.0,
        rho_limit=rho_oil,
        method="transfer pump",
    )
    assert sp.receiver_mass / (50 * LITRE) == pytest.approx(rho_oil, rel=1e-9)
    assert sp.stop_reason == "the oil pressure limits the receiver"
    total = sp.receiver_mass + sp.cylinder_mass + sum(sp.bottle_masses)
    assert total == pytest.approx(m_r0 + sum(bottles), rel=1e-12)


def test_plan_with_options_reaches_the_target():
    p = plan_fill(
        50 * LITRE,
        gauge(250),
        T_FILL,
        3,
        50 * LITRE,
        gauge(200),
        booster=(4.0, 0.2 * LITRE),
        transfer=(10 * LITRE, gauge(300), 0.0),
    )
    assert not p.reached and p.bottles_needed is None
    target_bar = (p.target_at_fill - P_AMBIENT) / BAR
    for option in p.options:
        assert option["reached"]
        assert option["final_pressure_bar"] == pytest.approx(target_bar, rel=1e-9)
    own = plan_fill(
        60 * LITRE,
        gauge(230),
        T_FILL,
        3,
        50 * LITRE,
        gauge(200),
        transfer=(10 * LITRE, gauge(300), 0.0),
        own_piston=True,
    )
    (o,) = own.options
    assert o["reached"] and o["receiver_pressure_bar"] > o["final_pressure_bar"]


def test_plan_reached_by_the_cascade_says_to_recheck():
    p = plan_fill(
        50 * LITRE,
        gauge(180),
        T_FILL,
        6,
        50 * LITRE,
        gauge(200),
        table_temperatures=[273.15, 293.15],
    )
    d = p.as_dict()
    assert p.reached and d["bottles_used"] == p.bottles_needed == 4
    assert "re-check" in d["notes"][1] and any("nitrogen" in s for s in d["safety"])
    assert d["precharge_table"][1]["precharge_gauge [bar]"] == pytest.approx(180.0, rel=TABLE_RTOL)


@pytest.mark.parametrize(
    ("kw", "match"),
    [
        (dict(initial_pressure=gauge(200)), "already holds"),
        (dict(bottles=0), "whole number"),
        (dict(volume=-1.0), "gas volume must be"),
        (dict(precharge=P_AMBIENT), "target precharge must be"),
    ],
)
def test_plan_refuses_impossible_input(kw, match):
    args = (
        dict(
            volume=50 * LITRE,
            precharge=gauge(180),
            T_fill=T_FILL,
            bottles=4,
            bottle_volume=50 * LITRE,
            bottle_pressure=gauge(200),
        )
        | kw
    )
    with pytest.raises(SizingError, match=match):
        plan_fill(**args)


def test_precharge_table_against_references():
    # Constant volume from 100 bar abs at 20 °C: real gas (sources.SPAN_2000 computed with
    # sources.COOLPROP 8.0.0) 112.58 / 91.58 / 83.12 bar abs at 50 / 0 / −20 °C; ideal gas
    # (p·T/T_ref, sources.CENGEL_BOLES_2015) 110.23 / 93.18 / 86.36.
    ts = [323.15, 273.15, 253.15]
    real = precharge_table(100 * BAR, ts, "real")["precharge_absolute [bar]"]
    ideal = precharge_table(100 * BAR, ts, "ideal")["precharge_absolute [bar]"]
    np.testing.assert_allclose(
        real, [112.58, 91.58, 83.12], atol=REFERENCE_ATOL_BAR, err_msg=f"{SPAN_2000} via {COOLPROP}"
    )
    np.testing.assert_allclose(ideal, [110.23, 93.18, 86.36], atol=REFERENCE_ATOL_BAR)
    # Ideal gas exactly p·T/T_ref (absolute).
    np.testing.assert_allclose(ideal, [100 * t / T_REF for t in ts], rtol=1e-12)
