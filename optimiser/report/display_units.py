"""The study's figures in the unit system the user chose, beside the metric ones.

``design.json`` keeps its metric keys (``*_bar``, ``*_l``, ``*_lpm``, ``*_kw``, ``*_c``) under
every ``--units``, so that readers of the file keep working; with another system in force
(:func:`stowflow.io.numbers.using`) it gains a ``display_units`` block with the same figures
in that system (:func:`display_units_record`).

Texts built in metric words (spec.csv's descriptions and sizing rules, the report's
specification lines) are shown in the chosen system by :func:`in_system_text`: each
"number unit" of bar (gauge or difference: both scale alike), L, L/min, kW, °C and cm³/rev
becomes the chosen unit, from the one formatter.  Catalogue names ("bladder 25 L 330 bar")
and the pressure-equipment product PS·V in bar·L (defined in bar·L by Directive 2014/68/EU)
stay as written.
"""

from __future__ import annotations

import contextlib
import contextvars
import math
import re
from collections.abc import Iterable, Iterator

from stowflow.io.numbers import METRIC, current_system, display_value, fmt, unit_label
from stowflow.units import BAR, KW, LITRE, LPM, P_AMBIENT, celsius_to_kelvin, si_factor

__all__ = [
    "METRIC_WORDS",
    "catalogue_names",
    "display_units_record",
    "in_system_text",
    "keeping",
]


def _value(value_si, kind: str, p_ambient: float = P_AMBIENT) -> dict | None:
    """``{"value", "unit"}`` of an SI value in the system in force (None for no value)."""
    if value_si is None or not math.isfinite(float(value_si)):
        return None
    v = display_value(value_si, kind, p_ambient=p_ambient)
    out = {"value": round(v, 6), "unit": unit_label(kind)}
    beside = current_system().unit(kind).beside
    if beside is not None:  # hp with kW beside it
        out["beside"] = {
            "value": round(beside.from_si(float(value_si), {}), 6),
            "unit": beside.label,
        }
    return out


def display_units_record(result) -> dict | None:
    """The ``display_units`` block of ``design.json`` (None when the metric system is in force).

    Parameters
    ----------
    result : StudyResult
        A study's result.

    Returns
    -------
    dict or None
        ``system`` (its name), ``units`` (label per kind) and the headline figures, each as
        ``{"value", "unit"}`` in that system: temperatures, the bank (nominal and gas
        volume, precharge at 20 °C, working window, PS), the pump's flow and displacement,
        the motor and installed power (with kW beside hp), the relief and switch settings,
        the heat load.
    """
    system = current_system()
    if system is METRIC:
        return None
    d, s = result.design, result.settings
    pa = s.p_ambient
    rec: dict = {
        "system": system.name,
        "units": {kind: unit_label(kind) for kind in system.units if unit_label(kind)},
        "temperature_min": _value(s.t_min, "temperature"),
        "temperature_max": _value(s.t_max, "temperature"),
        "precharge_reference_temperature": _value(celsius_to_kelvin(20.0), "temperature"),
    }
    if d.feasible and d.bank is not None:
        b = d.bank
        rec["accumulator"] = {
            "nominal_volume": _value(b.option.nominal_volume, "volume"),
            "total_gas_volume": _value(b.gas_volume, "volume"),
            "precharge_at_20c": _value(b.precharge, "pressure", pa),
            "min_pressure": _value(d.p_min, "pressure", pa),
            "max_pressure": _value(d.p_max, "pressure", pa),
            "max_allowable_pressure": _value(b.option.max_pressure, "pressure", pa),
        }
    if d.feasible:
        rec["pump"] = {
            "flow": _value(d.pump.flow, "flow"),
            "displacement": _value(d.pump.displacement, "displacement"),
            "max_pressure": _value(d.pump.max_pressure, "pressure", pa),
        }
        rec["motor_rated_power"] = _value(d.motor.rated_power, "power")
        rec["installed_power"] = _value(d.installed_power, "power")
        rec["relief"] = _value(d.relief, "pressure", pa)
        rec["schedule_pump_flow"] = _value(d.planned_flow, "flow")
    v = result.verification
    if v is not None:
        rec["min_margin"] = _value(v.min_margin, "pressure_difference")
        sp = v.setpoints or {}
        for key in ("load_below", "unload_above"):
            if sp.get(key):
                rec[key] = _value(sp[key], "pressure", pa)
    heat = result.comparison.option("design").heat_load
    rec["heat_load"] = _value(heat, "power")
    return rec


