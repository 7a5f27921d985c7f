"""Single-point sizing: closed forms, Esposito's worked example, temperatures, types, errors."""

from __future__ import annotations

import json

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from sources import COOLPROP, ESPOSITO_2009, SPAN_2000
from stowflow.duties.sizing import size_accumulator
from stowflow.errors import SizingError
from stowflow.physics.gas import precharge_at
from stowflow.units import P_AMBIENT, T_REF, parse_quantity

BAR = 1e5
LITRE = 1e-3
PSI = parse_quantity("1psi", "pressure")
GALLON = parse_quantity("1gal", "volume")  # US liquid gallon
IN3 = parse_quantity("1in3", "volume")
# sources.ESPOSITO_2009 prints 45.9 gal: three significant digits, so ±0.05 gal.
ESPOSITO_GAL_ATOL = 0.05


def test_esposito_car_crusher_accumulator():
    # sources.ESPOSITO_2009, accumulator chapter, car-crusher press (inputs and result from
    # memory): precharge 1200 psia, 1800–3000 psia, ΔV = 2827 in³, isothermal, ideal gas →
    # 45.9 gal.
    r = size_accumulator(
        2827 * IN3, 1800 * PSI, 3000 * PSI, precharge=1200 * PSI,
        process="isothermal", model="ideal",
    )  # fmt: skip
    assert r.required_gas_volume / GALLON == pytest.approx(45.9, abs=ESPOSITO_GAL_ATOL), str(
        ESPOSITO_2009
    )
    # Boyle's law (sources.CENGEL_BOLES_2015), computed: V0 = ΔV / (p0/p1 − p0/p2).
    assert r.required_gas_volume == pytest.approx(2827 * IN3 / (1200 / 1800 - 1200 / 3000))
    assert r.rejected_types.keys() == {"gas-over-oil"}  # 3000 psi > 60 bar


def test_esposito_duty_real_gas_adiabatic_needs_more():
    # Same duty, adiabatic: the real gas (sources.SPAN_2000) needs more than κ = 1.4 predicts.
    kw = dict(precharge=1200 * PSI, process="adiabatic")
    real = size_accumulator(2827 * IN3, 1800 * PSI, 3000 * PSI, model="real", **kw)
    ideal = size_accumulator(2827 * IN3, 1800 * PSI, 3000 * PSI, model="ideal", **kw)
    closed = 2827 * IN3 / ((1200 / 1800) ** (1 / 1.4) - (1200 / 3000) ** (1 / 1.4))
    assert ideal.required_gas_volume == pytest.approx(closed, rel=1e-12)
    assert real.required_gas_volume > 1.1 * ideal.required_gas_volume


def test_polytropic_closed_form_at_20c():
    # Polytropic law, absolute pressures (sources.CENGEL_BOLES_2015):
    # ΔV = V0·[(p0/p1)^(1/n) − (p0/p2)^(1/n)].
    r = size_accumulator(
        5 * LITRE, 100 * BAR, 200 * BAR, precharge=90 * BAR,
        process="polytropic:1.3", model="ideal",
    )  # fmt: skip
    expected = 5 * LITRE / ((0.9) ** (1 / 1.3) - (0.45) ** (1 / 1.3))
    assert r.required_gas_volume == pytest.approx(expected, rel=1e-12)


def test_real_isothermal_reference_case():
    # sources.SPAN_2000 computed with sources.COOLPROP 8.0.0: V0 = 10 L, 90/100/200 bar abs,
    # 293.15 K, isothermal real → ΔV 4.281 L.  Pinned to 0.001 L, so V0 to 10 L × 0.0005/4.281.
    r = size_accumulator(
        4.281 * LITRE, 100 * BAR, 200 * BAR, precharge=90 * BAR, process="isothermal"
    )
    v0_l = r.required_gas_volume / LITRE
    assert v0_l == pytest.approx(10.0, abs=10 * 0.0005 / 4.281), f"{SPAN_2000} via {COOLPROP}"


def test_worst_temperature_is_the_cold_end_for_the_ideal_gas():
    # Ideal isothermal: ΔV = V0·p0(T)·(1/p1 − 1/p2), p0(T) = p0·T/T_ref, smallest when cold.
    r = size_accumulator(
        5 * LITRE, 100 * BAR, 200 * BAR, precharge=80 * BAR, process="isothermal",
        model="ideal", T_min=253.15, T_max=333.15,
    )  # fmt: skip
    p0_cold = 80 * BAR * 253.15 / T_REF
    assert r.governing.worst_temperature == 253.15
    assert r.required_gas_volume == pytest.approx(
        5 * LITRE / (p0_cold * (1 / (100 * BAR) - 1 / (200 * BAR))), rel=1e-12
    )
    rows = r.as_dict()["temperatures"]
    assert rows[0]["oil_exchange_l"] == pytest.approx(5.0, rel=1e-12)
    assert all(row["oil_exchange_l"] >= 5.0 - 1e-9 for row in rows)
    assert rows[-1]["temperature_c"] == pytest.approx(60.0)


