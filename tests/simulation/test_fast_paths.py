"""The verification's fast paths give what the plain paths give.

Internal checks (no outside source; demo data is never an expected value here):

* :func:`~stowflow.simulation._integrator.scalar_gas` (the spline unrolled for the scalar
  steps) returns the floats of :meth:`GasCharge.state1`, bit for bit;
* :func:`~stowflow.simulation._loop.scalar_step` returns the floats of a plain, step-by-step
  version of its Heun scheme (below) with the relief valve open, an empty bank and in between;
* passes cut at :data:`~stowflow.simulation._loop.PASS_STEPS` (long cycles) give the runs of
  whole-remainder passes within the Picard iteration's tolerance;
* the work budget grows with the cycle length.
"""

from __future__ import annotations

import functools
import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from stowflow.catalogue import default_catalogue_path, load_catalogue
from stowflow.cycle.duty import cycle_from_arrays, load_cycle
from stowflow.physics.nitrogen import KAPPA
from stowflow.search.designer import design
from stowflow.search.settings import DesignSettings
from stowflow.simulation import _loop
from stowflow.simulation._integrator import GasCharge, State, scalar_gas, start_state
from stowflow.simulation._setup import plant_for
from stowflow.simulation.verify import simulate

REPO = Path(__file__).resolve().parents[2]


@functools.cache
def _demo():
    cycle = load_cycle(REPO / "duty_cycles" / "forming_press.csv")
    s = DesignSettings()
    return design(cycle, load_catalogue(default_catalogue_path()), s), cycle, s


@pytest.mark.parametrize("model", ["real", "ideal"])
def test_the_unrolled_gas_state_is_the_charge_state_bit_for_bit(model):
    charge = GasCharge(model, 1.3, 0.02)
    pg = scalar_gas(model, 1.3, 0.02)
    rng = np.random.default_rng(18)
    # inside the table and beyond it (the fallback path)
    for V, T in zip(rng.uniform(0.002, 0.02, 40), rng.uniform(200.0, 480.0, 40), strict=True):
        p, _, g = charge.state1(float(V), float(T))
        assert pg(float(V), float(T)) == (p, g)


def _reference_step(plant, st, k, parts):
    """scalar_step as first written: explicit Heun substeps, the charge's own state1."""
    ch = plant.charge
    Vg, pa, pc, K = ch.volume, plant.p_ambient, plant.relief, plant.relief_gain
    d = float(plant.demand[k])
    S, T, p, G = st.S, st.T, st.p, st.G
    out = dict(p_lo=p, p_hi=p, w_pump=0.0, w_cons=0.0, w_relief=0.0, v_relief=0.0, v_unmet=0.0)
    hi = min(plant.stop, Vg * (1.0 - 1e-6))

    def advance(S, T, G, r, hs):
        S_try = S + r * hs
        unmet = excess = 0.0
        if S_try < 0.0:
            unmet, S_new = -S_try, 0.0
        elif S_try > hi:
            excess, S_new = S_try - hi, hi
        else:
            S_new = S_try
        r_eff = (S_new - S) / hs
        Va, Vb = Vg - S, Vg - S_new
        ratio = (Va / Vb) ** G
        x = hs / plant.tau
        e, one_minus = math.exp(-x), -math.expm1(-x)
        f = one_minus - x * e
        a, b = e * ratio, plant.T_wall * (one_minus + G * r_eff * plant.tau * f / Vb)
        T_new = a * T + b
        p_new, _, G_new = ch.state1(Vg - S_new, T_new)
        return S_new, T_new, p_new, G_new, unmet, excess

    for h, u in parts:
        if h <= 0:
            continue
        q_in = plant.qp * u
        V = Vg - S
        stiff = K * KAPPA * max(p, pc) / max(V, 1e-12)
        n = max(4, math.ceil(h * stiff / 0.2), math.ceil(abs(q_in - d) * h / V / 0.002))
        hs = h / n
        for _ in range(n):
            qr0 = K * max(0.0, p - pc)
            pred = advance(S, T, G, q_in - d - qr0, hs)
            qr = 0.5 * (qr0 + K * max(0.0, pred[2] - pc))
            S1, T1, p1, G1, unmet, excess = advance(S, T, 0.5 * (G + pred[3]), q_in - d - qr, hs)
            line = p1 if excess <= 0.0 else max(p1, pc + excess / hs / K)
            pbar = 0.5 * (p + line) - pa
            out["w_pump"] += q_in * hs * pbar
            out["w_cons"] += (d * hs - unmet) * pbar
            out["w_relief"] += (qr * hs) * pbar + excess * (line - pa)
            out["v_relief"] += qr * hs + excess
            out["v_unmet"] += unmet
            out["p_lo"], out["p_hi"] = min(out["p_lo"], line), max(out["p_hi"], line)
            S, T, p, G = S1, T1, p1, G1
    return (S, T, p, G), out


