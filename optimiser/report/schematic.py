"""The hydraulic schematic of a supply as inline SVG, drawn from the design.

The graphical symbols follow ISO 1219-1 (fluid power graphical symbols; drawn from memory of
the standard, without a copy at hand): :data:`SYMBOLS` says which symbol each element uses.
Every symbol is a ``<g>`` with ``data-element`` (what it is) and ``data-symbol`` (the ISO 1219-1
symbol), and a label with its size or setting.  Only what the design holds is drawn: the
accumulator, its non-return valve, pressure switch and safety block only with a bank, the pump
as fixed or variable (with compensator or load-sensing line) as the catalogue row says.

Rendering only: the numbers come from the design, its settings and
:func:`stowflow.report.bom.circuit` (the circuit's sizes).
"""

from __future__ import annotations

import math
from html import escape

from stowflow.report.bom import circuit
from stowflow.report.content import bar_delta, bar_g, fmt, kilowatts, litres, lpm, setpoints_bar
from stowflow.report.display_units import in_system_text
from stowflow.units import to_unit

__all__ = ["SYMBOLS", "alternative_svg", "design_svg", "schematics_html"]

#: Element → the ISO 1219-1 symbol it is drawn with (from memory of the standard).
SYMBOLS: dict[str, str] = {
    "tank": "reservoir open to atmosphere: open-topped rectangle, lines end inside",
    "motor": "electric motor: circle with the letter M, double line as drive shaft",
    "pump-fixed": "hydraulic pump, fixed displacement, one flow direction: circle with a solid "
    "triangle at the outlet, pointing out",
    "pump-variable": "hydraulic pump, variable displacement: the fixed pump's circle with a "
    "slanted arrow across it",
    "compensator": "pressure compensator: spring with adjustment arrow against a pilot line "
    "(dashed) from the outlet",
    "load-sensing": "load-sensing line: pilot line (dashed) from the consumer to the pump's "
    "control",
    "drive": "variable-frequency drive: enclosure around the motor's supply (no ISO 1219-1 "
    "symbol; our own box)",
    "filter": "filter: diamond with a dashed line across the flow",
    "cooler": "cooler: diamond with a line across carrying two outward solid triangles",
    "relief-valve": "pressure relief valve: square, arrow offset from the ports (normally "
    "closed), pilot line from the inlet against an adjustable spring",
    "unloading-valve": "2/2 directional valve, solenoid against spring, normally open: two "
    "squares, flow arrow in the rest position, blocked ports in the other",
    "non-return-valve": "non-return valve: ball on a conical seat",
    "pressure-switch": "pressure switch (hydro-electric): square with a pilot line and an "
    "electric contact",
    "accumulator-bladder": "gas-loaded accumulator with bladder: capsule with the bladder drawn "
    "inside, open triangle for gas",
    "accumulator-diaphragm": "gas-loaded accumulator with diaphragm: capsule with a line across "
    "the middle, open triangle for gas",
    "accumulator-piston": "gas-loaded accumulator with piston: capsule with a piston (double "
    "line) across, open triangle for gas",
    "accumulator-piston-bottles": "gas-loaded piston accumulator with gas bottle(s): piston "
    "accumulator connected at its gas end to a capsule holding gas only",
    "accumulator-gas-over-oil": "gas-loaded accumulator without separating element: capsule "
    "with an open triangle for gas and the oil level dashed",
    "safety-block": "assembly enclosure (dash-dot line) around shut-off valve, safety valve, "
    "discharge valve and gauge port",
    "shut-off-valve": "shut-off valve: two solid triangles point to point",
    "gauge": "pressure gauge: circle with a slanted arrow",
    "consumer": "double-acting cylinder standing for the machine's valves and actuators",
}

_STYLE = (
    ".sf-s{fill:none;stroke:#1f2933;stroke-width:1.4}"
    ".sf-w{fill:none;stroke:#1f2933;stroke-width:1.8}"
    ".sf-p{fill:none;stroke:#1f2933;stroke-width:1.1;stroke-dasharray:5 3}"
    ".sf-e{fill:none;stroke:#52606d;stroke-width:1.1;stroke-dasharray:10 3 2 3}"
    ".sf-f{fill:#1f2933;stroke:#1f2933;stroke-width:1}"
    ".sf-t{font:11px sans-serif;fill:#1f2933}"
    ".sf-m{font:bold 13px sans-serif;fill:#1f2933}"
)


