"""Reading ``design.json`` (schema ``stowflow.design/1``) back into a :class:`Design`.

Only the contract keys of DESIGN.md are needed (pressures bar **gauge**, volumes L, flows
L/min, power kW); more keys are used when present (``relief_bar``, ``max_allowable_pressure_bar``,
pump efficiencies and rating, ``bore_mm``, ``max_flow_lps``, ``swept_volume_l``).  Components
are taken from the catalogue when a row matches the file's numbers; otherwise they are built
from the file with the stated defaults and a note says so.  A ``schedule.csv`` export beside
the file gives the schedule controller its schedule.  Every mistake is one
:class:`~stowflow.errors.DesignFileError` line naming the file and the key.
"""

from __future__ import annotations

import csv
import io
import json
import math
from pathlib import Path

import numpy as np
import pandas as pd
from stowflow.catalogue import (
    ACCUMULATOR_TYPES,
    AccumulatorOption,
    Catalogue,
    MotorOption,
    PumpOption,
)
from stowflow.cycle.csvtable import utf8_text
from stowflow.errors import DesignFileError, StowflowError
from stowflow.glossary import GLOSSARY, check_plausible
from stowflow.io.quantities import parse_gas_process
from stowflow.io.rawtext import NUMBER, check_digits, check_nesting, read_limited
from stowflow.physics.accumulator import rules_for
from stowflow.search.settings import DesignSettings
from stowflow.search.solution import Bank, Design
from stowflow.units import celsius_to_kelvin, si_factor, to_unit

__all__ = [
    "DEFAULT_MOTOR_EFFICIENCY",
    "DEFAULT_OVERALL_EFFICIENCY",
    "DEFAULT_VOLUMETRIC_EFFICIENCY",
    "DESIGN_SCHEMA",
    "SCHEDULE_INPUT_COLUMNS",
    "load_design",
    "read_schedule_csv",
    "read_setpoints",
]

#: Schema tag of design.json this module reads.
DESIGN_SCHEMA = "stowflow.design/1"
#: Defaults for a pump that is not in the catalogue (common practice, no published source;
#: Esposito, Fluid Power with Applications, 2009: 80-90 % overall for gear pumps, from memory).
DEFAULT_VOLUMETRIC_EFFICIENCY = 0.93
DEFAULT_OVERALL_EFFICIENCY = 0.85
#: Motor efficiency when neither the catalogue nor the file gives one: the IE3 minimum of a
#: 4-pole 11 kW motor (IEC 60034-30-1:2014, from memory), a middle value of the range.
DEFAULT_MOTOR_EFFICIENCY = 0.914
#: Relative tolerance when matching a JSON number to a catalogue row, [-] (the export rounds
#: to 6 decimals).
_MATCH_RTOL = 1e-4


def _key(name: str, key: str) -> str:
    """``"pump.speed_rpm"`` (``"relief_bar"`` at the top level)."""
    return f"{name}.{key}" if name else key


def _shown(value, width: int = 40) -> str:
    """``repr(value)`` cut to ``width`` characters for a message."""
    text = repr(value)
    return text if len(text) <= width else text[: width - 1] + "…"


