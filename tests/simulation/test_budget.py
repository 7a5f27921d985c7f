"""The time-domain simulation's work budget: a stiff plant ends with a clear error, in seconds.

Internal checks (no outside source).  The demo designs use a few thousand scalar substeps per
run (tests/benchmarks: the test-rig pulse, the stiffest, about 10,000), far below
:data:`stowflow.simulation._loop.SUBSTEP_BUDGET`.
"""

from __future__ import annotations

import json

import pytest
from _hostile import BASE_DESIGN as DESIGN
from _hostile import CYCLE as TINY
from stowflow.catalogue import default_catalogue_path, load_catalogue
from stowflow.cycle.duty import parse_cycle_text
from stowflow.errors import SimulationError
from stowflow.io.designfile import load_design
from stowflow.search.settings import DesignSettings
from stowflow.simulation import _loop
from stowflow.simulation.verify import verify


def _design(tmp_path, pump=None):
    data = json.loads(json.dumps(DESIGN))
    if pump:
        data["pump"] = pump
    path = tmp_path / "design.json"
    path.write_text(json.dumps(data), encoding="utf-8")
    cycle = parse_cycle_text(TINY, name="tiny")
    catalogue = load_catalogue(default_catalogue_path())
    design, settings, _ = load_design(path, catalogue, DesignSettings(), None, cycle)
    setpoints = {"load_below": 197.3e5 + settings.p_ambient}
    setpoints["unload_above"] = 199.3e5 + settings.p_ambient
    return design, cycle, settings, setpoints


def test_an_ordinary_design_stays_far_inside_the_budget(tmp_path, monkeypatch):
    used = []
    real = _loop.Budget.spend

    def spend(self, substeps):
        real(self, substeps)
        used.append(self.used)

    monkeypatch.setattr(_loop.Budget, "spend", spend)
    design, cycle, settings, sp = _design(tmp_path)
    v = verify(design, cycle, settings, controllers=("pressure-switch",), setpoints=sp)
    assert v.runs and max(used) < 0.05 * _loop.SUBSTEP_BUDGET


def test_a_stiff_plant_exceeds_the_budget_with_a_clear_error(tmp_path):
    # 10,000 cm³ at 10,000 rpm: each plausible on its own, together 93,000 L/min on 16 L.
    design, cycle, settings, sp = _design(
        tmp_path, pump={"displacement_cm3": 10_000, "speed_rpm": 10_000}
    )
    with pytest.raises(SimulationError, match=r"needs more than 200,000 substeps for one run"):
        verify(design, cycle, settings, controllers=("pressure-switch",), setpoints=sp)


def test_the_budget_is_per_run_and_counts_scalar_substeps(tmp_path, monkeypatch):
    monkeypatch.setattr(_loop, "SUBSTEP_BUDGET", 10)
    design, cycle, settings, sp = _design(tmp_path)
    with pytest.raises(SimulationError, match=r"needs more than 10 substeps .* at 10\.0 °C"):
        verify(design, cycle, settings, controllers=("pressure-switch",), setpoints=sp)
