"""US customary units: the factors against NIST, temperatures with a unit, the bare-range check.

The conversions come from pint (the one registry, :mod:`stowflow.units`); the expected values
below come from the published factors, each named beside it.
"""

from __future__ import annotations

import pytest
from stowflow.errors import SettingsError
from stowflow.io.numbers import METRIC, US, current_system, display_value, fmt, unit_system, using
from stowflow.io.options import design_settings
from stowflow.io.quantities import parse_pressure, parse_temperature, parse_temperature_range
from stowflow.io.temperatures import check_bare_range, is_bare

# NIST Special Publication 811 (2008 ed.), Appendix B.8 / B.9, and NIST Handbook 44 (2024),
# Appendix C: exact or rounded conversion factors.
PSI = 6894.757  # Pa per lbf/in² (NIST SP 811, 2008, B.8: 6.894 757 E+03)
US_GAL = 3.785411784e-3  # m³ per US liquid gallon, exact (NIST Handbook 44, appendix C)
IN3 = 16.387064e-6  # m³ per cubic inch, exact (NIST SP 811, 2008, B.8: 1.638 706 4 E-05)
HP = 745.6999  # W per horsepower, 550 ft·lbf/s (NIST SP 811, 2008, B.8: 7.456 999 E+02)
P_AMB = 101325.0  # Pa, standard atmosphere (ISO 2533)


def f_from_c(c: float) -> float:
    """°F from °C: t/°F = t/°C × 9/5 + 32 (NIST SP 811, 2008, B.8, degree Fahrenheit)."""
    return c * 9.0 / 5.0 + 32.0


@pytest.mark.parametrize(
    ("value_si", "kind", "expected", "rel"),
    [
        (P_AMB + 1000 * PSI, "pressure", 1000.0, 1e-6),  # psi gauge (NIST SP 811)
        (1000 * PSI, "pressure_absolute", 1000.0, 1e-6),  # psia (NIST SP 811)
        (1000 * PSI, "pressure_difference", 1000.0, 1e-6),
        (10 * US_GAL, "volume", 10.0, 1e-12),  # US gal (NIST Handbook 44)
        (10 * US_GAL / 60.0, "flow", 10.0, 1e-12),  # gpm = US gal/min (NIST Handbook 44)
        (3.0 * IN3, "displacement", 3.0, 1e-12),  # in³/rev (NIST SP 811)
        (100 * HP, "power", 100.0, 1e-6),  # hp, mechanical (NIST SP 811)
    ],
)
def test_us_factors_are_nists(value_si, kind, expected, rel):
    assert display_value(value_si, kind, system=US) == pytest.approx(expected, rel=rel)


@pytest.mark.parametrize("celsius", [-40.0, 0.0, 20.0, 37.0, 100.0])
def test_fahrenheit_is_nists(celsius):
    kelvin = celsius + 273.15  # SI Brochure, 9th ed., 2.3.1
    assert display_value(kelvin, "temperature", system=US) == pytest.approx(f_from_c(celsius))
    # a difference of 1 K is 9/5 °F (NIST SP 811, 2008, B.8)
    assert display_value(10.0, "temperature_difference", system=US) == pytest.approx(18.0)


def test_us_text_has_hp_beside_kw_and_gauge_psi():
    assert fmt(P_AMB + 3000 * PSI, "pressure", system=US) == "3,000 psi"
    assert fmt(22000.0, "power", system=US) == "29.5 hp (22 kW)"  # 22 kW / 745.6999 W/hp
    assert fmt(10 * US_GAL / 60.0, "flow", system=US) == "10.0 gpm"
    assert fmt(293.15, "temperature", system=US) == "68 °F"  # 20 °C × 9/5 + 32


def test_the_system_in_force_follows_using_and_is_restored():
    assert current_system() is METRIC
    with using("us"):
        assert fmt(P_AMB + 1e5, "pressure") == "15 psi"  # 1 bar = 14.50 psi (NIST SP 811)
        with using(METRIC):
            assert fmt(P_AMB + 1e5, "pressure") == "1.0 bar"
    assert current_system() is METRIC
    with pytest.raises(SettingsError, match="--units: 'imperial' is not a unit system"):
        unit_system("imperial")


def test_pressure_in_psi_parses_to_si():
    assert parse_pressure("1900psi", "precharge") == pytest.approx(1900 * PSI + P_AMB, rel=1e-6)


@pytest.mark.parametrize(
    ("text", "celsius"),
    [
        ("50degF..120degF", (10.0, (120 - 32) * 5 / 9)),  # (°F − 32) × 5/9 (NIST SP 811)
        ("50..120degF", (10.0, (120 - 32) * 5 / 9)),  # a unit on one end holds for both
        ("-4°F..104 °F", (-20.0, 40.0)),
        ("10degC..50degC", (10.0, 50.0)),
        ("10..50", (10.0, 50.0)),  # bare: °C
        ("-10..50", (-10.0, 50.0)),
        ("68F", (20.0, 20.0)),
    ],
)
def test_temperature_ranges_take_a_unit(text, celsius):
    lo, hi = parse_temperature_range(text, "--temperature")
    assert (lo - 273.15, hi - 273.15) == pytest.approx(celsius, abs=1e-9)


