"""The design's quasi-static store: charged at rest, discharged from the top, warm after a charge.

Sources of truth:
* sources.SPAN_2000 via sources.COOLPROP (computed live with the installed CoolProp): the real
  isotherm and isentrope through a start state, called directly;
* mathematics: Boyle's law and the polytropic law p·V^n = const (sources.CENGEL_BOLES_2015,
  closed forms below), and the sources.OTIS_POURMOVAHED_1985 energy equation integrated
  numerically
  (:func:`stowflow.physics.thermal.linear_volume_change`) for the warm gas after a charge;
* the accumulator sizing law for an isothermal charge and a polytropic discharge,
  V0 = ΔV·(p2/p0) / ((p2/p1)^(1/n) − 1) for an ideal gas (sources.CENGEL_BOLES_2015; the
  handbook form itself from memory; it follows from Boyle's law and p·V^n = const, which is
  what the test checks).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from CoolProp.CoolProp import PropsSI
from stowflow.cycle.duty import cycle_from_arrays
from stowflow.physics import gas, thermal
from stowflow.physics.gas import KAPPA, expansion_ratio, pressure_after_expansion
from stowflow.search.problem import make_problem
from stowflow.search.schedule import cooling_loss, refill_memory
from stowflow.search.settings import DesignSettings
from stowflow.search.store import charge_heating, stored_fraction, stored_pressure, top_pressure
from stowflow.units import P_AMBIENT, T_REF

BAR = 1e5
# The nitrogen table against CoolProp (tests/physics/test_gas.py TABLE_RTOL).
TABLE_RTOL = 1e-5
T10 = 283.15


def _problem(process="auto", model="real", tau=5.0):
    flow = np.array([1, 1, 6, 6, 1, 1, 1, 1]) * 40e-3 / 60
    cyc = cycle_from_arrays(1.0, flow, np.full(8, 200 * BAR + P_AMBIENT))
    s = DesignSettings(process=process, gas_model=model, time_constant=tau, line_loss=0.0)
    return make_problem(cyc, s)


# --------------------------------------------------------------------------- gas level


@pytest.mark.parametrize("p_bar", [120.0, 180.0, 229.0])
def test_real_expansion_follows_coolprop_isentrope_and_isotherm(p_bar):
    # sources.SPAN_2000 via sources.COOLPROP, computed live: V/Vs = ρ(ps, Ts) / ρ(p, T2), T2 on
    # the isentrope or Ts.
    ps, ts, p = 230 * BAR, T10, p_bar * BAR
    rho_s = PropsSI("D", "P", ps, "T", ts, "Nitrogen")
    s0 = PropsSI("S", "P", ps, "T", ts, "Nitrogen")
    rho_isen = PropsSI("D", "P", p, "S", s0, "Nitrogen")
    rho_iso = PropsSI("D", "P", p, "T", ts, "Nitrogen")
    assert expansion_ratio(p, ps, ts, "adiabatic", "real") == pytest.approx(
        rho_s / rho_isen, rel=TABLE_RTOL
    )
    assert expansion_ratio(p, ps, ts, "isothermal", "real") == pytest.approx(
        rho_s / rho_iso, rel=TABLE_RTOL
    )


def test_ideal_and_polytropic_expansion_closed_forms():
    # Mathematics: p·V^n = const; an ideal gas's isothermal is n = 1 and adiabatic n = κ.
    p = np.array([100.0, 150.0, 200.0]) * BAR
    assert expansion_ratio(p, 200 * BAR, T10, "polytropic:1.7", "real") == pytest.approx(
        (200 / np.array([100, 150, 200])) ** (1 / 1.7), rel=1e-14
    )
    assert expansion_ratio(p, 200 * BAR, T10, "adiabatic", "ideal") == pytest.approx(
        (200 / np.array([100, 150, 200])) ** (1 / KAPPA), rel=1e-14
    )
    assert expansion_ratio(p, 200 * BAR, T10, "isothermal", "ideal") == pytest.approx(
        200 / np.array([100, 150, 200]), rel=1e-14
    )


@pytest.mark.parametrize("model", ["ideal", "real"])
@pytest.mark.parametrize("process", ["isothermal", "adiabatic", "polytropic:1.6"])
def test_pressure_after_expansion_inverts_expansion_ratio(process, model):
    # Mathematics: the two functions are inverse to each other.
    p = np.array([90.0, 140.0, 210.0, 250.0]) * BAR
    r = expansion_ratio(p, 210 * BAR, 303.15, process, model)
    back = pressure_after_expansion(r, 210 * BAR, 303.15, process, model)
    assert back == pytest.approx(p, rel=10 * TABLE_RTOL if model == "real" else 1e-12)


# --------------------------------------------------------------------------- the store


def test_isothermal_store_is_the_isotherm_from_the_precharge():
    # Boyle's law (ideal gas): the top pressure makes no difference to an isothermal store.
    pb = _problem("isothermal", "ideal")
    p = np.array([150.0, 180.0, 220.0]) * BAR + P_AMBIENT
    frac = stored_fraction(pb, p, 120 * BAR, T_REF, 200 * BAR)
    assert frac == pytest.approx(1 - 120 * BAR / p, rel=1e-12)


def test_discharge_from_the_top_matches_the_sizing_law():
    """Ideal gas at 20 °C, precharge p0 = 100 bar abs, top p2 = 200 bar abs, n = 1.4.

    Charged isothermally: V2/V0 = p0/p2 = 0.5.  Discharged to p1 = 160 bar abs:
    V1/V0 = 0.5 · (200/160)^(1/1.4) = 0.5 · exp(0.223144/1.4) = 0.5 · 1.172793 = 0.586397, so
    the bank gives ΔV/V0 = 0.086397, i.e. V0 = ΔV·(p2/p0) / ((p2/p1)^(1/n) − 1).
    """
    pb = _problem("polytropic:1.4", "ideal")
    p0, p1, p2 = 100 * BAR, 160 * BAR, 200 * BAR
    top = stored_fraction(pb, p2, p0, T_REF, p2)
    low = stored_fraction(pb, p1, p0, T_REF, p2)
    assert top == pytest.approx(0.5, rel=1e-12)
    given = top - low
    assert given == pytest.approx(0.5 * ((p2 / p1) ** (1 / 1.4) - 1), rel=1e-12)
    assert given == pytest.approx(0.086397, abs=5e-7)
    # the sizing law, solved for V0 with ΔV = given·V0
    assert (p2 / p0) / ((p2 / p1) ** (1 / 1.4) - 1) == pytest.approx(1 / given, rel=1e-12)


def test_discharge_from_the_top_gives_less_than_the_polytrope_from_the_precharge():
    # Mathematics: for n > 1 the path from the precharge runs above the isotherm, so it
    # credits the bank with more oil between two pressures than charging at rest does.
    pb = _problem("polytropic:1.4", "ideal")
    p0, p1, p2 = 100 * BAR, 160 * BAR, 200 * BAR
    from_top = stored_fraction(pb, p2, p0, T_REF, p2) - stored_fraction(pb, p1, p0, T_REF, p2)
    proc = gas.Process("polytropic", 1.4)
    from_p0 = gas.oil_fraction(p2, p0, T_REF, proc, "ideal") - gas.oil_fraction(
        p1, p0, T_REF, proc, "ideal"
    )
    assert from_top < from_p0


@pytest.mark.parametrize("model", ["ideal", "real"])
def test_stored_pressure_inverts_stored_fraction(model):
    # Mathematics: inverse functions on both branches (above and below the top).
    pb = _problem("polytropic:1.65", model)
    p = np.array([150.0, 190.0, 205.0, 224.0, 227.0]) * BAR
    frac = stored_fraction(pb, p, 140 * BAR, T10, 224 * BAR)
    back = stored_pressure(pb, frac, 140 * BAR, T10, 224 * BAR)
    assert back == pytest.approx(p, rel=10 * TABLE_RTOL)


def test_top_is_the_load_point_of_the_switch_at_the_low_end_of_its_repeatability():
    # Our rule (DesignSettings.switch_band, worst_setting): the load point lies the switch
    # differential below the unload point (10 % of the cut-out gauge pressure by default,
    # common practice, from memory) and acts up to the tolerance (1 %, from memory) low.
    s = DesignSettings()
    assert top_pressure(s, 226 * BAR + P_AMBIENT) == pytest.approx(
        0.99 * 0.90 * 226 * BAR + P_AMBIENT, rel=1e-12
    )
    # A stated differential in bar, no tolerance: the load point is exactly that far below.
    s = DesignSettings(
        switch_differential=0.0, switch_differential_min=15 * BAR, switch_tolerance=0
    )
    assert top_pressure(s, 226 * BAR + P_AMBIENT) == pytest.approx(211 * BAR + P_AMBIENT)
    # No differential, no tolerance: the ideal switch of a hand calculation loads at once.
    s = DesignSettings(switch_differential=0.0, switch_tolerance=0)
    assert top_pressure(s, 50 * BAR + P_AMBIENT) == pytest.approx(50 * BAR + P_AMBIENT)


# --------------------------------------------------------------------------- warm gas


def test_charge_heating_of_an_ideal_gas_is_kappa_minus_one():
    # Mathematics: g = (∂p/∂T)_v/(ρ c_v) = R/c_v = κ − 1 and α_p·T = 1 for an ideal gas.
    pb = _problem("auto", "ideal", tau=4.0)
    heat = charge_heating(pb, np.array([100.0, 250.0]) * BAR, T10)
    assert heat == pytest.approx(KAPPA - 1, rel=1e-9)


def test_charge_heating_is_zero_for_a_process_that_is_set():
    pb = _problem("adiabatic", "real")
    assert charge_heating(pb, 200 * BAR, T10) == 0.0


def _charge_cycle(refill, duration, idle, dt):
    """Deficits of a cycle: ``idle`` s at the bottom, then a refill at a constant rate."""
    n_idle, n_fill = round(idle / dt), round(duration / dt)
    fill = refill * (1 - np.arange(1, n_fill + 1) / n_fill)
    return np.concatenate((np.full(n_idle, refill), fill))


def test_refill_memory_limits():
    """Mathematics of E = ∫ r(s) exp(−(t − s)/τ) ds: a steady refill at the rate q gives τ·q,
    a refill much quicker than τ gives its volume, and E decays as exp(−t/τ) afterwards."""
    tau, dt = 5.0, 0.01
    slow = refill_memory(_charge_cycle(0.012, 25 * tau, 50.0, dt), dt, tau)
    assert slow[-1] == pytest.approx(tau * 0.012 / (25 * tau), rel=1e-9)
    cycle = _charge_cycle(0.0005, 0.01, 50.0, dt)
    quick = refill_memory(cycle, dt, tau)
    one = 0.0005 * tau / dt * (1 - math.exp(-dt / tau))  # one step's refill, exact
    periodic = 1 / (1 - math.exp(-cycle.size * dt / tau))  # the cycles before, decayed
    assert quick[-1] == pytest.approx(one * periodic, rel=1e-12)
    assert quick[-1] == pytest.approx(0.0005, rel=2e-3)
    d = np.concatenate((_charge_cycle(0.0005, 0.01, 50.0, dt), np.zeros(500)))
    later = refill_memory(d, dt, tau)
    periodic = 1 / (1 - math.exp(-d.size * dt / tau))
    assert later[-1] == pytest.approx(one * periodic * math.exp(-500 * dt / tau), rel=1e-9)


def _excess_after_charge(model, duration, refill, tau=5.0):
    """Charge a 50 L bank (150 bar at rest) by ``refill`` [m³] in ``duration`` [s] through the
    Otis & Pourmovahed energy equation; return the warm gas's excess volume over the same
    gas at rest at its end pressure [m³] and the end pressure [Pa]."""
    T_w = T10
    mass = 0.05 * gas.density(150 * BAR, T_w, model)
    V1 = 0.05
    V2 = V1 - refill
    T_end, p_gas = thermal.linear_volume_change(duration, tau, V1, V2, mass, T_w, model)
    assert T_end > T_w
    return V2 - mass / gas.density(p_gas, T_w, model), p_gas


@pytest.mark.parametrize("model", ["ideal", "real"])
@pytest.mark.parametrize(("duration", "refill", "rel"), [(125.0, 0.012, 0.05), (0.01, 5e-4, 0.03)])
def test_warm_gas_matches_the_energy_equation(model, duration, refill, rel):
    """The warm gas's excess volume after a charge at a constant rate, from the energy
    equation integrated numerically, against charge_heating × refill_memory.  The linear
    model holds the volume constant within the charge: agreement to a few per cent (a long
    charge, 25 τ, reaches the steady lag; a quick one, τ/500, is adiabatic)."""
    tau, dt = 5.0, duration / 100
    excess, p_gas = _excess_after_charge(model, duration, refill, tau)
    pb = _problem("auto", model, tau=tau)
    heat = float(charge_heating(pb, p_gas, T10))
    memory = refill_memory(_charge_cycle(refill, duration, 50 * tau, dt), dt, tau)[-1]
    assert excess == pytest.approx(heat * memory, rel=rel)


def test_rk4_steps_reproduce_the_radau_index():
    # Mathematics: the fixed-step integration converges to the adaptive one (rtol 1e-10).
    for dur in (0.5, 5.6, 40.0, 80.0):
        ref = thermal.effective_polytropic_index(
            dur, 5.0, 1 / 1.1, model="real", p_start=206 * BAR, T_start=T10
        )
        fast = thermal.effective_polytropic_index(
            dur, 5.0, 1 / 1.1, model="real", p_start=206 * BAR, T_start=T10, steps=32
        )
        assert fast == pytest.approx(ref, rel=1e-7)


def test_auto_process_takes_the_real_gas_index():
    # Real nitrogen near 200 bar is stiffer than an ideal gas (isentropic index above κ);
    # the auto process must say so and use it.
    real = _problem("auto", "real")
    ideal = _problem("auto", "ideal")
    assert real.process.n > ideal.process.n
    assert ideal.process.n <= KAPPA + 1e-12
    assert "real nitrogen" in real.process_note
    assert math.isfinite(real.process.n)


@pytest.mark.parametrize("model", ["ideal", "real"])
def test_heat_lost_at_rest_matches_the_energy_equation(model):
    """After a charge the gas cools at constant volume (the pump unloaded): its excess volume
    over the gas at rest at its own pressure falls as exp(−t/τ) (the energy equation at
    V̇ = 0), so what it has lost since the charge, as oil, is charge_heating × cooling_loss."""
    tau, dt, refill, duration, hold = 5.0, 0.05, 0.012, 125.0, 4.0
    excess_0, p_0 = _excess_after_charge(model, duration, refill, tau)
    T_w = T10
    mass = 0.05 * gas.density(150 * BAR, T_w, model)
    V2 = 0.05 - refill
    T_0 = float(gas.temperature_from_density(mass / V2, p_0, model))
    _, p_1 = thermal.linear_volume_change(hold, tau, V2, V2, mass, T_0, model, T_wall=T_w)
    excess_1 = V2 - mass / gas.density(p_1, T_w, model)
    pb = _problem("auto", model, tau=tau)
    heat = float(charge_heating(pb, p_0, T10))
    # deficits: the charge ends full, then the pump unloads and the oil stays (a store just
    # off full, no flow) for the hold
    d = np.concatenate((_charge_cycle(refill, duration, 50 * tau, dt), np.full(80, 1e-12)))
    loss = cooling_loss(d, refill_memory(d, dt, tau))
    assert loss[-1] * heat == pytest.approx(excess_0 - excess_1, rel=0.05)
    assert excess_1 == pytest.approx(excess_0 * math.exp(-hold / tau), rel=0.02)


def test_cooling_loss_counts_from_the_last_full_step():
    # Mathematics of L_t = max(0, E_s(t) − E_t), s(t) the last step with D = 0, cyclic.
    d = np.array([0, 1, 2, 1, 0, 0, 3, 2, 0.0])
    e = np.array([5, 4, 3, 3.5, 4, 4.2, 3, 2.5, 2.0])
    assert cooling_loss(d, e) == pytest.approx([0, 1, 2, 1.5, 0, 0, 1.2, 1.7, 0])
    d = np.array([1, 2, 0, 3.0])  # the first steps count from step 2 of the cycle before
    assert cooling_loss(d, np.array([1, 1, 5, 2.0])) == pytest.approx([4, 4, 0, 3])
    assert cooling_loss(np.ones(3), np.ones(3)) == pytest.approx([0, 0, 0])  # never full
