"""Duties beyond energy storage: Joukowsky/Korteweg, thermal expansion, emergency reserve.

Outside sources are named beside each check by their constant in tests/sources.py.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad
from sources import (
    API_MPMS_11_1,
    DEL_GROSSO_MADER_1972,
    MICHAUD_1878,
    RECALLED,
    WYLIE_STREETER_1993,
)
from stowflow.duties import (
    Motion,
    blocked_pressure_rise,
    expansion_volume,
    gas_absorption,
    read_motions,
    reserve_pressures,
    size_reserve,
    size_shock,
    size_thermal,
    surge_pressure,
    wave_speed,
)
from stowflow.duties.properties import OIL_EXPANSION, STEEL_EXPANSION, STEEL_POISSON
from stowflow.errors import SizingError, StowflowError
from stowflow.physics.gas import KAPPA, pressure_from_density
from stowflow.physics.nitrogen import fields_rhoT, isentrope_T_at_rho
from stowflow.units import P_AMBIENT, T_REF

BAR = 1e5
LITRE = 1e-3
G = 9.80665  # standard gravity, m/s² (sources.CGPM_1901, exact)
#: Our own closed forms are exact; the root search on ln m stops at 1e-12.
CLOSED_FORM_RTOL = 1e-9
#: Hand calculations are carried to five significant digits.
HAND_RTOL = 5e-5
#: Real-gas table accuracy (tests/benchmarks/bench_gas.py: better than 1e-6) with margin.
TABLE_RTOL = 1e-5


def gauge(bar: float) -> float:
    return bar * BAR + P_AMBIENT


# --------------------------------------------------------------------------- shock
def test_joukowsky_textbook_statement():
    # sources.WYLIE_STREETER_1993, chapter 1 (from memory): with a ≈ 1000 m/s, a sudden 1 m/s
    # change of velocity in water changes the head by a/g ≈ 100 m. "About 100 m" is one
    # significant figure: 5 %.
    dp = surge_pressure(1000.0, 1000.0, 1.0)
    assert dp / (1000.0 * G) == pytest.approx(100.0, rel=0.05), str(WYLIE_STREETER_1993)
    assert dp == pytest.approx(1.0e6, rel=1e-15)  # Δp = ρ·a·Δv exactly (sources.JOUKOWSKY_1900)


def test_korteweg_rigid_pipe_is_the_speed_of_sound_in_water():
    # Water at 20 °C, K = 2.19 GPa and ρ = 998.2 kg/m³ (sources.RECALLED, from memory, 3 and 4
    # digits); the speed of sound in water at 20 °C is 1482 m/s (sources.DEL_GROSSO_MADER_1972,
    # from memory).  K given to three digits: ±0.5 % on a (with margin).  The rigid-pipe limit
    # of the sources.KORTEWEG_1878 wave speed is √(K/ρ).
    assert wave_speed(2.19e9, 998.2) == pytest.approx(1482.0, rel=5e-3), (
        f"{RECALLED}, {DEL_GROSSO_MADER_1972}"
    )
    # A very thick wall tends to the rigid pipe.
    assert wave_speed(2.19e9, 998.2, 0.1, 1e3) == pytest.approx(wave_speed(2.19e9, 998.2))


def test_oil_in_steel_pipe_hand_calculation():
    # Hand calculation (ours): mineral oil K = 1.7 GPa, ρ = 870 kg/m³, steel E = 210 GPa,
    # D = 25 mm, e = 3 mm, v = 4 m/s, sudden closure.
    #   K/ρ = 1.95402e6 m²/s²;  K·D/(E·e) = 0.0425/0.63 = 0.0674603
    #   a = √(1.95402e6 / 1.0674603) = √1.83053e6 = 1352.97 m/s
    #   Δp = 870 · 1352.97 · 4 = 4.70834e6 Pa = 47.083 bar
    a = wave_speed(1.7e9, 870.0, 0.025, 0.003, 210e9)
    assert a == pytest.approx(1352.97, rel=HAND_RTOL)
    assert surge_pressure(870.0, a, 4.0) == pytest.approx(47.083 * BAR, rel=HAND_RTOL)


def test_anchoring_stiffens_the_pipe():
    # Constraint factors (sources.WYLIE_STREETER_1993, from memory): 1 free to move,
    # 1 − ν² anchored throughout; a smaller c1 means a stiffer pipe and a faster wave.
    free = wave_speed(1.7e9, 870.0, 0.025, 0.003, constraint=1.0)
    anchored = wave_speed(1.7e9, 870.0, 0.025, 0.003, constraint=1 - STEEL_POISSON**2)
    assert anchored > free
    with pytest.raises(SizingError, match="constraint factor"):
        wave_speed(1.7e9, 870.0, 0.025, 0.003, constraint=3.0)


def test_michaud_slow_closure_hand_calculation():
    # sources.MICHAUD_1878 (from memory): t_c > 2L/a gives Δp ≈ 2ρLv/t_c.
    # Hand: 2 · 870 · 20 · 4 / 0.5 = 278 400 Pa. 2L/a = 40/1353 = 29.6 ms < 0.5 s.
    a = wave_speed(1.7e9, 870.0, 0.025, 0.003)
    slow = surge_pressure(870.0, a, 4.0, 20.0, 0.5)
    assert slow == pytest.approx(278_400.0, rel=1e-12), str(MICHAUD_1878)
    # A closure within 2L/a is sudden: the full Joukowsky rise.
    assert surge_pressure(870.0, a, 4.0, 20.0, 0.01) == surge_pressure(870.0, a, 4.0)


def test_shock_accumulator_ideal_closed_form():
    # Ideal gas, energy balance (module docstring), solved for V1:
    #   ½ρALv² = p1·V1·[((p2/p1)^((κ−1)/κ) − 1)/(κ − 1) − 1 + (p1/p2)^(1/κ)]
    p1, p2 = gauge(150), gauge(180)
    r = size_shock(20.0, 0.025, 0.003, 4.0, p1, p2, model="ideal")
    e_k = 0.5 * 870.0 * math.pi / 4 * 0.025**2 * 20.0 * 4.0**2
    k = KAPPA
    v1 = e_k / (p1 * (((p2 / p1) ** ((k - 1) / k) - 1) / (k - 1) - 1 + (p1 / p2) ** (1 / k)))
    got = r.per_temperature["gas_volume_at_operating_pressure [L]"].iloc[0] * LITRE
    assert got == pytest.approx(v1, rel=CLOSED_FORM_RTOL)
    # V0 from the same mass at the precharge (ideal, at 20 °C: Boyle).
    assert r.required_gas_volume == pytest.approx(v1 * p1 / r.precharge_ref, rel=CLOSED_FORM_RTOL)
    assert r.needed and r.column_energy == pytest.approx(e_k)


def test_shock_real_gas_energy_is_the_p_dv_integral():
    # First law on an isentrope: du = −p dv, so e = ∫(p − p1)(−dv) from v1 to v2. Integrate
    # p along the real-gas isentrope numerically and compare with the u-based value.
    p1, p2, T = gauge(150), gauge(180), 293.15
    g = gas_absorption(p1, p2, T, "real")
    rho1, rho2 = float(g["rho1"][0]), float(g["rho2"][0])
    s1 = fields_rhoT(np.atleast_1d(rho1), np.atleast_1d(T), "table", ("s",))[0]

    def p_minus_p1_over_rho2(rho):  # (p − p1) dv with dv = −dρ/ρ²
        t = isentrope_T_at_rho(np.atleast_1d(rho), s1, np.atleast_1d(T), "table")
        return (float(pressure_from_density(rho, t[0], "real")) - p1) / rho**2

    integral, _ = quad(p_minus_p1_over_rho2, rho1, rho2, epsabs=0, epsrel=1e-10)
    assert float(g["energy"][0]) == pytest.approx(integral, rel=TABLE_RTOL * 10)


def test_shock_real_gas_needs_more_than_ideal_and_reports_no_need():
    # The real gas is stiffer than κ = 1.4 at 150 bar (sources.SPAN_2000 computed with
    # sources.COOLPROP 8.0.0, isentrope 90 → 200 bar abs: real V2/V0 = 0.6195 > ideal 0.5653),
    # so it absorbs less per volume.
    kw = dict(precharge=gauge(130))
    real = size_shock(20.0, 0.025, 0.003, 4.0, gauge(150), gauge(180), **kw)
    ideal = size_shock(20.0, 0.025, 0.003, 4.0, gauge(150), gauge(180), model="ideal", **kw)
    assert real.required_gas_volume > ideal.required_gas_volume
    calm = size_shock(20.0, 0.025, 0.003, 0.5, gauge(150), gauge(180))
    assert not calm.needed and "no shock accumulator is needed" in calm.notes[0]


@pytest.mark.parametrize(
    ("kw", "match"),
    [
        (dict(p_limit=gauge(140)), "must exceed the operating pressure"),
        (dict(velocity=0.0), "flow velocity must be"),
        (dict(precharge=gauge(160)), "reaches the operating pressure"),
        (dict(wall=-1.0), "wall thickness must be"),
    ],
)
def test_shock_refuses_impossible_input(kw, match):
    args = dict(
        length=20.0,
        diameter=0.025,
        wall=0.003,
        velocity=4.0,
        p_operating=gauge(150),
        p_limit=gauge(180),
    )
    with pytest.raises(SizingError, match=match):
        size_shock(**(args | kw))


# --------------------------------------------------------------------------- thermal expansion
def test_oil_expansion_coefficient_against_the_petroleum_tables():
    # sources.API_MPMS_11_1 volume correction for lubricating oils (from memory):
    # α15 = K1/ρ15 with K1 = 0.6278 kg/(m³·K): 7.22e-4 1/K at 870 kg/m³. Our default,
    # 7.0e-4 1/K (from memory), must agree within the spread of recalled values, 5 %.
    assert OIL_EXPANSION == pytest.approx(0.6278 / 870.0, rel=0.05), str(API_MPMS_11_1)


def test_thermal_expansion_hand_calculation():
    # Hand calculation (ours): 20 L of mineral oil in steel pipe, 20 → 60 °C.
    #   ΔV = 20 L · (7.0e-4 − 3 · 12e-6) 1/K · 40 K = 20 · 6.64e-4 · 40 = 0.5312 L
    #   Δp = K·ΔV/V = 1.7e9 · 0.5312/20 = 45.152 MPa = 451.52 bar (11.288 bar/K)
    dv = expansion_volume(20 * LITRE, 293.15, 333.15, 7.0e-4, 3 * STEEL_EXPANSION)
    assert dv == pytest.approx(0.5312 * LITRE, rel=1e-12)
    assert blocked_pressure_rise(20 * LITRE, dv, 1.7e9) == pytest.approx(451.52 * BAR, rel=1e-12)
    r = size_thermal(20 * LITRE, 293.15, 333.15, gauge(50), gauge(200))
    assert r.as_dict()["pressure_rise_per_kelvin_bar"] == pytest.approx(11.288, rel=1e-12)


def test_thermal_ideal_closed_form():
    # Ideal gas, isothermal at each temperature, precharge on the isochore p0(T) = p0·T/T_ref:
    #   V0 = ΔV / (p0(T1)/p_start − p0(T2)/p_max)
    p0, p_start, p_max, t1, t2 = gauge(40), gauge(50), gauge(200), 283.15, 333.15
    r = size_thermal(20 * LITRE, t1, t2, p_start, p_max, precharge=p0, model="ideal")
    dv = expansion_volume(20 * LITRE, t1, t2)
    v0 = dv / (p0 * t1 / T_REF / p_start - p0 * t2 / T_REF / p_max)
    assert r.required_gas_volume == pytest.approx(v0, rel=CLOSED_FORM_RTOL)
    # The table ends at the limit and starts at the start pressure.
    assert r.table["pressure_with_accumulator [bar]"].iloc[-1] == pytest.approx(200.0, rel=1e-9)
    assert r.table["pressure_with_accumulator [bar]"].iloc[0] == pytest.approx(50.0, rel=1e-9)


def test_thermal_empty_accumulator_at_start_and_limits():
    # Start at 0 bar with a 20 bar precharge: the accumulator starts empty, f1 = 0.
    r = size_thermal(
        20 * LITRE, 293.15, 333.15, P_AMBIENT, gauge(200), precharge=gauge(20), model="ideal"
    )
    dv = expansion_volume(20 * LITRE, 293.15, 333.15)
    assert r.required_gas_volume == pytest.approx(
        dv / (1 - gauge(20) * 333.15 / T_REF / gauge(200)), rel=CLOSED_FORM_RTOL
    )
    assert any("starts empty" in n for n in r.notes)
    # The bladder's 4:1 ratio (sources.COMMON_PRACTICE) is broken at 50 → 200 bar with p0 = 0.9·p1.
    assert not size_thermal(20 * LITRE, 293.15, 333.15, gauge(50), gauge(200)).limits["admissible"]


@pytest.mark.parametrize(
    ("args", "match"),
    [
        ((293.15, 293.15, gauge(50), gauge(200)), "must heat up"),
        ((293.15, 333.15, gauge(200), gauge(100)), "must exceed the start pressure"),
        ((293.15, 333.15, P_AMBIENT, gauge(200)), "give a precharge"),
    ],
)
def test_thermal_refuses_impossible_input(args, match):
    with pytest.raises(SizingError, match=match):
        size_thermal(20 * LITRE, *args)


def test_container_faster_than_oil_is_refused():
    with pytest.raises(SizingError, match="no growth to absorb"):
        size_thermal(20 * LITRE, 293.15, 333.15, gauge(50), gauge(200), container_expansion=1e-3)


# --------------------------------------------------------------------------- emergency reserve
MOTIONS = (
    Motion("close guard", 1.2 * LITRE, gauge(120), 2.0),
    Motion("retract", 3.0 * LITRE, gauge(100), 4.0),
)


def test_reserve_isothermal_ideal_is_boyle_with_leakage():
    # Boyle's law, absolute pressures (sources.CENGEL_BOLES_2015, n = 1): motion i is met when
    #   Q·t_sb + Σ_{j≤i}(ΔV_j + Q·t_j) = V0·(p0/p_min,i − p0/p_c)
    p0, pc, q, t_sb = gauge(80), gauge(180), 0.1 * LITRE / 60, 600.0
    r = size_reserve(
        MOTIONS, pc, leakage=q, standby_time=t_sb, precharge=p0, process="isothermal", model="ideal"
    )
    cum = np.cumsum([m.volume + q * m.time for m in MOTIONS]) + q * t_sb
    need = [c / (p0 / m.min_pressure - p0 / pc) for c, m in zip(cum, MOTIONS, strict=True)]
    assert r.required_gas_volume == pytest.approx(max(need), rel=CLOSED_FORM_RTOL)


def test_reserve_adiabatic_after_settled_charge_closed_form():
    # Isothermal charge p0·V0 = p_c·V_c, adiabatic discharge p_c·V_c^κ = p_i·V_i^κ
    # (polytropic law, sources.CENGEL_BOLES_2015), so V0 = ΔV_i / [(p0/p_c)·((p_c/p_i)^(1/κ) − 1)].
    p0, pc = gauge(80), gauge(180)
    for proc, n in (("adiabatic", KAPPA), ("polytropic:1.2", 1.2)):
        r = size_reserve(MOTIONS, pc, precharge=p0, process=proc, model="ideal")
        cum = np.cumsum([m.volume for m in MOTIONS])
        need = [
            c / (p0 / pc * ((pc / m.min_pressure) ** (1 / n) - 1))
            for c, m in zip(cum, MOTIONS, strict=True)
        ]
        assert r.required_gas_volume == pytest.approx(max(need), rel=CLOSED_FORM_RTOL)


def test_reserve_pressure_after_each_motion():
    r = size_reserve(
        MOTIONS,
        gauge(180),
        leakage=0.05 * LITRE / 60,
        standby_time=600.0,
        T_min=283.15,
        T_max=323.15,
    )
    s = r.states
    assert list(s["step"]) == ["after stand-by", "close guard", "retract"]
    margins = s["margin [bar]"].iloc[1:]
    assert margins.min() == pytest.approx(0.0, abs=1e-6)  # the governing motion is just met
    assert (margins >= -1e-6).all()
    assert s["pressure [bar]"].is_monotonic_decreasing
    # The gas cools as it expands adiabatically.
    assert s["gas_temperature [°C]"].iloc[-1] < s["gas_temperature [°C]"].iloc[0] - 20
    assert r.adiabatic_gas_volume > r.isothermal_gas_volume
    assert r.required_gas_volume == r.adiabatic_gas_volume
    assert "governing process: adiabatic" in r.notes[0]
    # Checking the sized accumulator again gives the same states.
    again = reserve_pressures(
        r.required_gas_volume,
        r.precharge_ref,
        MOTIONS,
        gauge(180),
        r.worst_temperature,
        leakage=0.05 * LITRE / 60,
        standby_time=600.0,
    )
    assert again["pressure [bar]"].to_numpy() == pytest.approx(s["pressure [bar]"].to_numpy())


@settings(max_examples=25, deadline=None)
@given(
    extra=st.floats(0.01, 5.0),
    leak=st.floats(0.0, 0.5),
)
def test_reserve_more_oil_never_needs_less_gas(extra, leak):
    # Monotone sizing: a larger motion volume or more leakage never needs a smaller V0.
    base = size_reserve(MOTIONS, gauge(180), precharge=gauge(80), model="ideal")
    bigger = (MOTIONS[0], Motion("retract", (3.0 + extra) * LITRE, gauge(100), 4.0))
    more = size_reserve(
        bigger,
        gauge(180),
        precharge=gauge(80),
        model="ideal",
        leakage=leak * LITRE / 60,
        standby_time=60.0,
    )
    assert more.required_gas_volume >= base.required_gas_volume * (1 - 1e-12)


@pytest.mark.parametrize(
    ("kw", "match"),
    [
        (dict(charge_pressure=gauge(110)), "not below the charge pressure"),
        (dict(leakage=-1e-6), "leakage must be"),
        (dict(precharge=gauge(185)), "reaches the charge pressure"),
    ],
)
def test_reserve_refuses_impossible_input(kw, match):
    args = dict(motions=MOTIONS, charge_pressure=gauge(180)) | kw
    with pytest.raises(SizingError, match=match):
        size_reserve(**args)


def test_motions_csv(tmp_path, repo_root):
    # The --motion option's text is read by the command: tests/cli/test_cli_size_duties.py.
    demo = read_motions(repo_root / "duty_cycles" / "motions" / "motions_demo.csv")
    assert [x.name for x in demo] == ["close safety guard", "retract upper tool", "lock slide"]
    f = tmp_path / "m.csv"
    f.write_text("# c\nmotion, volume [mL], min_pressure [MPa], time [min]\nA, 500, 10, 0.5\n")
    (a,) = read_motions(f)
    assert (a.volume, a.min_pressure, a.time) == pytest.approx((0.5e-3, 10e6 + P_AMBIENT, 30.0))


@pytest.mark.parametrize(
    ("text", "match"),
    [
        (
            "motion, volume [L], min_pressure [bar]\nA, 1, 100\n",
            r"line 1: missing column\(s\) time",
        ),
        ("motion, volume [L], min_pressure [bar], time [s], x\n", "unknown column 'x'"),
        ("motion, volume [bar], min_pressure [bar], time [s]\n", "volume unit"),
        (
            "motion, volume [L], min_pressure [bar], time [s]\nA, two, 100, 1\n",
            "line 2, column 'volume \\[L\\]': 'two' is not a number",
        ),
        ("motion, volume [L], min_pressure [bar], time [s]\nA, -1, 100, 1\n", "line 2: motion"),
        ("motion, volume [L], min_pressure [bar], time [s]\n", "no motions"),
    ],
)
def test_motions_csv_errors_name_the_line(tmp_path, text, match):
    f = tmp_path / "bad.csv"
    f.write_text(text)
    with pytest.raises(StowflowError, match=match):
        read_motions(f)


def test_reserve_limits_judge_the_lowest_pressure_reached(repo_root):
    # The demo's retract motion (110 bar) governs, so the pressure never falls to the last
    # motion's 90 bar; the separator rule is judged at the pressure really reached.
    demo = read_motions(repo_root / "duty_cycles" / "motions" / "motions_demo.csv")
    r = size_reserve(demo, gauge(180), T_min=283.15, T_max=323.15)
    assert r.limits["admissible"]
    assert any("never falls below" in n for n in r.notes)
    lowest = r.states["pressure [bar]"].iloc[-1]
    assert lowest > 100.0 > bar_of(demo[-1].min_pressure)


def bar_of(p_abs: float) -> float:
    return (p_abs - P_AMBIENT) / BAR
