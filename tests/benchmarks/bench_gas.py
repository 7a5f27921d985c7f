"""Accuracy and speed of the tabulated nitrogen properties against direct CoolProp calls.

Run: ``python tests/benchmarks/bench_gas.py`` (not part of the default test run).  Prints the
largest relative error of pressure and density over the target range (1–400 bar abs,
−20…80 °C) and the wider table range (0.5–500 bar, −40…150 °C), and the median time of the
pressure ↔ gas-volume map for one charge over 1,000 pressures.
"""

from __future__ import annotations

import time

import numpy as np
from stowflow.physics.gas import (
    density,
    gas_volume_ratio,
    pressure_at_oil_fraction,
    pressure_from_density,
)

BAR = 1e5
RANGES = {
    "target 1-400 bar, -20..80 C": (1.0, 400.0, 253.15, 353.15),
    "wide 0.5-500 bar, -40..150 C": (0.5, 500.0, 233.15, 423.15),
}


def _median_ms(fn, repeats: int = 21) -> float:
    fn()  # warm up (table load)
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return 1e3 * float(np.median(times))


def accuracy(n: int = 4000, seed: int = 1) -> None:
    rng = np.random.default_rng(seed)
    for label, (p_lo, p_hi, t_lo, t_hi) in RANGES.items():
        p = np.exp(rng.uniform(np.log(p_lo * BAR), np.log(p_hi * BAR), n))
        T = rng.uniform(t_lo, t_hi, n)
        rho_ref = density(p, T, method="direct")
        e_rho = np.max(np.abs(density(p, T) / rho_ref - 1))
        e_p = np.max(np.abs(pressure_from_density(rho_ref, T) / p - 1))
        # Map: precharge p0 at 20 °C, compress isothermally / isentropically to p > p0(T).
        p0 = p / rng.uniform(1.05, 4.0, n)
        m = p0 > p_lo * BAR
        errs = {}
        for proc in ("isothermal", "adiabatic"):
            r_fast = gas_volume_ratio(p[m], p0[m], T[m], proc)
            r_ref = gas_volume_ratio(p[m], p0[m], T[m], proc, method="direct")
            stored = r_ref < 1
            p_back = pressure_at_oil_fraction(1 - r_ref[stored], p0[m][stored], T[m][stored], proc)
            p_ref = pressure_at_oil_fraction(
                1 - r_ref[stored], p0[m][stored], T[m][stored], proc, method="direct"
            )
            errs[proc] = (
                np.max(np.abs(r_fast / r_ref - 1)),
                np.max(np.abs(p_back / p_ref - 1)),
            )
        print(f"{label}: density {e_rho:.2e}, pressure p(rho,T) {e_p:.2e}")
        for proc, (e_r, e_pb) in errs.items():
            print(f"    {proc:10s} V/V0 {e_r:.2e}, pressure at oil fraction {e_pb:.2e}")


def speed() -> None:
    p = np.linspace(50 * BAR, 300 * BAR, 1000)
    s = np.linspace(0.0, 0.6, 1000)
    for proc in ("isothermal", "adiabatic", "polytropic:1.3"):
        t_map = _median_ms(lambda proc=proc: gas_volume_ratio(p, 90 * BAR, 293.15, proc))
        t_inv = _median_ms(lambda proc=proc: pressure_at_oil_fraction(s, 90 * BAR, 293.15, proc))
        print(f"{proc:15s} 1,000 pressures: p->V {t_map:.2f} ms, V->p {t_inv:.2f} ms (median)")
    cands = np.linspace(40, 150, 1000)[:, None] * BAR
    grid = np.linspace(60, 350, 100)[None, :] * BAR
    t_b = _median_ms(lambda: gas_volume_ratio(grid, cands, 263.15, "adiabatic"), repeats=5)
    print(f"adiabatic, 1,000 charges x 100 pressures (broadcast): {t_b:.1f} ms (median)")
    t_d = _median_ms(
        lambda: gas_volume_ratio(p, 90 * BAR, 293.15, "adiabatic", method="direct"), repeats=3
    )
    print(f"adiabatic, 1,000 pressures, direct CoolProp: {t_d:.1f} ms (median)")


if __name__ == "__main__":
    accuracy()
    speed()