# A number then a metric unit, not inside a longer word; "bar·L" and "bar abs" excluded.
_METRIC_RE = re.compile(
    r"(?<![\w.,])(-?\d[\d,]*(?:\.\d+)?)\s?"
    r"(L/min(?!\w)|cm³/rev|°C|kW(?![\w·])|bar(?![·\w])(?! abs)|L(?![\w/·]))"
)

#: Metric unit word → (kind of quantity, SI value of one unit): the one table the texts, the
#: CLI's tables and the figures convert by.  Gauge bar and bar differences scale alike (psi
#: gauge = bar gauge × the same factor), so "pressure_difference" serves both; °C, an
#: affine unit, is converted on its own.
METRIC_WORDS: dict[str, tuple[str, float]] = {
    "bar": ("pressure_difference", BAR),
    "L": ("volume", LITRE),
    "L/min": ("flow", LPM),
    "kW": ("power", KW),
    "cm³/rev": ("displacement", si_factor("cm3", "displacement")),
}


def _convert(m: re.Match) -> str:
    number, unit = m.group(1), m.group(2)
    value = float(number.replace(",", ""))
    if unit == "°C":
        return fmt(celsius_to_kelvin(value), "temperature")
    kind, one = METRIC_WORDS[unit]
    du = current_system().unit(kind)
    if du.beside is not None and m.string[: m.start()].endswith(f"{du.label} ("):
        return m.group(0)  # the metric unit fmt shows beside ("29.5 hp (22 kW)"): done
    return fmt(value * one, kind)


_KEPT: contextvars.ContextVar[tuple[str, ...]] = contextvars.ContextVar(
    "stowflow_kept_names", default=()
)


@contextlib.contextmanager
def keeping(names: Iterable[str]) -> Iterator[None]:
    """Inside the block, :func:`in_system_text` leaves these texts (catalogue names) as written."""
    kept = tuple(sorted({str(n) for n in names if n}, key=len, reverse=True))
    token = _KEPT.set(kept)
    try:
        yield
    finally:
        _KEPT.reset(token)


def catalogue_names(result) -> list[str]:
    """The catalogue rows' names a study's texts quote: its bank, pumps and motors."""
    names = []
    d = result.design
    if d.bank is not None:
        names.append(d.bank.option.name)
    for thing in (getattr(d, "pump", None), getattr(d, "motor", None)):
        if thing is not None:
            names.append(thing.name)
    cat = getattr(result, "catalogue", None)
    for group in ("accumulators", "pumps", "motors", "drives"):
        names += [getattr(row, "name", "") for row in getattr(cat, group, ()) or ()]
    return names


def _sub(text: str) -> str:
    """Metric quantities of ``text`` converted, the kept names left as written."""
    kept = [n for n in _KEPT.get() if n in text]
    if not kept:
        return _METRIC_RE.sub(_convert, text)
    parts = [text]
    for name in kept:  # split around each kept name, convert only between them
        parts = [piece for part in parts for piece in _split_keep(part, name)]
    return "".join(p if p in kept else _METRIC_RE.sub(_convert, p) for p in parts)


def _split_keep(text: str, name: str) -> list[str]:
    if text == name or name not in text:
        return [text]
    out: list[str] = []
    pieces = text.split(name)
    for k, piece in enumerate(pieces):
        if piece:
            out.append(piece)
        if k < len(pieces) - 1:
            out.append(name)
    return out


def in_system_text(text):
    """``text`` with its metric quantities in the unit system in force (as is under metric).

    Parameters
    ----------
    text : str or object
        A line in metric words, e.g. "relief valve set to 280 bar, for 38.6 L/min"; other
        objects pass unchanged.

    Returns
    -------
    str or object
        E.g. "relief valve set to 4,061 psi, for 10.2 gpm" under the US system.  A
        catalogue name after "catalogue:", and the names given to :func:`keeping`, are
        kept as written.
    """
    if not isinstance(text, str) or current_system() is METRIC:
        return text
    head, sep, tail = text.partition("catalogue: ")
    if sep:  # "catalogue: <row name>[; more]": keep the name, convert what follows it
        name, semi, rest = tail.partition(";")
        return _sub(head) + sep + name + semi + in_system_text(rest)
    return _sub(text)
