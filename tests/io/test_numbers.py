"""The one number formatter: digits by kind, grouping, compact absurd magnitudes, words."""

from __future__ import annotations

import math
import re

import pytest
from stowflow.costs.finance import payback_words
from stowflow.io.numbers import (
    KINDS,
    METRIC,
    DisplayUnit,
    UnitSystem,
    count_words,
    display_value,
    fmt,
    number,
    shown,
    years_words,
)

EXPONENT = re.compile(r"\d[eE][-+]?\d")


@pytest.mark.parametrize(
    ("value", "text"),
    [
        (219.83, "220"),
        (96464.3, "96,464"),  # whole digits are never rounded away
        (3.14159, "3.14"),
        (0.0, "0"),
        (None, "–"),
        (math.nan, "–"),
        (math.inf, "∞"),
        (-math.inf, "−∞"),
    ],
)
def test_number(value, text):
    assert number(value) == text


@pytest.mark.parametrize("value", [1e-300, -1e-300, 1e300, -1e300, 1.234e15, 5e-12])
@pytest.mark.parametrize("kind", KINDS)
def test_absurd_magnitudes_stay_within_the_column_and_never_use_e(value, kind):
    text = shown(value, kind, unit=False, width=10)
    assert len(text) <= 10, text
    assert not EXPONENT.search(text), text
    assert "×10" in text


def test_kinds_convert_from_si():
    assert fmt(2.198e7 + 101325.0, "pressure") == "219.8 bar"
    assert fmt(2.198e7 + 1.0e5, "pressure", p_ambient=1.0e5) == "219.8 bar"
    assert fmt(4.51e5, "pressure_difference") == "4.51 bar"
    assert fmt(0.125, "volume") == "125 L"
    assert fmt(38.6 / 60000, "flow") == "38.6 L/min"
    assert fmt(22000.0, "power") == "22 kW"
    assert fmt(293.15, "temperature") == "20 °C"
    assert fmt(0.05, "percent") == "5 %"
    assert fmt(12.0, "money", unit="EUR") == "12 EUR"
    assert display_value(1e5, "pressure_difference") == pytest.approx(1.0)


def test_a_unit_system_plugs_in_by_kind():
    psi = 6894.757293168361  # Pa per psi (NIST SP 811, 2008, appendix B)
    us = UnitSystem(
        "test",
        dict(METRIC.units)
        | {"pressure": DisplayUnit("psi", lambda v, c: (v - 101325.0) / psi, 4, 0)},
    )
    assert fmt(101325.0 + 3000 * psi, "pressure", system=us) == "3,000 psi"
    with pytest.raises(KeyError, match="unknown quantity kind"):
        fmt(1.0, "speed", system=us)


@pytest.mark.parametrize(
    "years", [None, math.inf, 0.0, 0.006, 0.2, 0.5, 0.97, 1.0, 2.34, 14.6, 33.3]
)
def test_years_in_words_match_the_verdicts_words(years):
    assert years_words(years) == payback_words(years)


def test_no_zero_years_and_plural_words():
    assert years_words(0.006) == "under 1 month"
    assert years_words(0.0) == "at once"
    assert count_words(1, "run") == "1 run"
    assert count_words(1200, "design") == "1,200 designs"
