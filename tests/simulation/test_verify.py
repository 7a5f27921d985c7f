"""Time-domain verification (stowflow.simulation: verify, _integrator, _loop, controllers).

Checks, each with its source beside it:
* the thermal time-constant model's limits (sources.OTIS_POURMOVAHED_1985): the isentrope and
  isotherm of nitrogen (sources.SPAN_2000 computed with sources.COOLPROP); p·V^κ for the ideal
  gas; exponential wall relaxation (mathematics);
* the integrator against scipy's solve_ivp on the same equations;
* the first law over a steady cycle (pump work = machine + relief + heat to the wall + Δ stored);
* agreement with the stowflow's quasi-static trace on slow cycles, within the thermal-lag
  bound of the model itself;
* discharge-rate, relief, empty-bank and switching checks; the derived pressure switch on the
  demo cycles; a failure caused by heat exchange giving a usable shortfall.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from _textbook import otis_pourmovahed_rate
from _textbook import pressure as textbook_pressure
from CoolProp.CoolProp import PropsSI
from scipy.integrate import solve_ivp
from sources import COOLPROP, SPAN_2000
from stowflow.catalogue import (
    AccumulatorOption,
    MotorOption,
    PumpOption,
    parse_catalogue_text,
)
from stowflow.cycle.duty import cycle_from_arrays
from stowflow.errors import SettingsError
from stowflow.physics import gas
from stowflow.physics.thermal import charge_mass, gas_pressure
from stowflow.physics.valves import RELIEF_OVERRIDE
from stowflow.search.designer import design
from stowflow.search.settings import DesignSettings
from stowflow.search.solution import Bank, Design
from stowflow.simulation._integrator import GasCharge, Plant, State, _ScalarRhoT, start_state
from stowflow.simulation._loop import OIL_TOL, TEMPERATURE_TOL, Controller, run_cycle, run_periodic
from stowflow.simulation.controllers import HysteresisController, ScheduleController
from stowflow.simulation.verify import CONTROLLERS, schedule_fraction, simulate, verify
from stowflow.units import P_AMBIENT, T_REF

BAR = 1e5
LPM = 1e-3 / 60.0
# sources.SPAN_2000 computed with sources.COOLPROP 8.0.0: the isentrope 90 → 200 bar abs from
# 293.15 K ends at V2/V0 = 0.6195 and 370.6 K.  V2/V0 pinned to 4 decimals: ±0.00005 → about
# ±0.02 bar at n ≈ 1.8; T to 0.1 K.  The full-precision ratio is computed live with the
# installed CoolProp (8.0.0 gives 0.6195285215639427).
_S_90 = PropsSI("S", "P", 90 * BAR, "T", T_REF, "Nitrogen")
ISENTROPE_RATIO = PropsSI("D", "P", 90 * BAR, "T", T_REF, "Nitrogen") / PropsSI(
    "D", "P", 200 * BAR, "S", _S_90, "Nitrogen"
)
ISENTROPE_P_TOL_BAR = 0.02
ISENTROPE_T_TOL_K = 0.05
# Isotherm 293.15 K, 10 L at 90 bar abs, 100 → 200 bar abs: ΔV = 4.281 L (real: sources.SPAN_2000
# computed with sources.COOLPROP 8.0.0), 4.500 L (ideal: Boyle).  Pinned to 3 decimals:
# ±0.0005 L.
ISOTHERM_DV_TOL_L = 0.0005
# Mathematics (exact for the scheme): relative tolerance of closed forms.
EXACT_RTOL = 1e-9
# Integrator against solve_ivp (DOP853, rtol 1e-11) on 100 steps with flows up to 0.4 % of the
# gas volume per step: the scheme's error there is below 5 Pa; 10× headroom.
ODE_ATOL_PA = 50.0
# First law over a steady cycle: work and heat are trapezoid sums of step-end values, O(dt²);
# 0.05 % of the pump's work (the sums close to about 3e-5 on these cycles).
ENERGY_RTOL = 5e-4


# --------------------------------------------------------------------------- helpers
class _LoadedFirst(Controller):
    """Test controller: loaded for fraction·dt from each step's start, then unloaded."""

    def __init__(self, fraction):
        self.fraction = np.asarray(fraction, float)

    def plan(self, plant, k, u):
        f = self.fraction[k:]
        return f * plant.dt, np.ones(f.size), np.zeros(f.size)


def _plant(
    model="real",
    *,
    V0=0.01,
    p0=90 * BAR,
    T_wall=T_REF,
    tau=5.0,
    demand=None,
    dt=0.01,
    qp=0.0,
    relief=400 * BAR,
    n=100,
    required=None,
    stop=math.inf,
    stroke=math.nan,
):
    demand = np.zeros(n) if demand is None else np.asarray(demand, float)
    mass = float(charge_mass(p0, V0, model))
    return Plant(
        dt=dt,
        demand=demand,
        qp=qp,
        T_wall=T_wall,
        tau=tau,
        p_ambient=P_AMBIENT,
        required=np.zeros(demand.size) if required is None else required,
        relief=relief,
        charge=GasCharge(model, mass, V0),
        stop=stop,
        stroke=stroke,
        cap=V0 * 0.95,
    )