class _Reader:
    """Typed access to the JSON with one-line errors naming the file and the key."""

    def __init__(self, path: Path, data: dict, p_ambient: float = 101325.0) -> None:
        self.path, self.data, self.p_ambient = path, data, p_ambient

    def fail(self, key: str, msg: str) -> DesignFileError:
        return DesignFileError(f"{self.path}: key '{key}': {msg}")

    def section(self, key: str, *, optional: bool = False) -> dict | None:
        if key not in self.data:
            if optional:
                return None
            raise self.fail(key, "missing; expected an object (see DESIGN.md, outputs)")
        value = self.data[key]
        if value is None and optional:
            return None
        if not isinstance(value, dict):
            raise self.fail(key, f"expected an object, found {type(value).__name__}")
        return value

    def number(
        self,
        sec: dict | None,
        name: str,
        key: str,
        *,
        required: bool = True,
        positive: bool = True,
        default=None,
        term: str | None = None,
        unit: str | None = None,
        zero_ok: bool = False,
    ):
        """The number at ``name.key``, checked against the glossary's range of ``term``.

        Without ``term`` only finite (and, with ``positive``, > 0) is checked.
        """
        full = _key(name, key)
        if sec is None or key not in sec or sec[key] is None:
            if required:
                raise self.fail(full, "missing; expected a number")
            return default
        v = sec[key]
        if isinstance(v, bool) or not isinstance(v, int | float):
            raise self.fail(full, f"expected a number, found {_shown(v)}")
        if term is not None:
            where, what = str(self.path), f"key '{full}'"
            return check_plausible(
                v, term, what, where, unit=unit, zero_ok=zero_ok, error=DesignFileError
            )
        try:
            v = float(v)
        except OverflowError:
            raise self.fail(full, "expected a number, found an integer beyond range") from None
        if not math.isfinite(v):
            raise self.fail(full, f"expected a number, found {v!r}")
        if positive and v <= 0:
            raise self.fail(full, f"expected a value > 0, found {v:g}")
        return v

    def text(self, sec: dict | None, name: str, key: str, default=None):
        if sec is None or sec.get(key) is None:
            return default
        v = sec[key]
        if not isinstance(v, str):
            raise self.fail(_key(name, key), f"expected text, found {_shown(v)}")
        return v


def _close(a: float, b: float) -> bool:
    """Whether a file's number matches a catalogue row's (:data:`_MATCH_RTOL`)."""
    return abs(a - b) <= _MATCH_RTOL * max(abs(a), abs(b))


def _read_pump(r: _Reader, catalogue: Catalogue, notes: list) -> PumpOption:
    """The pump: a catalogue row matching the file's numbers, else built from them.

    Every number is held to the catalogue's rules for a pump row (the glossary's ranges),
    whether a row matches or not.
    """
    pa = r.p_ambient
    bar = si_factor("bar", "pressure")
    pump_j = r.section("pump")
    disp = r.number(pump_j, "pump", "displacement_cm3", term="displacement", unit="cm3")
    disp *= si_factor("cm3", "displacement")
    speed = r.number(pump_j, "pump", "speed_rpm", term="speed", unit="rpm")
    speed *= si_factor("rpm", "speed")
    flow = r.number(pump_j, "pump", "flow_lpm", required=False, term="pump_flow", unit="L/min")
    flow = None if flow is None else flow * si_factor("L/min", "flow")
    eta_v_file = r.number(
        pump_j, "pump", "volumetric_efficiency", required=False, term="volumetric_efficiency"
    )
    eta_o = r.number(
        pump_j, "pump", "overall_efficiency", required=False, term="overall_efficiency"
    )
    if eta_o is not None and eta_v_file is not None and eta_o > eta_v_file:
        raise r.fail(
            "pump.overall_efficiency",
            f"{eta_o:g} is above volumetric_efficiency {eta_v_file:g}; expected overall <= "
            "volumetric (overall = volumetric × mechanical)",
        )
    pmax = r.number(
        pump_j, "pump", "max_pressure_bar", required=False, term="max_allowable_pressure"
    )
    pump = next(
        (
            p
            for p in catalogue.pumps
            if _close(p.displacement, disp)
            and _close(p.speed, speed)
            and (flow is None or _close(p.flow, flow))
        ),
        None,
    )
    if pump is None:
        eta_v = DEFAULT_VOLUMETRIC_EFFICIENCY if flow is None else flow / (disp * speed)
        if not 0 < eta_v <= 1:
            raise r.fail(
                "pump.flow_lpm",
                f"{to_unit(flow, 'L/min', 'flow'):.4g} L/min exceeds displacement × speed",
            )
        low = GLOSSARY["volumetric_efficiency"].plausible[0]
        if eta_v < low:
            raise r.fail(
                "pump.flow_lpm",
                f"{to_unit(flow, 'L/min', 'flow'):.4g} L/min is {eta_v:.3g} of displacement × "
                f"speed; expected a volumetric efficiency of {low:g} to 1",
            )
        eta_o = DEFAULT_OVERALL_EFFICIENCY if eta_o is None else eta_o
        if eta_o > eta_v:
            raise r.fail(
                "pump.overall_efficiency",
                f"{eta_o:g} is above the volumetric efficiency {eta_v:.3g} (flow_lpm over "
                "displacement × speed); expected overall <= volumetric",
            )
        pump = PumpOption(
            disp,
            speed,
            math.inf if pmax is None else pmax * bar + pa,
            eta_v,
            eta_o,
            0.0,
            r.text(pump_j, "pump", "name", "pump from design.json"),
        )
        notes.append(
            f"pump not in the catalogue: built from design.json (volumetric efficiency "
            f"{eta_v:.3g}, overall efficiency {eta_o:.3g}"
            + (", no pressure rating" if pmax is None else "")
            + ")"
        )
    return pump