def _n(v: float) -> str:
    return f"{v:.1f}".rstrip("0").rstrip(".")


def _line(*pts, cls: str = "sf-w") -> str:
    d = "M" + " L".join(f"{_n(x)} {_n(y)}" for x, y in pts)
    return f"<path class='{cls}' d='{d}'/>"


def _label(x: float, y: float, lines, anchor: str = "middle") -> str:
    spans = "".join(
        f"<tspan x='{_n(x)}' dy='{0 if k == 0 else 13}'>{escape(in_system_text(t))}</tspan>"
        for k, t in enumerate(lines)
    )
    return f"<text class='sf-t' x='{_n(x)}' y='{_n(y)}' text-anchor='{anchor}'>{spans}</text>"


def _group(element: str, symbol: str, body: str, label: str = "") -> str:
    return f"<g data-element='{escape(element)}' data-symbol='{escape(symbol)}'>{body}{label}</g>"


def _arrowhead(x: float, y: float, dx: float, dy: float, size: float = 6.0) -> str:
    """A solid arrowhead with its tip at (x, y) pointing along (dx, dy)."""
    norm = math.hypot(dx, dy) or 1.0
    ux, uy = dx / norm, dy / norm
    bx, by = x - ux * size, y - uy * size
    px, py = -uy * size * 0.45, ux * size * 0.45
    pts = f"{_n(x)},{_n(y)} {_n(bx + px)},{_n(by + py)} {_n(bx - px)},{_n(by - py)}"
    return f"<polygon class='sf-f' points='{pts}'/>"


def _spring(x0: float, y: float, x1: float, adjustable: bool = True) -> str:
    """A horizontal spring (zigzag) from x0 to x1, with the adjustment arrow across it."""
    n = 6
    step = (x1 - x0) / n
    pts = [(x0, y)] + [(x0 + step * (k + 0.5), y + (5 if k % 2 else -5)) for k in range(n)]
    out = _line(*pts, (x1, y), cls="sf-s")
    if adjustable:
        out += _line((x0 - 2, y + 9), (x1 + 2, y - 9), cls="sf-s")
        out += _arrowhead(x1 + 2, y - 9, x1 - x0 + 4, -18, 5)
    return out


# -- symbols -----------------------------------------------------------------------------------


def _tank(x: float, y: float, label=(), left: bool = False) -> str:
    body = _line((x - 18, y - 7), (x - 18, y + 7), (x + 18, y + 7), (x + 18, y - 7), cls="sf-s")
    if not label:
        return _group("tank", "tank", body)
    text = _label(x - 24, y + 5, label, "end") if left else _label(x + 24, y + 5, label, "start")
    return _group("tank", "tank", body, text)


def _motor(x: float, y: float, label) -> str:
    body = (
        f"<circle class='sf-s' cx='{_n(x)}' cy='{_n(y)}' r='16'/>"
        f"<text class='sf-m' x='{_n(x)}' y='{_n(y + 5)}' text-anchor='middle'>M</text>"
    )
    return _group("motor", "motor", body, _label(x, y - 46, label))


def _pump(x: float, y: float, control: str, label) -> str:
    body = f"<circle class='sf-s' cx='{_n(x)}' cy='{_n(y)}' r='18'/>" + _arrowhead(
        x, y - 18, 0, -1, 9
    )
    symbol = "pump-fixed"
    if control != "fixed":
        symbol = "pump-variable"
        body += _line((x - 20, y + 20), (x + 18, y - 18), cls="sf-s") + _arrowhead(
            x + 22, y - 22, 1, -1, 7
        )
    out = _group("pump", symbol, body, _label(x + 48, y + 12, label, "start"))
    if control == "pressure-compensated":
        comp = _line((x, y - 30), (x + 40, y - 30), (x + 40, y), cls="sf-p") + _spring(
            x + 18, y, x + 40
        )
        out += _group("compensator", "compensator", comp)
    return out


def _filter(x: float, y: float, label) -> str:
    d = 14
    body = (
        f"<polygon class='sf-s' points='{_n(x)},{_n(y - d)} {_n(x + d)},{_n(y)} "
        f"{_n(x)},{_n(y + d)} {_n(x - d)},{_n(y)}'/>" + _line((x - d, y), (x + d, y), cls="sf-p")
    )
    return _group("filter", "filter", body, _label(x - 22, y + 4, label, "end"))


