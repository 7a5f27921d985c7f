"""Studies shared by the report, export and browser tests (each run once per test session).

* :func:`forming_press` – the demo forming press with the demo catalogue, not verified;
* :func:`forming_press_verified` – the same with the time-domain verification (None when the
  verification cannot run in this tree);
* :func:`hostile` – a small cycle whose study name, cycle labels, catalogue names and currency
  carry HTML and spreadsheet-formula payloads;
* :func:`infeasible` – a cycle no catalogue row can supply.
"""

from __future__ import annotations

import functools
from pathlib import Path

REPO = Path(__file__).resolve().parent.parent

#: Payloads that must come out inert.
SCRIPT_LABEL = "<script>alert(1)</script>"
FORMULA_LABEL = '=HYPERLINK("http://x.invalid","click")'
AT_LABEL = "@SUM(1+1)"
STUDY_NAME = "<img src=x onerror=alert(2)>"
ACC_NAME = "<script>alert(3)</script>"
PUMP_NAME = "+pump"
MOTOR_NAME = "@motor"
CURRENCY = "<b>EUR</b>"

_HOSTILE_CYCLE = """duration [s], flow [L/min], pressure [bar], label
2, 60, 150, <script>alert(1)</script>
3, 10, 120, "=HYPERLINK(""http://x.invalid"",""click"")"
5, 0, 100, @SUM(1+1)
"""

_HOSTILE_CATALOGUE = """
currency = "<b>EUR</b>"
[[accumulator]]
type = "bladder"
nominal_volume_l = 2.5
max_pressure_bar = 330
price = 500
name = "=cmd|' /C calc'!A0"
[[accumulator]]
type = "bladder"
nominal_volume_l = 10
max_pressure_bar = 330
price = 600
name = "<script>alert(3)</script>"
[[pump]]
displacement_cm3 = 16
speed_rpm = 1450
max_pressure_bar = 250
volumetric_efficiency = 0.93
overall_efficiency = 0.85
price = 200
name = "+pump"
[[pump]]
displacement_cm3 = 50
speed_rpm = 1450
max_pressure_bar = 250
volumetric_efficiency = 0.93
overall_efficiency = 0.85
price = 900
name = "-big pump"
[[motor]]
rated_kw = 11
efficiency = 0.914
price = 180
name = "@motor"
[[motor]]
rated_kw = 30
efficiency = 0.936
price = 1200
name = "motor 30"
"""


@functools.cache
def forming_press():
    """The demo forming press, demo catalogue, quasi-static only."""
    from stowflow.pipeline import Study, run

    return run(Study(cycle=REPO / "duty_cycles" / "forming_press.csv", verify=False))


@functools.cache
def forming_press_verified():
    """The demo forming press with the time-domain verification, or None if it cannot run."""
    from stowflow.pipeline import Study, run

    try:
        return run(Study(cycle=REPO / "duty_cycles" / "forming_press.csv", verify=True))
    except NotImplementedError:
        return None


@functools.cache
def hostile():
    """A small feasible study whose every user string carries a payload."""
    from stowflow.catalogue import parse_catalogue_text
    from stowflow.cycle.duty import parse_cycle_text
    from stowflow.pipeline import Study, run

    cycle = parse_cycle_text(_HOSTILE_CYCLE, name=STUDY_NAME)
    cat = parse_catalogue_text(
        _HOSTILE_CATALOGUE, source="/srv/uploads/<img src=y onerror=alert(4)>.toml"
    )
    return run(Study(cycle=cycle, catalogue=cat, verify=False))


@functools.cache
def infeasible():
    """The hostile cycle against a catalogue whose only pump is too small: infeasible."""
    from stowflow.catalogue import parse_catalogue_text
    from stowflow.cycle.duty import parse_cycle_text
    from stowflow.pipeline import Study, run

    text = _HOSTILE_CATALOGUE.replace("displacement_cm3 = 16", "displacement_cm3 = 4").replace(
        "displacement_cm3 = 50", "displacement_cm3 = 5"
    )
    cycle = parse_cycle_text(_HOSTILE_CYCLE, name="too little pump")
    return run(Study(cycle=cycle, catalogue=parse_catalogue_text(text), verify=False))