def _compress(plant, S_end, T0=T_REF):
    """One cycle of constant pumping from an empty bank to S_end; returns the record."""
    pl = Plant(**{**plant.__dict__, "qp": S_end / (plant.n * plant.dt)})
    st = start_state(pl, 0.0, T0, 1)
    rec, end = run_cycle(pl, ScheduleController(np.ones(pl.n)), st, np.full(pl.n, T0))
    return pl, rec, end


# --------------------------------------------------------------------------- thermal limits
def test_adiabatic_limit_real_gas_follows_the_isentrope():
    # sources.SPAN_2000 computed with sources.COOLPROP 8.0.0: isentropic compression 90 → 200
    # bar abs from 293.15 K ends at V2/V0 = 0.6195 and 370.6 K.
    plant = _plant("real", tau=math.inf, n=200)
    _, _, end = _compress(plant, (1 - ISENTROPE_RATIO) * plant.volume)
    source = f"{SPAN_2000} via {COOLPROP}"
    assert end.p / BAR == pytest.approx(200.0, abs=ISENTROPE_P_TOL_BAR), source
    assert end.T == pytest.approx(370.6, abs=ISENTROPE_T_TOL_K), source


def test_adiabatic_limit_ideal_gas_keeps_p_v_kappa():
    # Mathematics of the energy equation (sources.OTIS_POURMOVAHED_1985): τ → ∞, ideal gas:
    # p·V^κ = const along the whole stroke.
    plant = _plant("ideal", tau=math.inf, n=50)
    pl, rec, _ = _compress(plant, 0.5 * plant.volume)
    V = pl.volume - rec.S
    invariant = rec.p * V**gas.KAPPA
    p0 = gas_pressure(pl.charge.mass, pl.volume, T_REF, "ideal")
    assert invariant == pytest.approx(np.full(V.size, p0 * pl.volume**gas.KAPPA), rel=EXACT_RTOL)


@pytest.mark.parametrize(("model", "expected_l"), [("real", 4.281), ("ideal", 4.500)])
def test_isothermal_limit_follows_the_isotherm(model, expected_l):
    # Isothermal at 293.15 K, V0 = 10 L precharged to 90 bar abs; from 100 to 200 bar abs the
    # gas gives up 4.281 L (real: sources.SPAN_2000 computed with sources.COOLPROP 8.0.0) /
    # 4.500 L (ideal: Boyle's law, sources.CENGEL_BOLES_2015).
    plant = _plant(model, tau=1e-9, n=2000)
    _, rec, _ = _compress(plant, 0.6 * plant.volume)
    assert np.max(np.abs(rec.T - T_REF)) < 1e-6
    s100, s200 = np.interp([100 * BAR, 200 * BAR], rec.p, rec.S)
    assert (s200 - s100) * 1e3 == pytest.approx(expected_l, abs=ISOTHERM_DV_TOL_L)


def test_wall_relaxation_at_fixed_volume_is_exponential():
    # Mathematics of the energy equation (sources.OTIS_POURMOVAHED_1985): after a step
    # compression at fixed volume, T − Tw decays as e^(−t/τ).
    tau, Tw = 2.5, 300.0
    plant = _plant("real", tau=tau, T_wall=Tw, n=400, dt=0.025)
    st = start_state(plant, 0.003, Tw + 60.0, 0)
    rec, _ = run_cycle(plant, ScheduleController(np.zeros(plant.n)), st, np.full(plant.n, Tw))
    t = (np.arange(plant.n) + 1) * plant.dt
    assert rec.T - Tw == pytest.approx(60.0 * np.exp(-t / tau), rel=EXACT_RTOL)
    assert np.all(rec.S == 0.003)


@pytest.mark.parametrize("tau", [0.05, 1.0, 20.0])
def test_integrator_matches_solve_ivp(tau):
    # scipy solve_ivp (DOP853, rtol 1e-11), part by part, on the test's own right-hand side of
    # the sources.OTIS_POURMOVAHED_1985 energy equation and nitrogen straight from CoolProp
    # (tests/_textbook.py; sources.COOLPROP): no function shared with the integrator.
    rng = np.random.default_rng(3)
    n, dt, qp = 100, 0.02, 1.2e-3
    d = np.repeat(rng.uniform(0, 3e-3, 10), 10)
    f = np.repeat(rng.choice([0.0, 1.0, 0.4], 10), 10)
    plant = _plant(
        "real",
        V0=0.02,
        p0=100 * BAR + P_AMBIENT,
        T_wall=300.0,
        tau=tau,
        demand=d,
        dt=dt,
        qp=qp,
        n=n,
    )
    st = start_state(plant, 0.006, 310.0, 1)
    rec, _ = run_cycle(plant, _LoadedFirst(f), st, np.full(n, 300.0))
    m, Vg = plant.charge.mass, plant.volume
    S, T, ref = st.S, st.T, []
    for k in range(n):
        for h, u in ((f[k] * dt, 1), ((1 - f[k]) * dt, 0)):
            if h <= 0:
                continue
            r = qp * u - d[k]

            def rhs(t, y, S0=S, r=r):
                return [otis_pourmovahed_rate(y[0], Vg - (S0 + r * t), -r, 300.0, tau, m)]

            sol = solve_ivp(rhs, (0.0, h), [T], method="DOP853", rtol=1e-11, atol=1e-9)
            S, T = S + r * h, float(sol.y[0, -1])
        ref.append(textbook_pressure(m / (Vg - S), T))
    assert np.max(np.abs(rec.p - np.array(ref))) < ODE_ATOL_PA


