"""The option parsers (stowflow.io.quantities) and the settings built from them (io.options).

Every kind of option: what it accepts, the SI value it returns, and the one-line refusal
(option, what was found, what is expected, with units), asserted word for word.
"""

from __future__ import annotations

import re

import pytest
from stowflow.costs.comparison import CostSettings
from stowflow.errors import SettingsError, UnitsError
from stowflow.io.options import COST_OPTIONS, DESIGN_OPTIONS, cost_settings, design_settings
from stowflow.io.quantities import (
    check_digits,
    parse_choice,
    parse_choices,
    parse_density,
    parse_duration,
    parse_energy_price,
    parse_expansion_coefficient,
    parse_flow,
    parse_fraction,
    parse_gas_process,
    parse_length,
    parse_number,
    parse_per_hour,
    parse_pressure,
    parse_pressure_difference,
    parse_temperature,
    parse_temperature_range,
    parse_temperature_step,
    parse_velocity,
    parse_volume,
    parse_whole,
)
from stowflow.search.settings import DesignSettings

#: Standard atmosphere, [Pa] (ISO 2533:1975, sea level).
P_AMBIENT = 101_325.0
#: 1 psi in Pa (NIST SP 811, 2008 edition, Appendix B.8).
PSI = 6894.757293168
#: 1 US gallon in m³ (NIST Handbook 44, 2023, Appendix C: 231 in³ = 3.785411784 L).
US_GALLON = 3.785411784e-3
#: 0 °C in kelvin (ITS-90 offset).
ZERO_C = 273.15


def refused(error, message: str):
    """``pytest.raises`` that wants exactly ``message``."""
    return pytest.raises(error, match=f"^{re.escape(message)}$")


# --------------------------------------------------------------------------- pressure
@pytest.mark.parametrize(
    ("text", "absolute", "expected"),
    [
        ("100bar", False, 100e5 + P_AMBIENT),  # 1 bar = 1e5 Pa (SI brochure, 9th ed., 2019)
        ("100 bar", True, 100e5),
        ("1800psi", False, 1800 * PSI + P_AMBIENT),
        ("0", False, P_AMBIENT),  # a bare zero needs no unit
        ("-0.5bar", False, -0.5e5 + P_AMBIENT),  # below ambient, above vacuum
        ("2MPa", True, 2e6),
    ],
)
def test_pressure_levels_are_gauge_unless_absolute(text, absolute, expected):
    assert parse_pressure(text, "--p", absolute=absolute) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(
    ("text", "absolute", "error", "message"),
    [
        (
            "100",
            False,
            UnitsError,
            "--p: '100' has no unit; expected a gauge pressure with its unit, e.g. 100bar",
        ),
        (
            "fast",
            False,
            UnitsError,
            "--p: 'fast' is not a number with a unit; expected a gauge pressure with its unit, "
            "e.g. 100bar",
        ),
        (
            "5L",
            True,
            UnitsError,
            "--p: '5L' has the volume unit 'L'; expected an absolute pressure with its unit, "
            "e.g. 100bar",
        ),
        (
            "-2bar",
            False,
            SettingsError,
            "--p: '-2bar' is not above vacuum; expected a gauge pressure > -1.01325 bar with its "
            "unit, e.g. 100bar",
        ),
        (
            "0bar",
            True,
            SettingsError,
            "--p: '0bar' is not above vacuum; expected an absolute pressure > 0 bar with its "
            "unit, e.g. 100bar",
        ),
    ],
)
def test_pressure_levels_refused(text, absolute, error, message):
    with refused(error, message):
        parse_pressure(text, "--p", absolute=absolute)


def test_pressure_differences_are_taken_as_typed():
    assert parse_pressure_difference("5bar", "--line-loss") == pytest.approx(5e5)
    assert parse_pressure_difference("0", "--line-loss") == 0.0
    assert parse_pressure_difference("210GPa", "--m", above=0.0) == pytest.approx(210e9)
    with refused(
        SettingsError,
        "--line-loss: '-1bar' is below 0 bar; expected a pressure ≥ 0 bar with its unit, "
        "e.g. 100bar",
    ):
        parse_pressure_difference("-1bar", "--line-loss")
    with refused(
        SettingsError,
        "--precharge-step: '0bar' is not above 0 bar; expected a pressure > 0 bar with its "
        "unit, e.g. 100bar",
    ):
        parse_pressure_difference("0bar", "--precharge-step", at_least=None, above=0.0)


