"""What several commands share: temperature ranges typed in °C and the tables made from them."""

from __future__ import annotations

import argparse
import re

import numpy as np
from stowflow.errors import SettingsError
from stowflow.glossary import term
from stowflow.units import celsius_to_kelvin

__all__ = ["MAX_ROWS", "allow_negative_ranges", "parse_temperature_range", "temperatures"]

#: Largest temperature table a command prints, [-].
MAX_ROWS = 1000

_NUM = r"(-?(?:\d+(?:\.\d*)?|\.\d+))\s*(?:°?c)?"
_RANGE_RE = re.compile(rf"^\s*{_NUM}\s*(?:\.\.\s*{_NUM})?\s*$", re.IGNORECASE)


def parse_temperature_range(text: str) -> tuple[float, float]:
    """``"10..50"`` or ``"20"`` (°C) → (T_min, T_max) [K]."""
    m = _RANGE_RE.match(text)
    try:
        lo = float(m.group(1))
        hi = float(m.group(2)) if m.group(2) is not None else lo
    except (AttributeError, ValueError):
        raise SettingsError(
            f"--temperature '{text}' is not a range in °C; write e.g. 10..50 or 20"
        ) from None
    lo_ok, hi_ok = term("temperature").plausible
    for v in (lo, hi):
        if not lo_ok <= v <= hi_ok:
            raise SettingsError(
                f"--temperature {v:g} °C is outside the plausible {lo_ok:g}…{hi_ok:g} °C"
            )
    if hi < lo:
        raise SettingsError(f"--temperature '{text}': the first value must be the lower one")
    return celsius_to_kelvin(lo), celsius_to_kelvin(hi)


def allow_negative_ranges(parser: argparse.ArgumentParser) -> None:
    """Let option values such as ``-10..50`` or ``-5`` through (a cold range in °C).

    argparse reads a value that starts with '-' as an option unless it looks like a negative
    number; this widens its (private) negative-number pattern to temperature ranges.  No
    option of ours looks like a negative number, so nothing else changes.
    """
    if hasattr(parser, "_negative_number_matcher"):
        parser._negative_number_matcher = re.compile(
            r"^-\d+(?:\.\d*)?(?:\s*°?[cC])?(?:\.\.-?\d+(?:\.\d*)?(?:\s*°?[cC])?)?$"
        )


def temperatures(text: str, step_text: str) -> np.ndarray:
    """``"-10..50"`` and ``"5"`` → the temperatures of the table, [K].

    Parameters
    ----------
    text : str
        Range in °C, ``LO..HI`` (or one value).
    step_text : str
        Step in kelvin, > 0.

    Returns
    -------
    numpy.ndarray
        From LO to HI (HI included when the step lands on it), [K].
    """
    lo, hi = parse_temperature_range(text)
    try:
        step = float(str(step_text).strip().removesuffix("K").removesuffix("°C").strip())
    except ValueError:
        raise SettingsError(f"--step '{step_text}' is not a number of kelvin") from None
    if not (np.isfinite(step) and step > 0):
        raise SettingsError(f"--step must be > 0 K; got {step_text}")
    n = int(np.floor((hi - lo) / step + 1e-9)) + 1
    if n > MAX_ROWS:
        raise SettingsError(f"--step {step:g} K gives {n} rows; at most {MAX_ROWS}")
    return lo + step * np.arange(n)
