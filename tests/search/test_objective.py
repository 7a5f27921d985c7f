"""The designer's objective (stowflow.search.objective): the order it sets, the category cap,
the type preference among ties, and the runners-up the result lists.

The expected values are orderings worked by hand on made-up candidates, or comparisons of one
search against another on the demo cycle (never a demo number as the expected value).
"""

from __future__ import annotations

import math
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest
from stowflow.catalogue import default_catalogue_path, load_catalogue
from stowflow.cycle.duty import load_cycle
from stowflow.errors import SettingsError
from stowflow.io.options import design_settings
from stowflow.search import objective as ob
from stowflow.search.designer import design
from stowflow.search.settings import DesignSettings

REPO = Path(__file__).resolve().parents[2]
BAR = 1e5
L = 1e-3


def _cand(power_kw, capex, kind=None, count=1, volume_l=10.0, ps_bar=330.0):
    option = None
    if kind is not None:
        option = SimpleNamespace(
            type=kind, nominal_volume=volume_l * L, max_pressure=(ps_bar + 1.01325) * BAR
        )
    return SimpleNamespace(
        pump=SimpleNamespace(flow=1e-3, name=f"p{power_kw}"),
        motor=SimpleNamespace(rated_power=power_kw * 1e3),
        option=option,
        count=count,
        capex=capex,
        precharges=np.array([100 * BAR]),
        p_max=np.array([200 * BAR]),
    )


def test_order_keys_by_hand():
    """Three made-up sets: A 11 kW / 900, B 15 kW / 700, C pump only 30 kW / 500.
    power: A (11 kW) first; capex: C (500) first; volume: a bank before pump only, then the
    smaller gas volume (A 1 × 10 L against B 2 × 10 L)."""
    a = _cand(11, 900, "bladder", 1)
    b = _cand(15, 700, "bladder", 2)
    c = _cand(30, 500)
    first = {o: min((a, b, c), key=lambda x, o=o: ob.order_key(x, o)) for o in ob.OBJECTIVES[:2]}
    assert first == {"power": a, "capex": c}
    assert min((a, b, c), key=lambda x: ob.order_key(x, "volume")) is a
    assert ob.order_key(c, "volume")[0] == 1.0  # pump only after every bank
    # tco: capex + value × energy; 900 + 1·100 = 1000 < 700 + 1·400 = 1100
    ka = ob.order_key(a, "tco", energy=100.0, energy_value=1.0)
    kb = ob.order_key(b, "tco", energy=400.0, energy_value=1.0)
    assert ka < kb and ka[0] == pytest.approx(1000.0)


def test_prefer_types_orders_ties_and_runners_up_follow():
    """Two sets tie on capex (800) and power (11 kW); piston is preferred, so the tie goes to
    piston and the bladder set becomes the first runner-up, then the dearer diaphragm set."""
    bl, pi, di = _cand(11, 800, "bladder"), _cand(11, 800, "piston"), _cand(11, 950, "diaphragm")
    s = SimpleNamespace(
        objective="capex", prefer_types=("piston",), energy_value=0.0, min_loaded_dwell=0.0
    )
    ties, runners = ob.choose([bl, pi, di], s, lambda c: 1.0)
    assert ties == [pi]
    assert [r for r, _ in runners] == [bl, di]


def test_category_cap_by_hand():
    """PS·V per vessel (Directive 2014/68/EU, from memory; sources.PED_2014_68_EU): 330 bar ×
    10 L = 3300 bar·L is category IV; 200 bar × 4 L = 800 bar·L category II."""
    big = _cand(1, 1, "bladder", volume_l=10.0, ps_bar=330.0).option
    small = _cand(1, 1, "bladder", volume_l=4.0, ps_bar=200.0).option
    pa = 1.01325 * BAR
    assert ob.vessel_category(big, pa) == "IV" and ob.vessel_category(small, pa) == "II"
    assert not ob.category_allowed(big, "III", pa) and ob.category_allowed(small, "III", pa)
    assert ob.category_allowed(big, None, pa)


def test_settings_refuse_unknown_objective_and_category():
    with pytest.raises(SettingsError, match="objective 'cheap'"):
        DesignSettings(objective="cheap")
    with pytest.raises(SettingsError, match="category cap 'V'"):
        DesignSettings(max_category="V")
    with pytest.raises(SettingsError, match="--max-category: 'V' is not a choice"):
        design_settings({"max_category": "V"})
    assert design_settings({"max_category": "iii"}).max_category == "III"


@pytest.fixture(scope="module")
def demo():
    cycle = load_cycle(REPO / "duty_cycles" / "forming_press.csv")
    return cycle, load_catalogue(default_catalogue_path())


@pytest.fixture(scope="module")
def default_design(demo):
    return design(*demo, DesignSettings())


@pytest.mark.slow
def test_capex_objective_costs_no_more_than_the_default(demo, default_design):
    d = design(*demo, DesignSettings(objective="capex"))
    assert d.feasible and default_design.feasible
    assert d.capex <= default_design.capex * (1 + 1e-12)
    assert d.installed_power >= default_design.installed_power


@pytest.mark.slow
def test_volume_objective_stores_no_more_gas_than_the_default(demo, default_design):
    d = design(*demo, DesignSettings(objective="volume"))
    assert d.feasible and d.bank is not None
    assert d.bank.gas_volume <= default_design.bank.gas_volume * (1 + 1e-12)


def test_default_lists_runners_up_in_its_order(default_design):
    d = default_design
    assert 0 < len(d.runners_up) <= ob.RUNNERS_UP
    keys = [(a.motor.rated_power, a.capex) for a in d.runners_up]
    assert keys == sorted(keys)
    assert keys[0] >= (d.installed_power, d.capex)
    for a in d.runners_up:
        assert math.isfinite(a.energy) and a.energy > 0
        assert a.gas_volume >= 0


@pytest.mark.slow
def test_category_cap_is_kept(demo, default_design):
    """A cap one category below the default design's vessel rules that vessel out."""
    pa = DesignSettings().p_ambient
    k = ob.CATEGORIES.index(ob.vessel_category(default_design.bank.option, pa))
    assert k >= 2, "the default design's vessel must have a category to cap"
    cap = ob.CATEGORIES[k - 1]
    d = design(*demo, DesignSettings(max_category=cap))
    if d.feasible and d.bank is not None:
        assert ob.CATEGORIES.index(ob.vessel_category(d.bank.option, pa)) <= k - 1
    elif not d.feasible:
        assert f"category {cap}" in d.reason
