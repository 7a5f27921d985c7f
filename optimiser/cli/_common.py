"""What several commands share: negative °C values on the command line, temperature tables."""

from __future__ import annotations

import argparse
import re

import numpy as np
from stowflow.errors import SettingsError
from stowflow.io.quantities import parse_temperature_range, parse_temperature_step

__all__ = ["MAX_ROWS", "allow_negative_ranges", "step_limit", "temperatures"]

#: Largest temperature table a command prints, [-].
MAX_ROWS = 1000


def allow_negative_ranges(parser: argparse.ArgumentParser) -> None:
    """Let option values such as ``-10..50`` or ``-5`` through (a cold range in °C).

    argparse reads a value that starts with '-' as an option unless it looks like a negative
    number; this widens its (private) negative-number pattern to temperature ranges.  No
    option of ours looks like a negative number, so nothing else changes.
    """
    if hasattr(parser, "_negative_number_matcher"):
        parser._negative_number_matcher = re.compile(
            r"^-\d+(?:\.\d*)?(?:\s*(?:°|deg)?[cCfF])?(?:\.\.-?\d+(?:\.\d*)?(?:\s*(?:°|deg)?[cCfF])?)?$"
        )


def temperatures(
    text: str, step_text: str, *, option: str = "--temperature", step_option: str = "--step"
) -> np.ndarray:
    """``"-10..50"`` and ``"5"`` → the temperatures of the table, [K].

    Parameters
    ----------
    text : str
        Range in °C, ``LO..HI`` (or one value).
    step_text : str
        Step in kelvin, > 0.
    option, step_option : str
        The options' names, for messages.

    Returns
    -------
    numpy.ndarray
        From LO to HI (HI included when the step lands on it), [K].
    """
    lo, hi = parse_temperature_range(text, option)
    step = parse_temperature_step(step_text, step_option)
    n = int(np.floor((hi - lo) / step + 1e-9)) + 1
    if n > MAX_ROWS:
        raise SettingsError(
            f"{step_option}: '{str(step_text).strip()}' gives {n} rows from {option} "
            f"'{str(text).strip()}'; expected a step that gives at most {MAX_ROWS} rows"
        )
    return lo + step * np.arange(n)


def step_limit(max_steps: str | None, step: str | None) -> int:
    """The grid's step limit from ``--max-steps`` (as typed) and whether ``--step`` was given.

    Parameters
    ----------
    max_steps : str or None
        ``--max-steps`` as typed, [-].
    step : str or None
        ``--step`` as typed (only whether it was given counts), [s].

    Returns
    -------
    int
        The limit, [-]: as typed, else :data:`~stowflow.cycle.duty.STEP_MAX_STEPS` for a
        step the user gave, else :data:`~stowflow.cycle.duty.DEFAULT_MAX_STEPS`.
    """
    from stowflow.cycle.duty import DEFAULT_MAX_STEPS, STEP_MAX_STEPS
    from stowflow.io.quantities import parse_whole

    if max_steps is not None:
        return parse_whole(max_steps, "--max-steps", at_least=1)
    return STEP_MAX_STEPS if step else DEFAULT_MAX_STEPS
