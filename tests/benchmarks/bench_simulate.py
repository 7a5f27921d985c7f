"""Speed and figures of the time-domain verification on the demo cycles.

Run: ``python tests/benchmarks/bench_simulate.py [--repeats 5] [--pipeline]`` (not part of the
default test run).  For each demo cycle in ``duty_cycles/``: designs it once, then times
:func:`stowflow.simulation.verify.verify` (every controller at the coldest and hottest temperature)
and prints the median wall-clock time over the repeats, the cycles each run needed to reach
its periodic steady state, the least margin and which controllers pass.  With ``--pipeline``
it also times the whole closed loop (``stowflow.pipeline.run``: design → verify → tighten).
"""

from __future__ import annotations

import argparse
import statistics
import time
from pathlib import Path

from stowflow.catalogue import default_catalogue_path, load_catalogue
from stowflow.cycle.duty import load_cycle
from stowflow.errors import StowflowError
from stowflow.search.designer import design
from stowflow.simulation.verify import verify

REPO = Path(__file__).resolve().parents[2]
BAR = 1e5


def _median(fn, repeats: int) -> tuple[float, object]:
    times, out = [], None
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times), out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--pipeline", action="store_true", help="also time pipeline.run")
    args = ap.parse_args()
    cat = load_catalogue(default_catalogue_path())
    total = 0.0
    for path in sorted((REPO / "duty_cycles").glob("*.csv")):
        try:
            cycle = load_cycle(path)
        except StowflowError as exc:
            print(f"{path.name}: skipped ({exc})")
            continue
        d = design(cycle, cat)
        if not d.feasible:
            print(f"{path.name}: design {d.status}: {d.reason}")
            continue
        verify(d, cycle)  # warm up (table load)
        t, v = _median(lambda d=d, cycle=cycle: verify(d, cycle), args.repeats)
        total += t
        ok = sorted({r.controller for r in v.runs} - {r.controller for r in v.runs if not r.passed})
        print(
            f"{path.name}: {cycle.n_steps} steps, verify median {t:.3f} s "
            f"({args.repeats} runs); recommended {v.controller}, "
            f"{'PASSED' if v.passed else 'FAILED'}, margin {v.min_margin / BAR:.2f} bar; "
            f"passing: {', '.join(ok) or 'none'}"
        )
        for r in v.runs:
            print(
                f"    {r.controller:16s} {r.temperature - 273.15:5.1f} °C  "
                f"cycles {r.cycles_to_steady:3d} (period {r.period_cycles}, "
                f"{'periodic' if r.periodic else 'cap'})  margin {r.min_margin / BAR:7.2f} bar"
                f"  {'pass' if r.passed else 'FAIL: ' + (r.reason or '')}"
            )
        if args.pipeline:
            from stowflow.pipeline import Study, run

            tp, res = _median(lambda path=path: run(Study(cycle=path)), max(1, args.repeats // 2))
            vv = res.verification
            print(
                f"    pipeline median {tp:.2f} s, {len(res.attempts)} pass(es), "
                f"verify {res.timings['verify']:.2f} s; final: "
                f"{'PASSED' if vv and vv.passed else 'not passed'}"
                + (f", margin {vv.min_margin / BAR:.2f} bar" if vv else "")
            )
    print(f"all demo cycles: verify {total:.3f} s in total (medians)")


if __name__ == "__main__":
    main()
