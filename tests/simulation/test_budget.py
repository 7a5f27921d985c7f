"""The time-domain simulation's work budget: a stiff plant ends with a clear error, in seconds.

Internal checks (no outside source).  The demo designs use a few thousand scalar substeps per
run (tests/benchmarks: the test-rig pulse, the stiffest, about 10,000), far below
:data:`stowflow.simulation._loop.SUBSTEP_BUDGET`.
"""

from __future__ import annotations

import json

import pytest
from stowflow.catalogue import default_catalogue_path, load_catalogue
from stowflow.cycle.duty import parse_cycle_text
from stowflow.errors import SimulationError
from stowflow.io.designfile import load_design
from stowflow.search.settings import DesignSettings
from stowflow.simulation import _loop
from stowflow.simulation.verify import verify

#: Invented three-phase cycle (as tests/_web_server.TINY).
TINY = (
    "duration [s], flow [L/min], pressure [bar], label\n"
    "2, 60, 150, press\n"
    "3, 0, 120, hold\n"
    "5, 0, 20, return\n"
)
#: An invented design for it (catalogue components, ideal gas, setpoints given).
DESIGN = {
    "schema": "stowflow.design/1",
    "gas_model": "ideal",
    "process": "isothermal",
    "temperature_c": {"min": 10.0, "max": 50.0},
    "accumulator": {
        "type": "bladder",
        "nominal_volume_l": 16.0,
        "count": 1,
        "precharge_bar_at_20c": 133.0,
        "min_pressure_bar": 164.2,
        "max_pressure_bar": 199.3,
    },
    "pump": {"displacement_cm3": 10.0, "speed_rpm": 1450.0},
    "motor": {"rated_kw": 5.5},
    "relief_bar": 219.3,
    "setpoints": {"load_below_bar": 197.3, "unload_above_bar": 199.3},
}


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