def _cooler(x: float, y: float, label) -> str:
    d = 14
    body = (
        f"<polygon class='sf-s' points='{_n(x)},{_n(y - d)} {_n(x + d)},{_n(y)} "
        f"{_n(x)},{_n(y + d)} {_n(x - d)},{_n(y)}'/>"
        + _line((x - d - 6, y), (x + d + 6, y), cls="sf-s")
        + _arrowhead(x + d + 8, y, 1, 0, 6)
        + _arrowhead(x - d - 8, y, -1, 0, 6)
    )
    return _group("cooler", "cooler", body, _label(x - 28, y + 4, label, "end"))


def _relief(x: float, y: float, label, element: str = "relief valve") -> str:
    """Vertical pressure relief valve: inlet at (x, y−14), outlet at (x, y+14)."""
    body = (
        f"<rect class='sf-s' x='{_n(x - 14)}' y='{_n(y - 14)}' width='28' height='28'/>"
        + _line((x + 6, y - 11), (x + 6, y + 6), cls="sf-s")
        + _arrowhead(x + 6, y + 11, 0, 1, 6)
        + _line((x, y - 20), (x - 24, y - 20), (x - 24, y), (x - 14, y), cls="sf-p")
        + _spring(x + 14, y, x + 32)
    )
    return _group(element, "relief-valve", body, _label(x, y + 105, label))


def _two_way(x: float, y: float, label, element: str) -> str:
    """2/2 solenoid valve, spring return, normally open; ports at (x, y∓12) of the rest box."""
    s = 24
    left = x - s
    body = (
        f"<rect class='sf-s' x='{_n(x - s / 2)}' y='{_n(y - s / 2)}' width='{s}' height='{s}'/>"
        f"<rect class='sf-s' x='{_n(left - s / 2)}' y='{_n(y - s / 2)}' width='{s}' "
        f"height='{s}'/>"
        + _line((x, y - 9), (x, y + 5), cls="sf-s")
        + _arrowhead(x, y + 10, 0, 1, 6)
        # the energised box: both ports blocked (short bars)
        + _line((left, y - 12), (left, y - 6), cls="sf-s")
        + _line((left - 4, y - 6), (left + 4, y - 6), cls="sf-s")
        + _line((left, y + 12), (left, y + 6), cls="sf-s")
        + _line((left - 4, y + 6), (left + 4, y + 6), cls="sf-s")
        # solenoid on the left, spring on the right
        + f"<rect class='sf-s' x='{_n(left - s / 2 - 10)}' y='{_n(y - 7)}' width='10' "
        "height='14'/>"
        + _line((left - s / 2 - 10, y + 7), (left - s / 2, y - 7), cls="sf-s")
        + _spring(x + s / 2, y, x + s / 2 + 14, adjustable=False)
    )
    return _group(element, "unloading-valve", body, _label(x, y + 105, label))


def _check(x: float, y: float, label) -> str:
    """Non-return valve, free flow from left to right."""
    body = (
        _line((x - 14, y), (x - 10, y), cls="sf-w")
        + _line((x + 6, y - 11), (x - 10, y), (x + 6, y + 11), cls="sf-s")
        + f"<circle class='sf-s' cx='{_n(x + 4)}' cy='{_n(y)}' r='7'/>"
        + _line((x + 11, y), (x + 14, y), cls="sf-w")
    )
    return _group("non-return valve", "non-return-valve", body, _label(x, y + 24, label))


def _switch(x: float, y: float, y_line: float, label) -> str:
    body = (
        f"<rect class='sf-s' x='{_n(x - 15)}' y='{_n(y - 10)}' width='30' height='20'/>"
        + _line((x - 9, y + 4), (x + 6, y - 5), cls="sf-s")
        + f"<circle class='sf-f' cx='{_n(x - 9)}' cy='{_n(y + 4)}' r='1.8'/>"
        + _line((x, y + 10), (x, y_line), cls="sf-p")
    )
    return _group("pressure switch", "pressure-switch", body, _label(x - 22, y - 2, label, "end"))


def _gauge(x: float, y: float, label=()) -> str:
    body = f"<circle class='sf-s' cx='{_n(x)}' cy='{_n(y)}' r='10'/>" + _line(
        (x - 7, y + 7), (x + 5, y - 5), cls="sf-s"
    )
    body += _arrowhead(x + 8, y - 8, 1, -1, 5)
    return _group("pressure gauge", "gauge", body, _label(x, y + 26, label) if label else "")


