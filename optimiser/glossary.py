"""One glossary: name, symbol, unit and meaning of every quantity stowflow reads or writes.

The README's nomenclature, the CSV/JSON column names and the input validation all read from
:data:`GLOSSARY`.  ``plausible`` gives the range, in the trade unit, outside which an input is
refused as absurd (a typo or a wrong unit, e.g. 1e9 L/min); it is deliberately wide and is
*not* a design limit.  The ranges are our own choice (common practice, no published source).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from stowflow.errors import StowflowError

__all__ = ["GLOSSARY", "Term", "check_plausible", "term"]


@dataclass(frozen=True)
class Term:
    """A quantity of the glossary.

    Attributes
    ----------
    key : str
        Name used in code, CSV headers and JSON keys.
    symbol : str
        Symbol used in formulas and docstrings.
    unit : str
        Unit in which the quantity is shown to the user (trade unit).
    si_unit : str
        Unit in which it is held internally.
    dimension : str
        Dimension key understood by :mod:`stowflow.units`.
    meaning : str
        One-sentence meaning.
    plausible : tuple[float, float] | None
        Inclusive range in ``unit`` outside which an input is refused as absurd.
    """

    key: str
    symbol: str
    unit: str
    si_unit: str
    dimension: str
    meaning: str
    plausible: tuple[float, float] | None = None


_TERMS = (
    Term("time", "t", "s", "s", "time", "Time from the start of the cycle.", (0.0, 7 * 86400.0)),
    Term(
        "duration",
        "Δt",
        "s",
        "s",
        "time",
        "Length of one phase of constant demand.",
        (0.0, 86400.0),
    ),
    Term(
        "flow",
        "Q_d",
        "L/min",
        "m³/s",
        "flow",
        "Flow the machine draws from the pressure line (demand), ≥ 0.",
        (0.0, 100_000.0),
    ),
    Term(
        "pressure",
        "p_req",
        "bar",
        "Pa",
        "pressure",
        "Pressure the consumer needs at that moment, gauge (what a gauge reads).",
        (-1.0, 2_000.0),
    ),
    Term("demand", "Q_d", "L/min", "m³/s", "flow", "Demand flow of the time step."),
    Term(
        "required_pressure",
        "p_req",
        "bar",
        "Pa",
        "pressure",
        "Required pressure of the time step, gauge.",
    ),
    Term(
        "pump_flow",
        "Q_p",
        "L/min",
        "m³/s",
        "flow",
        "Effective pump delivery, displacement × speed × volumetric efficiency.",
        (0.0, 100_000.0),
    ),
    Term(
        "pump_loaded",
        "u",
        "-",
        "-",
        "none",
        "1 while the pump delivers into the system, 0 while it is unloaded to tank.",
        (0.0, 1.0),
    ),
    Term(
        "accumulator_oil",
        "S",
        "L",
        "m³",
        "volume",
        "Oil stored in the accumulator bank (zero at or below precharge).",
        (0.0, 5_000_000.0),
    ),
    Term(
        "nominal_volume",
        "V_0",
        "L",
        "m³",
        "volume",
        "Gas-side volume of an accumulator at precharge (its nominal size); for gas-over-oil "
        "the vessel's volume, whose residual oil (10 % by default) never leaves.",
        (0.01, 5_000.0),
    ),
    Term(
        "precharge",
        "p_0",
        "bar",
        "Pa",
        "pressure",
        "Nitrogen precharge pressure, gauge, stated at 20 °C with no oil in the accumulator.",
        (0.0, 2_000.0),
    ),
    Term(
        "min_pressure",
        "p_1",
        "bar",
        "Pa",
        "pressure",
        "Minimum working pressure (the pump loads at or above it), gauge.",
        (0.0, 2_000.0),
    ),
    Term(
        "max_pressure",
        "p_2",
        "bar",
        "Pa",
        "pressure",
        "Maximum working pressure (the pump unloads at it), gauge.",
        (0.0, 2_000.0),
    ),
    Term(
        "max_allowable_pressure",
        "PS",
        "bar",
        "Pa",
        "pressure",
        "Maximum allowable pressure of a component (pressure-equipment term), gauge.",
        (1.0, 2_000.0),
    ),
    Term(
        "relief_setting",
        "p_r",
        "bar",
        "Pa",
        "pressure",
        "Cracking pressure of the relief valve, gauge.",
        (0.0, 2_000.0),
    ),
    Term(
        "switch_differential",
        "Δp_sw",
        "bar",
        "Pa",
        "pressure",
        "Difference between the unload (cut-out) and load (cut-in) settings of the pressure "
        "switch or accumulator charging valve; at least 10 % of the cut-out pressure by "
        "default (common practice, from memory).",
    ),
    Term(
        "schedule_cut_out",
        "p_co",
        "bar",
        "Pa",
        "pressure",
        "Pressure at which a timed load schedule unloads the pump before the planned end of a "
        "loaded stretch (set at the pressure switch's unload setting); the pump then stays "
        "unloaded until the next planned load start.",
    ),
    Term(
        "schedule_pump_flow",
        "Q_plan",
        "L/min",
        "m³/s",
        "flow",
        "Pump flow a timed load schedule is planned for: the worn pump's, catalogue flow less "
        "the flow margin.",
    ),
    Term(
        "switch_tolerance",
        "δ_sw",
        "%",
        "-",
        "dimensionless",
        "Repeatability of a switch setting, as a share of the setting; the verification runs "
        "the switch at the low end (1 % by default, from memory).",
    ),
    Term(
        "displacement",
        "V_g",
        "cm³/rev",
        "m³",
        "displacement",
        "Geometric displacement of the pump per revolution.",
        (0.01, 10_000.0),
    ),
    Term(
        "count",
        "z",
        "-",
        "-",
        "none",
        "Accumulators of one size in a bank.",
        (1.0, 1_000.0),
    ),
    Term("speed", "n", "rpm", "1/s", "speed", "Shaft speed of pump and motor.", (1.0, 10_000.0)),
    Term(
        "rated_power",
        "P_m",
        "kW",
        "W",
        "power",
        "Rated output power of the electric motor.",
        (0.01, 10_000.0),
    ),
    Term(
        "volumetric_efficiency",
        "η_v",
        "-",
        "-",
        "none",
        "Effective over theoretical pump flow.",
        (0.05, 1.0),
    ),
    Term(
        "overall_efficiency",
        "η_o",
        "-",
        "-",
        "none",
        "Hydraulic output power over shaft input power of the pump.",
        (0.05, 1.0),
    ),
    Term(
        "efficiency",
        "η_m",
        "-",
        "-",
        "none",
        "Electric motor efficiency (mechanical output over electric input).",
        (0.05, 1.0),
    ),
    Term(
        "temperature",
        "T",
        "°C",
        "K",
        "temperature",
        "Gas and oil temperature in operation.",
        (-60.0, 200.0),
    ),
    Term("price", "C", "-", "-", "none", "Unit price in the catalogue's currency.", (0.0, 1e9)),
    Term(
        "bore",
        "d",
        "mm",
        "m",
        "length",
        "Piston bore, for the piston-speed flow limit.",
        (0.0, 2_000.0),
    ),
    Term(
        "hydraulic_power",
        "P_h",
        "kW",
        "W",
        "power",
        "Flow × gauge pressure delivered to the consumer.",
    ),
    Term(
        "energy_per_cycle",
        "E",
        "kJ",
        "J",
        "energy",
        "Electrical energy drawn by the motor over one cycle.",
    ),
    Term(
        "time_constant",
        "τ",
        "s",
        "s",
        "time",
        "Thermal time constant of the gas charge, m·c_v/(h·A_w).",
        (0.01, 10_000.0),
    ),
    Term(
        "step",
        "Δt",
        "s",
        "s",
        "time",
        "Length of one time step of a duty cycle's uniform grid.",
        (1e-6, 86400.0),
    ),
    Term(
        "volume_per_cycle",
        "V_c",
        "L",
        "m³",
        "volume",
        "Oil volume the machine draws in one cycle, the integral of demand over time.",
    ),
    Term(
        "max_flow",
        "Q_max",
        "L/s",
        "m³/s",
        "flow",
        "Largest discharge flow of one accumulator (port or valve limit).",
        (0.001, 10_000.0),
    ),
    Term(
        "swept_volume",
        "V_s",
        "L",
        "m³",
        "volume",
        "Oil volume of a piston accumulator's full stroke.",
        (0.001, 5_000.0),
    ),
    Term(
        "rated_pressure",
        "Δp_r",
        "bar",
        "Pa",
        "pressure",
        "Pressure at which a pump's catalogue efficiencies hold, gauge.",
        (1.0, 2_000.0),
    ),
    Term(
        "min_speed",
        "n_min",
        "rpm",
        "1/s",
        "speed",
        "Lowest speed a pump may turn at on a variable-speed drive.",
        (1.0, 10_000.0),
    ),
    Term(
        "control_flow",
        "Q_c",
        "L/min",
        "m³/s",
        "flow",
        "Flow a variable pump's compensator or load-sensing control passes to drain.",
        (0.0, 1_000.0),
    ),
    Term(
        "load_sensing_margin",
        "Δp_LS",
        "bar",
        "Pa",
        "pressure",
        "Pressure a load-sensing pump holds above the load's pressure.",
        (0.1, 200.0),
    ),
    Term(
        "drag_share",
        "s_d",
        "-",
        "-",
        "none",
        "Share of a pump's torque loss at rated pressure that does not depend on pressure.",
        (0.0, 1.0),
    ),
    Term(
        "heat_load",
        "Q_heat",
        "kW",
        "W",
        "power",
        "Mean heat the supply puts into the oil while the cycle runs (what a cooler removes).",
    ),
)

#: All terms by key.
GLOSSARY: dict[str, Term] = {t.key: t for t in _TERMS}


def check_plausible(
    value: float,
    key: str,
    what: str,
    where: str,
    *,
    unit: str | None = None,
    zero_ok: bool = False,
    error: type[StowflowError] = StowflowError,
) -> float:
    """Refuse a value that is not finite or outside the term's plausible range.

    A range that starts at 0 or above also refuses 0 (unless ``zero_ok``) and negatives by
    sign; a range below 0 (temperatures in °C) refuses by its ends only.

    The one place where an input number meets the glossary's range; the message quotes the
    range: ``"{where}: {what} 6 is above 1; expected 0.05 to 1"``.

    Parameters
    ----------
    value : float
        The value in the unit the input is written in (``unit``).
    key : str
        Glossary key whose plausible range applies (given in the term's trade unit).
    what : str
        Name of the value in the message, e.g. ``"overall_efficiency"``.
    where : str
        Message prefix: file, line, table or key.
    unit : str, optional
        Unit as written in the input, shown after the range (default the term's unit).
    zero_ok : bool
        Accept 0 (below the range's lower end).
    error : type
        The :class:`~stowflow.errors.StowflowError` subclass to raise.

    Returns
    -------
    float
        The value, unchanged, [unit].
    """
    t = GLOSSARY[key]
    low, high = t.plausible
    shown = t.unit if unit is None else unit
    unit_text = f" {shown}" if shown and shown != "-" else ""
    try:
        value = float(value)
    except OverflowError:  # an integer beyond the float range
        raise error(
            f"{where}: {what} is far above {high:g}; expected {low:g} to {high:g}{unit_text}"
        ) from None
    if not math.isfinite(value):
        raise error(f"{where}: {what} {value} is not finite; expected a number")
    if low >= 0 and (value < 0 or (value == 0 and not zero_ok)):
        bound = ">= 0" if zero_ok else "> 0"
        raise error(f"{where}: {what} {value:g} is not {bound}; expected a value {bound}")
    if value > high:
        raise error(
            f"{where}: {what} {value:g} is above {high:g}; expected {low:g} to {high:g}{unit_text}"
        )
    if value < low and not (zero_ok and value == 0):
        raise error(
            f"{where}: {what} {value:g} is below {low:g}; expected {low:g} to {high:g}{unit_text}"
        )
    return value


def term(key: str) -> Term:
    """Return the glossary entry ``key`` (KeyError if it is not in the glossary)."""
    return GLOSSARY[key]
