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
from stowflow.errors import DesignFileError
from stowflow.physics.accumulator import rules_for
from stowflow.search.settings import DesignSettings
from stowflow.search.solution import Bank, Design
from stowflow.units import celsius_to_kelvin, si_factor, to_unit

__all__ = [
    "DEFAULT_MOTOR_EFFICIENCY",
    "DEFAULT_OVERALL_EFFICIENCY",
    "DEFAULT_VOLUMETRIC_EFFICIENCY",
    "DESIGN_SCHEMA",
    "load_design",
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
        self, sec: dict | None, name: str, key: str, *, required=True, positive=True, default=None
    ):
        if sec is None or key not in sec or sec[key] is None:
            if required:
                raise self.fail(f"{name}.{key}", "missing; expected a number")
            return default
        v = sec[key]
        if isinstance(v, bool) or not isinstance(v, int | float) or not math.isfinite(v):
            raise self.fail(f"{name}.{key}", f"expected a number, found {v!r}")
        if positive and v <= 0:
            raise self.fail(f"{name}.{key}", f"expected a value > 0, found {v!r}")
        return float(v)

    def text(self, sec: dict | None, name: str, key: str, default=None):
        if sec is None or sec.get(key) is None:
            return default
        v = sec[key]
        if not isinstance(v, str):
            raise self.fail(f"{name}.{key}", f"expected text, found {v!r}")
        return v


def _close(a: float, b: float) -> bool:
    """Whether a file's number matches a catalogue row's (:data:`_MATCH_RTOL`)."""
    return abs(a - b) <= _MATCH_RTOL * max(abs(a), abs(b))


def _read_pump(r: _Reader, catalogue: Catalogue, notes: list) -> PumpOption:
    """The pump: a catalogue row matching the file's numbers, else built from them."""
    pa = r.p_ambient
    bar = si_factor("bar", "pressure")
    pump_j = r.section("pump")
    disp = r.number(pump_j, "pump", "displacement_cm3") * si_factor("cm3", "displacement")
    speed = r.number(pump_j, "pump", "speed_rpm") * si_factor("rpm", "speed")
    flow = r.number(pump_j, "pump", "flow_lpm", required=False)
    flow = None if flow is None else flow * si_factor("L/min", "flow")
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
        eta_o = r.number(
            pump_j, "pump", "overall_efficiency", required=False, default=DEFAULT_OVERALL_EFFICIENCY
        )
        pmax = r.number(pump_j, "pump", "max_pressure_bar", required=False)
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
    kw = r.number(motor_j, "motor", "rated_kw") * si_factor("kW", "power")
    motor = next((m for m in catalogue.motors if _close(m.rated_power, kw)), None)
    if motor is None:
        eff = r.number(
            motor_j, "motor", "efficiency", required=False, default=DEFAULT_MOTOR_EFFICIENCY
        )
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
                "accumulator.type", f"expected one of {', '.join(ACCUMULATOR_TYPES)}, found {typ!r}"
            )
        vol = r.number(acc_j, "accumulator", "nominal_volume_l") * si_factor("L", "volume")
        count = acc_j.get("count")
        if isinstance(count, bool) or not isinstance(count, int) or count < 1:
            raise r.fail("accumulator.count", f"expected an integer ≥ 1, found {count!r}")
        p0 = r.number(acc_j, "accumulator", "precharge_bar_at_20c") * bar + pa
        p_min = r.number(acc_j, "accumulator", "min_pressure_bar") * bar + pa
        p_max = r.number(acc_j, "accumulator", "max_pressure_bar") * bar + pa
        if not p0 < p_max:
            raise r.fail("accumulator.precharge_bar_at_20c", "must be below max_pressure_bar")
        if not p_min < p_max:
            raise r.fail("accumulator.min_pressure_bar", "must be below max_pressure_bar")
        ps = r.number(acc_j, "accumulator", "max_allowable_pressure_bar", required=False)
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
            bore = r.number(acc_j, "accumulator", "bore_mm", required=False, default=0.0)
            mf = r.number(acc_j, "accumulator", "max_flow_lps", required=False)
            sw = r.number(acc_j, "accumulator", "swept_volume_l", required=False)
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
        rules = rules_for(typ, (catalogue.limits or {}).get(typ))
        bank = Bank(opt, int(count), p0, rules)
    return bank, p_min, p_max