def test_scalar_table_matches_the_gas_module():
    # Regression: the plain-Python evaluation of the nitrogen table used in scalar steps is
    # the same spline as stowflow.physics.gas.state_from_density (round-off only).
    ev = _ScalarRhoT()
    rng = np.random.default_rng(0)
    for rho, T in zip(rng.uniform(20, 400, 20), rng.uniform(220, 450, 20), strict=True):
        z, cv, ratio = ev(rho, T)
        st = gas.state_from_density(rho, T, "real")
        assert z * rho * gas.R_SPECIFIC * T == pytest.approx(st.p, rel=1e-12)
        assert cv == pytest.approx(st.cv, rel=1e-12)
        assert ratio * rho * gas.R_SPECIFIC == pytest.approx(st.dpdT_v, rel=1e-12)


# --------------------------------------------------------------------------- energy balance
def _stored_energy(charge: GasCharge, S, T, pa):
    """Internal energy of the gas plus ambient pressure × gas volume, [J]."""
    V = charge.volume - S
    u = gas.state_from_density(charge.mass / V, T, charge.model).u
    return charge.mass * u + pa * V


def _heat_to_wall(charge: GasCharge, S_start, T_start, S, T, T_wall, tau, dt):
    """Trapezoid sum of m·cv·(T − Tw)/τ over the step-end states, [J]."""
    Ss = np.concatenate(([S_start], S))
    Ts = np.concatenate(([T_start], T))
    cv = gas.state_from_density(charge.mass / (charge.volume - Ss), Ts, charge.model).cv
    q = charge.mass * cv * (Ts - T_wall) / tau
    return float(np.sum(0.5 * (q[1:] + q[:-1])) * dt)


def _toy_design(
    *,
    acc_type="bladder",
    volume=0.02,
    count=1,
    precharge=80 * BAR + P_AMBIENT,
    max_flow=None,
    relief=220 * BAR,
    p_max=200 * BAR,
    pump_lpm=30.0,
    rated_kw=15.0,
) -> Design:
    """A hand-made design (invented test data, used as input only)."""
    opt = AccumulatorOption(
        acc_type, volume, 330 * BAR + P_AMBIENT, 0.0, 1.0, "acc", max_flow=max_flow
    )
    disp = pump_lpm * LPM / (1450 / 60.0)
    pump = PumpOption(disp, 1450 / 60.0, 250 * BAR + P_AMBIENT, 1.0, 0.85, 1.0, "pump")
    motor = MotorOption(rated_kw * 1e3, 0.9, 1.0, "motor")
    return Design(
        "feasible",
        None,
        Bank(opt, count, precharge),
        pump,
        motor,
        100 * BAR + P_AMBIENT,
        p_max + P_AMBIENT,
        relief + P_AMBIENT,
        "isothermal",
        pd.DataFrame(),
        math.nan,
        math.nan,
        math.nan,
        {},
        math.nan,
    )


def _press_cycle(dt=0.05):
    # Invented test input: 2 s at 80 L/min, 1 s at 100 L/min, 7 s idle (10 s cycle; mean
    # 26 L/min, below the toy design's 30 L/min pump).
    flow = np.concatenate([np.full(40, 80.0), np.full(20, 100.0), np.zeros(140)]) * LPM
    return cycle_from_arrays(dt, flow, np.full(flow.size, 100 * BAR + P_AMBIENT))


def test_energy_balance_closes_over_a_steady_cycle():
    # First law for the gas (m du = p dS − δQ) with the oil balance dS = (Q_p u − d − q_r) dt:
    # over a cycle, pump work = work to the machine + relief loss + heat to the wall
    # + Δ(m u + p_amb V) (zero in a periodic state).
    s = DesignSettings(time_constant=1.0)
    d = _toy_design()
    c = _press_cycle()
    sp = {"load_below": 150 * BAR + P_AMBIENT, "unload_above": 190 * BAR + P_AMBIENT}
    v = verify(d, c, s, controllers=("pressure-switch",), setpoints=sp)
    run = v.run("pressure-switch", "cold")
    assert run.periodic and run.period_cycles == 1  # the trace is the whole orbit
    plant_charge = GasCharge(s.gas_model, float(charge_mass(d.bank.precharge, 0.02)), 0.02)
    tr = run.trace
    S, T = tr["accumulator_oil [m³]"].to_numpy(), tr["gas_temperature [K]"].to_numpy()
    S0, T0 = run.start
    heat = _heat_to_wall(plant_charge, S0, T0, S, T, run.temperature, 1.0, c.dt)
    stored = _stored_energy(plant_charge, S[-1], T[-1], P_AMBIENT) - _stored_energy(
        plant_charge, S0, T0, P_AMBIENT
    )
    w = run.work
    assert heat > 20 * ENERGY_RTOL * w["pump [J]"]  # the heat term matters: the test can fail
    assert w["pump [J]"] == pytest.approx(
        w["consumer [J]"] + w["relief [J]"] + heat + stored, rel=ENERGY_RTOL
    )