def test_one_temperature_takes_a_unit():
    assert parse_temperature("59degF", "--ambient") - 273.15 == pytest.approx(15.0)
    assert parse_temperature("15", "--ambient") - 273.15 == pytest.approx(15.0)


def test_an_implausible_fahrenheit_value_is_refused_in_celsius_terms():
    with pytest.raises(SettingsError, match=r"'50degF..500degF' has 260 °C, outside"):
        parse_temperature_range("50degF..500degF", "--temperature")


def test_bare_is_a_range_without_a_unit():
    assert is_bare("30..110") and is_bare("-10..50") and is_bare("1e1..50")
    assert not is_bare("30degF..110degF") and not is_bare("30C..110C")


def test_a_bare_range_too_hot_for_a_bladder_is_refused_with_the_reason():
    # the case: a °F range typed bare, read as °C, is a 110 °C gas for a bladder
    with pytest.raises(SettingsError) as err:
        design_settings({"temperature": "30..110"})
    text = str(err.value)
    assert "'30..110' is read as °C and has 110 °C" in text
    assert "above the 80 °C a bladder or diaphragm elastomer takes (common practice)" in text
    assert "30degF..110degF" in text and "30degC..110degC" in text


def test_with_a_unit_or_without_elastomer_types_the_hot_range_stands():
    s = design_settings({"temperature": "30degF..110degF"})
    assert s.t_max - 273.15 == pytest.approx((110 - 32) * 5 / 9)
    s = design_settings({"temperature": "30degC..110degC"})
    assert s.t_max == pytest.approx(383.15)
    s = design_settings({"temperature": "30..110", "types": "piston"})
    assert s.t_max == pytest.approx(383.15)
    check_bare_range("10..50", 323.15, ("bladder",), "--temperature")  # within the limit


def test_the_python_api_takes_fahrenheit():
    import stowflow

    s = stowflow.size("5L", "100bar", "200bar", temperature="50degF..122degF")
    assert min(abs(s["worst_temperature_c"] - t) for t in (10.0, 50.0)) < 1e-9


def test_a_temperature_step_may_be_in_fahrenheit():
    from stowflow.io.quantities import parse_temperature_step

    # a difference of 9 °F is 5 K (NIST SP 811, 2008, B.8: °F = 5/9 K as an interval)
    assert parse_temperature_step("9degF", "--step") == pytest.approx(5.0)
    assert parse_temperature_step("5", "--step") == pytest.approx(5.0)


@pytest.mark.parametrize(
    ("metric", "us"),
    [
        ("relief valve set to 280 bar", "relief valve set to 4,061 psi"),  # 28e6/6894.757
        ("for 38.6 L/min", "for 10.2 gpm"),  # 38.6 / 3.785411784 (NIST Handbook 44)
        ("22 kW motor", "29.5 hp (22 kW) motor"),  # 22000 / 745.6999 (NIST SP 811)
        ("at 20 °C", "at 68 °F"),
        ("5 kWh a year", "5 kWh a year"),  # energy stays
        ("0.25/kWh", "0.25/kWh"),
        ("PS·V = 8,250 bar·L", "PS·V = 8,250 bar·L"),  # defined in bar·L by the directive
        ("ambient 1.0 bar absolute", "ambient 1.0 bar absolute"),
        ("catalogue: bladder 25 L 330 bar; 5 L", "catalogue: bladder 25 L 330 bar; 1.32 US gal"),
    ],
)
def test_texts_in_metric_words_are_shown_in_us_units(metric, us):
    from stowflow.report.display_units import in_system_text

    with using("us"):
        assert in_system_text(metric) == us
    assert in_system_text(metric) == metric  # metric in force: as written


def test_a_text_already_in_us_units_is_not_converted_twice():
    from stowflow.report.display_units import in_system_text

    with using("us"):
        once = fmt(22000.0, "power")
        assert in_system_text(once) == once == "29.5 hp (22 kW)"
        assert in_system_text(f"motor {once}, pump 10.2 gpm at 3,000 psi") == (
            f"motor {once}, pump 10.2 gpm at 3,000 psi"
        )


def test_the_python_api_design_settings_take_fahrenheit_and_refuse_a_bare_hot_range():
    import stowflow

    s = stowflow.settings(temperature="50degF..120degF")
    # (120 − 32) × 5/9 = 48.89 °C (NIST SP 811, 2008, B.8)
    assert s.design.t_max - 273.15 == pytest.approx((120 - 32) * 5 / 9)
    with pytest.raises(SettingsError, match="is read as °C"):
        stowflow.settings(temperature="50..120")
