"""Whole-process design time per demo cycle and the cost growth with the cycle length (run on
demand, not part of the test suite).

    python tests/benchmarks/bench_speed.py                    # both parts
    python tests/benchmarks/bench_speed.py --per-cycle        # every duty_cycles/*.csv, median of 3
    python tests/benchmarks/bench_speed.py --scaling          # 600 / 6,000 / 36,000 steps
    python tests/benchmarks/bench_speed.py --baseline DIR     # also time the source tree in DIR

1. Per cycle: ``stowflow design CYCLE`` (design, verification at both temperature ends with
   catalogue and worn pump flow, costs, report) in a fresh process, median of 3 runs: wall
   time, CPU time (user + system) and peak resident memory of that process.
2. Scaling: an invented press-line cycle (``_long_cycle.py``) of 60 s, 600 s and 3,600 s at
   ``--step 0.1s`` (600, 6,000 and 36,000 steps; ``--max-steps`` as needed), designed and
   verified at full resolution, the same figures per run.

``--baseline DIR``: DIR holds an older ``optimiser/`` tree (e.g. ``git archive <commit>
optimiser | tar -x -C DIR``); each command also runs against it (through ``PYTHONPATH`` and
a ``stowflow`` link to it) so that the ratios come from the same run on the same machine.
On a shared machine the wall time follows the load; the CPU time and the ratios follow it
less.
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(Path(__file__).resolve().parent))

from _long_cycle import write_shift_cycle  # noqa: E402


def measure(argv: list[str], env: dict | None = None) -> tuple[float, float, float, int]:
    """Run one process; (wall [s], CPU [s], peak resident memory [MiB], exit code).

    :func:`_line` prints the exit code 0 as "ok"."""
    import time

    t0 = time.perf_counter()
    proc = subprocess.Popen(
        argv, cwd=ROOT, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE
    )
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - t0
    proc.returncode = os.waitstatus_to_exitcode(status)
    if proc.returncode != 0:
        print(proc.stderr.read().decode(errors="replace")[-500:], file=sys.stderr)
    proc.stderr.close()
    return wall, usage.ru_utime + usage.ru_stime, usage.ru_maxrss / 1024, proc.returncode


def _env(baseline: Path | None) -> dict | None:
    """The environment that runs the source tree in ``baseline`` (None: this tree)."""
    if baseline is None:
        return None
    link = baseline / "stowflow"
    if not link.exists():
        link.symlink_to(baseline / "optimiser")
    return os.environ | {"PYTHONPATH": str(baseline)}


def median_run(argv: list[str], runs: int, env: dict | None) -> tuple[float, float, float, str]:
    """Median wall and CPU time and the largest peak memory over ``runs`` processes."""
    got = [measure(argv, env) for _ in range(runs)]
    bad = [r for r in got if r[3] != 0]
    status = "ok" if not bad else f"exit {bad[0][3]}"
    return (
        statistics.median(r[0] for r in got),
        statistics.median(r[1] for r in got),
        max(r[2] for r in got),
        status,
    )


def _line(label: str, new, old) -> str:
    text = f"{label:<22} wall {new[0]:6.2f} s  CPU {new[1]:6.2f} s  peak {new[2]:5.0f} MiB"
    text += f"  {'ok' if new[3] in (0, 'ok') else new[3]}"
    if old is not None:
        text += (
            f"  | baseline wall {old[0]:6.2f} s CPU {old[1]:6.2f} s peak {old[2]:5.0f} MiB"
            f" {'ok' if old[3] in (0, 'ok') else old[3]}"
            f"  | CPU ratio {old[1] / max(new[1], 1e-9):4.2f}x"
        )
    return text


def per_cycle(runs: int, baseline: Path | None) -> None:
    """Every bundled demo cycle, whole process, median of ``runs``."""
    print(f"per cycle: stowflow design CYCLE, whole process, median of {runs}")
    with tempfile.TemporaryDirectory() as tmp:
        for path in sorted((ROOT / "duty_cycles").glob("*.csv")):
            argv = [sys.executable, "-m", "stowflow", "design", str(path), "--out", tmp]
            new = median_run(argv, runs, None)
            old = None if baseline is None else median_run(argv, runs, _env(baseline))
            print(_line(path.stem, new, old), flush=True)


def scaling(baseline: Path | None) -> None:
    """The invented press line at 600, 6,000 and 36,000 steps of 0.1 s, one run each."""
    print("scaling: stowflow design SHIFT.csv --step 0.1s --max-steps N, whole process")
    with tempfile.TemporaryDirectory() as tmp:
        for seconds in (60, 600, 3600):
            steps = 10 * seconds
            cycle = write_shift_cycle(Path(tmp) / f"press_line_{seconds}s.csv", seconds)
            out = str(Path(tmp) / "out")
            argv = [sys.executable, "-m", "stowflow", "design", str(cycle), "--out", out]
            argv += ["--step", "0.1s", "--max-steps", str(max(steps, 20_000))]
            new = measure(argv)
            old = None
            if baseline is not None and steps <= 20_000:  # the older tree refuses more
                old = measure(argv[:-2], _env(baseline))
            print(_line(f"{steps} steps", new, old), flush=True)


def main() -> None:
    """Run the benchmarks and print the figures."""
    ap = argparse.ArgumentParser()
    ap.add_argument("--per-cycle", action="store_true", help="only the per-cycle times")
    ap.add_argument("--scaling", action="store_true", help="only the scaling runs")
    ap.add_argument("--runs", type=int, default=3, help="runs per cycle (median)")
    ap.add_argument("--baseline", type=Path, help="older source tree to compare with")
    args = ap.parse_args()
    both = not (args.per_cycle or args.scaling)
    print(f"machine: {os.cpu_count()} CPUs, load average {os.getloadavg()[0]:.2f} at the start")
    if args.per_cycle or both:
        per_cycle(args.runs, args.baseline)
    if args.scaling or both:
        scaling(args.baseline)
    print(f"load average {os.getloadavg()[0]:.2f} at the end")


if __name__ == "__main__":
    main()