# --------------------------------------------------------------------------- flow, volume, time
def test_flow_volume_length():
    assert parse_flow("60L/min", "--leakage") == pytest.approx(1e-3)
    assert parse_flow("1gpm", "--flow") == pytest.approx(US_GALLON / 60)
    assert parse_volume("5L", "--volume") == pytest.approx(5e-3)
    assert parse_volume("1gal", "--volume") == pytest.approx(US_GALLON)
    assert parse_length("25mm", "--pipe-diameter") == pytest.approx(0.025)
    with refused(
        UnitsError,
        "--leakage: '1L' has the volume unit 'L'; expected a flow ≥ 0 L/min with its unit, "
        "e.g. 120L/min",
    ):
        parse_flow("1L", "--leakage")
    with refused(
        SettingsError,
        "--volume: '-5L' is below 0 L; expected a volume ≥ 0 L with its unit, e.g. 5L",
    ):
        parse_volume("-5L", "--volume")
    with refused(
        UnitsError,
        "--volume: '5kg' has the unit 'kg', which is not a volume unit; expected a volume ≥ 0 L "
        "with its unit, e.g. 5L",
    ):
        parse_volume("5kg", "--volume")
    with refused(
        UnitsError,
        "--wall: '3' has no unit; expected a length ≥ 0 mm with its unit, e.g. 25mm",
    ):
        parse_length("3", "--wall")


@pytest.mark.parametrize(
    ("text", "seconds"),
    [("1s", 1.0), ("10ms", 0.01), ("1.5min", 90.0), ("0", 0.0), ("-0", 0.0), ("2 h", 7200.0)],
)
def test_durations(text, seconds):
    assert parse_duration(text, "--step") == pytest.approx(seconds)


def test_duration_with_a_default_unit():
    assert parse_duration("4000", "--hours", default_unit="h") == pytest.approx(4000 * 3600)
    assert parse_duration("30d", "--hours", default_unit="h") == pytest.approx(30 * 86400)
    with refused(
        SettingsError,
        "--hours: '0' is not above 0 h; expected a time > 0 h, a bare number in h or one with "
        "its unit, e.g. 4000",
    ):
        parse_duration("0", "--hours", at_least=None, above=0.0, default_unit="h", example="4000")


@pytest.mark.parametrize(
    ("text", "error", "message"),
    [
        (
            "-1s",
            SettingsError,
            "--min-dwell: '-1s' is below 0 s; expected a time ≥ 0 s with its unit, e.g. 1s",
        ),
        (
            "1",
            UnitsError,
            "--min-dwell: '1' has no unit; expected a time ≥ 0 s with its unit, e.g. 1s",
        ),
        (
            "1bar",
            UnitsError,
            "--min-dwell: '1bar' has the pressure unit 'bar'; expected a time ≥ 0 s with its "
            "unit, e.g. 1s",
        ),
        (
            "1e999s",
            UnitsError,
            "--min-dwell: '1e999s' is not a finite number; expected a time ≥ 0 s with its unit, "
            "e.g. 1s",
        ),
        (
            "inf s",
            UnitsError,
            "--min-dwell: 'inf s' is not a number with a unit; expected a time ≥ 0 s with its "
            "unit, e.g. 1s",
        ),
        (
            "",
            UnitsError,
            "--min-dwell: '' is not a number with a unit; expected a time ≥ 0 s with its unit, "
            "e.g. 1s",
        ),
    ],
)
def test_durations_refused(text, error, message):
    with refused(error, message):
        parse_duration(text, "--min-dwell")


def test_quantities_the_unit_table_does_not_list():
    assert parse_velocity("4m/s", "--velocity") == pytest.approx(4.0)
    assert parse_velocity("3.6km/h", "--velocity") == pytest.approx(1.0)
    assert parse_density("870kg/m3", "--oil-density") == pytest.approx(870.0)
    assert parse_density("0.87g/cm³", "--oil-density") == pytest.approx(870.0)
    assert parse_expansion_coefficient("7e-4/K", "--x") == pytest.approx(7e-4)
    assert parse_expansion_coefficient("7e-4/°C", "--x") == pytest.approx(7e-4)
    assert parse_expansion_coefficient("0/K", "--x") == 0.0
    with refused(
        UnitsError,
        "--velocity: '4bar' has the pressure unit 'bar'; expected a velocity ≥ 0 m/s with its "
        "unit, e.g. 4m/s",
    ):
        parse_velocity("4bar", "--velocity")
    with refused(
        SettingsError,
        "--oil-density: '0kg/m3' is not above 0 kg/m3; expected a density > 0 kg/m3 with its "
        "unit, e.g. 870kg/m3",
    ):
        parse_density("0kg/m3", "--oil-density")
    with refused(
        UnitsError,
        "--x: '7e-4' has no unit; expected an expansion coefficient ≥ 0/K with its unit, "
        "e.g. 7e-4/K",
    ):
        parse_expansion_coefficient("7e-4", "--x")


