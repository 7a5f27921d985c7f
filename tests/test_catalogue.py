"""Component catalogue: the demo catalogue, SI conversion, defaults and every bad input."""

from __future__ import annotations

import math

import pytest
import stowflow.catalogue as catalogue_module
from sources import IEC_60034_30_1, IEC_60072_1, ISO_3
from stowflow.catalogue import (
    ACCUMULATOR_TYPES,
    default_catalogue_path,
    load_catalogue,
    parse_catalogue_text,
)
from stowflow.errors import CatalogueError
from stowflow.units import P_AMBIENT

MINIMAL = """
[[pump]]
displacement_cm3 = 28
speed_rpm = 1450
max_pressure_bar = 250
volumetric_efficiency = 0.93
overall_efficiency = 0.85
price = 900

[[motor]]
rated_kw = 7.5
efficiency = 0.904
price = 700
"""

BLADDER = """
[[accumulator]]
type = "bladder"
nominal_volume_l = 10
max_pressure_bar = 330
price = 1200
"""

# sources.IEC_60034_30_1 (with EU Regulation 2019/1781), IE3 minimum efficiency, 4-pole 50 Hz,
# in %, from memory.  The demo catalogue must carry exactly these values.
IE3_4POLE_50HZ = {
    0.75: 82.5, 1.1: 84.1, 1.5: 85.3, 2.2: 86.7, 3: 87.7, 4: 88.6, 5.5: 89.6, 7.5: 90.4,
    11: 91.4, 15: 92.1, 18.5: 92.6, 22: 93.0, 30: 93.6, 37: 93.9, 45: 94.2, 55: 94.6,
    75: 95.0, 90: 95.2, 110: 95.4, 132: 95.6, 160: 95.8,
}  # fmt: skip

# sources.IEC_60072_1 output ratings, kW (from memory).
IEC_60072_RATINGS = {
    0.12, 0.18, 0.25, 0.37, 0.55, 0.75, 1.1, 1.5, 2.2, 3, 4, 5.5, 7.5, 11, 15, 18.5, 22, 30,
    37, 45, 55, 75, 90, 110, 132, 160, 200, 250, 315, 355, 400,
}  # fmt: skip

# sources.ISO_3 preferred numbers, R20 series (contains R10 and R5).
ISO3_R20 = (1.00, 1.12, 1.25, 1.40, 1.60, 1.80, 2.00, 2.24, 2.50, 2.80, 3.15, 3.55, 4.00, 4.50,
            5.00, 5.60, 6.30, 7.10, 8.00, 9.00)  # fmt: skip


def _is_preferred(value: float) -> bool:
    """True when ``value`` is an R20 number times a power of ten (rounded R20 allowed)."""
    mantissa = value / 10 ** math.floor(math.log10(value))
    return any(abs(mantissa - r) <= 0.006 * r for r in ISO3_R20)


# -- the demo catalogue ----------------------------------------------------------------------


def test_demo_catalogue_loads_with_every_type():
    cat = load_catalogue(default_catalogue_path())
    assert cat.accumulator_types == ACCUMULATOR_TYPES
    assert len(cat.pumps) >= 10 and len(cat.motors) >= 18
    assert cat.currency == "EUR" and "placeholder" in cat.notes[0]
    assert {p.control for p in cat.pumps} == {"fixed", "pressure-compensated", "load-sensing"}
    assert len(cat.drives) >= 18


def test_demo_catalogue_says_it_is_invented():
    head = default_catalogue_path().read_text(encoding="utf-8")[:1500]
    assert "INVENTED" in head and "PLACEHOLDER" in head
    assert "ISO 3" in head and "IEC 60072-1" in head and "IEC 60034-30-1" in head


