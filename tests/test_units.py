"""Named unit factors and the one gauge-bar conversion of stowflow.units.

The factors are definitions (SI Brochure, 9th edition, BIPM 2019, tables 8 and 9: 1 bar =
100 kPa, 1 L = 1 dm³, 1 h = 3600 s, t/°C = T/K − 273.15); pint 0.25.3 computes the same
conversions in floating point, so the two agree to a few units in the last place.
"""

from __future__ import annotations

import numpy as np
import pytest
from stowflow.units import (
    BAR,
    HOUR,
    KW,
    KWH,
    LITRE,
    LPM,
    P_AMBIENT,
    ZERO_CELSIUS,
    bar_gauge,
    bar_text,
    celsius_to_kelvin,
    kelvin_to_celsius,
    si_factor,
)


@pytest.mark.parametrize(
    ("factor", "unit", "dimension"),
    [
        (BAR, "bar", "pressure"),
        (LITRE, "L", "volume"),
        (LPM, "L/min", "flow"),
        (KW, "kW", "power"),
        (HOUR, "h", "time"),
        (KWH, "kWh", "energy"),
    ],
)
def test_named_factors_agree_with_pint(factor, unit, dimension):
    # pint 0.25.3 conversions; the definitions are exact, pint's arithmetic is not.
    assert factor == pytest.approx(si_factor(unit, dimension), rel=1e-15)


def test_factors_invert_exactly_where_the_code_relies_on_it():
    # The schedule model scales volumes by 1/LITRE; the search's messages divide by LPM.
    assert 1.0 / LITRE == 1000.0
    assert 1.0 / LPM == 60_000.0
    assert KWH == 3.6e6


def test_celsius_zero():
    # SI Brochure 9th ed. section 2.3.1: t/°C = T/K − 273.15.
    assert ZERO_CELSIUS == 273.15
    assert celsius_to_kelvin(20.0) == 293.15
    assert kelvin_to_celsius(273.15) == 0.0
    assert np.allclose(celsius_to_kelvin(np.array([-10.0, 50.0])), [263.15, 323.15])


def test_bar_gauge_scalar_and_array():
    assert bar_gauge(200 * BAR + P_AMBIENT) == pytest.approx(200.0)
    assert isinstance(bar_gauge(np.float64(P_AMBIENT)), float)
    assert isinstance(bar_gauge(np.array(P_AMBIENT)), float)
    out = bar_gauge(np.array([P_AMBIENT, 1e6 + P_AMBIENT]))
    assert isinstance(out, np.ndarray)
    assert out == pytest.approx([0.0, 10.0])
    assert bar_gauge(11e5, p_ambient=1e5) == pytest.approx(10.0)


def test_bar_text():
    assert bar_text(123.44 * BAR + P_AMBIENT) == "123.4 bar"
    assert bar_text(150 * BAR + 1e5, 1e5, ".0f") == "150 bar"
