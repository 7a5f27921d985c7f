"""Accumulator types and their limits.

Every numeric limit checked here is a default of DEFAULT_RULES: sources.COMMON_PRACTICE (common
practice, no published source).  The tests pin that the rule does what it says, not that the
trade value is right.  The pressure-equipment categories are sources.PED_2014_68_EU (from
memory).
"""

from __future__ import annotations

import math

import pytest
from stowflow.errors import SettingsError
from stowflow.physics.accumulator import (
    DEFAULT_RULES,
    RULE_SOURCE,
    AccumulatorType,
    TypeRules,
    check_limits,
    gas_share,
    max_precharge_for_min_pressure,
    max_pressure_for_precharge,
    min_working_pressure_for_precharge,
    nominal_gas_volume,
    parse_type,
    pressure_equipment_category,
    rules_for,
    shell_volume,
    unit_flow_limit,
)
from stowflow.physics.gas import precharge_at, reference_precharge
from stowflow.units import P_AMBIENT, T_REF

BAR = 1e5
LITRE = 1e-3
T_COLD, T_HOT = 263.15, 323.15  # −10 °C, 50 °C


def abs_bar(p_gauge_bar: float) -> float:
    return p_gauge_bar * BAR + P_AMBIENT


def limits(violations) -> set[str]:
    return {v.limit for v in violations}


def test_type_names():
    assert [t.value for t in AccumulatorType] == [
        "gas-over-oil", "bladder", "diaphragm", "piston", "piston-bottles",
    ]  # fmt: skip
    assert parse_type(" Bladder ") is AccumulatorType.BLADDER
    with pytest.raises(SettingsError, match="unknown; use one of gas-over-oil"):
        parse_type("spring")


def test_every_default_rule_says_it_is_common_practice():
    assert RULE_SOURCE == "common practice, no published source"
    assert set(DEFAULT_RULES) == set(AccumulatorType)


def test_bladder_ratio_four_absolute_at_the_cold_end():
    # Bladder p2/p0 ≤ 4 (absolute): common practice, no published source.
    p0_ref = reference_precharge(50 * BAR, T_COLD)  # 50 bar abs at −10 °C
    ok = check_limits("bladder", p0_ref, 60 * BAR, 199 * BAR, T_COLD, T_COLD)
    bad = check_limits("bladder", p0_ref, 60 * BAR, 205 * BAR, T_COLD, T_HOT)
    assert "ratio" not in limits(ok) and "ratio" in limits(bad)
    msg = next(v.message for v in bad if v.limit == "ratio")
    assert msg == (
        "bladder ratio p2/p0 = 4.1 (absolute) at -10 °C exceeds 4 "
        "(common practice, no published source)"
    )
    # Same precharge: at 20 °C it is higher, so the ratio holds there.
    assert "ratio" not in limits(check_limits("bladder", p0_ref, 60 * BAR, 205 * BAR, T_REF, T_REF))


def test_diaphragm_ratio_eight_and_piston_none():
    # Diaphragm ratio 1:8 (1:6 conservative), piston unlimited: common practice.
    p0 = 20 * BAR
    assert "ratio" in limits(check_limits("diaphragm", p0, 25 * BAR, 170 * BAR, T_REF, T_REF))
    assert "ratio" not in limits(check_limits("diaphragm", p0, 25 * BAR, 155 * BAR, T_REF, T_REF))
    assert not check_limits("piston", p0, 30 * BAR, 400 * BAR, T_REF, T_REF)
    assert max_pressure_for_precharge("diaphragm", p0) == pytest.approx(160 * BAR)
    assert max_pressure_for_precharge("piston", p0) == math.inf


