"""Component catalogue: the accumulators, pumps, motors and drives a design may be bought from.

The catalogue is a TOML file with one table per purchasable item (see DESIGN.md):

.. code-block:: toml

    currency = "EUR"            # optional

    [[accumulator]]
    type = "bladder"            # bladder | diaphragm | piston | piston-bottles | gas-over-oil
    nominal_volume_l = 10       # gas volume at precharge (gas-over-oil: the vessel), L
    max_pressure_bar = 330      # maximum allowable pressure PS, bar gauge
    price = 1200
    max_flow_lps = 20           # optional: discharge limit of one unit, L/s

    [[pump]]
    displacement_cm3 = 28
    speed_rpm = 1450
    max_pressure_bar = 250
    volumetric_efficiency = 0.93
    overall_efficiency = 0.85
    price = 900
    control = "fixed"           # optional: fixed | pressure-compensated | load-sensing
    rated_pressure_bar = 250    # optional: where the efficiencies hold (default: max pressure)
    efficiency_points = [[250, 0.93, 0.85], [100, 0.96, 0.82]]  # optional: bar, η_v, η_o
    drag_share = 0.3            # optional: pressure-independent share of the torque loss
    min_speed_rpm = 290         # optional: lowest speed on a variable-speed drive
    control_flow_lpm = 1        # optional (variable pumps): compensator / LS control flow
    load_sensing_margin_bar = 15  # optional (load-sensing pumps)

    [[motor]]
    rated_kw = 7.5
    efficiency = 0.904
    price = 700
    part_load_efficiency = [[0.25, 0.86], [0.5, 0.90], [1.0, 0.904]]  # optional

    [[drive]]                   # optional: variable-frequency drives
    rated_kw = 7.5
    efficiency = 0.96
    price = 600
    part_load_efficiency = [[0.25, 0.90], [1.0, 0.96]]  # optional

    [limits.bladder]            # optional overrides of accumulator type rules (numbers)
    max_pressure_ratio = 4.0

Everything is converted to SI on reading (m³, Pa **absolute**, m, m³/s, m³/rev, rev/s, W).
The loss models behind the efficiencies (:mod:`stowflow.physics.machines`) come from the rows:
``PumpOption.losses``, ``MotorOption.losses``, ``DriveOption.losses``.
Mistakes (unknown keys, missing keys, wrong types, values ≤ 0 or absurd, unknown type names,
TOML syntax) raise one :class:`~stowflow.errors.CatalogueError` line naming the file, the
line, the table and its index.
"""

from __future__ import annotations

import difflib
import math
import re
import tomllib
from pathlib import Path

from stowflow.components import (
    ACCUMULATOR_TYPES,
    CONTROL_FLOW,
    LOAD_SENSING_MARGIN,
    MIN_SPEED_SHARE,
    PISTON_TYPES,
    PUMP_CONTROLS,
    VARIABLE_CONTROLS,
    AccumulatorOption,
    Catalogue,
    DriveOption,
    MotorOption,
    PumpOption,
)
from stowflow.cycle.csvtable import utf8_text
from stowflow.errors import CatalogueError, StowflowError
from stowflow.glossary import check_plausible
from stowflow.io.rawtext import MAX_BYTES, check_nesting, read_limited
from stowflow.physics.accumulator import rules_for
from stowflow.units import BAR, P_AMBIENT, gauge_to_abs, si_factor

__all__ = [
    "ACCUMULATOR_TYPES",
    "CONTROL_FLOW",
    "LOAD_SENSING_MARGIN",
    "MIN_SPEED_SHARE",
    "PISTON_TYPES",
    "PUMP_CONTROLS",
    "VARIABLE_CONTROLS",
    "AccumulatorOption",
    "Catalogue",
    "DriveOption",
    "MotorOption",
    "PumpOption",
    "default_catalogue_path",
    "load_catalogue",
    "parse_catalogue_text",
]