# --------------------------------------------------------------------------- temperatures
@pytest.mark.parametrize(
    ("text", "celsius"),
    [
        ("10..50", (10, 50)),
        ("-20..60", (-20, 60)),
        ("20", (20, 20)),
        ("-20 °C..60°C", (-20, 60)),
        ("10..50°C", (10, 50)),
        ("10degC..50 degC", (10, 50)),
        ("10C..50c", (10, 50)),
        (" 0 .. 40 ", (0, 40)),
        ("-60..200", (-60, 200)),  # the glossary's plausible range, ends included
    ],
)
def test_temperature_ranges(text, celsius):
    lo, hi = parse_temperature_range(text, "--temperature")
    assert (lo - ZERO_C, hi - ZERO_C) == pytest.approx(celsius, abs=1e-9)


RANGE = (
    "a range in °C as LO..HI or one value, e.g. 10..50, -20..60 or 20 (°F with its unit, e.g. "
    "50degF..120degF)"
)


@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("warm", f"'warm' is not a temperature in °C or °F; expected {RANGE}"),
        ("10 to 50", f"'10 to 50' is not a temperature in °C or °F; expected {RANGE}"),
        ("10..50K", f"'10..50K' is not a temperature in °C or °F; expected {RANGE}"),
        (
            "50..10",
            "'50..10' runs from hot to cold; expected the colder end first, 10..50 (°C)",
        ),
        (
            "10..300",
            "'10..300' has 300 °C, outside the plausible -60 … 200 °C; expected temperatures in "
            "°C from -60 to 200, e.g. 10..50",
        ),
        (
            "-80",
            "'-80' has -80 °C, outside the plausible -60 … 200 °C; expected temperatures in "
            "°C from -60 to 200, e.g. 10..50",
        ),
        (
            "１０..５０",
            f"'１０..５０' has a digit other than 0-9 ('１', U+FF11); expected {RANGE}",
        ),
    ],
)
def test_temperature_ranges_refused(text, message):
    with refused(SettingsError, f"--temperature: {message}"):
        parse_temperature_range(text, "--temperature")


def test_one_temperature():
    assert parse_temperature("15", "--ambient") == pytest.approx(ZERO_C + 15)
    assert parse_temperature("-5°C", "--ambient") == pytest.approx(ZERO_C - 5)
    assert parse_temperature("15..15", "--ambient") == pytest.approx(ZERO_C + 15)
    with refused(
        SettingsError, "--ambient: '10..20' is a range; expected one temperature in °C, e.g. 15"
    ):
        parse_temperature("10..20", "--ambient")


def test_temperature_steps():
    assert parse_temperature_step("5", "--step") == 5.0
    assert parse_temperature_step("2.5 K", "--step") == 2.5
    assert parse_temperature_step("10°C", "--step") == 10.0
    for text, found in [("0", "is not above 0 K"), ("-5", "is not above 0 K")]:
        with refused(
            SettingsError, f"--step: '{text}' {found}; expected a step > 0 K, e.g. 5 or 5K"
        ):
            parse_temperature_step(text, "--step")
    with refused(
        SettingsError,
        "--step: 'fine' is not a number of kelvin; expected a step > 0 K, e.g. 5 or 5K",
    ):
        parse_temperature_step("fine", "--step")


# --------------------------------------------------------------------------- plain numbers
FRACTION = "as a percentage or a number, e.g. 10% or 0.1"