def _read_motor(r: _Reader, catalogue: Catalogue, notes: list) -> MotorOption:
    """The motor: a catalogue row of the same rating, else built from the file."""
    motor_j = r.section("motor")
    kw = r.number(motor_j, "motor", "rated_kw", term="rated_power", unit="kW")
    kw *= si_factor("kW", "power")
    eff = r.number(motor_j, "motor", "efficiency", required=False, term="efficiency")
    motor = next((m for m in catalogue.motors if _close(m.rated_power, kw)), None)
    if motor is None:
        eff = DEFAULT_MOTOR_EFFICIENCY if eff is None else eff
        motor = MotorOption(kw, eff, 0.0, r.text(motor_j, "motor", "name", "motor"))
        notes.append(f"motor not in the catalogue: built from design.json (efficiency {eff:.3g})")
    return motor


def _read_bank(r: _Reader, catalogue: Catalogue, notes: list) -> tuple:
    """The bank (None for pump only) and the working window [Pa abs]."""
    pa = r.p_ambient
    bar = si_factor("bar", "pressure")
    acc_j = r.section("accumulator", optional=True)
    bank = None
    p_max = p_min = math.nan
    if acc_j is not None:
        typ = r.text(acc_j, "accumulator", "type")
        if typ not in ACCUMULATOR_TYPES:
            raise r.fail(
                "accumulator.type",
                f"expected one of {', '.join(ACCUMULATOR_TYPES)}, found {_shown(typ)}",
            )
        vol = r.number(acc_j, "accumulator", "nominal_volume_l", term="nominal_volume", unit="L")
        vol *= si_factor("L", "volume")
        count = acc_j.get("count")
        if isinstance(count, bool) or not isinstance(count, int):
            raise r.fail("accumulator.count", f"expected an integer ≥ 1, found {_shown(count)}")
        r.number(acc_j, "accumulator", "count", term="count")
        p0 = r.number(acc_j, "accumulator", "precharge_bar_at_20c", term="precharge") * bar + pa
        p_min = r.number(acc_j, "accumulator", "min_pressure_bar", term="min_pressure") * bar + pa
        p_max = r.number(acc_j, "accumulator", "max_pressure_bar", term="max_pressure") * bar + pa
        if not p0 < p_max:
            raise r.fail("accumulator.precharge_bar_at_20c", "must be below max_pressure_bar")
        if not p_min < p_max:
            raise r.fail("accumulator.min_pressure_bar", "must be below max_pressure_bar")
        ps = r.number(
            acc_j,
            "accumulator",
            "max_allowable_pressure_bar",
            required=False,
            term="max_allowable_pressure",
        )
        bore = r.number(
            acc_j, "accumulator", "bore_mm", required=False, default=0.0, term="bore", zero_ok=True
        )
        mf = r.number(acc_j, "accumulator", "max_flow_lps", required=False, term="max_flow")
        sw = r.number(acc_j, "accumulator", "swept_volume_l", required=False, term="swept_volume")
        opt = next(
            (
                a
                for a in catalogue.accumulators
                if a.type == typ
                and _close(a.nominal_volume, vol)
                and (ps is None or _close(a.max_pressure, ps * bar + pa))
            ),
            None,
        )
        if opt is None:
            if typ in ("piston", "piston-bottles") and not bore and mf is None:
                raise r.fail(
                    "accumulator.bore_mm",
                    f"a {typ} not in the catalogue needs its "
                    "bore (bore_mm) or max_flow_lps for the flow limit",
                )
            opt = AccumulatorOption(
                typ,
                vol,
                math.inf if ps is None else ps * bar + pa,
                bore * si_factor("mm", "length"),
                0.0,
                r.text(acc_j, "accumulator", "name", f"{typ} from design.json"),
                None if mf is None else mf * si_factor("L/s", "flow"),
                None if sw is None else sw * si_factor("L", "volume"),
            )
            notes.append(
                "accumulator not in the catalogue: built from design.json"
                + (" (no PS given: not checked)" if ps is None else "")
            )
        if p_max > opt.max_pressure * (1 + 1e-9):
            raise r.fail(
                "accumulator.max_pressure_bar",
                f"{(p_max - pa) / bar:g} bar is above the vessel's PS "
                f"{(opt.max_pressure - pa) / bar:g} bar (max_allowable_pressure); expected a "
                "working pressure at or below PS",
            )
        rules = rules_for(typ, (catalogue.limits or {}).get(typ))
        bank = Bank(opt, int(count), p0, rules)
    return bank, p_min, p_max