def test_precharge_by_rule_meets_the_rule_at_the_hot_end():
    r = size_accumulator(5 * LITRE, 100 * BAR, 200 * BAR, T_min=263.15, T_max=323.15)
    by_type = {c.type.value: c for c in r.cases}
    bladder, piston = by_type["bladder"], by_type["piston"]
    # sources.COMMON_PRACTICE, no published source: bladder p0(T_max) = 0.9·p1, piston p1 − 5 bar.
    assert precharge_at(bladder.precharge_ref, 323.15) == pytest.approx(90 * BAR, rel=1e-12)
    assert precharge_at(piston.precharge_ref, 323.15) == pytest.approx(95 * BAR, rel=1e-12)
    assert bladder.admissible and piston.admissible
    assert r.governing.type.value == "piston"  # higher precharge, smaller volume
    assert r.as_dict()["precharge_by_rule"] is True


def test_type_screening_reasons():
    # p0 ≈ 40 bar abs at 40 °C: the piston rule (p1 ≥ p0 + 5 bar) is stricter than 0.9 here.
    r = size_accumulator(
        5 * LITRE, 44.9 * BAR, 200 * BAR, precharge=37.4 * BAR, T_min=253.15, T_max=313.15
    )
    rejected = r.rejected_types
    assert "exceeds 4" in rejected["bladder"]  # ratio at −20 °C, sources.COMMON_PRACTICE
    assert "60 bar" in rejected["gas-over-oil"]
    assert "needs a minimum working pressure" in rejected["piston"]
    assert "needs a minimum working pressure" in rejected["piston-bottles"]
    assert r.admissible_types == ["diaphragm"]
    assert r.governing.type.value == "diaphragm"


def test_result_as_dict_is_json_with_the_contract_keys():
    r = size_accumulator(
        5 * LITRE, 100 * BAR + P_AMBIENT, 200 * BAR + P_AMBIENT,
        T_min=283.15, T_max=323.15, max_allowable_pressure=330 * BAR + P_AMBIENT,
    )  # fmt: skip
    d = json.loads(json.dumps(r.as_dict()))
    for key in ("required_gas_volume_l", "admissible_types", "rejected_types", "temperatures",
                "gas_model", "process", "pressure_equipment", "types"):  # fmt: skip
        assert key in d
    assert d["min_pressure_bar"] == pytest.approx(100.0)
    # sources.PED_2014_68_EU Annex II Table 2 (from memory): 330 bar × ~19 L > 3000 bar·L → IV.
    assert d["pressure_equipment"]["category"] == "IV"
    assert "from memory" in d["pressure_equipment"]["note"]


def test_regression_pin_real_adiabatic_sizing():
    # Our own full-precision value (regression check, not an outside source): 5 L between
    # 100 and 200 bar gauge, −10…50 °C, real gas, adiabatic, precharge by rule (piston governs).
    r = size_accumulator(
        5 * LITRE, 100 * BAR + P_AMBIENT, 200 * BAR + P_AMBIENT, T_min=263.15, T_max=323.15
    )
    assert r.required_gas_volume / LITRE == pytest.approx(18.143295870257532, rel=1e-9)
    assert r.governing.precharge_ref / BAR == pytest.approx(85.52670458510977, rel=1e-9)


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        (dict(precharge=100 * BAR), "must be below the minimum working pressure"),
        (dict(p_max=90 * BAR), "must exceed the minimum"),
        (dict(oil_volume=0.0), "must be > 0 L"),
        (dict(p_min=0.5 * BAR, precharge=None), "above ambient"),
        (dict(precharge=0.9 * BAR), "precharge must be above ambient"),
        (dict(types=["bladder"], p_max=500 * BAR), "no accumulator type admits this duty"),
        (dict(T_min=300.0, T_max=280.0), "not a range"),
    ],
)
def test_impossible_input(kwargs, match):
    base = dict(oil_volume=5 * LITRE, p_min=100 * BAR, p_max=200 * BAR, precharge=90 * BAR)
    base.update(kwargs)
    with pytest.raises(SizingError, match=match):
        size_accumulator(base.pop("oil_volume"), base.pop("p_min"), base.pop("p_max"), **base)


# --------------------------------------------------------------------------- invariants
@settings(max_examples=25, deadline=None)
@given(
    dv=st.floats(0.1, 50.0),
    grow=st.floats(1.0, 3.0),
    p1=st.floats(60.0, 150.0),
    span=st.floats(20.0, 150.0),
    narrow=st.floats(0.0, 0.9),
    model=st.sampled_from(["real", "ideal"]),
    proc=st.sampled_from(["isothermal", "adiabatic"]),
)
def test_required_volume_is_monotone(dv, grow, p1, span, narrow, model, proc):
    kw = dict(precharge=0.7 * p1 * BAR, model=model, process=proc, T_min=253.15, T_max=323.15,
              types=["piston"])  # fmt: skip
    p2 = (p1 + span) * BAR
    base = size_accumulator(dv * LITRE, p1 * BAR, p2, **kw).required_gas_volume
    more = size_accumulator(dv * grow * LITRE, p1 * BAR, p2, **kw).required_gas_volume
    p2n = p2 - narrow * span * BAR  # narrower window, same p1
    narrower = size_accumulator(dv * LITRE, p1 * BAR, p2n, **kw).required_gas_volume
    assert more >= base * (1 - 1e-12)
    assert narrower >= base * (1 - 1e-12)
    assert np.isfinite(base)