def test_fractions():
    assert parse_fraction("10%", "--relief-margin") == pytest.approx(0.1)
    assert parse_fraction("0.1", "--relief-margin") == pytest.approx(0.1)
    assert parse_fraction(" 0.1 % ", "--mip-gap") == pytest.approx(0.001)
    assert parse_fraction("-5%", "--discount-rate", at_least=None) == pytest.approx(-0.05)
    with refused(
        SettingsError,
        f"--relief-margin: 'lots' is not a percentage or a fraction; expected a fraction "
        f"≥ 0 %, {FRACTION}",
    ):
        parse_fraction("lots", "--relief-margin")
    with refused(
        SettingsError,
        f"--relief-margin: '-5%' is below 0 %; expected a fraction ≥ 0 %, {FRACTION}",
    ):
        parse_fraction("-5%", "--relief-margin")
    with refused(
        SettingsError,
        f"--flow-margin: '60%' is not below 50 %; expected a fraction ≥ 0 % and < 50 %, {FRACTION}",
    ):
        parse_fraction("60%", "--flow-margin", below=0.5)
    with refused(
        SettingsError,
        f"--r: '150%' is above 100 %; expected a fraction > -50 % and ≤ 100 %, {FRACTION}",
    ):
        parse_fraction("150%", "--r", at_least=None, above=-0.5, at_most=1.0)


def test_rates_per_hour():
    assert parse_per_hour("360/h", "--m") == 360.0
    assert parse_per_hour("360", "--m") == 360.0
    assert parse_per_hour("6/min", "--m") == 360.0
    assert parse_per_hour("6 / minute", "--m") == 360.0
    assert parse_per_hour("none", "--m", allow_none=True) is None
    assert parse_per_hour("Unlimited", "--m", allow_none=True) is None
    with refused(
        SettingsError,
        "--m: 'often' is not a rate; expected a rate > 0 per hour, e.g. 360/h or 6/min, or none",
    ):
        parse_per_hour("often", "--m", allow_none=True)
    with refused(
        SettingsError,
        "--m: 'none' is not a rate; expected a rate > 0 per hour, e.g. 360/h or 6/min",
    ):
        parse_per_hour("none", "--m")
    with refused(
        SettingsError,
        "--m: '0.5/h' is below 1 per hour; expected a rate ≥ 1 per hour, e.g. 360/h or 6/min",
    ):
        parse_per_hour("0.5/h", "--m", at_least=1.0, above=None)


def test_energy_prices():
    kwh = 3.6e6  # J per kWh (SI brochure, 9th ed., 2019: 1 h = 3600 s)
    value, currency = parse_energy_price("0.25/kWh", "--energy-price")
    assert (value * kwh, currency) == (pytest.approx(0.25), "")
    value, currency = parse_energy_price("250 EUR/MWh", "--energy-price")
    assert (value * kwh, currency) == (pytest.approx(0.25), "EUR")
    assert parse_energy_price("0.11 $/kWh", "--energy-price")[1] == "$"
    price = "expected a price ≥ 0 per energy unit, e.g. 0.25/kWh or 0.11 EUR/kWh"
    with refused(UnitsError, f"--energy-price: 'cheap' is not a price per energy unit; {price}"):
        parse_energy_price("cheap", "--energy-price")
    with refused(UnitsError, f"--energy-price: '0.25/kW' has the power unit 'kW'; {price}"):
        parse_energy_price("0.25/kW", "--energy-price")
    with refused(SettingsError, f"--energy-price: '-1/kWh' is negative; {price}"):
        parse_energy_price("-1/kWh", "--energy-price")


def test_whole_numbers():
    assert parse_whole("8", "--max-count", at_least=1, at_most=64) == 8
    assert parse_whole(8, "--max-count") == 8
    assert parse_whole(" +3 ", "--queue", at_least=0) == 3
    for text, found in [
        ("2.5", "is not a whole number"),
        ("eight", "is not a whole number"),
        ("1e3", "is not a whole number"),
        ("0", "is below 1"),
        ("65", "is above 64"),
    ]:
        with refused(
            SettingsError, f"--max-count: '{text}' {found}; expected a whole number from 1 to 64"
        ):
            parse_whole(text, "--max-count", at_least=1, at_most=64)


def test_plain_numbers():
    assert parse_number("1.4", "--f", above=0.0) == 1.4
    assert parse_number("-2e-1", "--f") == -0.2
    for text, found in [("nan", "is not a number"), ("1_000", "is not a number")]:
        with refused(SettingsError, f"--f: '{text}' {found}; expected a number > 0"):
            parse_number(text, "--f", above=0.0)
    with refused(SettingsError, "--f: '1e999' is not a finite number; expected a number"):
        parse_number("1e999", "--f")
    with refused(SettingsError, "--f: '1' is not above 1; expected a number > 1"):
        parse_number("1", "--f", above=1.0)