def _check_relief(r: _Reader, relief: float, pump: PumpOption, bank, given: bool, notes) -> None:
    """The relief setting at or below the vessel's PS and the pump's rating (a safety rule).

    A ``relief_bar`` given in the file is refused above either; one derived from the
    settings gets a note.
    """
    pa, bar = r.p_ambient, si_factor("bar", "pressure")
    limits = [("the pump's rating (pump.max_pressure_bar)", pump.max_pressure)]
    if bank is not None:
        limits.insert(0, ("the vessel's PS (max_allowable_pressure)", bank.option.max_pressure))
    for what, limit in limits:
        if math.isfinite(limit) and relief > limit * (1 + 1e-9):
            text = f"{(relief - pa) / bar:.6g} bar is above {what} {(limit - pa) / bar:g} bar"
            if given:
                raise r.fail(
                    "relief_bar",
                    f"{text}; expected a relief setting at or below it (the relief valve "
                    "protects the vessel and the pump)",
                )
            notes.append(f"relief setting derived from the settings: {text}; give relief_bar")


def _read_json(path: Path) -> dict:
    """The JSON object of a design file: size and nesting checked before it is parsed."""
    data = read_limited(path, "design", DesignFileError, "a design.json")
    text = utf8_text(data, str(path), DesignFileError, "a UTF-8 JSON file (design.json)")
    check_nesting(text, str(path), "json", DesignFileError)
    try:
        doc = json.loads(text)
    except json.JSONDecodeError as exc:
        raise DesignFileError(
            f"{path}: not valid JSON (line {exc.lineno}, column {exc.colno}: {exc.msg})"
        ) from None
    except (ValueError, RecursionError) as exc:  # e.g. an integer of more than 4300 digits
        raise DesignFileError(f"{path}: not usable JSON ({str(exc)[:80]})") from None
    if not isinstance(doc, dict):
        raise DesignFileError(f"{path}: expected a JSON object, found {type(doc).__name__}")
    return doc