# key -> (kind, required, glossary key, unit as written, dimension, zero allowed)
_Number = tuple[str, bool, str, str, str, bool]
_ACCUMULATOR_KEYS: dict[str, _Number | tuple[str, bool]] = {
    "type": ("text", True),
    "nominal_volume_l": ("number", True, "nominal_volume", "L", "volume", False),
    "max_pressure_bar": ("number", True, "max_allowable_pressure", "bar", "pressure", False),
    "bore_mm": ("number", False, "bore", "mm", "length", True),
    "price": ("number", True, "price", "", "", True),
    "name": ("text", False),
    "model": ("text", False),
    "max_flow_lps": ("number", False, "max_flow", "L/s", "flow", False),
    "swept_volume_l": ("number", False, "swept_volume", "L", "volume", False),
}
_PUMP_KEYS: dict[str, _Number | tuple[str, bool]] = {
    "displacement_cm3": ("number", True, "displacement", "cm3", "displacement", False),
    "speed_rpm": ("number", True, "speed", "rpm", "speed", False),
    "max_pressure_bar": ("number", True, "max_allowable_pressure", "bar", "pressure", False),
    "volumetric_efficiency": ("number", True, "volumetric_efficiency", "", "", False),
    "overall_efficiency": ("number", True, "overall_efficiency", "", "", False),
    "price": ("number", True, "price", "", "", True),
    "name": ("text", False),
    "control": ("text", False),
    "rated_pressure_bar": ("number", False, "rated_pressure", "bar", "pressure", False),
    "efficiency_points": ("points", False),
    "drag_share": ("number", False, "drag_share", "", "", True),
    "min_speed_rpm": ("number", False, "min_speed", "rpm", "speed", False),
    "control_flow_lpm": ("number", False, "control_flow", "L/min", "flow", True),
    "load_sensing_margin_bar": ("number", False, "load_sensing_margin", "bar", "pressure", False),
}
_MOTOR_KEYS: dict[str, _Number | tuple[str, bool]] = {
    "rated_kw": ("number", True, "rated_power", "kW", "power", False),
    "efficiency": ("number", True, "efficiency", "", "", False),
    "price": ("number", True, "price", "", "", True),
    "name": ("text", False),
    "efficiency_class": ("text", False),
    "part_load_efficiency": ("points", False),
}
_DRIVE_KEYS: dict[str, _Number | tuple[str, bool]] = {
    "rated_kw": ("number", True, "rated_power", "kW", "power", False),
    "efficiency": ("number", True, "efficiency", "", "", False),
    "price": ("number", True, "price", "", "", True),
    "name": ("text", False),
    "part_load_efficiency": ("points", False),
}
_SECTIONS = {
    "accumulator": _ACCUMULATOR_KEYS,
    "pump": _PUMP_KEYS,
    "motor": _MOTOR_KEYS,
    "drive": _DRIVE_KEYS,
}
_TOP_KEYS = (*_SECTIONS, "currency", "notes", "limits")


def default_catalogue_path() -> Path:
    """The bundled demo catalogue, ``duty_cycles/catalogue.toml``.

    A wheel carries the demo data inside the package (``stowflow/duty_cycles/``); a checkout
    or an editable install finds it at the repository's top level.

    Returns
    -------
    pathlib.Path
        Path of the demo catalogue.

    Raises
    ------
    CatalogueError
        The file is in neither place.
    """
    here = Path(__file__).resolve().parent
    candidates = (here / "duty_cycles", here.parent / "duty_cycles")
    for folder in candidates:
        if (folder / "catalogue.toml").is_file():
            return folder / "catalogue.toml"
    raise CatalogueError(
        f"{candidates[-1] / 'catalogue.toml'}: default catalogue not found; expected the "
        "repository's duty_cycles/catalogue.toml, or pass your own catalogue file"
    )