# --------------------------------------------------------------------------- words
def test_choices_and_processes():
    assert parse_choice(" Real ", "--gas", ("ideal", "real")) == "real"
    with refused(SettingsError, "--gas: 'air' is not a choice here; expected ideal or real"):
        parse_choice("air", "--gas", ("ideal", "real"))
    assert parse_choices("bladder, Piston", "--types", ("bladder", "piston")) == (
        "bladder",
        "piston",
    )
    with refused(
        SettingsError,
        "--types: 'bladder,foo' names unknown foo; expected a comma-separated list of bladder, "
        "piston",
    ):
        parse_choices("bladder,foo", "--types", ("bladder", "piston"))
    with refused(
        SettingsError, "--types: ',' names none; expected a comma-separated list of bladder"
    ):
        parse_choices(",", "--types", ("bladder",))
    for text in ("auto", "isothermal", "Adiabatic", "isentropic", "polytropic:1.3"):
        assert parse_gas_process(text, "--process") == text.lower()
    expected = "expected auto, isothermal, adiabatic or polytropic:N, e.g. polytropic:1.3"
    with refused(SettingsError, f"--process: 'polytropic' has no index; {expected}"):
        parse_gas_process("polytropic", "--process")
    with refused(
        SettingsError, f"--process: 'polytropic:n' has an index that is not a number; {expected}"
    ):
        parse_gas_process("polytropic:n", "--process")
    with refused(SettingsError, f"--process: 'warm' is not a gas process; {expected}"):
        parse_gas_process("warm", "--process")
    with refused(
        SettingsError,
        "--process: 'auto' is not a gas process; expected isothermal, adiabatic or "
        "polytropic:N, e.g. polytropic:1.3",
    ):
        parse_gas_process("auto", "--process", allow_auto=False)


# --------------------------------------------------------------------------- ASCII digits
@pytest.mark.parametrize(
    ("text", "digit"),
    [
        ("５L", "'５', U+FF15"),  # full-width digit five
        ("٥L", "'٥', U+0665"),  # Arabic-Indic digit five
        ("۵L", "'۵', U+06F5"),  # extended Arabic-Indic digit five
        ("५L", "'५', U+096B"),  # Devanagari digit five
    ],
)
def test_only_ascii_digits(text, digit):
    # Python's float() reads all of these as 5.
    assert float(text[0]) == 5.0
    with refused(
        UnitsError,
        f"--volume: '{text}' has a digit other than 0-9 ({digit}); expected a volume ≥ 0 L "
        "with its unit, e.g. 5L",
    ):
        parse_volume(text, "--volume")


@pytest.mark.parametrize(
    "call",
    [
        lambda: parse_whole("٣", "--o"),
        lambda: parse_number("٣", "--o"),
        lambda: parse_fraction("٣%", "--o"),
        lambda: parse_per_hour("٣/h", "--o"),
        lambda: parse_energy_price("٣/kWh", "--o"),
        lambda: parse_temperature_step("٣", "--o"),
        lambda: parse_temperature("٣", "--o"),
        lambda: parse_gas_process("polytropic:١.٣", "--o"),
        lambda: parse_pressure("٣bar", "--o"),
        lambda: check_digits("a,٣L", "--o", "NAME,VOL"),
    ],
)
def test_every_kind_refuses_other_digits(call):
    with pytest.raises((SettingsError, UnitsError), match=r"^--o: .* has a digit other than 0-9"):
        call()


def test_unit_superscripts_are_not_digits():
    assert parse_volume("2000cm³", "--volume") == pytest.approx(2e-3)


# --------------------------------------------------------------------------- settings
def _example(help_text: str) -> str | None:
    m = re.search(r"e\.g\. ([^\s,;)]+)", help_text)
    return m.group(1) if m else None


@pytest.mark.parametrize("key", list(DESIGN_OPTIONS))
def test_every_design_option_reads_its_own_example(key):
    example = _example(DESIGN_OPTIONS[key][2]) or {
        "gas": "ideal",
        "process": "isothermal",
        "motor_sizing": "working",
        "max_count": "4",
        "types": "bladder,piston",
    }.get(key)
    assert example is not None, key
    design_settings({key: example})


@pytest.mark.parametrize("key", list(COST_OPTIONS))
def test_every_cost_option_reads_its_own_example(key):
    example = _example(COST_OPTIONS[key][1]) or {
        "hours_per_year": "4000",
        "cycles_per_hour": "120",
        "years": "10",
        "discount_rate": "5%",
        "installation_factor": "1.4",
        "currency": "EUR",
    }.get(key)
    assert example is not None, key
    cost_settings({key: example})