def test_demo_motor_efficiencies_are_the_ie3_minimums():
    # sources.IEC_60034_30_1 IE3 table; ratings from sources.IEC_60072_1 (both from memory).
    for motor in load_catalogue(default_catalogue_path()).motors:
        kw = motor.rated_power / 1e3
        assert round(kw, 2) in IEC_60072_RATINGS, str(IEC_60072_1)
        ie3 = IE3_4POLE_50HZ[round(kw, 2)] / 100
        assert motor.efficiency == pytest.approx(ie3, abs=5e-5), str(IEC_60034_30_1)
        assert motor.efficiency_class == "IE3"


def test_demo_sizes_are_iso3_preferred_numbers():
    cat = load_catalogue(default_catalogue_path())
    for acc in cat.accumulators:
        assert _is_preferred(acc.nominal_volume * 1e3), f"{acc.name}: {ISO_3}"
    for pump in cat.pumps:
        assert _is_preferred(pump.displacement * 1e6), f"{pump.name}: {ISO_3}"


def test_si_conversion_and_defaults():
    cat = parse_catalogue_text(BLADDER + MINIMAL, source="c.toml")
    acc, pump, motor = cat.accumulators[0], cat.pumps[0], cat.motors[0]
    assert acc.nominal_volume == pytest.approx(0.010, rel=1e-12)
    assert acc.max_pressure == pytest.approx(330e5 + P_AMBIENT, rel=1e-12)  # PS is gauge
    assert acc.bore == 0.0 and acc.max_flow is None and acc.swept_volume is None
    assert acc.name == "bladder 10 L 330 bar" and not acc.has_piston
    assert pump.displacement == pytest.approx(28e-6, rel=1e-12)
    assert pump.speed == pytest.approx(1450 / 60, rel=1e-12)
    # Hand computation: 28 cm³ × 1450 rpm × 0.93 = 37.758 L/min.
    assert pump.flow * 60e3 == pytest.approx(37.758, rel=1e-12)
    assert pump.control == "fixed" and pump.name == "pump 28 cm³/rev 1450 rpm"
    assert motor.rated_power == 7500.0 and motor.name == "motor 7.5 kW"
    assert motor.efficiency_class is None
    assert cat.currency == "" and cat.limits == {} and cat.source == "c.toml"


def test_optional_keys_and_limits():
    text = (
        'currency = "USD"\nnotes = ["a", "b"]\n'
        '[[accumulator]]\ntype = "piston-bottles"\nnominal_volume_l = 125\n'
        "max_pressure_bar = 350\nbore_mm = 160\nswept_volume_l = 25\nprice = 1\n"
        'model = "PB-125"\nmax_flow_lps = 40\n'
        + MINIMAL
        + "\n[limits.bladder]\nmax_pressure_ratio = 4\n"
        "[limits.gas-over-oil]\nmax_pressure_bar = 60.5\n"
    )
    cat = parse_catalogue_text(text)
    acc = cat.accumulators[0]
    assert acc.name == "PB-125" and acc.bore == pytest.approx(0.16)
    assert acc.swept_volume == pytest.approx(0.025) and acc.max_flow == pytest.approx(0.04)
    assert cat.limits == {
        "bladder": {"max_pressure_ratio": 4.0},
        "gas-over-oil": {"max_pressure_bar": 60.5},
    }
    assert cat.currency == "USD" and cat.notes == ("a", "b")