def load_design(
    path: str | Path,
    catalogue: Catalogue,
    settings: DesignSettings,
    schedule_csv=None,
    cycle=None,
    *,
    schedule_required: bool = False,
) -> tuple[Design, DesignSettings, list[str]]:
    """Rebuild a :class:`Design` from ``design.json`` (contract keys).

    Parameters
    ----------
    path : str or Path
        The design file.
    catalogue : Catalogue
        Components are taken from here when a row matches the file's numbers.
    settings : DesignSettings
        Settings to start from; the file's temperatures and gas model replace the defaults.
    schedule_csv : str or Path, optional
        A schedule.csv for the schedule controller.
    cycle : DutyCycle, optional
        The cycle (to read the schedule onto its grid).
    schedule_required : bool
        The schedule.csv was named by the user: a missing file is refused (otherwise the
        schedule controller just has no schedule).

    Returns
    -------
    tuple
        The design, the settings (with the file's temperatures and gas model), notes.

    Raises
    ------
    DesignFileError
        The file is missing, too large or nested too deeply, not JSON, of another schema, or
        a key is missing, of the wrong type or outside the rules a catalogue row meets
        (the glossary's plausible ranges, efficiencies in (0, 1], the relief setting at or
        below the vessel's PS and the pump's rating); the schedule.csv is not a valid export.
    """
    path = Path(path)
    data = _read_json(path)
    r = _Reader(path, data, settings.p_ambient)
    if data.get("schema") != DESIGN_SCHEMA:
        raise r.fail("schema", f'expected "{DESIGN_SCHEMA}", found {_shown(data.get("schema"))}')
    notes: list[str] = []
    pa = settings.p_ambient
    bar = si_factor("bar", "pressure")
    s = settings
    gm = r.text(data, "", "gas_model")
    if gm is not None:
        if gm not in ("real", "ideal"):
            raise r.fail("gas_model", f'expected "real" or "ideal", found {_shown(gm)}')
        s = s.with_(gas_model=gm)
    tc = r.section("temperature_c", optional=True)
    if tc is not None:
        lo = r.number(tc, "temperature_c", "min", term="temperature", unit="°C")
        hi = r.number(tc, "temperature_c", "max", term="temperature", unit="°C")
        if lo > hi:
            raise r.fail("temperature_c", f"min {lo:g} °C is above max {hi:g} °C")
        try:
            s = s.with_(t_min=celsius_to_kelvin(lo), t_max=celsius_to_kelvin(hi))
        except StowflowError as exc:
            raise r.fail("temperature_c", str(exc)) from None

    pump = _read_pump(r, catalogue, notes)
    motor = _read_motor(r, catalogue, notes)
    bank, p_min, p_max = _read_bank(r, catalogue, notes)
    relief_bar = r.number(data, "", "relief_bar", required=False, term="relief_setting")
    given = relief_bar is not None
    if given:
        relief = relief_bar * bar + pa
    elif bank is not None:
        relief = s.relief_setting(p_max)
        notes.append("relief setting not in design.json: from the settings' relief margin")
    elif cycle is not None and cycle.pressure is not None:
        relief = s.relief_setting(float(np.max(cycle.pressure)) + s.line_loss)
        notes.append("relief setting not in design.json: from the cycle's highest requirement")
    else:
        raise r.fail("relief_bar", "missing; a pump-only design needs its relief setting")
    if bank is not None and given and p_max > relief * (1 + 1e-9):
        raise r.fail(
            "relief_bar",
            f"{relief_bar:g} bar is below accumulator.max_pressure_bar "
            f"{(p_max - pa) / bar:g} bar; expected the relief to open above the working window",
        )
    _check_relief(r, relief, pump, bank, given, notes)
    if bank is None:
        p_min, p_max = relief, relief
    sp = _setpoints(r)
    top = bank.option.max_pressure if bank is not None else pump.max_pressure
    if sp.get("unload_above", -math.inf) > top * (1 + 1e-9):
        what = "the vessel's PS" if bank is not None else "the pump's rating"
        raise r.fail(
            "setpoints.unload_above_bar",
            f"{(sp['unload_above'] - pa) / bar:g} bar is above {what} {(top - pa) / bar:g} bar; "
            "expected a switch setting at or below it",
        )
    process = _process(r, data)
    planned = r.number(
        data, "", "schedule_pump_flow_lpm", required=False, term="pump_flow", unit="L/min"
    )
    planned = pump.flow if planned is None else planned * si_factor("L/min", "flow")
    if planned > pump.flow * (1 + 1e-6):
        raise r.fail(
            "schedule_pump_flow_lpm",
            f"{to_unit(planned, 'L/min', 'flow'):g} L/min is above pump.flow_lpm "
            f"{to_unit(pump.flow, 'L/min', 'flow'):g} L/min; expected the flow the schedule was "
            "planned with (the worn pump's, at most the pump's)",
        )
    kind = data.get("schedule_kind", "plan")
    if kind not in ("timed", "plan"):
        raise r.fail("schedule_kind", f"expected 'timed' or 'plan', found {_shown(kind)}")
    schedule = _schedule(schedule_csv, cycle, planned, bank, notes, required=schedule_required)
    design = Design(
        "feasible",
        None,
        bank,
        pump,
        motor,
        p_min,
        p_max,
        relief,
        process,
        schedule,
        math.nan,
        math.nan,
        math.nan,
        {},
        math.nan,
        schedule_flow=planned,
        schedule_timed=kind == "timed" and not schedule.empty,
    )
    return design, s, notes