def _shut_off(x: float, y: float) -> str:
    """Vertical shut-off valve: two triangles point to point."""
    pts1 = f"{_n(x - 7)},{_n(y - 10)} {_n(x + 7)},{_n(y - 10)} {_n(x)},{_n(y)}"
    pts2 = f"{_n(x - 7)},{_n(y + 10)} {_n(x + 7)},{_n(y + 10)} {_n(x)},{_n(y)}"
    body = f"<polygon class='sf-f' points='{pts1}'/><polygon class='sf-f' points='{pts2}'/>"
    return _group("shut-off valve", "shut-off-valve", body)


def _capsule(x: float, y: float) -> str:
    return f"<rect class='sf-s' x='{_n(x - 13)}' y='{_n(y - 25)}' width='26' height='50' rx='13'/>"


def _gas(x: float, y: float) -> str:
    return (
        f"<polygon class='sf-s' points='{_n(x - 5)},{_n(y + 4)} {_n(x + 5)},{_n(y + 4)} "
        f"{_n(x)},{_n(y - 5)}'/>"
    )


def _accumulator(x: float, y: float, kind: str) -> str:
    """One accumulator of a type; port at (x, y + 25)."""
    body = _capsule(x, y) + _gas(x, y - 13)
    if kind == "bladder":
        body += (
            f"<path class='sf-s' d='M{_n(x - 7)} {_n(y - 20)} L{_n(x - 7)} {_n(y + 4)} "
            f"A7 7 0 0 0 {_n(x + 7)} {_n(y + 4)} L{_n(x + 7)} {_n(y - 20)}'/>"
        )
    elif kind == "diaphragm":
        body += _line((x - 13, y + 2), (x + 13, y + 2), cls="sf-s")
    elif kind in ("piston", "piston-bottles"):
        body += _line((x - 13, y + 1), (x + 13, y + 1), cls="sf-s")
        body += _line((x - 13, y + 5), (x + 13, y + 5), cls="sf-s")
    else:  # gas-over-oil: no separating element, the oil level
        body += _line((x - 13, y + 4), (x + 13, y + 4), cls="sf-p")
    if kind == "piston-bottles":  # a gas bottle joined at the gas end
        body += _line((x, y - 25), (x, y - 32), (x + 20, y - 32), cls="sf-s")
        body += (
            f"<rect class='sf-s' x='{_n(x + 11)}' y='{_n(y - 30)}' width='18' height='34' "
            "rx='9'/>" + _gas(x + 20, y - 19)
        )
    return body


def _consumer(x: float, y: float, label) -> str:
    """A double-acting cylinder: ports at (x − 30, y + 12) and (x + 30, y + 12)."""
    body = (
        f"<rect class='sf-s' x='{_n(x - 40)}' y='{_n(y - 12)}' width='80' height='24'/>"
        + _line((x - 8, y - 12), (x - 8, y + 12), cls="sf-s")
        + _line((x - 8, y), (x + 62, y), cls="sf-s")
    )
    return _group("consumer", "consumer", body, _label(x, y - 50, label))


# -- the circuits -------------------------------------------------------------------------------

_BUS = 230.0  # the pressure line's height
_W, _H = 1000, 470


def _frame(parts: list[str], title: str, top: float = 0.0) -> str:
    return (
        f"<svg xmlns='http://www.w3.org/2000/svg' viewBox='0 {_n(top)} {_W} {_n(_H - top)}' "
        "role='img' style='width:100%;height:auto;max-width:1000px' "
        f"class='schematic' aria-label='{escape(title)}'><title>{escape(title)}</title>"
        f"<style>{_STYLE}</style>{''.join(parts)}</svg>"
    )