def load_catalogue(path: str | Path) -> Catalogue:
    """Read a component catalogue from a TOML file.

    Parameters
    ----------
    path : str or pathlib.Path
        The TOML file.

    Returns
    -------
    Catalogue
        Components in SI units.

    Raises
    ------
    CatalogueError
        Missing or unreadable file, not UTF-8, TOML syntax, or invalid content.
    """
    path = Path(path)
    data = read_limited(path, "catalogue", CatalogueError, "a TOML catalogue file")
    text = utf8_text(data, str(path), CatalogueError, "a UTF-8 TOML file")
    return parse_catalogue_text(text, source=str(path))


def parse_catalogue_text(text: str, *, source: str = "<memory>") -> Catalogue:
    """Read a component catalogue from TOML text.

    Parameters
    ----------
    text : str
        TOML text as described in the module docstring.
    source : str
        Name used in messages.

    Returns
    -------
    Catalogue
        Components in SI units.
    """
    limit = MAX_BYTES["catalogue"]
    if len(text) > limit:
        raise CatalogueError(
            f"{source}: catalogue too large, found {len(text):,} characters; expected at most "
            f"{limit:,}"
        )
    check_nesting(text, source, "toml", CatalogueError)
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise CatalogueError(f"{source}: TOML syntax error: {exc}; expected valid TOML") from None
    except (ValueError, RecursionError) as exc:  # e.g. an integer of more than 4300 digits
        raise CatalogueError(
            f"{source}: not a usable TOML catalogue ({str(exc)[:80]}); expected valid TOML"
        ) from None
    for key in doc:
        if key not in _TOP_KEYS:
            raise CatalogueError(
                f"{source}: unknown top-level key {_shown(key)}{_hint(key, _TOP_KEYS)}; expected "
                f"{', '.join(_TOP_KEYS)}"
            )
    rows = {name: _rows(doc, name, text, source) for name in _SECTIONS}
    for name in ("pump", "motor"):
        if not rows[name]:
            raise CatalogueError(
                f"{source}: no [[{name}]] tables; expected at least one {name} (a catalogue "
                "needs a pump and a motor; accumulators may be empty)"
            )
    accumulators = tuple(_accumulator(r, w) for r, w in rows["accumulator"])
    pumps = tuple(_pump(r, w) for r, w in rows["pump"])
    motors = tuple(_motor(r, w) for r, w in rows["motor"])
    drives = tuple(_drive(r, w) for r, w in rows["drive"])
    for name, items in (
        ("accumulator", accumulators),
        ("pump", pumps),
        ("motor", motors),
        ("drive", drives),
    ):
        _unique(items, rows[name])
    currency = doc.get("currency", "")
    if not isinstance(currency, str) or (currency and not currency.strip()):
        raise CatalogueError(f'{source}: currency {_shown(currency)}; expected text such as "EUR"')
    notes = doc.get("notes", ())
    notes = (notes,) if isinstance(notes, str) else notes
    if not isinstance(notes, list | tuple) or not all(isinstance(n, str) for n in notes):
        raise CatalogueError(f"{source}: notes {_shown(notes)}; expected text or a list of texts")
    return Catalogue(
        accumulators=accumulators,
        pumps=pumps,
        motors=motors,
        currency=currency.strip(),
        source=source,
        notes=tuple(notes),
        limits=_limits(doc.get("limits", {}), source),
        drives=drives,
    )


# -- rows ----------------------------------------------------------------------------------


