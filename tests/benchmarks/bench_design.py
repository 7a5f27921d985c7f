"""Benchmarks of the design search (run on demand, not part of the test suite).

    python tests/benchmarks/bench_design.py            # everything
    python tests/benchmarks/bench_design.py --quick    # skip the exhaustive sweep
    python tests/benchmarks/bench_design.py --scaling  # only the 600 / 6,000 / 36,000-step runs

1. Whole-process wall time of ``stowflow check``, ``stowflow design`` and ``stowflow demo`` on the
   bundled demo (median of 5 runs each, fresh processes, imports included).
2. The stowflow's exact screen against a numpy-vectorised exhaustive sweep of the same design
   space (every pump × motor × accumulator row × count × precharge, each judged by a plain
   step-by-step simulation of the always-loaded store at both temperature ends): both must give
   the same least installed power and capex; the ratio of their times is reported, measured in
   the same run.
3. Scaling: the forming-press cycle repeated to about 600, 6,000 and 36,000 steps (same step),
   one fresh process each: wall time of ``design()``, the schedule model's Pyomo build and its
   solve (standard-form compile + HiGHS) separately, the block size, and the process's peak
   resident memory.
"""

from __future__ import annotations

import argparse
import math
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from stowflow.catalogue import load_catalogue  # noqa: E402
from stowflow.cycle.duty import load_cycle  # noqa: E402
from stowflow.physics import accumulator as acc  # noqa: E402
from stowflow.physics import gas  # noqa: E402
from stowflow.search.designer import design  # noqa: E402
from stowflow.search.problem import make_problem  # noqa: E402
from stowflow.search.screen import screen  # noqa: E402
from stowflow.search.settings import DesignSettings  # noqa: E402
from stowflow.search.store import charge_heating, stored_fraction, top_pressure  # noqa: E402

CYCLE = ROOT / "duty_cycles" / "forming_press.csv"
CATALOGUE = ROOT / "duty_cycles" / "catalogue.toml"


def wall(cmd: list[str], runs: int = 5) -> tuple[float, list[float]]:
    """Median wall time of a command over fresh processes, [s]."""
    times = []
    for _ in range(runs):
        t0 = time.perf_counter()
        subprocess.run(cmd, check=False, capture_output=True, cwd=ROOT)
        times.append(time.perf_counter() - t0)
    return statistics.median(times), times


def sweep(cycle, catalogue, s: DesignSettings) -> tuple[float, float, int]:
    """Exhaustive, vectorised: least (installed power, capex) over the whole design space."""
    problem = make_problem(cycle, s)
    demand, dt = problem.demand, problem.dt
    levels, level_of = np.unique(problem.p_end, return_inverse=True)
    worn = 1.0 - s.flow_margin
    best = (np.inf, np.inf)
    judged = 0
    for pump in catalogue.pumps:
        qp = pump.flow * worn
        net = (qp - demand) * dt
        for opt in catalogue.accumulators:
            if opt.type not in s.types:
                continue
            rules = acc.rules_for(opt.type, (catalogue.limits or {}).get(opt.type))
            q_unit = acc.unit_flow_limit(
                opt.type, opt.nominal_volume, opt.bore, opt.max_flow, rules
            )
            motors = np.array([m.rated_power for m in catalogue.motors])
            mprice = np.array([m.price for m in catalogue.motors])
            by_motor = s.p_ambient + motors * pump.overall_efficiency / pump.flow
            p_allow = np.minimum(
                by_motor,
                min(
                    s.max_unload_for_relief(pump.max_pressure),
                    s.max_unload_for_relief(opt.max_pressure),
                ),
            )
            p0 = np.arange(s.p_ambient + 2e5, p_allow.max(), s.precharge_step)
            counts = np.arange(1, s.max_count + 1)
            # candidate axes: motor (M) × count (C) × precharge (P), flattened
            mm, cc, pp = np.meshgrid(
                np.arange(motors.size), counts, np.arange(p0.size), indexing="ij"
            )
            mm, cc, pp = mm.ravel(), cc.ravel(), pp.ravel()
            p0c = p0[pp]
            p_type = acc.max_pressure_for_precharge(
                opt.type, gas.precharge_at(p0c, s.t_min, s.gas_model), rules
            )
            p_max = np.minimum(p_allow[mm], p_type)
            ok = (p_max >= levels.max()) & (p_max > gas.precharge_at(p0c, s.t_min, s.gas_model))
            ok &= (demand.max() - qp) <= cc * q_unit
            v0 = cc * opt.nominal_volume
            feasible = ok.copy()
            for t_k in (s.t_min, s.t_max):
                p0t = gas.precharge_at(p0c, t_k, s.gas_model)
                floor = acc.min_working_pressure_for_precharge(opt.type, p0t, rules)
                need = v0[:, None] * stored_fraction(
                    problem,
                    np.maximum(levels[None, :], floor[:, None]),
                    p0c[:, None],
                    t_k,
                    top_pressure(s, p_max)[:, None],
                )
                top = v0 * gas.oil_fraction(p_max, p0c, t_k, gas.ISOTHERMAL, s.gas_model)
                if opt.swept_volume:
                    top = np.minimum(top, cc * opt.swept_volume)
                # heat of the refills the gas has lost since the pump last unloaded
                heat = charge_heating(problem, p_max, t_k)
                decay = math.exp(-dt / s.time_constant)
                store = top.copy()
                memory = np.zeros(store.size)
                at_full = np.zeros(store.size)
                ends = []
                for _cycle in range(3):
                    good = np.ones(store.size, bool)
                    for t in range(demand.size):
                        before = store
                        store = np.minimum(top, store + net[t])
                        gain = np.maximum(store - before, 0.0)
                        memory = decay * memory + gain * (s.time_constant / dt) * (1 - decay)
                        drawn = store < top * (1 - 1e-12)
                        at_full = np.where(drawn, at_full, memory)
                        lost = heat * np.maximum(0.0, at_full - memory)
                        avail = np.where(drawn, store - lost, store)
                        good &= avail >= need[:, level_of[t]] - 1e-12
                    ends.append(store.copy())
                periodic = np.abs(ends[-1] - ends[-2]) <= 1e-12
                feasible &= good & periodic
            judged += feasible.size
            if feasible.any():
                capex = cc * opt.price + pump.price + mprice[mm]
                keys = np.where(feasible, motors[mm], np.inf)
                kmin = keys.min()
                cmin = np.where(keys == kmin, capex, np.inf).min()
                best = min(best, (float(kmin), float(cmin)))
        # pump only
        if s.allow_pump_only and qp >= demand.max():
            relief = s.relief_setting(problem.p_end.max())
            shaft = pump.flow * (relief - s.p_ambient) / pump.overall_efficiency
            for m in catalogue.motors:
                if m.rated_power >= shaft and relief <= pump.max_pressure:
                    best = min(best, (m.rated_power, pump.price + m.price))
    return best[0], best[1], judged