def _supply_side(parts, pump, motor, s, drive=None, control: str | None = None):
    """Motor, pump, suction from the tank; the pump's outlet rises to the pressure line."""
    mx, px, py = 60.0, 140.0, 340.0
    parts.append(_line((mx + 16, py - 2), (px - 18, py - 2), cls="sf-s"))
    parts.append(_line((mx + 16, py + 2), (px - 18, py + 2), cls="sf-s"))
    volt = f"{s.motor_voltage:g} V {s.motor_frequency:g} Hz, {s.motor_poles:d} poles"
    parts.append(_motor(mx, py, [f"{kilowatts(motor.rated_power):g} kW", volt]))
    if drive is not None:
        box = (
            f"<rect class='sf-e' x='{_n(mx - 28)}' y='{_n(py - 26)}' width='56' height='52'/>"
            + _label(mx, py - 84, ["variable-speed drive", f"{kilowatts(drive.rated_power):g} kW"])
        )
        parts.append(_group("drive", "drive", box))
    disp = to_unit(pump.displacement, "cm3", "displacement")
    parts.append(
        _pump(
            px,
            py,
            control or pump.control,
            [f"{disp:g} cm³/rev", f"{lpm(pump.flow):.1f} L/min"],
        )
    )
    parts.append(_line((px, py + 18), (px, py + 78)))
    parts.append(_tank(px, py + 85))
    parts.append(_line((px, py - 27), (px, _BUS)))


def _return_side(parts, x_cons: float, sizes, heat_text: str | None):
    """Return line from the consumer through the cooler and filter to the tank."""
    x = x_cons + 30
    y0 = _BUS + 36
    parts.append(_line((x, y0), (x, 440)))
    if heat_text:
        parts.append(_cooler(x, 300, ["cooler", heat_text]))
    label = ["return filter"]
    if sizes is not None:
        label.append(f"{lpm(sizes.filter_flow):.0f} L/min")
    parts.append(_filter(x, 370, label))
    tank = [f"tank {litres(sizes.tank_volume):g} L"] if sizes is not None else ["tank"]
    parts.append(_tank(x, 447, tank, left=True))


def _valve_branch(parts, x: float, make) -> None:
    parts.append(_line((x, _BUS), (x, 286)))
    parts.append(make(x, 300))
    parts.append(_line((x, 314), (x, 372)))
    parts.append(_tank(x, 379))


def _unloading_branch(parts, flow_lpm: float) -> None:
    """The solenoid unloading valve to tank, labelled with the pump flow [L/min]."""
    label = ["unloading valve", f"{flow_lpm:.1f} L/min"]
    _valve_branch(parts, 380, lambda x, y: _two_way(x, y, label, "unloading valve"))


def design_svg(result) -> str:
    """The schematic of the designed supply (empty string when there is no design)."""
    d, s = result.design, result.settings
    if not d.feasible or d.pump is None:
        return ""
    sizes = circuit(result)
    parts: list[str] = []
    _supply_side(parts, d.pump, d.motor, s)
    relief = bar_g(d.relief, result)
    _valve_branch(parts, 260, lambda x, y: _relief(x, y, [f"relief {relief:.0f} bar"]))
    x_end = 440.0
    if d.bank is not None:
        flow = lpm(d.pump.flow)
        _unloading_branch(parts, flow)
        parts.append(_line((140, _BUS), (x_end - 14, _BUS)))
        parts.append(_check(x_end, _BUS, [f"{flow:.1f} L/min"]))
        parts.append(_bank(result, sizes))
        x_start = x_end + 14
    else:
        x_start = 140
    x_cons = 900.0
    parts.append(_line((x_start, _BUS), (x_cons - 30, _BUS), (x_cons - 30, _BUS + 12)))
    peak = lpm(sizes.peak_demand) if sizes is not None else math.nan
    parts.append(_consumer(x_cons, _BUS + 24, ["consumer", f"peak {peak:.0f} L/min"]))
    heat = None
    if sizes is not None and math.isfinite(sizes.cooler_capacity):
        heat = fmt(kilowatts(sizes.cooler_capacity), ".1f", "kW")
    _return_side(parts, x_cons, sizes, heat)
    title = f"hydraulic schematic of the designed supply: {result.name}"
    return _frame(parts, title)