def _rows(doc: dict, name: str, text: str, source: str) -> list[tuple[dict, str]]:
    """The tables of one section with a message prefix each (file, line, table, index)."""
    value = doc.get(name, [])
    if not isinstance(value, list) or not all(isinstance(r, dict) for r in value):
        raise CatalogueError(
            f"{source}: '{name}' must be an array of tables written [[{name}]], found a "
            f"{_kind(value)}"
        )
    pattern = re.compile(rf"^[ \t]*\[\[[ \t]*{re.escape(name)}[ \t]*\]\]", re.MULTILINE)
    lines = [text.count("\n", 0, m.start()) + 1 for m in pattern.finditer(text)]
    out = []
    for index, row in enumerate(value, start=1):
        line = f", line {lines[index - 1]}" if len(lines) == len(value) else ""
        where = f"{source}{line}, [[{name}]] #{index}"
        keys = _SECTIONS[name]
        for key in row:
            if key not in keys:
                raise CatalogueError(
                    f"{where}: unknown key {_shown(key)}{_hint(key, keys)}; expected "
                    f"{', '.join(keys)}"
                )
        for key, spec in keys.items():
            if spec[1] and key not in row:
                raise CatalogueError(f"{where}: missing key '{key}'; expected {key} = ...")
        out.append((row, where))
    return out


def _number(row: dict, key: str, where: str, spec: _Number) -> float | None:
    """The value of ``key`` in SI after type and range checks (None when absent)."""
    if key not in row:
        return None
    value = row[key]
    _, _, term_key, unit, dimension, zero_ok = spec
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise CatalogueError(
            f"{where}: {key} must be a number, found {_kind(value)} {_shown(value)}; expected e.g. "
            f"{key} = 10"
        )
    check_plausible(value, term_key, key, where, unit=unit, zero_ok=zero_ok, error=CatalogueError)
    return float(value) * (si_factor(unit, dimension) if unit else 1.0)


def _text(row: dict, key: str, where: str, choices: tuple[str, ...] = ()) -> str | None:
    if key not in row:
        return None
    value = row[key]
    if not isinstance(value, str) or not value.strip():
        raise CatalogueError(f"{where}: {key} {_shown(value)}; expected non-empty text")
    value = value.strip()
    if choices and value not in choices:
        raise CatalogueError(
            f"{where}: {key} '{value}' is not valid{_hint(value, choices)}; expected one of "
            f"{', '.join(choices)}"
        )
    return value


def _values(row: dict, where: str, keys: dict) -> dict:
    return {k: _number(row, k, where, spec) for k, spec in keys.items() if spec[0] == "number"}


def _accumulator(row: dict, where: str) -> AccumulatorOption:
    kind = _text(row, "type", where, ACCUMULATOR_TYPES)
    v = _values(row, where, _ACCUMULATOR_KEYS)
    if "name" in row and "model" in row:
        raise CatalogueError(f"{where}: both 'name' and 'model'; expected one of them")
    name = _text(row, "name", where) or _text(row, "model", where)
    bore = v["bore_mm"] or 0.0
    piston = kind in PISTON_TYPES
    if piston and bore <= 0:
        raise CatalogueError(
            f"{where}: type '{kind}' needs bore_mm > 0; expected e.g. bore_mm = 100"
        )
    if not piston and bore > 0:
        raise CatalogueError(
            f"{where}: bore_mm {row['bore_mm']:g} on a '{kind}'; expected 0 (bore applies to "
            "piston types only)"
        )
    swept = v["swept_volume_l"]
    if swept is not None and not piston:
        raise CatalogueError(
            f"{where}: swept_volume_l on a '{kind}'; expected it on piston types only"
        )
    if kind == "piston-bottles" and swept is None:
        raise CatalogueError(
            f"{where}: type 'piston-bottles' needs swept_volume_l (oil volume of the piston "
            "stroke); expected e.g. swept_volume_l = 25"
        )
    if swept is not None and swept > v["nominal_volume_l"]:
        raise CatalogueError(
            f"{where}: swept_volume_l {row['swept_volume_l']:g} is above nominal_volume_l "
            f"{row['nominal_volume_l']:g}; expected swept <= nominal gas volume"
        )
    if name is None:
        name = f"{kind} {row['nominal_volume_l']:g} L {row['max_pressure_bar']:g} bar"
        if piston:
            name += f" bore {row['bore_mm']:g} mm"
    return AccumulatorOption(
        type=kind,
        nominal_volume=v["nominal_volume_l"],
        max_pressure=gauge_to_abs(v["max_pressure_bar"], P_AMBIENT),
        bore=bore,
        price=v["price"],
        name=name,
        max_flow=v["max_flow_lps"],
        swept_volume=swept,
    )