def test_pump_motor_and_drive_loss_keys():
    # New optional keys (duty_cycles/README.md) in SI; the loss model is fitted to the points.
    text = (
        "[[pump]]\ndisplacement_cm3 = 100\nspeed_rpm = 1500\nmax_pressure_bar = 280\n"
        "volumetric_efficiency = 0.95\noverall_efficiency = 0.9\nprice = 1\n"
        'control = "load-sensing"\nrated_pressure_bar = 250\ndrag_share = 0.2\n'
        "min_speed_rpm = 300\ncontrol_flow_lpm = 2\nload_sensing_margin_bar = 20\n"
        "[[pump]]\ndisplacement_cm3 = 50\nspeed_rpm = 1500\nmax_pressure_bar = 250\n"
        "volumetric_efficiency = 0.95\noverall_efficiency = 0.9\nprice = 1\n"
        "efficiency_points = [[250, 0.95, 0.9], [100, 0.98, 0.88]]\n"
        "[[motor]]\nrated_kw = 10\nefficiency = 0.9\nprice = 1\n"
        "part_load_efficiency = [[0.25, 0.8], [0.5, 0.87], [1.0, 0.9]]\n"
        "[[drive]]\nrated_kw = 11\nefficiency = 0.97\nprice = 900\n"
        "[[drive]]\nrated_kw = 15\nefficiency = 0.97\nprice = 1100\n"
        'name = "vfd 15"\npart_load_efficiency = [[0.25, 0.93], [1, 0.97]]\n'
    )
    cat = parse_catalogue_text(text)
    ls, pts = cat.pumps
    assert ls.control == "load-sensing" and ls.variable
    assert ls.rated_pressure == pytest.approx(250e5 + P_AMBIENT, rel=1e-12)
    assert ls.drag_share == 0.2 and ls.min_speed == pytest.approx(5.0) == ls.lowest_speed
    assert ls.control_flow == pytest.approx(2 / 60e3) and ls.load_sensing_margin == 20e5
    # hand calculation: leakage coefficient (1 − η_v)·D·n / Δp_r = 0.05 × 100e-6 × 25 / 250e5
    assert ls.losses.leakage == pytest.approx(0.05 * 100e-6 * 25 / 250e5, rel=1e-12)
    assert pts.efficiency_points[1] == pytest.approx((100e5 + P_AMBIENT, 0.98, 0.88))
    ev, _, eo = pts.losses.efficiencies(100e5)
    assert 0.97 < ev < 0.99 and 0.85 < eo < 0.9  # fitted through two points
    assert pts.lowest_speed == pytest.approx(0.2 * 25.0)  # default: a fifth of rated speed
    motor = cat.motors[0]
    assert motor.part_load == ((0.25, 0.8), (0.5, 0.87), (1.0, 0.9))
    assert float(motor.losses.efficiency(0.5)) == pytest.approx(0.87, abs=0.01)
    d11, d15 = cat.drives
    assert d11.name == "drive 11 kW" and d11.rated_power == 11e3 and d11.part_load == ()
    assert d15.name == "vfd 15" and float(d15.losses.efficiency(1.0)) == pytest.approx(
        0.97, abs=1e-3
    )


def test_catalogue_without_drives_is_still_read():
    cat = parse_catalogue_text(MINIMAL)
    assert cat.drives == ()


def test_demo_drives_follow_the_motor_ratings():
    # IEC 60072-1 output ratings, as the motors.
    cat = load_catalogue(default_catalogue_path())
    for drive in cat.drives:
        assert round(drive.rated_power / 1e3, 2) in IEC_60072_RATINGS
    assert {d.rated_power for d in cat.drives} == {m.rated_power for m in cat.motors}


def test_accumulators_may_be_empty(tmp_path):
    path = tmp_path / "pumps_only.toml"
    path.write_text(MINIMAL, encoding="utf-8")
    cat = load_catalogue(path)
    assert cat.accumulators == () and cat.accumulator_types == ()


# -- bad catalogues --------------------------------------------------------------------------


def _pumps(n: int, **override) -> str:
    """``n`` valid pump tables; ``override`` replaces keys of the last one."""
    rows = []
    for i in range(n):
        keys = {
            "displacement_cm3": 10 + i,
            "speed_rpm": 1450,
            "max_pressure_bar": 250,
            "volumetric_efficiency": 0.93,
            "overall_efficiency": 0.85,
            "price": 500,
        }
        if i == n - 1:
            keys.update(override)
        keys = {k: v for k, v in keys.items() if v is not None}
        rows.append("[[pump]]\n" + "".join(f"{k} = {_toml(v)}\n" for k, v in keys.items()))
    return "\n".join(rows)