def _bank(result, sizes) -> str:
    """Pressure switch, safety block and accumulators on the pressure line."""
    d = result.design
    bank, opt = d.bank, d.bank.option
    parts: list[str] = []
    sp = setpoints_bar(result)
    if "load_below" in sp:
        switch = [
            "pressure switch",
            f"load < {sp['load_below']:.1f} bar",
            f"unload > {sp['unload_above']:.1f} bar",
        ]
    else:
        switch = ["pressure switch"]
    parts.append(_switch(490, 165, _BUS, switch))
    xb = 580.0
    ps = bar_g(opt.max_pressure, result)
    # the safety block: shut-off valve on the way up, safety and discharge valves to tank
    parts.append(_line((xb, _BUS), (xb, 92)))
    parts.append(_shut_off(xb, 180))
    parts.append(_line((xb, 122), (715, 122)))
    gauge = [f"0…{bar_delta(sizes.gauge_range):g} bar"] if sizes is not None else []
    parts.append(_line((xb, 150), (550, 150)))
    parts.append(_gauge(538, 150, gauge))
    for x, make in (
        (625, lambda x, y: _relief(x, y, [], "safety valve")),
        (715, lambda x, y: _two_way(x, y, [], "discharge valve")),
    ):
        parts.append(_line((x, 122), (x, 146)))
        parts.append(make(x, 160))
        parts.append(_line((x, 174), (x, 186)))
        parts.append(_tank(x, 193))
    enclosure = "<rect class='sf-e' x='510' y='108' width='245' height='102'/>" + _label(
        752, 222, [f"safety block, safety valve ≤ {ps:.0f} bar"], "end"
    )
    parts.append(_group("safety block", "safety-block", enclosure))
    # the accumulators on a manifold above the block
    shown = min(bank.count, 4)
    xs = [xb + 44 * k for k in range(shown)]
    parts.append(_line((xb, 92), (xs[-1], 92)))
    accs = "".join(_line((x, 92), (x, 85)) + _accumulator(x, 60, opt.type) for x in xs)
    more = "" if bank.count <= shown else f" (of {bank.count} drawn {shown})"
    label = _label(
        xs[-1] + 36,
        44,
        [
            f"{bank.count} × {opt.type} {litres(opt.nominal_volume):g} L{more}",
            f"precharge {bar_g(bank.precharge, result):.1f} bar at 20 °C, PS {ps:.0f} bar",
        ],
        "start",
    )
    parts.append(_group("accumulator", f"accumulator-{opt.type}", accs, label))
    return "".join(parts)


def alternative_svg(result, baseline) -> str:
    """The schematic of one pump-only alternative (empty string when it has no pump)."""
    b, s = baseline, result.settings
    if b.pump is None or b.motor is None:
        return ""
    control = {
        "fixed": "fixed",
        "variable-speed": "fixed",
        "compensated": "pressure-compensated",
        "load-sensing": "load-sensing",
    }.get(b.kind, b.pump.control)
    parts: list[str] = []
    _supply_side(parts, b.pump, b.motor, s, drive=b.drive, control=control)
    setting = bar_g(b.pressure, result)
    _valve_branch(parts, 260, lambda x, y: _relief(x, y, ["relief valve"]))
    if b.kind == "fixed":
        _unloading_branch(parts, lpm(b.pump.flow))
    x_cons = 900.0
    parts.append(_line((140, _BUS), (x_cons - 30, _BUS), (x_cons - 30, _BUS + 12)))
    parts.append(_consumer(x_cons, _BUS + 24, ["consumer", f"set {setting:.0f} bar"]))
    if b.kind == "load-sensing":
        ls = _line(
            (x_cons - 10, _BUS + 12),
            (x_cons - 10, 460),
            (200, 460),
            (200, 340),
            (158, 340),
            cls="sf-p",
        )
        parts.append(_group("load-sensing line", "load-sensing", ls))
    heat = None
    if b.breakdown is not None:
        heat = fmt(kilowatts(b.breakdown.heat_load), ".1f", "kW")
    _return_side(parts, x_cons, None, heat)
    return _frame(parts, f"hydraulic schematic of the pump-only alternative: {b.kind}", 180.0)


def schematics_html(result) -> str:
    """The design's schematic and, folded, the pump-only alternatives' (HTML fragment)."""
    main = design_svg(result)
    if not main:
        return ""
    out = [
        "<h3>Hydraulic schematic</h3>",
        f"<figure class='schematic'>{main}<figcaption>Circuit of the designed supply, drawn "
        "from the design with ISO 1219-1 graphical symbols; each item carries its size or "
        "setting from the specification.</figcaption></figure>",
    ]
    for b in result.design.baselines:
        svg = alternative_svg(result, b)
        if svg:
            out.append(
                f"<details class='schematic'><summary>Schematic of the pump-only alternative: "
                f"{escape(b.kind)}</summary>{svg}</details>"
            )
    return "".join(out)