def _pump(row: dict, where: str) -> PumpOption:
    v = _values(row, where, _PUMP_KEYS)
    control = _text(row, "control", where, PUMP_CONTROLS) or "fixed"
    if v["overall_efficiency"] > v["volumetric_efficiency"]:
        raise CatalogueError(
            f"{where}: overall_efficiency {row['overall_efficiency']:g} is above "
            f"volumetric_efficiency {row['volumetric_efficiency']:g}; expected overall <= "
            "volumetric (overall = volumetric × mechanical)"
        )
    if v["min_speed_rpm"] is not None and v["min_speed_rpm"] > v["speed_rpm"]:
        raise CatalogueError(
            f"{where}: min_speed_rpm {row['min_speed_rpm']:g} is above speed_rpm "
            f"{row['speed_rpm']:g}; expected min_speed_rpm <= speed_rpm"
        )
    points = _points(row, "efficiency_points", where, ("pressure [bar]", "volumetric", "overall"))
    if any(p[2] > p[1] for p in points):
        raise CatalogueError(
            f"{where}: efficiency_points has an overall efficiency above the volumetric one; "
            "expected [pressure bar, volumetric, overall] with overall <= volumetric"
        )
    prefix = "" if control == "fixed" else f"{control} "
    name = _text(row, "name", where) or (
        f"{prefix}pump {row['displacement_cm3']:g} cm³/rev {row['speed_rpm']:g} rpm"
    )
    optional = {
        "rated_pressure": None
        if v["rated_pressure_bar"] is None
        else gauge_to_abs(v["rated_pressure_bar"], P_AMBIENT),
        "efficiency_points": tuple(
            (gauge_to_abs(p * BAR, P_AMBIENT), ev, eo) for p, ev, eo in points
        ),
        "drag_share": v["drag_share"],
        "min_speed": v["min_speed_rpm"],
        "control_flow": v["control_flow_lpm"],
        "load_sensing_margin": v["load_sensing_margin_bar"],
    }
    return PumpOption(
        displacement=v["displacement_cm3"],
        speed=v["speed_rpm"],
        max_pressure=gauge_to_abs(v["max_pressure_bar"], P_AMBIENT),
        volumetric_efficiency=v["volumetric_efficiency"],
        overall_efficiency=v["overall_efficiency"],
        price=v["price"],
        name=name,
        control=control,
        **{k: x for k, x in optional.items() if x is not None and x != ()},
    )


def _motor(row: dict, where: str) -> MotorOption:
    v = _values(row, where, _MOTOR_KEYS)
    return MotorOption(
        rated_power=v["rated_kw"],
        efficiency=v["efficiency"],
        price=v["price"],
        name=_text(row, "name", where) or f"motor {row['rated_kw']:g} kW",
        efficiency_class=_text(row, "efficiency_class", where),
        part_load=_points(row, "part_load_efficiency", where, ("load", "efficiency")),
    )


def _drive(row: dict, where: str) -> DriveOption:
    v = _values(row, where, _DRIVE_KEYS)
    return DriveOption(
        rated_power=v["rated_kw"],
        efficiency=v["efficiency"],
        price=v["price"],
        name=_text(row, "name", where) or f"drive {row['rated_kw']:g} kW",
        part_load=_points(row, "part_load_efficiency", where, ("load", "efficiency")),
    )


#: Range of each column of a points key: (lowest, highest, lowest allowed itself).
_POINT_RANGES = {
    "pressure [bar]": (0.0, 2_000.0, False),
    "load": (0.0, 2.0, False),
    "volumetric": (0.0, 1.0, False),
    "overall": (0.0, 1.0, False),
    "efficiency": (0.0, 1.0, False),
}