def read_setpoints(path: str | Path, p_ambient: float) -> dict:
    """Switch settings given in ``design.json`` (``setpoints``), absolute [Pa] / stroke [-].

    Returns an empty dict when the file gives none (the verification then derives them).
    The file is read with the same limits and checks as :func:`load_design`.
    """
    path = Path(path)
    return _setpoints(_Reader(path, _read_json(path), p_ambient))


def _setpoints(r: _Reader) -> dict:
    """The ``setpoints`` section, checked: absolute [Pa] / stroke [-]."""
    p_ambient = r.p_ambient
    sec = r.section("setpoints", optional=True) or {}
    out: dict = {}
    bar = si_factor("bar", "pressure")
    on = r.number(sec, "setpoints", "load_below_bar", required=False, term="min_pressure")
    off = r.number(sec, "setpoints", "unload_above_bar", required=False, term="max_pressure")
    if (on is None) != (off is None):
        raise r.fail("setpoints", "give both load_below_bar and unload_above_bar, or neither")
    if on is not None:
        if not on < off:
            raise r.fail(
                "setpoints.load_below_bar", f"{on:g} bar is not below unload_above_bar {off:g} bar"
            )
        out |= {"load_below": on * bar + p_ambient, "unload_above": off * bar + p_ambient}
    on = r.number(sec, "setpoints", "load_below_stroke", required=False)
    off = r.number(sec, "setpoints", "unload_above_stroke", required=False)
    if on is not None and off is not None:
        if not 0 < on < off <= 1:
            raise r.fail(
                "setpoints.load_below_stroke",
                "expected 0 < load_below_stroke < unload_above_stroke ≤ 1",
            )
        out |= {"load_below_stroke": on, "unload_above_stroke": off}
    return out


def _process(r: _Reader, data: dict) -> str:
    """The design model's gas process: ``isothermal``, ``adiabatic`` or ``polytropic:N``."""
    process = r.text(data, "", "process", "isothermal")
    if process == "polytropic":
        n = r.number(data, "", "polytropic_index")
        process = f"polytropic:{n:g}"
        key = "polytropic_index"
    else:
        key = "process"
    try:
        return parse_gas_process(process, f"{r.path}: key '{key}'", allow_auto=False)
    except StowflowError as exc:
        raise DesignFileError(str(exc)) from None


#: A schedule.csv is accepted when its stored oil follows its flows to this fraction of the
#: bank's gas volume per step (the export rounds litres to 6 decimals), [-].
_CSV_BALANCE_RTOL = 1e-5
#: Decimals schedule.csv carries for litres and litres per minute (the export,
#: :func:`stowflow.report.exports.schedule_frame`, rounds to µL and µL/min), [-].
_CSV_DECIMALS = 6


def _rounding_flow(dt: float) -> float:
    """Largest flow error the export's rounding can put into a step's oil balance, [m³/s].

    Each stored-oil value is off by up to half a unit of its last decimal, so the change over
    one step by up to one unit, which over ``dt`` is a flow; the relief flow adds half a unit
    of its own last decimal.
    """
    unit = 10.0**-_CSV_DECIMALS
    return unit * si_factor("L", "volume") / dt + 0.5 * unit * si_factor("L/min", "flow")


#: Columns of schedule.csv the schedule controller reads: (glossary key, unit as written).
SCHEDULE_INPUT_COLUMNS: dict[str, tuple[str, str]] = {
    "pump_flow [L/min]": ("flow", "L/min"),
    "accumulator_oil [L]": ("accumulator_oil", "L"),
    "relief_flow [L/min]": ("flow", "L/min"),
    "excess_flow [L/min]": ("flow", "L/min"),
    "pump_loaded": ("pump_loaded", "-"),
}
_SCHEDULE_REQUIRED = ("pump_flow [L/min]", "accumulator_oil [L]")


