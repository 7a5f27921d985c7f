"""An invented long duty cycle for the scaling benchmarks: a press line logged over a shift.

INVENTED demo data: a made-up machine, no real machine was logged.  Machine cycles of the
forming-press kind (approach, press, hold, return, unload) with a cycle time that varies from
stroke to stroke, and now and then a pause; every phase lasts a whole number of 0.1 s, so
``--step 0.1s`` puts the cycle on an exact grid (``seconds`` / 0.1 steps).
"""

from __future__ import annotations

import random
from pathlib import Path

__all__ = ["write_shift_cycle"]

#: Phases of one machine cycle: (duration [s], flow [L/min], pressure [bar] gauge, label).
_STROKE = (
    (1.6, 160, 45, "rapid approach"),
    (2.5, 40, 190, "pressing"),
    (1.5, 4, 190, "hold"),
    (0.4, 0, 60, "decompression"),
    (1.6, 150, 90, "return"),
)


def write_shift_cycle(path: Path, seconds: int, seed: int = 18) -> Path:
    """Write a phase table of ``seconds`` [s] (a whole number) of press strokes and pauses.

    Parameters
    ----------
    path : pathlib.Path
        CSV file to write.
    seconds : int
        Length of the cycle, [s].
    seed : int
        Seed of the stroke-to-stroke variation, [-].

    Returns
    -------
    pathlib.Path
        ``path``.
    """
    rnd = random.Random(seed)
    left = 10 * int(seconds)  # in 0.1 s
    rows = []
    while left > 0:
        scale = rnd.choice((0.9, 1.0, 1.0, 1.1, 1.2))
        for dur, flow, bar, label in _STROKE:
            n = min(left, max(1, round(10 * dur * scale)))
            rows.append((n, flow, bar, label))
            left -= n
            if left == 0:
                break
        if left > 0:  # part handling; now and then a longer pause
            n = min(left, rnd.choice((80, 100, 120, 150, 400 if rnd.random() < 0.1 else 120)))
            rows.append((n, 0, 30, "load and unload"))
            left -= n
    lines = [
        "# Press line over a shift.  INVENTED demo data: a made-up machine, no real machine was",
        "# logged.  Phase table; every phase lasts a whole number of 0.1 s.",
        "duration [s], flow [L/min], pressure [bar], label",
    ]
    lines += [f"{n / 10:.1f}, {flow}, {bar}, {label}" for n, flow, bar, label in rows]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path
