"""The screen's least bank volume per precharge equals the plain formula over every level.

Internal check (no outside source; demo data is never an expected value here): the screen
splits the levels into those with a deficit and those without; the result must be the
array of the plain formula, element for element.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from stowflow.catalogue import default_catalogue_path, load_catalogue
from stowflow.cycle.duty import load_cycle
from stowflow.search import screen as screen_module
from stowflow.search.problem import make_problem
from stowflow.search.settings import DesignSettings

REPO = Path(__file__).resolve().parents[2]


def _plain(self, j, key, vu, cap):
    lo = self.bounds[key][1]
    draw = self._draw(j, key)
    room = cap[:, :, None] - vu * lo
    with np.errstate(divide="ignore", invalid="ignore"):
        need = np.where(room > 0, draw / room, np.inf)
    need = np.where((self.deficit_max[j] <= 0) & (room >= -1e-12 * vu), 0.0, need)
    return np.max(need, axis=(0, 2))


@pytest.mark.parametrize("name", ["forming_press", "test_rig_log"])
def test_least_volume_equals_the_plain_formula(name, monkeypatch):
    fast = screen_module._Screen._least_volume
    compared = []

    def both(self, j, key, vu, cap):
        got = fast(self, j, key, vu, cap)
        assert np.array_equal(got, _plain(self, j, key, vu, cap))
        compared.append(got.size)
        return got

    monkeypatch.setattr(screen_module._Screen, "_least_volume", both)
    s = DesignSettings()
    cycle = load_cycle(REPO / "duty_cycles" / f"{name}.csv")
    screen_module.screen(make_problem(cycle, s), load_catalogue(default_catalogue_path()))
    assert compared