def read_schedule_csv(path: str | Path) -> dict[str, np.ndarray]:
    """The columns of a ``schedule.csv`` the schedule controller reads, checked, in trade units.

    The file is the export of ``stowflow design`` (quoted fields may hold line breaks, e.g. in
    labels; lines starting with ``#`` before the header are comments).  Numbers are written
    with the ASCII digits 0-9, finite, ≥ 0 and inside the glossary's plausible range of their
    column (:data:`SCHEDULE_INPUT_COLUMNS`).

    Parameters
    ----------
    path : str or Path
        The file.

    Returns
    -------
    dict of str to numpy.ndarray
        Column name → values (L/min, L); the relief column only when present; empty when the
        file's schedule columns are all empty (a design without a schedule).

    Raises
    ------
    DesignFileError
        Missing, too large, not UTF-8, not a CSV, a column missing, a field count that does
        not match the header, or a cell that is not a plausible number (the message names the
        file, the line and the column).
    """
    path = Path(path)
    expected = "the schedule.csv that stowflow design writes"
    text = utf8_text(
        read_limited(path, "schedule", DesignFileError, expected),
        str(path),
        DesignFileError,
        expected,
    )
    # Leading '#' lines are the export's comments (what the schedule is, its temperatures).
    skipped = 0
    while text.startswith("#"):
        cut = text.find("\n")
        text = "" if cut < 0 else text[cut + 1 :]
        skipped += 1
    reader = csv.reader(io.StringIO(text, newline=""), strict=True)
    first = skipped + 1  # the header's line number
    try:
        header = [h.strip() for h in next(reader, [])]
        if not any(header):
            raise DesignFileError(f"{path}: empty file; expected {expected}")
        missing = [c for c in _SCHEDULE_REQUIRED if c not in header]
        if missing:
            raise DesignFileError(
                f"{path}, line {first}: no column {_shown(missing[0])}; expected {expected} "
                f"(columns {', '.join(_SCHEDULE_REQUIRED)}, …)"
            )
        index = {c: header.index(c) for c in SCHEDULE_INPUT_COLUMNS if c in header}
        values: dict[str, list[float]] = {c: [] for c in index}
        blank = 0
        for row in reader:
            line = reader.line_num + skipped
            if not any(cell.strip() for cell in row):
                continue
            if len(row) != len(header):
                raise DesignFileError(
                    f"{path}, line {line}: found {len(row)} fields; expected {len(header)} as in "
                    f"the header on line {first}"
                )
            if all(not row[index[c]].strip() for c in index):
                blank += 1  # a design without a schedule leaves its columns empty
                continue
            for col, i in index.items():
                where = f"{path}, line {line}, column {i + 1} '{col}'"
                cell = row[i].strip()
                if NUMBER.fullmatch(cell) is None:
                    check_digits(cell, where, "a number written with 0-9", DesignFileError)
                    raise DesignFileError(f"{where}: not a number, found {_shown(cell)}")
                term, unit = SCHEDULE_INPUT_COLUMNS[col]
                value = float(cell)
                if not math.isfinite(value):
                    raise DesignFileError(f"{where}: out of range, found {_shown(cell)}")
                value = 0.0 if value == 0 else value  # -0 as exported
                check_plausible(
                    value, term, "value", where, unit=unit, zero_ok=True, error=DesignFileError
                )
                values[col].append(value)
    except csv.Error as exc:
        raise DesignFileError(
            f"{path}, line {reader.line_num + skipped}: cannot split the row ({exc}); "
            f"expected {expected}"
        ) from None
    if blank and any(values.values()):
        raise DesignFileError(
            f"{path}: {blank} of the rows leave the schedule columns empty while others fill them; "
            f"expected {expected}"
        )
    if blank:
        return {}
    return {c: np.asarray(v, dtype=float) for c, v in values.items()}


