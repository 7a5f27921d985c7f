"""Thermal time-constant model (sources.OTIS_POURMOVAHED_1985, sources.POURMOVAHED_OTIS_1990)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from _textbook import otis_pourmovahed_rate
from CoolProp.CoolProp import PropsSI
from scipy.integrate import solve_ivp
from sources import CODATA_2018, COOLPROP, POURMOVAHED_OTIS_1990, SPAN_2000
from stowflow.errors import SettingsError, SizingError
from stowflow.physics.gas import KAPPA, density
from stowflow.physics.nitrogen import direct
from stowflow.physics.thermal import (
    DEFAULT_TIME_CONSTANT,
    charge_mass,
    effective_polytropic_index,
    gas_pressure,
    linear_volume_change,
    temperature_rate,
)
from stowflow.units import T_REF

BAR = 1e5
# Mathematics: the limits hold exactly; tolerances cover the integrator's rtol (1e-10) and
# the quadrature.
LIMIT_RTOL = 1e-8
# Real gas against CoolProp: the table's accuracy (tests/physics/test_gas.py TABLE_RTOL).
TABLE_RTOL = 1e-5


def test_adiabatic_limit_ideal_gas_follows_p_v_kappa():
    # Mathematics of the sources.OTIS_POURMOVAHED_1985 energy equation: τ → ∞ gives
    # p·V^γ = const.
    n = effective_polytropic_index(np.array([0.5, 3.0, 40.0]), math.inf, np.array([2.0, 3.0, 0.5]))
    assert n == pytest.approx(KAPPA, rel=1e-12)
    T2, p2 = linear_volume_change(2.0, math.inf, 1.0, 0.5, 1.0, T_REF, "ideal")
    assert T2 == pytest.approx(T_REF * 2**0.4, rel=1e-12)
    assert p2 == pytest.approx(gas_pressure(1.0, 1.0, T_REF, "ideal") * 2**KAPPA, rel=1e-12)


def test_adiabatic_limit_real_gas_follows_the_coolprop_isentrope():
    # Mathematics: with τ → ∞ the energy equation is ds = 0, so the end state is the real
    # isentrope (sources.SPAN_2000 via sources.COOLPROP) at the end density.
    rho1 = density(90 * BAR, T_REF)
    # V2/V0 of the isentrope 90 → 200 bar abs from 293.15 K, computed live with the installed
    # CoolProp (8.0.0 gives 0.6195285215639427; pinned to 0.6195 in sources.COOLPROP).
    s_start = PropsSI("S", "P", 90 * BAR, "T", T_REF, "Nitrogen")
    v2 = PropsSI("D", "P", 90 * BAR, "T", T_REF, "Nitrogen") / PropsSI(
        "D", "P", 200 * BAR, "S", s_start, "Nitrogen"
    )
    assert v2 == pytest.approx(0.6195, abs=0.00005), f"{SPAN_2000} via {COOLPROP}"
    T2, p2 = linear_volume_change(1.0, math.inf, 1.0, v2, rho1, T_REF, "real")
    s1 = direct("PT", 90 * BAR, T_REF, ("s",))[0]
    p_ref, t_ref = direct("DS", rho1 / v2, s1, ("p", "T"))
    assert p2 == pytest.approx(float(p_ref), rel=TABLE_RTOL)
    assert T2 == pytest.approx(float(t_ref), rel=TABLE_RTOL)
    # sources.COOLPROP pinned values: 200 bar abs (V2/V0 to 4 decimals → ±0.02 bar), 370.6 K.
    assert p2 / BAR == pytest.approx(200.0, abs=0.02)
    assert T2 == pytest.approx(370.6, abs=0.05)


def test_real_gas_isentropic_expansion_from_reference():
    # sources.SPAN_2000 computed with sources.COOLPROP 8.0.0, isentropic expansion 200 → 100
    # bar abs from 293.15 K: V2/V1 = 1.464, T2 = 239.4 K.  V2/V1 pinned to 3 decimals
    # (±0.0005, i.e. ±3.4e-4 relative, about ±0.06 bar at n ≈ 1.8); T to 0.1 K.
    rho1 = density(200 * BAR, T_REF)
    T2, p2 = linear_volume_change(1.0, math.inf, 1.0, 1.464, rho1, T_REF, "real")
    assert p2 / BAR == pytest.approx(100.0, abs=0.06)
    assert T2 == pytest.approx(239.4, abs=0.1)


def test_isothermal_limit():
    # Mathematics: τ → 0 gives the isothermal process, n = 1 (error ~ τ/duration).
    n = effective_polytropic_index(1e4, 1e-4, np.array([2.0, 0.5]))
    assert n == pytest.approx(1.0, abs=1e-6)
    # Real gas: the end state lies on the isotherm; n is then ln(p2/p1)/ln 2 with p2 from
    # CoolProp at T_ref and twice the density (not 1, because Z changes).
    rho1 = density(100 * BAR, T_REF)
    T2, p2 = linear_volume_change(100.0, 1e-5, 1.0, 0.5, rho1, T_REF, "real")
    p_iso = float(direct("DT", 2 * rho1, T_REF, ("p",))[0])
    assert T2 == pytest.approx(T_REF, abs=1e-4)  # lag ≈ τ·(κ−1)·T·|V̇|/V ≈ 2e-5 K
    assert p2 == pytest.approx(p_iso, rel=TABLE_RTOL)
    n_real = effective_polytropic_index(100.0, 1e-5, 2.0, "real", p_start=100 * BAR)
    assert n_real == pytest.approx(math.log(p_iso / (100 * BAR)) / math.log(2.0), rel=1e-4)


@pytest.mark.parametrize("model", ["ideal", "real"])
def test_exponential_relaxation_after_a_step(model):
    # Mathematics of the sources.OTIS_POURMOVAHED_1985 energy equation: after a step
    # compression at fixed volume, T − Tw decays as e^(−t/τ).
    tau, t_wall, t0 = 3.0, T_REF, 360.0
    mass, vol = charge_mass(150 * BAR, 1e-3), 0.6e-3
    times = np.array([0.5, 3.0, 9.0])
    # The code's own right-hand side integrated, against the closed form.
    sol = solve_ivp(
        lambda t, y: [temperature_rate(y[0], vol, 0.0, t_wall, tau, mass, model)],
        (0.0, 9.0), [t0], t_eval=times, rtol=1e-11, atol=1e-10,
    )  # fmt: skip
    expected = t_wall + (t0 - t_wall) * np.exp(-times / tau)
    assert sol.y[0] == pytest.approx(expected, rel=LIMIT_RTOL)


def test_ideal_closed_form_matches_numerical_integration():
    # Cross-check of our quadrature against scipy integrating the energy equation of
    # sources.OTIS_POURMOVAHED_1985 with the test's own right-hand side (tests/_textbook.py).
    for duration in (0.3, 4.0, 60.0):
        for v2 in (0.4, 1.8):
            rate = (v2 - 1.0) / duration

            def rhs(t, y, r=rate):
                return [otis_pourmovahed_rate(y[0], 1.0 + r * t, r, T_REF, 5.0, 1.0, "ideal")]

            sol = solve_ivp(rhs, (0.0, duration), [T_REF], method="Radau", rtol=1e-12, atol=1e-10)
            T2, _ = linear_volume_change(duration, 5.0, 1.0, v2, 1.0, T_REF, "ideal")
            assert T2 == pytest.approx(sol.y[0, -1], rel=LIMIT_RTOL)


def test_effective_index_falls_from_kappa_to_one_with_duration():
    durations = np.geomspace(1e-3, 1e3, 13)
    n = effective_polytropic_index(durations, DEFAULT_TIME_CONSTANT, 2.5)
    assert np.all(np.diff(n) < 0)
    assert 1.0 < n[-1] < n[0] < KAPPA


@pytest.mark.parametrize("model", ["ideal", "real"])
@pytest.mark.parametrize(
    ("T", "litres", "dvdt", "t_wall", "tau"),
    [
        (293.15, 1.0, 0.0, 320.0, 3.0),
        (340.0, 0.6, -2e-4, 300.0, 5.0),
        (250.0, 0.4, 5e-4, 280.0, 0.5),
    ],
)
def test_rate_matches_the_energy_equation_written_from_the_paper(
    model, T, litres, dvdt, t_wall, tau
):
    # temperature_rate against the right-hand side of the sources.OTIS_POURMOVAHED_1985 energy
    # equation written independently in tests/_textbook.py (CoolProp 8.0.0 derivatives for the
    # real gas, sources.COOLPROP).  150 bar precharge in 1 L: densities up to ~420 kg/m³.
    # Tolerance: the code reads nitrogen from a table (TABLE_RTOL above; 3e-8 seen here).
    mass = float(charge_mass(150 * BAR, 1e-3))
    vol = litres * 1e-3
    got = temperature_rate(T, vol, dvdt, t_wall, tau, mass, model)
    ref = otis_pourmovahed_rate(T, vol, dvdt, t_wall, tau, mass, model)
    assert got == pytest.approx(ref, rel=TABLE_RTOL)


def test_real_gas_rate_matches_ideal_at_low_density():
    # Ideal-gas limit of (T/cv)(∂p/∂T)_v dv/dt = (κ−1)·T·dV/V, within the N₂ ideal-gas
    # c_p/c_v − 1.4 difference at 300 K (about 1e-3, sources.SPAN_2000, from memory).
    mass, vol = 1e-5, 1e-2  # 1e-3 kg/m³
    real = temperature_rate(300.0, vol, -1e-3, 300.0, 5.0, mass, "real")
    ideal = temperature_rate(300.0, vol, -1e-3, 300.0, 5.0, mass, "ideal")
    assert real == pytest.approx(ideal, rel=2e-3)


def test_gas_pressure_and_mass():
    m = charge_mass(90 * BAR, 10e-3)
    assert gas_pressure(m, 10e-3, T_REF) == pytest.approx(90 * BAR, rel=TABLE_RTOL)
    # R/M = 8.314462618 / 0.02801348 J/(kg·K): sources.CODATA_2018 R, sources.SPAN_2000 M.
    assert gas_pressure(m, 10e-3, T_REF, "ideal") == pytest.approx(
        m / 10e-3 * (8.314462618 / 0.02801348) * T_REF, rel=1e-12
    ), f"{CODATA_2018}, {SPAN_2000}"


def test_default_time_constant_is_in_the_recalled_range():
    # sources.POURMOVAHED_OTIS_1990 (from memory): typical τ for litre-size gas volumes is
    # about 1–10 s.
    assert 1.0 <= DEFAULT_TIME_CONSTANT <= 10.0, str(POURMOVAHED_OTIS_1990)


def test_bad_inputs():
    with pytest.raises(SettingsError, match="time constant must be > 0"):
        temperature_rate(300.0, 1e-3, 0.0, 300.0, 0.0, 0.1, "ideal")
    with pytest.raises(SizingError, match="not 1"):
        effective_polytropic_index(1.0, 5.0, 1.0)
    with pytest.raises(SettingsError, match="needs p_start"):
        effective_polytropic_index(1.0, 5.0, 2.0, "real")
    with pytest.raises(SizingError, match="duration must be > 0"):
        linear_volume_change(0.0, 5.0, 1.0, 0.5, 1.0, T_REF)
