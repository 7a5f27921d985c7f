"""Component catalogue: the accumulators, pumps and motors a design may be bought from.

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
    control = "fixed"           # optional: fixed | pressure-compensated

    [[motor]]
    rated_kw = 7.5
    efficiency = 0.904
    price = 700

    [limits.bladder]            # optional overrides of accumulator type rules (numbers)
    max_pressure_ratio = 4.0

Everything is converted to SI on reading (m³, Pa **absolute**, m, m³/s, m³/rev, rev/s, W).
Mistakes (unknown keys, missing keys, wrong types, values ≤ 0 or absurd, unknown type names,
TOML syntax) raise one :class:`~stowflow.errors.CatalogueError` line naming the file, the
line, the table and its index.
"""

from __future__ import annotations

import difflib
import math
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

from stowflow.cycle.csvtable import utf8_text
from stowflow.errors import CatalogueError, StowflowError
from stowflow.glossary import check_plausible
from stowflow.io.rawtext import MAX_BYTES, check_nesting, read_limited
from stowflow.physics.accumulator import rules_for
from stowflow.units import P_AMBIENT, gauge_to_abs, si_factor

__all__ = [
    "ACCUMULATOR_TYPES",
    "PISTON_TYPES",
    "PUMP_CONTROLS",
    "AccumulatorOption",
    "Catalogue",
    "MotorOption",
    "PumpOption",
    "default_catalogue_path",
    "load_catalogue",
    "parse_catalogue_text",
]

#: Accumulator types the catalogue may list.
ACCUMULATOR_TYPES: tuple[str, ...] = (
    "gas-over-oil",
    "bladder",
    "diaphragm",
    "piston",
    "piston-bottles",
)

#: Types with a piston: they need ``bore_mm`` and may give ``swept_volume_l``.
PISTON_TYPES: tuple[str, ...] = ("piston", "piston-bottles")

#: Pump control kinds.
PUMP_CONTROLS: tuple[str, ...] = ("fixed", "pressure-compensated")


@dataclass(frozen=True)
class AccumulatorOption:
    """One purchasable accumulator size.

    Attributes
    ----------
    type : str
        One of :data:`ACCUMULATOR_TYPES`.
    nominal_volume : float
        Gas volume at precharge (for ``piston-bottles`` including the bottles); for
        ``gas-over-oil`` the vessel's volume, of which the gas fills
        :func:`stowflow.physics.accumulator.gas_share`, [m³].
    max_pressure : float
        Maximum allowable pressure PS, **absolute**, [Pa].
    bore : float
        Piston bore for the piston-speed limit; 0 for types without a piston, [m].
    price : float
        Unit price in the catalogue's currency, [-].
    name : str
        Identifier, unique among the accumulators.
    max_flow : float or None
        Largest discharge flow of one unit (port or valve limit), [m³/s].
    swept_volume : float or None
        Oil volume of the full piston stroke (piston types); for ``piston-bottles`` the oil
        exchange is limited to it, [m³].
    """

    type: str
    nominal_volume: float
    max_pressure: float
    bore: float
    price: float
    name: str
    max_flow: float | None = None
    swept_volume: float | None = None

    @property
    def has_piston(self) -> bool:
        """True for the piston types, [-]."""
        return self.type in PISTON_TYPES


@dataclass(frozen=True)
class PumpOption:
    """One purchasable pump.

    Attributes
    ----------
    displacement : float
        Geometric displacement, [m³/rev].
    speed : float
        Shaft speed, [rev/s].
    max_pressure : float
        Maximum continuous pressure, **absolute**, [Pa].
    volumetric_efficiency : float
        Effective over theoretical flow, [-].
    overall_efficiency : float
        Hydraulic output over shaft input power, [-].
    price : float
        Unit price in the catalogue's currency, [-].
    name : str
        Identifier, unique among the pumps.
    control : str
        ``"fixed"`` or ``"pressure-compensated"``.
    """

    displacement: float
    speed: float
    max_pressure: float
    volumetric_efficiency: float
    overall_efficiency: float
    price: float
    name: str
    control: str = "fixed"

    @property
    def flow(self) -> float:
        """Effective delivery, displacement × speed × volumetric efficiency, [m³/s]."""
        return self.displacement * self.speed * self.volumetric_efficiency


@dataclass(frozen=True)
class MotorOption:
    """One purchasable electric motor.

    Attributes
    ----------
    rated_power : float
        Rated mechanical output, [W].
    efficiency : float
        Efficiency at rated load, [-].
    price : float
        Unit price in the catalogue's currency, [-].
    name : str
        Identifier, unique among the motors.
    efficiency_class : str or None
        Efficiency class, e.g. ``"IE3"``.
    """

    rated_power: float
    efficiency: float
    price: float
    name: str
    efficiency_class: str | None = None


@dataclass(frozen=True)
class Catalogue:
    """The components a design may be bought from.

    Attributes
    ----------
    accumulators : tuple of AccumulatorOption
        May be empty (then only pump-only supplies are possible).
    pumps : tuple of PumpOption
        At least one.
    motors : tuple of MotorOption
        At least one.
    currency : str
        Currency of every price ("" when the file does not say).
    source : str
        File the catalogue was read from.
    notes : tuple of str
        Free notes from the file's top-level ``notes`` key.
    limits : dict of str to dict of str to float
        Per accumulator type, overrides of the type rules (read by
        :mod:`stowflow.physics.accumulator`; units as that module documents them).  Treat as
        read-only.
    """

    accumulators: tuple[AccumulatorOption, ...]
    pumps: tuple[PumpOption, ...]
    motors: tuple[MotorOption, ...]
    currency: str = ""
    source: str = "<memory>"
    notes: tuple[str, ...] = ()
    limits: dict[str, dict[str, float]] = field(default_factory=dict, hash=False)

    @property
    def accumulator_types(self) -> tuple[str, ...]:
        """Accumulator types present, in :data:`ACCUMULATOR_TYPES` order."""
        present = {a.type for a in self.accumulators}
        return tuple(t for t in ACCUMULATOR_TYPES if t in present)


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
}
_MOTOR_KEYS: dict[str, _Number | tuple[str, bool]] = {
    "rated_kw": ("number", True, "rated_power", "kW", "power", False),
    "efficiency": ("number", True, "efficiency", "", "", False),
    "price": ("number", True, "price", "", "", True),
    "name": ("text", False),
    "efficiency_class": ("text", False),
}
_SECTIONS = {"accumulator": _ACCUMULATOR_KEYS, "pump": _PUMP_KEYS, "motor": _MOTOR_KEYS}
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
    for name, items in (("accumulator", accumulators), ("pump", pumps), ("motor", motors)):
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
    prefix = "" if control == "fixed" else f"{control} "
    name = _text(row, "name", where) or (
        f"{prefix}pump {row['displacement_cm3']:g} cm³/rev {row['speed_rpm']:g} rpm"
    )
    return PumpOption(
        displacement=v["displacement_cm3"],
        speed=v["speed_rpm"],
        max_pressure=gauge_to_abs(v["max_pressure_bar"], P_AMBIENT),
        volumetric_efficiency=v["volumetric_efficiency"],
        overall_efficiency=v["overall_efficiency"],
        price=v["price"],
        name=name,
        control=control,
    )


def _motor(row: dict, where: str) -> MotorOption:
    v = _values(row, where, _MOTOR_KEYS)
    return MotorOption(
        rated_power=v["rated_kw"],
        efficiency=v["efficiency"],
        price=v["price"],
        name=_text(row, "name", where) or f"motor {row['rated_kw']:g} kW",
        efficiency_class=_text(row, "efficiency_class", where),
    )


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
