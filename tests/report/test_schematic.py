"""The hydraulic schematic (stowflow.report.schematic): drawn from the design with the
graphical symbols of ISO 1219-1, well-formed SVG, and different for a different accumulator."""

from __future__ import annotations

import xml.etree.ElementTree as ET
from dataclasses import replace

import pytest
from _report_studies import forming_press
from sources import ISO_1219_1
from stowflow.catalogue import ACCUMULATOR_TYPES
from stowflow.report import schematic
from stowflow.report.html import render_html

SVG = "{http://www.w3.org/2000/svg}"

#: Element drawn → the ISO 1219-1 symbol it uses (sources.ISO_1219_1, from memory: no copy
#: of the standard at hand).  The keys are the ``data-symbol`` values of the SVG groups.
ISO_SYMBOL = {
    "tank": "reservoir open to atmosphere (open-topped rectangle)",
    "motor": "electric motor (circle with M)",
    "pump-fixed": "fixed-displacement pump, one flow direction (circle, solid triangle out)",
    "pump-variable": "variable-displacement pump (the same with a slanted arrow)",
    "compensator": "pressure compensator (pilot line against an adjustable spring)",
    "load-sensing": "pilot line (dashed) from the consumer to the pump's control",
    "drive": "none in ISO 1219-1: our own dash-dot box for the variable-frequency drive",
    "filter": "filter (diamond, dashed element across the flow)",
    "cooler": "cooler (diamond, line with outward solid triangles)",
    "relief-valve": "pressure relief valve (square, offset arrow, pilot, adjustable spring)",
    "unloading-valve": "2/2 directional valve, solenoid and spring return",
    "non-return-valve": "non-return valve (ball on a seat)",
    "pressure-switch": "pressure switch (hydro-electric converter)",
    "accumulator-bladder": "gas-loaded accumulator, bladder",
    "accumulator-diaphragm": "gas-loaded accumulator, diaphragm",
    "accumulator-piston": "gas-loaded accumulator, piston",
    "accumulator-piston-bottles": "piston accumulator with gas bottle",
    "accumulator-gas-over-oil": "gas-loaded accumulator without separating element",
    "safety-block": "enclosure of an assembly (dash-dot line)",
    "shut-off-valve": "shut-off valve (two triangles point to point)",
    "gauge": "pressure gauge (circle with slanted arrow)",
    "consumer": "double-acting cylinder, standing for the machine",
}


def _symbols(svg: str) -> dict[str, str]:
    root = ET.fromstring(svg)
    return {
        g.get("data-element"): g.get("data-symbol")
        for g in root.iter(f"{SVG}g")
        if g.get("data-symbol")
    }


def _with_type(result, kind: str):
    d = result.design
    bank = replace(d.bank, option=replace(d.bank.option, type=kind))
    return replace(result, design=replace(d, bank=bank))


def test_every_element_has_its_iso_1219_symbol():
    assert set(schematic.SYMBOLS) == set(ISO_SYMBOL), ISO_1219_1
    for text in schematic.SYMBOLS.values():
        assert text.strip()


def test_design_schematic_is_well_formed_and_complete():
    r = forming_press()
    svg = schematic.design_svg(r)
    drawn = _symbols(svg)  # parses: well-formed XML
    assert ET.fromstring(svg).tag == f"{SVG}svg"
    for element, symbol in drawn.items():
        assert symbol in ISO_SYMBOL, (element, symbol)
    kind = r.design.bank.option.type
    expected = {
        "tank": "tank",
        "motor": "motor",
        "relief valve": "relief-valve",
        "unloading valve": "unloading-valve",
        "non-return valve": "non-return-valve",
        "pressure switch": "pressure-switch",
        "safety block": "safety-block",
        "shut-off valve": "shut-off-valve",
        "pressure gauge": "gauge",
        "accumulator": f"accumulator-{kind}",
        "filter": "filter",
        "cooler": "cooler",
        "consumer": "consumer",
    }
    for element, symbol in expected.items():
        assert drawn.get(element) == symbol, element
    assert drawn["pump"] in ("pump-fixed", "pump-variable")
    # sizes and settings come from the design
    relief = round((r.design.relief - r.settings.p_ambient) / 1e5)
    assert f"relief {relief:.0f} bar" in svg
    assert f"{r.design.bank.count} × {kind}" in svg


def test_schematic_changes_with_the_accumulator_type():
    r = forming_press()
    svgs = {}
    for kind in ACCUMULATOR_TYPES:
        svg = schematic.design_svg(_with_type(r, kind))
        assert _symbols(svg)["accumulator"] == f"accumulator-{kind}"
        svgs[kind] = svg
    assert len(set(svgs.values())) == len(ACCUMULATOR_TYPES)


@pytest.mark.parametrize("index", range(4))
def test_pump_only_alternatives_have_a_schematic(index):
    r = forming_press()
    baselines = [b for b in r.design.baselines if b.pump is not None]
    if index >= len(baselines):
        pytest.skip("fewer pump-only alternatives")
    b = baselines[index]
    drawn = _symbols(schematic.alternative_svg(r, b))
    assert "accumulator" not in drawn and "non-return valve" not in drawn
    assert drawn["relief valve"] == "relief-valve"
    want = {
        "fixed": "pump-fixed",
        "variable-speed": "pump-fixed",
        "compensated": "pump-variable",
        "load-sensing": "pump-variable",
    }[b.kind]
    assert drawn["pump"] == want
    assert ("drive" in drawn) == (b.kind == "variable-speed")
    assert ("load-sensing line" in drawn) == (b.kind == "load-sensing")


def test_report_carries_the_schematics_in_the_specification():
    html = render_html(forming_press())
    spec = html[html.index("<section id='specification'>") :]
    spec = spec[: spec.index("</section>")]
    assert spec.count("<svg") == 1 + sum(1 for b in forming_press().design.baselines if b.pump)
    assert "Hydraulic schematic" in spec