def test_energy_balance_with_the_relief_valve_open():
    # Same first law through the scalar path: a pump loaded against a full bank, no demand;
    # in the steady state the whole pump flow passes the relief valve.
    plant = _plant(
        "real",
        V0=0.01,
        p0=100 * BAR,
        T_wall=300.0,
        tau=1.0,
        qp=0.5e-3,
        relief=200 * BAR + P_AMBIENT,
        n=200,
        dt=0.01,
    )
    ctrl = ScheduleController(np.ones(plant.n))
    st = start_state(plant, 0.45 * plant.volume, 300.0, 1)
    orbit = run_periodic(plant, ctrl, st)
    assert orbit.periodic
    rec = orbit.records[-1]
    # Steady state: all pump flow over the relief, to the steady-state criterion on the oil.
    assert np.sum(rec.v_relief) == pytest.approx(
        plant.qp * plant.duration, abs=2 * OIL_TOL * plant.volume
    )
    heat = _heat_to_wall(plant.charge, rec.start.S, rec.start.T, rec.S, rec.T, 300.0, 1.0, plant.dt)
    stored = _stored_energy(plant.charge, rec.S[-1], rec.T[-1], P_AMBIENT) - _stored_energy(
        plant.charge, rec.start.S, rec.start.T, P_AMBIENT
    )
    assert rec.w_pump.sum() == pytest.approx(rec.w_relief.sum() + heat + stored, rel=ENERGY_RTOL)
    # Linear relief characteristic: full pump flow at 10 % above cracking (gauge).
    p_expected = plant.relief + 0.10 * (plant.relief - P_AMBIENT)
    assert rec.p[-1] == pytest.approx(p_expected, rel=1e-6)


# --------------------------------------------------------------------------- steady state
def test_steady_state_criterion_is_met_and_reported():
    # The reported steady state is one: one more period from its end state returns to the
    # same state within the criterion (OIL_TOL of the gas volume, TEMPERATURE_TOL).
    from stowflow.simulation._setup import plant_for

    s = DesignSettings(time_constant=5.0)
    d = _toy_design()
    c = _press_cycle()
    ctrl = HysteresisController(
        "pressure-switch", "pressure", 150 * BAR + P_AMBIENT, 190 * BAR + P_AMBIENT
    )
    plant = plant_for(d, c, s, s.t_max)
    orbit = run_periodic(plant, ctrl, start_state(plant, 0.004, s.t_max, 1))
    assert orbit.periodic and orbit.cycles >= 2
    st, guess = orbit.end, orbit.records[-1].T
    for _ in range(orbit.period):
        rec, st = run_cycle(plant, ctrl, st, guess)
        guess = rec.T
    assert st.u == orbit.end.u
    assert abs(st.S - orbit.end.S) <= OIL_TOL * plant.volume
    assert abs(st.T - orbit.end.T) <= TEMPERATURE_TOL
    run = simulate(
        d,
        c,
        s,
        "pressure-switch",
        s.t_max,
        setpoints={"load_below": ctrl.on, "unload_above": ctrl.off},
    )
    assert run.periodic and run.cycles_to_steady >= 2
    assert run.integration_error < 0.01 * BAR
    v = verify(d, c, s, controllers=("pressure-switch",), setpoints=run.setpoints)
    assert any(n.startswith("steady state") for n in v.notes)


def test_ideal_gas_runs_and_is_stiffer_when_cold():
    # Ideal gas (settings.gas_model = "ideal"): the whole verification runs; at the same
    # switch settings the coldest run needs more oil for the same pressure (precharge
    # scales with absolute temperature), so it stores more at the unload point.
    s = DesignSettings(gas_model="ideal")
    d = _toy_design()
    c = _press_cycle()
    sp = {"load_below": 150 * BAR + P_AMBIENT, "unload_above": 190 * BAR + P_AMBIENT}
    v = verify(d, c, s, controllers=("pressure-switch",), setpoints=sp)
    assert v.gas_model == "ideal"
    cold, hot = v.run("pressure-switch", "cold"), v.run("pressure-switch", "hot")
    assert cold.trace["accumulator_oil [m³]"].max() > hot.trace["accumulator_oil [m³]"].max()