def test_gas_over_oil_sixty_bar_gauge_cap():
    # Gas-over-oil ≤ about 60 bar gauge (nitrogen dissolves above): common practice.
    p0 = abs_bar(30)
    assert not check_limits("gas-over-oil", p0, abs_bar(40), abs_bar(60), T_REF, T_REF)
    bad = check_limits("gas-over-oil", p0, abs_bar(40), abs_bar(61), T_REF, T_REF)
    assert limits(bad) == {"max_pressure"}
    assert "61 bar exceeds the type's 60 bar" in bad[0].message
    assert max_pressure_for_precharge("gas-over-oil", p0) == pytest.approx(abs_bar(60))


def test_gas_over_oil_keeps_residual_oil():
    # Residual oil 10 % of the shell: common practice, no published source.
    assert shell_volume("gas-over-oil", 9 * LITRE) == pytest.approx(10 * LITRE)
    assert shell_volume("bladder", 9 * LITRE) == 9 * LITRE


@pytest.mark.parametrize("acc_type", [t.value for t in AccumulatorType])
def test_nominal_gas_volume_is_the_inverse_of_the_shell_volume(acc_type):
    # One rule both ways: `stowflow size` turns gas into shell, the design search shell into gas.
    assert shell_volume(acc_type, nominal_gas_volume(acc_type, 7 * LITRE)) == pytest.approx(
        7 * LITRE, rel=1e-15
    )
    share = 0.9 if acc_type == "gas-over-oil" else 1.0  # common practice, no published source
    assert gas_share(acc_type) == pytest.approx(share, rel=1e-15)
    assert nominal_gas_volume(acc_type, 100 * LITRE) == pytest.approx(share * 100 * LITRE)


def test_residual_oil_follows_the_catalogue_override():
    rules = rules_for("gas-over-oil", {"residual_oil_fraction": 0.25})
    assert nominal_gas_volume("gas-over-oil", 100 * LITRE, rules) == pytest.approx(75 * LITRE)
    assert shell_volume("gas-over-oil", 75 * LITRE, rules) == pytest.approx(100 * LITRE)


def test_precharge_rules():
    # Bladder/diaphragm p0 ≈ 0.9·p_min; piston p0 = p_min − 5 bar: common practice.
    assert min_working_pressure_for_precharge("bladder", 90 * BAR) == pytest.approx(100 * BAR)
    assert min_working_pressure_for_precharge("diaphragm", 90 * BAR) == pytest.approx(100 * BAR)
    assert min_working_pressure_for_precharge("piston", 90 * BAR) == pytest.approx(95 * BAR)
    assert max_precharge_for_min_pressure("bladder", 100 * BAR) == pytest.approx(90 * BAR)
    assert max_precharge_for_min_pressure("piston-bottles", 100 * BAR) == pytest.approx(95 * BAR)


def test_precharge_rule_is_checked_at_the_hot_end():
    # p0 = 88 bar abs at 20 °C rises above 0.9·100 bar at 50 °C (real gas isochore).
    assert precharge_at(88 * BAR, T_HOT) > 90 * BAR
    assert not check_limits("bladder", 88 * BAR, 100 * BAR, 200 * BAR, T_COLD, T_REF)
    bad = check_limits("bladder", 88 * BAR, 100 * BAR, 200 * BAR, T_COLD, T_HOT)
    assert limits(bad) == {"precharge"}
    assert "at 50 °C needs a minimum working pressure of at least" in bad[0].message


def test_flow_limits():
    # Flow limits: common practice, no published source.
    # Bladder: 2.4 L/s per litre of nominal volume, capped at 120 L/s.
    assert unit_flow_limit("bladder", 10 * LITRE) == pytest.approx(24 * LITRE)
    assert unit_flow_limit("bladder", 50 * LITRE) == pytest.approx(120 * LITRE)
    assert unit_flow_limit("bladder", 200 * LITRE) == pytest.approx(120 * LITRE)
    # Diaphragm about 6 L/s.
    assert unit_flow_limit("diaphragm", 2 * LITRE) == pytest.approx(6 * LITRE)
    # Piston: bore area × 3.5 m/s; 100 mm bore → 27.49 L/s.
    assert unit_flow_limit("piston", 10 * LITRE, bore=0.1) == pytest.approx(
        math.pi / 4 * 0.1**2 * 3.5
    )
    # A catalogue row's own max_flow wins.
    assert unit_flow_limit("bladder", 10 * LITRE, max_flow=40 * LITRE) == 40 * LITRE
    assert unit_flow_limit("gas-over-oil", 10 * LITRE) == math.inf
    with pytest.raises(SettingsError, match="needs the piston bore"):
        unit_flow_limit("piston-bottles", 10 * LITRE)


