"""A fleet on Dask against the same loop run serially (run on demand, not in the test run).

    python tests/benchmarks/bench_fleet.py [--cycles 20] [--workers 2] [--seed 0]

Makes ``--cycles`` invented cycles (the forming-press demo's phases with each flow scaled by
0.7–1.3, each duration by 0.8–1.2 on the 50 ms grid and each pressure by 0.9–1.1, seeded:
demo data only, never an expected value), then designs them twice into fresh folders:

1. serially in this process: for each cycle ``pipeline.run`` and the four files of ``stowflow
   design`` (:func:`stowflow.report.write_study`);
2. with :func:`stowflow.studies.batch.run_batch` on a local cluster of ``--workers``
   single-threaded worker processes (the cluster's start-up included).

It prints both wall times, their ratio, and checks that both chose the same components and
kW for every cycle.  The machine may be shared: say so with any figure you quote.
"""

from __future__ import annotations

import argparse
import json
import tempfile
import time
from pathlib import Path

import numpy as np

REPO = Path(__file__).resolve().parents[2]
BASE = REPO / "duty_cycles" / "forming_press.csv"
GRID = 0.05  # [s], the demo's grid


def invent_cycles(folder: Path, n: int, seed: int) -> list[Path]:
    """``n`` invented variants of the forming-press demo's phase table (demo data only)."""
    rows = []
    for line in BASE.read_text(encoding="utf-8").splitlines():
        if line.startswith("#") or line.startswith("duration"):
            continue
        d, q, p, label = (c.strip() for c in line.split(",", 3))
        rows.append((float(d), float(q), float(p), label))
    rng = np.random.default_rng(seed)
    paths = []
    for k in range(n):
        lines = [
            f"# Invented demo cycle {k + 1}: the forming-press demo varied at random (seed "
            f"{seed}); not a real machine.",
            "duration [s], flow [L/min], pressure [bar], label",
        ]
        for d, q, p, label in rows:
            d2 = max(GRID, round(d * rng.uniform(0.8, 1.2) / GRID) * GRID)
            q2 = q * rng.uniform(0.7, 1.3)
            p2 = p * rng.uniform(0.9, 1.1)
            lines.append(f"{d2:.2f}, {q2:.1f}, {p2:.1f}, {label}")
        path = folder / f"machine_{k + 1:02d}.csv"
        path.write_text("\n".join(lines) + "\n", encoding="utf-8")
        paths.append(path)
    return paths


def _components(folder: Path) -> tuple:
    r = json.loads((folder / "design.json").read_text(encoding="utf-8"))
    acc = r["accumulator"] or {}
    return (
        r["status"],
        acc.get("name"),
        acc.get("count"),
        (r["pump"] or {}).get("name"),
        (r["motor"] or {}).get("name"),
        r["installed_power_kw"],
    )


def serial(paths: list[Path], out: Path) -> float:
    """The loop a user would write: design and write each cycle in turn, [s]."""
    from stowflow.pipeline import Study, run
    from stowflow.report import write_study

    t0 = time.perf_counter()
    for p in paths:
        write_study(run(Study(cycle=p)), out / p.stem)
    return time.perf_counter() - t0


def parallel(paths: list[Path], out: Path, workers: int) -> float:
    """The same cycles through ``run_batch`` on a local cluster, start-up included, [s]."""
    from stowflow.studies.batch import run_batch

    t0 = time.perf_counter()
    run_batch(paths[0].parent, out, workers=workers, force=True)
    return time.perf_counter() - t0


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--cycles", type=int, default=20)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--seed", type=int, default=0)
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        root = Path(tmp)
        (root / "cycles").mkdir()
        paths = invent_cycles(root / "cycles", args.cycles, args.seed)
        t_serial = serial(paths, root / "serial")
        t_dask = parallel(paths, root / "dask", args.workers)
        same = all(
            _components(root / "serial" / p.stem) == _components(root / "dask" / p.stem)
            for p in paths
        )
    print(f"{args.cycles} invented cycles, local cluster of {args.workers} worker(s)")
    print(f"serial loop:   {t_serial:7.1f} s")
    print(f"Dask batch:    {t_dask:7.1f} s (cluster start-up included)")
    print(f"ratio serial / Dask: {t_serial / t_dask:.2f}")
    print(f"same components and kW in both: {same}")


if __name__ == "__main__":
    main()