# --------------------------------------------------------------------------- stowflow agreement
_AGREE_CATALOGUE = (
    """
# Invented test data (input only).
[[accumulator]]
type = "bladder"
nominal_volume_l = 10
max_pressure_bar = 330
price = 1000
max_flow_lps = 20
[[accumulator]]
type = "bladder"
nominal_volume_l = 25
max_pressure_bar = 330
price = 2000
max_flow_lps = 40
[[accumulator]]
type = "bladder"
nominal_volume_l = 50
max_pressure_bar = 330
price = 3000
max_flow_lps = 60
"""
    + "".join(
        f"""
[[pump]]
displacement_cm3 = {cc}
speed_rpm = 1450
max_pressure_bar = 250
volumetric_efficiency = 0.9
overall_efficiency = 0.8
price = {100 + cc}
"""
        for cc in (4, 8, 16, 32)
    )
    + "".join(
        f"""
[[motor]]
rated_kw = {kw}
efficiency = 0.9
price = {100 * kw}
"""
        for kw in (1.5, 3, 5.5, 11, 22)
    )
)


def test_simulation_agrees_with_the_optimiser_on_slow_cycles():
    # Slow cycles (phases of 10-30 s, τ = 0.2 s) designed with the isothermal process: the
    # simulated pressure of the schedule controller must follow the stowflow's quasi-static
    # trace at both temperatures.  Bound from the model itself: with |dT/dt + (T − Tw)/τ| ≤
    # Γ·T·|V̇|/V, the gas stays within τ·Γ·T·max|V̇/V| of the wall, so
    # |Δp| ≤ (T/p)(∂p/∂T)_v · p · τ·Γ·max|V̇/V|, with (T/p)(∂p/∂T)_v ≤ 1.45 and Γ ≤ 0.6 for
    # nitrogen here (both read from stowflow.physics.gas below).
    # No switching limits: the schedule then never keeps the pump loaded against a full store
    # (the unloading valve opens part-way through a step instead), so the stored oil of the
    # simulation and of the schedule are the same numbers.  With a full store and a loaded
    # pump the simulator's relief valve opens at its own setting instead
    # (test_relief_valve_takes_what_a_loaded_pump_cannot_store).
    cat = parse_catalogue_text(_AGREE_CATALOGUE)
    s = DesignSettings(
        process="isothermal",
        time_constant=0.2,
        allow_pump_only=False,
        min_loaded_dwell=0.0,
        min_unloaded_dwell=0.0,
        max_load_events_per_hour=None,
    )
    checked = 0
    for seed in range(40):
        if checked >= 20:
            break
        rng = np.random.default_rng(seed)
        nph = int(rng.integers(3, 6))
        steps = rng.integers(5, 16, nph)
        flow = np.repeat(rng.uniform(0, 40, nph), steps) * LPM
        flow[int(rng.integers(0, flow.size))] = 0.0
        req = np.repeat(rng.uniform(40, 120, nph), steps) * BAR + P_AMBIENT
        c = cycle_from_arrays(2.0, flow, req, name=f"slow{seed}")
        d = design(c, cat, s)
        if not d.feasible or d.bank is None:
            continue
        assert d.schedule["spill [m³/s]"].max() == 0.0
        checked += 1
        oil = d.schedule["accumulator_oil [m³]"].to_numpy()
        V = d.bank.gas_volume - oil
        q_in = d.schedule["pump_flow [m³/s]"].to_numpy()
        rate = np.max(np.maximum(np.abs(q_in - flow), flow)) / V.min()
        # A plan made against both temperature ends holds at both; one made at the coldest
        # (the bank's windows overlap too little) may pass the relief setting at the hottest,
        # where the timed schedule's cut-out takes over: compared at the coldest only.
        ends = (("cold", s.t_min), ("hot", s.t_max)) if d.robust_schedule else (("cold", s.t_min),)
        for which, T in ends:
            qs = d.schedule[f"pressure_{which} [Pa]"].to_numpy()
            rho = gas.density(qs, T)
            st = gas.state_from_density(rho, T)
            grun = float(np.max(st.dpdT_v / (rho * st.cv)))
            sens = float(np.max(T * st.dpdT_v / st.p))
            assert grun <= 0.6 and sens <= 1.45
            bound = sens * qs.max() * s.time_constant * grun * rate
            # The plan is for the worn pump: run it with the flow it was planned for, and with
            # its cut-out out of the way (at the relief setting) so that only the plan acts.
            run = simulate(
                d,
                c,
                s,
                "schedule",
                T,
                estimate_error=False,
                worn=True,
                setpoints={"cut_out": d.relief},
            )
            sim = run.trace["pressure [Pa]"].to_numpy()
            assert run.trace["accumulator_oil [m³]"].to_numpy() == pytest.approx(oil, abs=1e-12)
            assert np.max(np.abs(sim - qs)) <= bound, (seed, which)
    assert checked >= 20