def scaling_run(repeats: int) -> None:
    """One scaling point, in this process: print one line of figures."""
    import resource

    from stowflow.cycle.duty import cycle_from_arrays

    base = load_cycle(CYCLE)
    flow = np.tile(base.flow, repeats)
    pressure = np.tile(base.pressure, repeats)
    c = cycle_from_arrays(base.dt, flow, pressure, name=f"press x{repeats}")
    cat = load_catalogue(CATALOGUE)
    t0 = time.perf_counter()
    d = design(c, cat, DesignSettings())
    wall_s = time.perf_counter() - t0
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # Linux: kB → MiB
    st = d.stats
    print(
        f"{c.n_steps:>6} steps: design() {wall_s:6.2f} s (screen {st.screen_time:.2f} s, "
        f"Pyomo build {st.build_time:.2f} s, solve {st.solve_time:.2f} s, block {st.block}), "
        f"status {d.status}, gap {d.mip_gap:.1e}, peak memory {peak:.0f} MiB"
    )


def scaling() -> None:
    """The three scaling points, each in a fresh process (peak memory is per process)."""
    base = load_cycle(CYCLE)
    for target in (600, 6000, 36000):
        repeats = max(1, round(target / base.n_steps))
        subprocess.run(
            [sys.executable, __file__, "--scaling-point", str(repeats)], check=False, cwd=ROOT
        )


def main() -> None:
    """Run the benchmarks and print the figures."""
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="skip the exhaustive sweep")
    ap.add_argument("--scaling", action="store_true", help="only the scaling runs")
    ap.add_argument("--scaling-point", type=int, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.scaling_point:
        scaling_run(args.scaling_point)
        return
    if args.scaling:
        scaling()
        return
    exe = [sys.executable, "-m", "stowflow"]
    with tempfile.TemporaryDirectory() as tmp:
        for name, argv in (
            ("check", ["check", str(CYCLE)]),
            ("design", ["design", str(CYCLE), "--out", tmp]),
            ("demo", ["demo", "--out", tmp]),
        ):
            med, runs = wall([*exe, *argv])
            shown = [round(r, 2) for r in runs]
            print(f"stowflow {name} (whole process): median {med:.2f} s of {shown}")
    cycle = load_cycle(CYCLE)
    cat = load_catalogue(CATALOGUE)
    s = DesignSettings(precharge_step=5e5)
    times = []
    for _ in range(5):
        t0 = time.perf_counter()
        d = design(cycle, cat, s)
        times.append(time.perf_counter() - t0)
    print(
        f"design() in process, {cycle.n_steps} steps: median {statistics.median(times):.2f} s; "
        f"status {d.status}, gap {d.mip_gap:.2e}, {d.installed_power / 1e3:g} kW, "
        f"capex {d.capex:g}"
    )
    if args.quick:
        return
    t_screen = []
    for _ in range(5):
        t0 = time.perf_counter()
        sr = screen(make_problem(cycle, s), cat)
        t_screen.append(time.perf_counter() - t0)
    t0 = time.perf_counter()
    kw, capex, judged = sweep(cycle, cat, s)
    t_sweep = time.perf_counter() - t0
    same = kw == sr.installed_power and abs(capex - sr.capex) < 1e-6
    ts = statistics.median(t_screen)
    print(
        f"exact screen: median {ts:.3f} s, {sr.evaluated} combinations → "
        f"{sr.installed_power / 1e3:g} kW, capex {sr.capex:g}"
    )
    print(
        f"exhaustive sweep: {t_sweep:.1f} s, {judged:,} candidates simulated → "
        f"{kw / 1e3:g} kW, capex {capex:g}"
    )
    print(
        f"same answer: {same}; sweep / screen = {t_sweep / ts:,.0f}×; "
        f"sweep / whole design() = {t_sweep / statistics.median(times):,.0f}×"
    )


if __name__ == "__main__":
    main()