def load_design(
    path: str | Path,
    catalogue: Catalogue,
    settings: DesignSettings,
    schedule_csv=None,
    cycle=None,
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

    Returns
    -------
    tuple
        The design, the settings (with the file's temperatures and gas model), notes.

    Raises
    ------
    DesignFileError
        The file is missing, not JSON, of another schema, or a key is missing or wrong.
    """
    path = Path(path)
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise DesignFileError(f"{path}: file not found; expected a design.json") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise DesignFileError(f"{path}: cannot read the file ({exc})") from None
    except json.JSONDecodeError as exc:
        raise DesignFileError(
            f"{path}: not valid JSON (line {exc.lineno}, column {exc.colno}: {exc.msg})"
        ) from None
    if not isinstance(data, dict):
        raise DesignFileError(f"{path}: expected a JSON object, found {type(data).__name__}")
    r = _Reader(path, data, settings.p_ambient)
    if data.get("schema") != DESIGN_SCHEMA:
        raise r.fail("schema", f'expected "{DESIGN_SCHEMA}", found {data.get("schema")!r}')
    notes: list[str] = []
    pa = settings.p_ambient
    bar = si_factor("bar", "pressure")
    s = settings
    gm = r.text(data, "", "gas_model")
    if gm is not None:
        if gm not in ("real", "ideal"):
            raise r.fail("gas_model", f'expected "real" or "ideal", found {gm!r}')
        s = s.with_(gas_model=gm)
    tc = r.section("temperature_c", optional=True)
    if tc is not None:
        lo = r.number(tc, "temperature_c", "min", positive=False)
        hi = r.number(tc, "temperature_c", "max", positive=False)
        if lo > hi:
            raise r.fail("temperature_c", f"min {lo:g} °C is above max {hi:g} °C")
        s = s.with_(t_min=celsius_to_kelvin(lo), t_max=celsius_to_kelvin(hi))

    pump = _read_pump(r, catalogue, notes)
    motor = _read_motor(r, catalogue, notes)
    bank, p_min, p_max = _read_bank(r, catalogue, notes)
    relief = r.number(data, "", "relief_bar", required=False)
    if relief is not None:
        relief = relief * bar + pa
    elif bank is not None:
        relief = s.relief_setting(p_max)
        notes.append("relief setting not in design.json: from the settings' relief margin")
    elif cycle is not None and cycle.pressure is not None:
        relief = s.relief_setting(float(np.max(cycle.pressure)) + s.line_loss)
        notes.append("relief setting not in design.json: from the cycle's highest requirement")
    else:
        raise r.fail("relief_bar", "missing; a pump-only design needs its relief setting")
    if bank is None:
        p_min, p_max = relief, relief
    process = r.text(data, "", "process", "isothermal")
    if process == "polytropic":
        n = r.number(data, "", "polytropic_index")
        process = f"polytropic:{n:g}"
    schedule = _schedule(schedule_csv, cycle, pump, bank, notes)
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
    )
    return design, s, notes


def read_setpoints(path: str | Path, p_ambient: float) -> dict:
    """Switch settings given in ``design.json`` (``setpoints``), absolute [Pa] / stroke [-].

    Returns an empty dict when the file gives none (the verification then derives them).
    """
    path = Path(path)
    r = _Reader(path, json.loads(path.read_text(encoding="utf-8")), p_ambient)
    sec = r.section("setpoints", optional=True) or {}
    out: dict = {}
    bar = si_factor("bar", "pressure")
    on = r.number(sec, "setpoints", "load_below_bar", required=False)
    off = r.number(sec, "setpoints", "unload_above_bar", required=False)
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


def _schedule(csv, cycle, pump, bank, notes) -> pd.DataFrame:
    """The design's schedule from a schedule.csv export, on the cycle's grid (else empty).

    The stored-oil column is trusted (it is exported with :data:`_CSV_DECIMALS` decimals of
    a litre); the pump flow is taken from the oil balance so that the cycle closes exactly,
    after checking that it agrees with the exported pump flow.  The relief flow over a full
    store (``relief_flow [L/min]``) leaves the balance: oil change = (pump flow − relief
    flow − demand)·Δt.  The loaded fraction is the balanced pump flow over the pump's, [-],
    clipped to 0 … 1 once it is inside the export's rounding of that range.
    """
    if csv is None or cycle is None or bank is None or not Path(csv).is_file():
        return pd.DataFrame()
    lpm, litre = si_factor("L/min", "flow"), si_factor("L", "volume")
    try:
        t = pd.read_csv(csv)
        pf = t["pump_flow [L/min]"].to_numpy(float) * lpm
        over = next((c for c in ("relief_flow [L/min]", "excess_flow [L/min]") if c in t), None)
        spill = t[over].to_numpy(float) * lpm if over else np.zeros(len(t))
        oil = t["accumulator_oil [L]"].to_numpy(float) * litre
    except (KeyError, ValueError, OSError, pd.errors.ParserError) as exc:
        notes.append(f"{csv}: not a usable schedule ({exc}); schedule controller skipped")
        return pd.DataFrame()
    good = all(np.all(np.isfinite(a)) for a in (pf, spill, oil))
    if len(t) != cycle.n_steps or not good:
        notes.append(
            f"{csv}: schedule does not fit the cycle's {cycle.n_steps} steps; "
            "schedule controller skipped"
        )
        return pd.DataFrame()
    d, dt = np.asarray(cycle.flow, float), cycle.dt
    step = oil - np.roll(oil, 1)
    balanced = step / dt + d + spill
    vg = bank.gas_volume
    if np.max(np.abs(balanced - pf)) * dt > _CSV_BALANCE_RTOL * vg:
        notes.append(
            f"{csv}: stored oil does not follow pump flow − relief flow − demand; "
            "schedule controller skipped"
        )
        return pd.DataFrame()
    fraction = balanced / pump.flow
    tol = _rounding_flow(dt) / pump.flow
    if np.any(fraction > 1 + tol) or np.any(fraction < -tol):
        i = int(np.argmax((fraction > 1 + tol) | (fraction < -tol)))
        notes.append(
            f"{csv}: at t = {cycle.time[i]:.4g} s the schedule asks "
            f"{to_unit(balanced[i], 'L/min', 'flow'):.6g} L/min of the pump, outside 0 … "
            f"{to_unit(pump.flow, 'L/min', 'flow'):.6g} L/min; schedule controller skipped"
        )
        return pd.DataFrame()
    # A loaded or unloaded step whose fraction the export's rounding moved off 1 or 0 is
    # loaded or unloaded: a sliver would count as a load event of its own.
    fraction = np.where(np.abs(fraction - 1.0) <= tol, 1.0, fraction)
    fraction = np.clip(np.where(np.abs(fraction) <= tol, 0.0, fraction), 0.0, 1.0)
    return pd.DataFrame(
        {
            "demand [m³/s]": d,
            "pump_loaded [-]": fraction,
            "pump_flow [m³/s]": fraction * pump.flow,
            "spill [m³/s]": spill,
            "accumulator_oil [m³]": oil,
        },
        index=pd.Index(cycle.time, name="time [s]"),
    )