def test_relief_valve_takes_what_a_loaded_pump_cannot_store():
    # A 4 s cycle repeats 900 times an hour; with at most 360 load events an hour the pump may
    # never unload, so the schedule keeps it loaded and spills over the relief valve from the
    # full store.  In the simulation the relief valve opens at its own setting.  Checks from
    # the conservation of oil (no outside source needed): over a periodic cycle the relief
    # valve passes exactly what the pump delivers beyond the demand, and the pressure never
    # passes the relief setting by more than its linear characteristic allows.
    cat = parse_catalogue_text(_AGREE_CATALOGUE)
    s = DesignSettings(process="isothermal", allow_pump_only=False, max_load_events_per_hour=360.0)
    flow = np.concatenate([np.full(10, 30.0), np.zeros(30)]) * LPM  # 1 s at 30 L/min, 3 s idle
    c = cycle_from_arrays(0.1, flow, np.full(flow.size, 80 * BAR + P_AMBIENT), name="pulse")
    d = design(c, cat, s)
    assert d.feasible and d.bank is not None
    sch = d.schedule
    assert np.all(sch["pump_loaded [-]"] == 1)
    excess = float(np.sum(sch["pump_flow [m³/s]"] - flow) * c.dt)
    assert float(sch["spill [m³/s]"].sum() * c.dt) == pytest.approx(excess, rel=1e-6)
    run = simulate(d, c, s, "schedule", s.t_min, estimate_error=False)
    relief_volume = float(run.trace["relief_flow [m³/s]"].sum() * c.dt)
    # The plan is for the worn pump; the run has the catalogue pump's flow.
    delivered = float(np.sum(run.trace["pump_flow [m³/s]"] - flow) * c.dt)
    assert delivered == pytest.approx(
        excess / (1 - s.flow_margin)
        + float(np.sum(flow)) * c.dt * s.flow_margin / (1 - s.flow_margin),
        rel=1e-6,
    )
    assert relief_volume == pytest.approx(delivered, rel=1e-3)
    assert run.load_events_per_hour == 0.0
    # the linear characteristic passes the full pump flow at RELIEF_OVERRIDE above cracking
    top = d.relief + RELIEF_OVERRIDE * (d.relief - P_AMBIENT)
    assert d.relief < run.trace["pressure [Pa]"].max() <= top * (1 + 1e-9)


# --------------------------------------------------------------------------- failures
def test_discharge_rate_violation_is_caught_and_named():
    # A single 1 L diaphragm unit (default limit 6 L/s, sources.COMMON_PRACTICE) asked for 20 L/s.
    d = _toy_design(
        acc_type="diaphragm", volume=0.001, precharge=80 * BAR + P_AMBIENT, pump_lpm=30.0
    )
    flow = np.concatenate([np.full(2, 20.0e-3), np.zeros(398)])  # 20 L/s for 20 ms
    c = cycle_from_arrays(0.01, flow, np.full(flow.size, 90 * BAR + P_AMBIENT))
    sp = {"load_below": 150 * BAR + P_AMBIENT, "unload_above": 190 * BAR + P_AMBIENT}
    v = verify(d, c, DesignSettings(), controllers=("pressure-switch",), setpoints=sp)
    assert not v.passed
    msgs = [f for r in v.runs for f in r.failures if f.startswith("bank discharge")]
    assert msgs
    assert "1 × diaphragm, 6 L/s per unit" in msgs[0]
    assert "exceeds its limit 360.0 L/min" in msgs[0]


def test_empty_bank_is_a_named_failure_with_a_shortfall():
    d = _toy_design(volume=0.002, precharge=80 * BAR + P_AMBIENT, pump_lpm=10.0)
    c = _press_cycle()  # draws 2.7 L in 3 s from a 2 L bank
    sp = {"load_below": 150 * BAR + P_AMBIENT, "unload_above": 190 * BAR + P_AMBIENT}
    v = verify(d, c, DesignSettings(), controllers=("pressure-switch",), setpoints=sp)
    assert not v.passed
    assert any(f.startswith("bank runs empty") for r in v.runs for f in r.failures)
    assert v.shortfall is not None and v.shortfall.max() > 0


def test_heat_exchange_failure_gives_a_shortfall_whose_redesign_passes():
    # Designed isothermal, run fast (τ = 30 s): the discharge cools the gas, the pressure
    # falls below the isothermal estimate.  The shortfall names those steps; raising their
    # requirement by it plus 0.5 bar (as the pipeline does) gives a design that passes.
    cat = parse_catalogue_text(_AGREE_CATALOGUE)
    # An ideal pressure switch (no differential, no tolerance): the heat exchange alone.
    s = DesignSettings(
        process="isothermal",
        time_constant=30.0,
        allow_pump_only=False,
        t_min=T_REF,
        t_max=T_REF,
        switch_differential=0.0,
        switch_tolerance=0.0,
    )
    flow = np.concatenate([np.full(10, 120.0), np.zeros(90)]) * LPM  # 1 s shot, 9 s rest
    req = np.full(flow.size, 100 * BAR + P_AMBIENT)
    c = cycle_from_arrays(0.1, flow, req)
    d = design(c, cat, s)
    v = verify(d, c, s)
    assert not v.passed and v.shortfall is not None
    short = v.shortfall > 0
    assert short.any() and not short.all()
    run = v.run(v.controller, "cold")
    assert run.gas_temperature_min < T_REF - 1.0  # expansion cooling is the cause
    d2 = design(c, cat, s, extra_pressure=np.where(short, v.shortfall + 0.5 * BAR, 0.0))
    v2 = verify(d2, c, s)
    assert v2.passed, v2.reason
    assert v2.min_margin >= 0 and v2.min_margin > v.min_margin