def test_flow_violation_message():
    v = check_limits(
        "diaphragm", 50 * BAR, 60 * BAR, 100 * BAR, T_REF, T_REF, 8 * LITRE,
        nominal_volume=1 * LITRE,
    )  # fmt: skip
    assert limits(v) == {"flow"}
    assert v[0].message == (
        "diaphragm peak flow per unit 8 L/s exceeds its limit of 6 L/s "
        "(common practice, no published source)"
    )


def test_piston_bottles_swept_volume_and_ps():
    v = check_limits(
        "piston-bottles", 90 * BAR, 100 * BAR, 200 * BAR, T_REF, T_REF,
        oil_exchange=6 * LITRE, swept_volume=5 * LITRE, max_allowable_pressure=abs_bar(180),
    )  # fmt: skip
    assert limits(v) == {"swept_volume", "ps"}


def test_rules_for_merges_catalogue_overrides():
    r = rules_for("bladder", {"max_pressure_ratio": 3.5, "max_flow_lps": 80})
    assert isinstance(r, TypeRules)
    assert r.max_pressure_ratio == 3.5 and r.max_flow == pytest.approx(80 * LITRE)
    assert r.precharge_factor == 0.9  # untouched default
    assert rules_for("piston", {"precharge_margin_bar": 10}).precharge_margin == pytest.approx(
        10 * BAR
    )
    assert rules_for("diaphragm") is DEFAULT_RULES[AccumulatorType.DIAPHRAGM]
    with pytest.raises(SettingsError, match=r"\[limits\.bladder\]: unknown key 'ratio'"):
        rules_for("bladder", {"ratio": 3})
    with pytest.raises(SettingsError, match="is not a number"):
        rules_for("bladder", {"max_pressure_ratio": "four"})
    with pytest.raises(SettingsError, match=r"outside \(0, 1\]"):
        rules_for("bladder", {"precharge_factor": 1.2})


def test_pressure_equipment_worked_classifications():
    # sources.PED_2014_68_EU Annex II Table 2, group 2 gases: values from memory.
    assert pressure_equipment_category(330, 0.5)[0] == "SEP"  # "none": V ≤ 1 L, PS ≤ 1000 bar
    assert pressure_equipment_category(350, 4)[0] == "III"  # PS·V = 1400 bar·L
    assert pressure_equipment_category(350, 10)[0] == "IV"  # PS·V = 3500 bar·L
    # A worked example recalled as "1 L × 350 → II" disagrees with the table itself (and with
    # Article 4(1)(a)(i) of the directive, from memory: "volume greater than 1 L"), which puts
    # V ≤ 1 L, PS ≤ 1000 bar under sound engineering practice.  We follow the table.
    assert pressure_equipment_category(350, 1.0)[0] == "SEP"
    assert pressure_equipment_category(350, 1.5)[0] == "II"  # PS·V = 525 bar·L
    assert pressure_equipment_category(100, 1.5)[0] == "I"  # 150 bar·L
    assert pressure_equipment_category(40, 1.25)[0] == "SEP"  # 50 bar·L
    assert pressure_equipment_category(1200, 0.5)[0] == "III"
    assert pressure_equipment_category(0.4, 100)[0] == "outside scope"
    note = pressure_equipment_category(330, 10)[1]
    assert "from memory" in note and "local codes" in note
    with pytest.raises(SettingsError, match="volume > 0 L"):
        pressure_equipment_category(330, 0.0)