def _schedule(csv_path, cycle, planned, bank, notes, *, required: bool = False) -> pd.DataFrame:
    """The design's schedule from a schedule.csv export, on the cycle's grid (else empty).

    The file is read by :func:`read_schedule_csv` (a bad file is refused); a missing file is
    refused only when ``required`` (given by name), else the schedule controller has none.
    A schedule that does not fit the cycle or the pump is skipped with a note.

    The stored-oil column is trusted (it is exported with :data:`_CSV_DECIMALS` decimals of
    a litre); the pump flow is taken from the oil balance so that the cycle closes exactly,
    after checking that it agrees with the exported pump flow.  The relief flow over a full
    store (``relief_flow [L/min]``) leaves the balance: oil change = (pump flow − relief
    flow − demand)·Δt.  The loaded fraction is the balanced pump flow over ``planned``, the
    pump flow the schedule was planned with [m³/s], [-], clipped to 0 … 1 once it is inside
    the export's rounding of that range.
    """
    if csv_path is None:
        return pd.DataFrame()
    csv_path = Path(csv_path)
    if not csv_path.is_file() and not required:
        return pd.DataFrame()
    t = read_schedule_csv(csv_path)
    if cycle is None or bank is None:
        return pd.DataFrame()
    if not t:
        notes.append(f"{csv_path}: carries no schedule; schedule controller skipped")
        return pd.DataFrame()
    csv = csv_path
    lpm, litre = si_factor("L/min", "flow"), si_factor("L", "volume")
    pf = t["pump_flow [L/min]"] * lpm
    over = next((c for c in ("relief_flow [L/min]", "excess_flow [L/min]") if c in t), None)
    spill = t[over] * lpm if over else np.zeros(len(pf))
    oil = t["accumulator_oil [L]"] * litre
    good = all(np.all(np.isfinite(a)) for a in (pf, spill, oil))
    if len(pf) != cycle.n_steps or not good:
        notes.append(
            f"{csv}: schedule does not fit the cycle's {cycle.n_steps} steps; "
            "schedule controller skipped"
        )
        return pd.DataFrame()
    vg = bank.gas_volume
    if float(np.max(oil)) >= vg:
        notes.append(
            f"{csv}: stored oil up to {to_unit(float(np.max(oil)), 'L', 'volume'):.6g} L does "
            f"not fit the bank's gas volume of {to_unit(vg, 'L', 'volume'):.6g} L; schedule "
            "controller skipped"
        )
        return pd.DataFrame()
    d, dt = np.asarray(cycle.flow, float), cycle.dt
    step = oil - np.roll(oil, 1)
    balanced = step / dt + d + spill
    if np.max(np.abs(balanced - pf)) * dt > _CSV_BALANCE_RTOL * vg:
        notes.append(
            f"{csv}: stored oil does not follow pump flow − relief flow − demand; "
            "schedule controller skipped"
        )
        return pd.DataFrame()
    fraction = balanced / planned
    tol = _rounding_flow(dt) / planned
    if np.any(fraction > 1 + tol) or np.any(fraction < -tol):
        i = int(np.argmax((fraction > 1 + tol) | (fraction < -tol)))
        notes.append(
            f"{csv}: at t = {cycle.time[i]:.4g} s the schedule asks "
            f"{to_unit(balanced[i], 'L/min', 'flow'):.6g} L/min of the pump, outside 0 … "
            f"{to_unit(planned, 'L/min', 'flow'):.6g} L/min; schedule controller skipped"
        )
        return pd.DataFrame()
    # A loaded or unloaded step whose fraction the export's rounding moved off 1 or 0 is
    # loaded or unloaded: a sliver would count as a load event of its own.
    fraction = np.where(np.abs(fraction - 1.0) <= tol, 1.0, fraction)
    fraction = np.clip(np.where(np.abs(fraction) <= tol, 0.0, fraction), 0.0, 1.0)
    command = fraction
    if "pump_loaded" in t:  # the load command (a cut-out may unload a loaded step early)
        command = t["pump_loaded"]
        bad = (command != 0) & (command != 1) | ((command == 0) & (fraction > 0))
        if np.any(bad):
            i = int(np.argmax(bad))
            notes.append(
                f"{csv}: at t = {cycle.time[i]:.4g} s pump_loaded is {command[i]:g} with the "
                f"pump delivering {to_unit(balanced[i], 'L/min', 'flow'):.6g} L/min; expected "
                "0 or 1, and 1 wherever the pump delivers; schedule controller skipped"
            )
            return pd.DataFrame()
    return pd.DataFrame(
        {
            "demand [m³/s]": d,
            "pump_loaded [-]": command,
            "pump_flow [m³/s]": fraction * planned,
            "spill [m³/s]": spill,
            "accumulator_oil [m³]": oil,
        },
        index=pd.Index(cycle.time, name="time [s]"),
    )