def test_schedule_that_does_not_balance_is_refused():
    cat = parse_catalogue_text(_AGREE_CATALOGUE)
    s = DesignSettings(allow_pump_only=False)
    c = _press_cycle(dt=0.1)
    d = design(c, cat, s)
    f = schedule_fraction(d, c)
    assert f is not None and np.all((f >= 0) & (f <= 1))
    bad = d.schedule.copy()
    bad["accumulator_oil [m³]"] = bad["accumulator_oil [m³]"] * 1.01
    from dataclasses import replace

    with pytest.raises(SettingsError, match="does not fit cycle"):
        schedule_fraction(replace(d, schedule=bad), c)


def test_unknown_controller_and_infeasible_design_are_refused():
    d = _toy_design()
    c = _press_cycle()
    with pytest.raises(SettingsError, match="unknown"):
        verify(d, c, controllers=("bang-bang",))
    from dataclasses import replace

    with pytest.raises(SettingsError, match="only a feasible design"):
        verify(replace(d, status="infeasible", reason="test"), c)


def test_pump_only_design_holds_the_relief_setting():
    d = _toy_design(pump_lpm=200.0, rated_kw=90.0)
    from dataclasses import replace

    d = replace(d, bank=None)
    c = _press_cycle()
    v = verify(d, c)
    assert v.passed and v.controller == "schedule"
    run = v.runs[0]
    assert run.peak_pressure == pytest.approx(d.relief)
    # Shaft power at the relief setting over the overall and motor efficiencies, all cycle.
    e = d.pump.flow * (d.relief - P_AMBIENT) / 0.85 / 0.9 * c.duration
    assert run.energy_per_cycle == pytest.approx(e, rel=1e-12)
    slow = replace(d, pump=replace(d.pump, displacement=d.pump.displacement / 4))
    v = verify(slow, c)
    assert not v.passed and "below the demand" in v.reason


# --------------------------------------------------------------------------- switches
def test_hysteresis_switches_at_its_thresholds():
    s = DesignSettings(switch_tolerance=0.0)
    d = _toy_design()
    c = _press_cycle()
    on, off = 150 * BAR + P_AMBIENT, 190 * BAR + P_AMBIENT
    run = simulate(
        d, c, s, "pressure-switch", s.t_min, setpoints={"load_below": on, "unload_above": off}
    )
    tr = run.trace
    assert tr["pressure_max [Pa]"].max() == pytest.approx(off, abs=0.05 * BAR)
    loaded = tr["pump_loaded [-]"].to_numpy()
    assert loaded.min() < 1 and loaded.max() > 0
    # Unloaded steps (fully) never start below the load point.
    p_start = np.concatenate(([tr["pressure [Pa]"].iloc[-1]], tr["pressure [Pa]"].iloc[:-1]))
    assert np.all(p_start[loaded == 0] > on - 0.05 * BAR)


def test_pressure_switch_acts_at_the_low_end_of_its_repeatability():
    # ±1 % repeatability (from memory): the verification runs the switch with both settings
    # 1 % of their gauge value low, the store's worst case, and reports the stated settings.
    s = DesignSettings(switch_tolerance=0.01)
    d, c = _toy_design(), _press_cycle()
    on, off = 150 * BAR + P_AMBIENT, 190 * BAR + P_AMBIENT
    run = simulate(
        d, c, s, "pressure-switch", s.t_min, setpoints={"load_below": on, "unload_above": off}
    )
    assert run.trace["pressure_max [Pa]"].max() == pytest.approx(
        P_AMBIENT + 0.99 * 190 * BAR, abs=0.05 * BAR
    )
    assert run.setpoints == {"load_below": on, "unload_above": off}


def test_a_switch_narrower_than_the_differential_fails_with_the_reason():
    d, c = _toy_design(), _press_cycle()
    sp = {"load_below": 185 * BAR + P_AMBIENT, "unload_above": 190 * BAR + P_AMBIENT}
    v = verify(d, c, DesignSettings(), controllers=("pressure-switch",), setpoints=sp)
    assert not v.passed
    assert any(
        "narrower than the least 19 bar a switch holds" in f for r in v.runs for f in r.failures
    )


def test_worn_pump_runs_beside_the_catalogue_runs():
    # Flow margin 10 %: every controller runs at catalogue flow and at 90 % of it, at both
    # temperature ends; the worn pump's delivery is 0.9 × the catalogue's.
    d, c = _toy_design(), _press_cycle()
    s = DesignSettings()
    v = verify(d, c, s, controllers=("pressure-switch",))
    conds = sorted((r.temperature, r.worn) for r in v.runs)
    assert conds == sorted((t, w) for t in (s.t_min, s.t_max) for w in (False, True))
    flows = {r.worn: r.trace["pump_flow [m³/s]"].max() for r in v.runs}
    assert flows[True] == pytest.approx(0.9 * d.pump.flow, rel=1e-9)
    assert flows[False] == pytest.approx(d.pump.flow, rel=1e-9)
    # Without a flow margin there is nothing to wear: catalogue flow only.
    v0 = verify(d, c, s.with_(flow_margin=0.0), controllers=("pressure-switch",))
    assert not any(r.worn for r in v0.runs)