def _points(row: dict, key: str, where: str, columns: tuple[str, ...]) -> tuple:
    """A table of points such as ``[[0.5, 0.9], [1.0, 0.92]]``: at least two rows whose first
    column differs, each of ``columns`` numbers in range (empty tuple when absent)."""
    if key not in row:
        return ()
    value = row[key]
    example = "[[" + ", ".join(columns) + "], ...]"
    if not isinstance(value, list) or not all(
        isinstance(r, list)
        and len(r) == len(columns)
        and all(isinstance(x, int | float) and not isinstance(x, bool) for x in r)
        for r in value
    ):
        raise CatalogueError(
            f"{where}: {key} must be a list of [{', '.join(columns)}] numbers, found "
            f"{value!r}; expected e.g. {key} = {example}"
        )
    for r in value:
        for x, col in zip(r, columns, strict=True):
            low, high, _ = _POINT_RANGES[col]
            if not (math.isfinite(x) and low < x <= high):
                raise CatalogueError(
                    f"{where}: {key} has {col} {x:g}; expected above {low:g} and at most {high:g}"
                )
    if len({r[0] for r in value}) < 2:
        raise CatalogueError(
            f"{where}: {key} needs at least two points with different {columns[0]}; found "
            f"{len(value)}"
        )
    return tuple(tuple(float(x) for x in r) for r in value)


def _unique(items, rows) -> None:
    seen: dict[str, int] = {}
    for index, (item, (_, where)) in enumerate(zip(items, rows, strict=True), start=1):
        if item.name in seen:
            raise CatalogueError(
                f"{where}: name '{item.name}' is already used by #{seen[item.name]}; expected "
                'each row to have its own name (add name = "...")'
            )
        seen[item.name] = index


def _limits(value, source: str) -> dict[str, dict[str, float]]:
    if not isinstance(value, dict):
        raise CatalogueError(
            f"{source}: 'limits' must be tables [limits.<type>], found a {_kind(value)}"
        )
    out: dict[str, dict[str, float]] = {}
    for kind, table in value.items():
        where = f"{source}, [limits.{_shown(kind)[1:-1]}]"
        if kind not in ACCUMULATOR_TYPES:
            raise CatalogueError(
                f"{where}: {_shown(kind)} is not an accumulator type"
                f"{_hint(kind, ACCUMULATOR_TYPES)}; "
                f"expected one of {', '.join(ACCUMULATOR_TYPES)}"
            )
        if not isinstance(table, dict):
            raise CatalogueError(f"{where}: found a {_kind(table)}; expected a table of numbers")
        rules = {}
        for key, number in table.items():
            if isinstance(number, bool) or not isinstance(number, int | float):
                raise CatalogueError(
                    f"{where}: {key} must be a number, found {_kind(number)} {_shown(number)}"
                )
            if not math.isfinite(number):
                raise CatalogueError(f"{where}: {key} {number} is not finite; expected a number")
            rules[key] = float(number)
        try:
            rules_for(kind, rules)  # known keys, each in its range: refused now, not later
        except StowflowError as exc:
            raise CatalogueError(f"{source}: {exc}") from None
        out[kind] = rules
    return out


def _kind(value) -> str:
    names = {
        bool: "boolean",
        int: "integer",
        float: "number",
        str: "text",
        list: "array",
        dict: "table",
    }
    return names.get(type(value), type(value).__name__)


def _shown(value, width: int = 40) -> str:
    """``repr(value)`` cut to ``width`` characters for a message."""
    text = repr(value)
    return text if len(text) <= width else text[: width - 1] + "…"


def _hint(word: str, choices) -> str:
    close = difflib.get_close_matches(str(word), list(choices), n=1, cutoff=0.6)
    return f" (did you mean '{close[0]}'?)" if close else ""