def test_design_settings_from_text():
    s = design_settings(
        {
            "temperature": "-20..60",
            "line_loss": "3bar",
            "relief_margin": "15%",
            "max_load_events": "none",
            "types": "piston",
            "time_constant": "",  # blank: the default
            "min_loaded_dwell": None,
        }
    )
    assert (s.t_min, s.t_max) == pytest.approx((ZERO_C - 20, ZERO_C + 60))
    assert s.line_loss == pytest.approx(3e5) and s.relief_margin == pytest.approx(0.15)
    assert s.max_load_events_per_hour is None and s.types == ("piston",)
    assert s.time_constant == DesignSettings().time_constant
    base = DesignSettings(time_limit=5.0)
    assert design_settings({}, base=base) == base


@pytest.mark.parametrize(
    ("values", "message"),
    [
        ({"warmth": "1"}, "unknown design option 'warmth'"),
        (
            {"min_loaded_dwell": "-1s"},
            "--min-loaded-dwell: '-1s' is below 0 s; expected a time ≥ 0 s with its unit, e.g. 1s",
        ),
        (
            {"max_count": "100"},
            "--max-count: '100' is above 64; expected a whole number from 1 to 64",
        ),
        (
            # A limit only the settings check is still reported with the option's flag.
            {"temperature": "180"},
            "--temperature: design settings: operating temperatures must lie between −73 °C "
            "and 177 °C",
        ),
        (
            {"mip_gap": "0"},
            f"--mip-gap: '0' is not above 0 %; expected a fraction > 0 % and < 50 %, {FRACTION}",
        ),
    ],
)
def test_design_settings_refusals(values, message):
    with refused(SettingsError, message):
        design_settings(values)


def test_cost_settings_from_text():
    s = cost_settings({"energy_price": "250 EUR/MWh", "cycles_per_hour": "2/min", "years": "15"})
    assert s.energy_price_per_kwh == pytest.approx(0.25) and s.currency == "EUR"
    assert s.cycle_time == pytest.approx(30.0) and s.years == 15
    assert cost_settings({"energy_price": "0.3 $/kWh", "currency": "USD"}).currency == "USD"
    assert cost_settings({"discount_rate": "-5%"}).discount_rate == pytest.approx(-0.05)
    assert cost_settings({}) == CostSettings()


@pytest.mark.parametrize(
    ("values", "message"),
    [
        ({"price": "1"}, "unknown cost option 'price'"),
        (
            {"cycles_per_hour": "120", "cycle_time": "40s"},
            "--cycles-per-hour '120' and --cycle-time '40s' both given; expected one of them",
        ),
        (
            {"hours_per_year": "9000"},
            "--hours-per-year: cost settings: operating time must be > 0 h and at most 8766 h "
            "per year, got 9000.0 h",
        ),
        (
            {"installation_factor": "0"},
            "--installation-factor: '0' is not above 0; expected a number > 0",
        ),
        (
            {"cycle_time": "0s"},
            "--cycle-time: '0s' is not above 0 s; expected a time > 0 s with its unit, e.g. 1s",
        ),
    ],
)
def test_cost_settings_refusals(values, message):
    with refused(SettingsError, message):
        cost_settings(values)


@pytest.mark.parametrize(
    ("text", "fraction", "minimum"),
    [
        ("10%", 0.10, 0.0),
        ("0.15", 0.15, 0.0),
        ("15bar", 0.0, 15e5),
        ("200psi", 0.0, 200 * 6894.757),
    ],
)
def test_switch_differential_is_a_share_or_a_pressure(text, fraction, minimum):
    # 1 psi = 6894.757 Pa (NIST SP 811, appendix B: sources.NIST_SP811).
    s = design_settings({"switch_differential": text})
    assert s.switch_differential == pytest.approx(fraction)
    assert s.switch_differential_min == pytest.approx(minimum, rel=1e-6)


def test_switch_and_motor_options_are_refused_in_one_line():
    with pytest.raises(SettingsError, match=r"^--switch-differential: '60%' is not below 50 %"):
        design_settings({"switch_differential": "60%"})
    with pytest.raises(SettingsError, match=r"^--switch-tolerance: '20%' is not below 10 %"):
        design_settings({"switch_tolerance": "20%"})
    with pytest.raises(SettingsError, match=r"^--motor-sizing: 'shaft' is not a choice here"):
        design_settings({"motor_sizing": "shaft"})