def test_position_switch_needs_a_piston():
    d = _toy_design()
    c = _press_cycle()
    with pytest.raises(SettingsError, match="piston"):
        simulate(
            d,
            c,
            controller="position-switch",
            setpoints={"load_below_stroke": 0.2, "unload_above_stroke": 0.5},
        )
    v = verify(d, c, controllers=CONTROLLERS)
    assert "position-switch" not in {r.controller for r in v.runs}


def test_position_switch_on_a_piston_bank():
    d = _toy_design(acc_type="piston", volume=0.02)
    from dataclasses import replace

    opt = replace(d.bank.option, bore=0.1)
    d = replace(d, bank=replace(d.bank, option=opt))
    c = _press_cycle()
    v = verify(d, c, controllers=("position-switch",))
    sp = v.setpoints
    assert 0 < sp["load_below_stroke"] < sp["unload_above_stroke"] <= 1
    run = v.run("position-switch", "hot")
    oil = run.trace["accumulator_oil [m³]"].to_numpy() / 0.02
    assert oil.max() <= sp["unload_above_stroke"] + 1e-3


#: Whether the first design of each demo cycle passes the verification as it stands (before the
#: pipeline raises anything): a regression record of how well the search's store model
#: foresees the pressure switch.  With a 10 % switch differential the die-casting shot and the
#: injection moulder fall 1-2 bar short at the cold end at first, and one raise cures that;
#: the test rig (900 cycles an hour) passes at once with the pump kept loaded.
DEMO_FIRST_PASS = {
    "die_casting_shot": True,
    "forming_press": True,
    "injection_moulding": True,
    "test_rig_pulse": True,
}


@pytest.mark.slow
@pytest.mark.parametrize("name", sorted(DEMO_FIRST_PASS))
def test_pressure_switch_rule_on_the_demo_cycles(repo_root, name):
    # The derived pressure switch on the stowflow's design of each demo cycle:
    # * unload at the design's maximum working pressure (capped by the motor's rating);
    # * a differential of at least 10 % of the cut-out gauge pressure (the default
    #   --switch-differential, common practice, from memory);
    # * the pipeline's closed loop ends with a design whose recommended controller passes at
    #   both temperature ends, at catalogue and at worn pump flow.
    from stowflow.catalogue import default_catalogue_path, load_catalogue
    from stowflow.cycle.duty import load_cycle
    from stowflow.pipeline import Study, run

    path = repo_root / "duty_cycles" / f"{name}.csv"
    c = load_cycle(path)
    s = DesignSettings()
    d = design(c, load_catalogue(default_catalogue_path()), s)
    assert d.feasible and d.bank is not None
    v = verify(d, c, s)
    on, off = v.setpoints["load_below"], v.setpoints["unload_above"]
    motor = P_AMBIENT + d.motor.rated_power * d.pump.overall_efficiency / d.pump.flow
    assert off == pytest.approx(min(d.p_max, motor), rel=1e-12)
    assert off - on >= 0.10 * (off - P_AMBIENT) * (1 - 1e-9)
    assert on < off < d.relief
    assert v.passed == DEMO_FIRST_PASS[name], v.reason
    res = run(Study(cycle=path))
    final = res.verification
    assert final.passed
    mine = [r for r in final.runs if r.controller == final.controller]
    assert {(r.temperature, r.worn) for r in mine} == {
        (t, w) for t in (s.t_min, s.t_max) for w in (False, True)
    }
    assert all(r.passed and r.min_margin >= 0 for r in mine)
    # The timed schedule to export passes in the same four conditions (issue: a schedule that
    # holds at both temperature ends with a new and a worn pump).
    timed = [r for r in final.runs if r.controller == "schedule"]
    assert {(r.temperature, r.worn) for r in timed} == {(r.temperature, r.worn) for r in mine}
    assert all((r.passed and r.relief_volume == 0.0) or name == "test_rig_pulse" for r in timed)
    assert all(r.passed for r in timed) and res.design.schedule_timed
    # (its run time is measured by tests/benchmarks/bench_simulate.py, not asserted here)


def test_state_is_a_plain_record():
    # The public State of the integrator carries its pressure consistently with the EOS.
    plant = _plant("real")
    st = start_state(plant, 0.002, 300.0, 1)
    assert isinstance(st, State)
    assert st.p == pytest.approx(
        gas_pressure(plant.charge.mass, plant.volume - 0.002, 300.0), rel=1e-12
    )
    with pytest.raises(ValueError, match="band is empty"):
        HysteresisController("pressure-switch", "pressure", 2e7, 1e7)