def _toml(value) -> str:
    if isinstance(value, bool):
        return str(value).lower()
    if isinstance(value, str):
        return f'"{value}"'
    return str(value)


MOTOR = "\n[[motor]]\nrated_kw = 7.5\nefficiency = 0.904\nprice = 700\n"


def _acc(**keys) -> str:
    return "[[accumulator]]\n" + "".join(f"{k} = {_toml(v)}\n" for k, v in keys.items())


BAD_CATALOGUES = [
    (
        _pumps(3, overall_efficiency=1.3) + MOTOR,
        r"cat.toml, line 17, \[\[pump\]\] #3: overall_efficiency 1.3 is above 1; "
        r"expected 0.05 to 1",
    ),
    (_pumps(1, speed_rpm=0) + MOTOR, r"\[\[pump\]\] #1: speed_rpm 0 is not > 0"),
    (_pumps(1, price=-5) + MOTOR, r"\[\[pump\]\] #1: price -5 is not >= 0"),
    (_pumps(1, displacement_cm3="28") + MOTOR, r"displacement_cm3 must be a number, found text"),
    (_pumps(1, speed_rpm=True) + MOTOR, r"speed_rpm must be a number, found boolean True"),
    (_pumps(1, speed_rpm="nan") + MOTOR, r"speed_rpm must be a number"),
    (_pumps(1, max_pressure_bar=1e7) + MOTOR, r"max_pressure_bar 1e\+07 is above 2000"),
    (
        _pumps(1, displacment_cm3=28) + MOTOR,
        r"unknown key 'displacment_cm3' \(did you mean 'displacement_cm3'\?\)",
    ),
    (_pumps(1, price=None) + MOTOR, r"\[\[pump\]\] #1: missing key 'price'"),
    (
        _pumps(1, control="variable") + MOTOR,
        r"control 'variable' is not valid; expected one of fixed, pressure-compensated",
    ),
    (
        _pumps(1, overall_efficiency=0.95, volumetric_efficiency=0.9) + MOTOR,
        r"overall_efficiency 0.95 is above volumetric_efficiency 0.9",
    ),
    (
        _pumps(2, displacement_cm3=10) + MOTOR,
        r"\[\[pump\]\] #2: name 'pump 10 cm³/rev 1450 rpm' is already used by #1",
    ),
    (
        _pumps(1) + "\n[[motor]]\nrated_kw = 7.5\nefficiency = 1.02\nprice = 1\n",
        r"\[\[motor\]\] #1: efficiency 1.02 is above 1",
    ),
    (
        _pumps(1) + "\n[[motor]]\nrated_kw = 0.001\nefficiency = 0.9\nprice = 1\n",
        r"rated_kw 0.001 is below 0.01",
    ),
    (_pumps(1), r"no \[\[motor\]\] tables; expected at least one motor"),
    (MOTOR, r"no \[\[pump\]\] tables; expected at least one pump"),
    (
        "[pump]\ndisplacement_cm3 = 28\n" + MOTOR,
        r"'pump' must be an array of tables written \[\[pump\]\], found a table",
    ),
    ("pumps = 3\n" + _pumps(1) + MOTOR, r"unknown top-level key 'pumps' \(did you mean 'pump'\?\)"),
    ("[[pump]\nspeed_rpm = 1\n", r"TOML syntax error: .*line 1"),
    ("currency = 3\n" + _pumps(1) + MOTOR, r"currency 3; expected text"),
    ("notes = 3\n" + _pumps(1) + MOTOR, r"notes 3; expected text or a list of texts"),
    (
        _acc(type="bladdr", nominal_volume_l=10, max_pressure_bar=330, price=1) + _pumps(1) + MOTOR,
        r"\[\[accumulator\]\] #1: type 'bladdr' is not valid \(did you mean 'bladder'\?\)",
    ),
    (
        _acc(type="piston", nominal_volume_l=10, max_pressure_bar=350, price=1) + _pumps(1) + MOTOR,
        r"type 'piston' needs bore_mm > 0",
    ),
    (
        _acc(type="bladder", nominal_volume_l=10, max_pressure_bar=330, bore_mm=80, price=1)
        + _pumps(1)
        + MOTOR,
        r"bore_mm 80 on a 'bladder'; expected 0",
    ),
    (
        _acc(type="piston-bottles", nominal_volume_l=60, max_pressure_bar=350, bore_mm=125, price=1)
        + _pumps(1)
        + MOTOR,
        r"type 'piston-bottles' needs swept_volume_l",
    ),
    (
        _acc(
            type="piston",
            nominal_volume_l=10,
            max_pressure_bar=350,
            bore_mm=125,
            swept_volume_l=12,
            price=1,
        )
        + _pumps(1)
        + MOTOR,
        r"swept_volume_l 12 is above nominal_volume_l 10",
    ),
    (
        _acc(
            type="diaphragm", nominal_volume_l=1, max_pressure_bar=250, swept_volume_l=0.5, price=1
        )
        + _pumps(1)
        + MOTOR,
        r"swept_volume_l on a 'diaphragm'",
    ),
    (
        _acc(type="bladder", nominal_volume_l=0, max_pressure_bar=330, price=1) + _pumps(1) + MOTOR,
        r"nominal_volume_l 0 is not > 0",
    ),
    (
        _acc(type="bladder", nominal_volume_l=1e6, max_pressure_bar=330, price=1)
        + _pumps(1)
        + MOTOR,
        r"nominal_volume_l 1e\+06 is above 5000; expected 0.01 to 5000 L",
    ),
    (
        _acc(
            type="bladder", nominal_volume_l=10, max_pressure_bar=330, price=1, name="A", model="B"
        )
        + _pumps(1)
        + MOTOR,
        r"both 'name' and 'model'",
    ),
    (
        _acc(type="bladder", nominal_volume_l=10, max_pressure_bar=330, price=1, name="  ")
        + _pumps(1)
        + MOTOR,
        r"name '  '; expected non-empty text",
    ),
    (
        _acc(type="bladder", nominal_volume_l=10, max_pressure_bar=330, price=1, max_flow_lps=-1)
        + _pumps(1)
        + MOTOR,
        r"max_flow_lps -1 is not > 0",
    ),
    (
        _pumps(1) + MOTOR + "\n[limits.bladdr]\nx = 1\n",
        r"\[limits.bladdr\]: 'bladdr' is not an accumulator type \(did you mean 'bladder'\?\)",
    ),
    (
        _pumps(1) + MOTOR + '\n[limits.bladder]\nx = "high"\n',
        r"\[limits.bladder\]: x must be a number, found text 'high'",
    ),
    (
        _pumps(1) + MOTOR + "\n[limits.bladder]\nx = inf\n",
        r"\[limits.bladder\]: x inf is not finite",
    ),
    (
        "limits = 3\n" + _pumps(1) + MOTOR,
        r"'limits' must be tables \[limits.<type>\], found a integer",
    ),
    # [limits.*] checked in full when the file is read, naming it (regression: a bad limit
    # was accepted and failed later, in the design or the web page's worker).
    (
        _pumps(1) + MOTOR + "\n[limits.bladder]\nmax_pressure_ratio = -3\n",
        r"^cat.toml: \[limits.bladder\] max_pressure_ratio = -3 is outside \(1, ",
    ),
    (
        _pumps(1) + MOTOR + "\n[limits.bladder]\nratio = 3\n",
        r"^cat.toml: \[limits.bladder\]: unknown key 'ratio'; known keys: max_pressure_ratio",
    ),
    # parsing limits: nesting and huge integers (regression: RecursionError, internal error)
    (
        "x = " + "[" * 5000 + "]" * 5000 + "\n",
        r"^cat.toml, line 1: arrays, tables or objects nested more than 32 deep",
    ),
    ("x = " + "{a = " * 40 + "1" + "}" * 40 + "\n", r"nested more than 32 deep"),
    (
        _pumps(1).replace("price = 500", "price = " + "9" * 5000) + MOTOR,
        r"^cat.toml: not a usable TOML catalogue \(Exceeds the limit",
    ),
    (_pumps(1, price=10**400) + MOTOR, r"price is far above 1e\+09; expected 0 to 1e\+09"),
    (_pumps(1, speed_rpm="１４５０") + MOTOR, r"speed_rpm must be a number, found text '１４５０'"),
    (
        _pumps(1) + "efficiency_points = 3\n" + MOTOR,
        r"efficiency_points must be a list of \[pressure \[bar\], volumetric, overall\] numbers",
    ),
    (
        _pumps(1) + "efficiency_points = [[250, 0.93, 0.85]]\n" + MOTOR,
        r"efficiency_points needs at least two points with different pressure \[bar\]",
    ),
    (
        _pumps(1) + "efficiency_points = [[250, 0.93, 0.85], [100, 0.9, 0.95]]\n" + MOTOR,
        r"efficiency_points has an overall efficiency above the volumetric one",
    ),
    (
        _pumps(1) + "efficiency_points = [[250, 0.93, 0.85], [100, 1.2, 0.8]]\n" + MOTOR,
        r"efficiency_points has volumetric 1.2; expected above 0 and at most 1",
    ),
    (_pumps(1, drag_share=1.5) + MOTOR, r"drag_share 1.5 is above 1; expected 0 to 1"),
    (_pumps(1, min_speed_rpm=2000) + MOTOR, r"min_speed_rpm 2000 is above speed_rpm 1450"),
    (
        _pumps(1) + MOTOR + "part_load_efficiency = [[0.5, 0.9], [0.5, 0.91]]\n",
        r"\[\[motor\]\] #1: part_load_efficiency needs at least two points with different load",
    ),
    (
        _pumps(1)
        + MOTOR
        + "\n[[drive]]\nrated_kw = 7.5\nefficiency = 0.97\nprice = 1\nspeed = 3\n",
        r"\[\[drive\]\] #1: unknown key 'speed'",
    ),
    (
        _pumps(1) + MOTOR + "\n[[drive]]\nrated_kw = 7.5\nprice = 1\n",
        r"\[\[drive\]\] #1: missing key 'efficiency'",
    ),
]


@pytest.mark.parametrize(("text", "match"), BAD_CATALOGUES)
def test_bad_catalogue(text, match):
    with pytest.raises(CatalogueError, match=match) as info:
        parse_catalogue_text(text, source="cat.toml")
    message = str(info.value)
    assert message.startswith("cat.toml") and "\n" not in message


def test_bad_catalogue_file(tmp_path):
    with pytest.raises(CatalogueError, match=r"nope.toml: file not found"):
        load_catalogue(tmp_path / "nope.toml")
    with pytest.raises(CatalogueError, match=r": is a folder; expected a TOML catalogue file"):
        load_catalogue(tmp_path)
    path = tmp_path / "latin1.toml"
    path.write_bytes(b"# caf\xe9\n[[pump]]\n")
    with pytest.raises(
        CatalogueError, match=r"latin1.toml, line 1: not UTF-8 text, found byte 0xE9"
    ):
        load_catalogue(path)


def test_missing_default_catalogue_is_a_clear_error(tmp_path, monkeypatch):
    monkeypatch.setattr(catalogue_module, "__file__", str(tmp_path / "pkg" / "catalogue.py"))
    with pytest.raises(CatalogueError, match=r"default catalogue not found"):
        default_catalogue_path()