@pytest.mark.parametrize("where", ["empty", "relief", "middle"])
@pytest.mark.parametrize("parts", [((1.0, 1.0), (0.0, 0.0)), ((0.3, 1.0), (0.7, 0.0))])
def test_a_scalar_step_gives_the_plain_heun_floats(where, parts):
    d, cycle, s = _demo()
    plant = plant_for(d, cycle, s, s.t_max)
    # the largest draw (an empty bank stays empty), or none (the relief valve stays open)
    k = int(np.argmin(plant.demand) if where == "relief" else np.argmax(plant.demand))
    S = {"empty": 0.0, "relief": 0.9 * plant.cap, "middle": 0.4 * plant.cap}[where]
    st = start_state(plant, S, 330.0, 1)
    while where == "relief" and st.p < 1.01 * plant.relief:  # warm the gas until it is open
        st = start_state(plant, S, 1.05 * st.T, 1)
    parts = tuple((f * plant.dt, u) for f, u in parts)
    got, info = _loop.scalar_step(plant, st, k, parts)
    (S1, T1, p1, G1), ref = _reference_step(plant, st, k, parts)
    assert (got.S, got.T, got.p, got.G) == (S1, T1, p1, G1)
    for key, value in ref.items():
        assert info[key] == value, key
    if where == "empty":
        assert info["v_unmet"] > 0 and got.S == 0.0
    if where == "relief":
        assert info["v_relief"] > 0


def test_passes_cut_short_give_the_runs_of_whole_passes(monkeypatch):
    d, cycle, s = _demo()
    whole = simulate(d, cycle, s, "schedule", s.t_min, estimate_error=False)
    monkeypatch.setattr(_loop, "PASS_STEPS", 37)
    cut = simulate(d, cycle, s, "schedule", s.t_min, estimate_error=False)
    # The Picard iteration stops within PICARD_TOL (0.02 K) over whichever steps a pass
    # holds; that moves the pressure by far less than 0.01 bar.
    assert cut.passed == whole.passed
    assert cut.min_margin == pytest.approx(whole.min_margin, abs=1e3)
    dp = cut.trace["pressure [Pa]"].to_numpy() - whole.trace["pressure [Pa]"].to_numpy()
    assert np.max(np.abs(dp)) < 1e3


def test_the_budget_grows_with_the_cycle_length():
    d, cycle, s = _demo()
    plant = plant_for(d, cycle, s, s.t_min)
    assert _loop.Budget(plant).limit == _loop.SUBSTEP_BUDGET  # 640 steps
    n = 9 * _loop.BUDGET_STEPS
    long = cycle_from_arrays(cycle.dt, np.resize(cycle.flow, n), np.resize(cycle.pressure, n))
    assert _loop.Budget(plant_for(d, long, s, s.t_min)).limit == 9 * _loop.SUBSTEP_BUDGET
    assert _loop.Budget(plant, limit=5).limit == 5


def test_state_is_unchanged_by_the_shortcut_for_a_bank_that_refills():
    # An empty bank whose pump delivers more than the draw leaves zero at once: the plain
    # corrector runs (the shortcut is for a bank that stays empty only).
    d, cycle, s = _demo()
    plant = plant_for(d, cycle, s, s.t_min)
    plant = replace(plant, demand=np.zeros_like(plant.demand))
    st = start_state(plant, 0.0, s.t_min, 1)
    got, _ = _loop.scalar_step(plant, st, 0, ((plant.dt, 1.0), (0.0, 0.0)))
    (S1, T1, p1, G1), _ = _reference_step(plant, st, 0, ((plant.dt, 1.0), (0.0, 0.0)))
    assert got.S > 0 and (got.S, got.T, got.p, got.G) == (S1, T1, p1, G1)
    assert isinstance(got, State)
