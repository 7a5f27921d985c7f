"""The ``--duty reserve|shock|thermal`` option groups of ``stowflow size`` and their output.

:func:`add_duty_options` adds one option group per duty; :func:`check_duty_options` refuses an
option that belongs to another duty (nothing is silently ignored) and a missing required one;
:func:`run_duty` converts the options to SI, calls :mod:`stowflow.duties` and prints a table
or JSON.  The energy-storage duty stays in :mod:`stowflow.cli.size`.
"""

from __future__ import annotations

import argparse
import math

from stowflow.catalogue import ACCUMULATOR_TYPES
from stowflow.cli._common import allow_negative_ranges
from stowflow.cli._output import print_json, print_table
from stowflow.errors import SettingsError
from stowflow.io.numbers import number
from stowflow.io.quantities import (
    parse_choice,
    parse_density,
    parse_duration,
    parse_expansion_coefficient,
    parse_flow,
    parse_gas_process,
    parse_length,
    parse_number,
    parse_pressure,
    parse_pressure_difference,
    parse_temperature_range,
    parse_velocity,
    parse_volume,
)
from stowflow.io.temperatures import check_bare_range

__all__ = ["DUTIES", "add_duty_options", "check_duty_options", "motion_from_text", "run_duty"]

#: The duties of ``stowflow size``; storage is the default.
DUTIES: tuple[str, ...] = ("storage", "reserve", "shock", "thermal")

# Option destinations each duty owns (None default means "not given").
_OWN: dict[str, tuple[str, ...]] = {
    "storage": ("volume", "min_pressure", "max_pressure", "charge"),
    "reserve": ("motions", "motion", "charge_pressure", "leakage", "standby"),
    "shock": (
        "pipe_length",
        "pipe_diameter",
        "wall",
        "pipe_modulus",
        "constraint",
        "velocity",
        "flow",
        "pressure",
        "peak_limit",
        "closure_time",
    ),
    "thermal": (
        "oil_volume",
        "start_pressure",
        "pressure_limit",
        "oil_expansion",
        "container_expansion",
    ),
}
_SHARED: dict[str, tuple[str, ...]] = {
    "oil_density": ("shock",),
    "bulk_modulus": ("shock", "thermal"),
    "type": ("reserve", "shock", "thermal"),
    "process": ("storage", "reserve"),
}
_REQUIRED: dict[str, tuple[str, ...]] = {
    "storage": ("volume", "min_pressure", "max_pressure"),
    "reserve": ("charge_pressure",),
    "shock": ("pipe_length", "pipe_diameter", "wall", "pressure", "peak_limit"),
    "thermal": ("oil_volume", "start_pressure", "pressure_limit"),
}


def _flag(dest: str) -> str:
    return "--" + dest.replace("_", "-")


def add_duty_options(parser: argparse.ArgumentParser) -> None:
    """Add the ``--duty`` switch and the option groups of the reserve, shock and thermal duties."""
    g = parser.add_argument_group("duty")
    g.add_argument(
        "--duty",
        choices=DUTIES,
        default="storage",
        help="storage (default): exchange an oil volume between two pressures; reserve: "
        "safe-state motions after a pump failure; shock: damp a valve-closure surge; "
        "thermal: absorb the expansion of a blocked-in oil volume",
    )
    g.add_argument(
        "--type",
        metavar="TYPE",
        help="reserve/shock/thermal: accumulator type for the precharge rule and the limits "
        "(bladder, diaphragm, piston, piston-bottles, gas-over-oil; default bladder)",
    )
    r = parser.add_argument_group("emergency reserve (--duty reserve)")
    r.add_argument(
        "--motions",
        metavar="CSV",
        help="motions file: motion, volume [L], min_pressure [bar], time [s] (pressures gauge)",
    )
    r.add_argument(
        "--motion",
        action="append",
        metavar="NAME,VOL,P,T",
        help="a motion, repeatable: e.g. 'close guard,1.2L,120bar,2s'",
    )
    r.add_argument(
        "--charge-pressure",
        metavar="P",
        help="pressure when the pump fails (the pressure switch's cut-in point), with unit",
    )
    r.add_argument(
        "--leakage",
        metavar="FLOW",
        help="leakage of the isolated circuit, e.g. 0.05L/min (default 0)",
    )
    r.add_argument(
        "--standby", metavar="TIME", help="stand-by time before the motions, e.g. 10min (default 0)"
    )
    s = parser.add_argument_group("shock absorption (--duty shock)")
    s.add_argument("--pipe-length", metavar="L", help="oil column length, valve to the source")
    s.add_argument("--pipe-diameter", metavar="D", help="inner diameter, e.g. 25mm")
    s.add_argument("--wall", metavar="E", help="wall thickness, e.g. 3mm")
    s.add_argument(
        "--pipe-modulus",
        metavar="P",
        help="Young's modulus of the wall (default 210GPa, carbon steel, from memory)",
    )
    s.add_argument(
        "--constraint",
        metavar="C1",
        help="Korteweg constraint factor c1 (default 1: free to move; 0.91 anchored throughout)",
    )
    s.add_argument("--velocity", metavar="V", help="flow velocity stopped, e.g. 4m/s")
    s.add_argument("--flow", metavar="Q", help="or the flow stopped, e.g. 120L/min")
    s.add_argument("--pressure", metavar="P", help="operating pressure at the valve")
    s.add_argument("--peak-limit", metavar="P", help="allowed peak pressure")
    s.add_argument("--closure-time", metavar="T", help="valve closure time (default 0: sudden)")
    t = parser.add_argument_group("thermal expansion (--duty thermal; --temperature T1..T2)")
    t.add_argument("--oil-volume", metavar="VOL", help="blocked-in oil volume, e.g. 20L")
    t.add_argument("--start-pressure", metavar="P", help="pressure when blocked in, at T1")
    t.add_argument("--pressure-limit", metavar="P", help="pressure that must not be exceeded")
    t.add_argument(
        "--oil-expansion",
        metavar="BETA",
        help="oil's volumetric expansion coefficient (default 7e-4/K, from memory)",
    )
    t.add_argument(
        "--container-expansion",
        metavar="BETA",
        help="pipes' volumetric expansion (default 3.6e-5/K = 3 × steel's 12e-6/K; 0/K for none)",
    )
    allow_negative_ranges(parser)  # --temperature -20..40
    o = parser.add_argument_group("oil (--duty shock, thermal)")
    o.add_argument("--oil-density", metavar="RHO", help="default 870kg/m3 (from memory)")
    o.add_argument("--bulk-modulus", metavar="K", help="default 1.7GPa (from memory)")


def check_duty_options(args: argparse.Namespace) -> None:
    """Refuse options of another duty and missing required ones (SettingsError, one line)."""
    duty = args.duty
    for other, dests in _OWN.items():
        if other == duty:
            continue
        for dest in dests:
            if getattr(args, dest, None) is not None:
                raise SettingsError(f"{_flag(dest)} belongs to --duty {other}, not {duty}")
    for dest, duties in _SHARED.items():
        if getattr(args, dest, None) is not None and duty not in duties:
            why = {
                "process": " (shock is adiabatic, thermal isothermal by their time scale)",
                "type": " (storage checks every type)",
            }.get(dest, "")
            raise SettingsError(f"{_flag(dest)} does not apply to --duty {duty}{why}")
    missing = [_flag(d) for d in _REQUIRED[duty] if getattr(args, d, None) is None]
    if missing:
        raise SettingsError(f"--duty {duty} needs {', '.join(missing)}")
    if duty == "reserve" and not (args.motions or args.motion):
        raise SettingsError("--duty reserve needs --motions FILE or at least one --motion")
    if duty == "thermal" and ".." not in str(args.temperature):
        raise SettingsError("--duty thermal needs --temperature T1..T2, heating from T1 to T2")
    if duty == "shock" and (args.velocity is None) == (args.flow is None):
        raise SettingsError("--duty shock needs exactly one of --velocity and --flow")


def motion_from_text(text: str, *, absolute: bool = False):
    """Read one ``--motion NAME,VOLUME,MIN_PRESSURE,TIME``, e.g. ``"close guard,1.2L,120bar,2s"``.

    Parameters
    ----------
    text : str
        The motion: four comma-separated fields, the last three with units.
    absolute : bool
        The pressure is absolute (default gauge).

    Returns
    -------
    stowflow.duties.Motion
        The motion in SI units.
    """
    from stowflow.duties import Motion

    parts = [p.strip() for p in str(text).split(",")]
    if len(parts) != 4 or not parts[0]:
        raise SettingsError(
            f"--motion: '{str(text).strip()}' is not four comma-separated fields; expected "
            "NAME,VOLUME,MIN_PRESSURE,TIME, e.g. 'close guard,1.2L,120bar,2s'"
        )
    name, volume, pressure, time = parts
    option = f"--motion '{name}'"
    return Motion(
        name,
        parse_volume(volume, option),
        parse_pressure(pressure, option, absolute=absolute),
        parse_duration(time, option),
    )


def _pressure(args, text: str, option: str) -> float:
    return parse_pressure(text, option, absolute=args.absolute)


def _common(args) -> dict:
    t_min, t_max = parse_temperature_range(args.temperature, "--temperature")
    acc_type = (
        "bladder" if args.type is None else parse_choice(args.type, "--type", ACCUMULATOR_TYPES)
    )
    check_bare_range(args.temperature, t_max, (acc_type,), "--temperature")
    out = {"model": args.gas, "acc_type": acc_type}
    if args.precharge is not None:
        out["precharge"] = _pressure(args, args.precharge, "--precharge")
    if args.ps is not None:
        out["max_allowable_pressure"] = parse_pressure(args.ps, "--ps")
    return out | {"T_min": t_min, "T_max": t_max}


def _reserve(args):
    from stowflow.duties import read_motions, size_reserve

    motions = list(read_motions(args.motions)) if args.motions else []
    motions += [motion_from_text(m, absolute=args.absolute) for m in args.motion or []]
    kw = _common(args)
    return size_reserve(
        motions,
        _pressure(args, args.charge_pressure, "--charge-pressure"),
        leakage=0.0 if args.leakage is None else parse_flow(args.leakage, "--leakage"),
        standby_time=0.0 if args.standby is None else parse_duration(args.standby, "--standby"),
        process=(
            "adiabatic"
            if args.process is None
            else parse_gas_process(args.process, "--process", allow_auto=False)
        ),
        **kw,
    )


def _shock(args):
    from stowflow.duties import size_shock

    kw = _common(args)
    diameter = parse_length(args.pipe_diameter, "--pipe-diameter")
    if args.velocity is not None:
        velocity = parse_velocity(args.velocity, "--velocity")
    else:
        velocity = parse_flow(args.flow, "--flow") / (math.pi / 4 * diameter**2)
    extra = {}
    if args.pipe_modulus is not None:
        extra["pipe_modulus"] = parse_pressure_difference(
            args.pipe_modulus, "--pipe-modulus", at_least=None, above=0.0
        )
    if args.constraint is not None:
        extra["constraint"] = parse_number(args.constraint, "--constraint", above=0.0)
    if args.closure_time is not None:
        extra["closure_time"] = parse_duration(args.closure_time, "--closure-time")
    if args.oil_density is not None:
        extra["oil_density"] = parse_density(args.oil_density, "--oil-density")
    if args.bulk_modulus is not None:
        extra["bulk_modulus"] = _bulk_modulus(args)
    return size_shock(
        parse_length(args.pipe_length, "--pipe-length"),
        diameter,
        parse_length(args.wall, "--wall"),
        velocity,
        _pressure(args, args.pressure, "--pressure"),
        _pressure(args, args.peak_limit, "--peak-limit"),
        **extra,
        **kw,
    )


def _bulk_modulus(args) -> float:
    return parse_pressure_difference(args.bulk_modulus, "--bulk-modulus", at_least=None, above=0.0)


def _thermal(args):
    from stowflow.duties import size_thermal

    kw = _common(args)
    extra = {}
    if args.oil_expansion is not None:
        extra["oil_expansion"] = parse_expansion_coefficient(args.oil_expansion, "--oil-expansion")
    if args.container_expansion is not None:
        extra["container_expansion"] = parse_expansion_coefficient(
            args.container_expansion, "--container-expansion"
        )
    if args.bulk_modulus is not None:
        extra["bulk_modulus"] = _bulk_modulus(args)
    t1, t2 = kw.pop("T_min"), kw.pop("T_max")
    return size_thermal(
        parse_volume(args.oil_volume, "--oil-volume"),
        t1,
        t2,
        _pressure(args, args.start_pressure, "--start-pressure"),
        _pressure(args, args.pressure_limit, "--pressure-limit"),
        **extra,
        **kw,
    )


def run_duty(args: argparse.Namespace) -> int:
    """Size the reserve, shock or thermal duty and print it; return the exit code."""
    result = {"reserve": _reserve, "shock": _shock, "thermal": _thermal}[args.duty](args)
    data = result.as_dict()
    if args.json:
        print_json(data)
        return 0
    {"reserve": _print_reserve, "shock": _print_shock, "thermal": _print_thermal}[args.duty](data)
    _print_footer(data)
    return 0


def _f(x, digits: int = 4) -> str:
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "–"
    return "0" if abs(x) < 1e-9 else number(x, digits, max_decimals=digits - 1, trim=True)


def _frame(records: list[dict], title: str) -> None:
    if not records:
        return
    headers = list(records[0])
    rows = [[v if isinstance(v, str) else _f(v) for v in r.values()] for r in records]
    print_table(rows, headers=headers, title=title)
    print()


def _print_reserve(d: dict) -> None:
    rows = [
        ("charge pressure (pump fails)", _f(d["charge_pressure_bar"]), "bar gauge"),
        ("leakage / stand-by", f"{_f(d['leakage_lpm'])} / {_f(d['standby_time_s'])}", "L/min / s"),
        ("gas model / motions / stand-by", f"{d['gas_model']} / {d['process']} / isothermal", ""),
        (
            "temperature range",
            f"{_f(d['temperature_c']['min'])} … {_f(d['temperature_c']['max'])}",
            "°C",
        ),
        ("type", d["accumulator_type"], ""),
        (
            "precharge at 20 °C" + (" (by rule)" if d["precharge_by_rule"] else ""),
            _f(d["precharge_bar_at_20c"]),
            "bar gauge",
        ),
        ("required gas volume V0", _f(d["required_gas_volume_l"]), "L"),
        ("worst temperature", _f(d["worst_temperature_c"]), "°C"),
        (
            "V0 if adiabatic / isothermal",
            f"{_f(d['gas_volume_if_adiabatic_l'])} / {_f(d['gas_volume_if_isothermal_l'])}",
            "L",
        ),
    ]
    print_table(rows, title="stowflow size: emergency reserve")
    print()
    _frame(d["states"], f"pressure after each step at {_f(d['worst_temperature_c'])} °C (gauge)")


def _print_shock(d: dict) -> None:
    rows = [
        ("wave speed a", _f(d["wave_speed_m_s"]), "m/s"),
        ("  in a rigid pipe", _f(d["rigid_pipe_wave_speed_m_s"]), "m/s"),
        ("wave round trip 2L/a", _f(d["reflection_time_ms"]), "ms"),
        ("surge without accumulator (Joukowsky)", _f(d["surge_without_accumulator_bar"]), "bar"),
        ("peak without accumulator", _f(d["peak_without_accumulator_bar"]), "bar gauge"),
        ("allowed peak", _f(d["allowed_peak_bar"]), "bar gauge"),
        ("kinetic energy of the column", _f(d["column_energy_j"]), "J"),
        (
            "precharge at 20 °C" + (" (by rule)" if d["precharge_by_rule"] else ""),
            _f(d["precharge_bar_at_20c"]),
            "bar gauge",
        ),
        ("required gas volume V0", _f(d["required_gas_volume_l"]), "L"),
        ("worst temperature", _f(d["worst_temperature_c"]), "°C"),
        ("column stops in about", _f(d["stopping_time_ms"]), "ms"),
    ]
    print_table(rows, title="stowflow size: shock absorption")
    print()
    _frame(d["per_temperature"], "per temperature (adiabatic compression to the allowed peak)")
    for k, v in d["sources"].items():
        print(f"source ({k}): {v}")


def _print_thermal(d: dict) -> None:
    rows = [
        ("blocked-in oil volume", _f(d["oil_volume_l"]), "L"),
        ("heating", f"{_f(d['temperature_c']['start'])} → {_f(d['temperature_c']['end'])}", "°C"),
        ("net growth of the oil", _f(d["expansion_l"]), "L"),
        (
            "pressure rise without accumulator",
            _f(d["pressure_rise_without_accumulator_bar"]),
            "bar",
        ),
        ("  that is, per kelvin", _f(d["pressure_rise_per_kelvin_bar"]), "bar/K"),
        ("pressure limit", _f(d["pressure_limit_bar"]), "bar gauge"),
        (
            "precharge at 20 °C" + (" (by rule)" if d["precharge_by_rule"] else ""),
            _f(d["precharge_bar_at_20c"]),
            "bar gauge",
        ),
        ("required gas volume V0", _f(d["required_gas_volume_l"]), "L"),
    ]
    print_table(rows, title="stowflow size: thermal expansion of a blocked-in volume")
    print()
    _frame(d["table"], "pressure while heating (gauge)")
    for k, v in d["sources"].items():
        print(f"source ({k}): {v}")


def _print_footer(d: dict) -> None:
    lim = d["limits"]
    verdict = "yes" if lim["admissible"] else "no: " + "; ".join(lim["reasons"])
    print(f"{lim['type']} admissible: {verdict}")
    pe = lim["pressure_equipment"]
    if pe is not None:
        print(
            f"pressure-equipment category for one {_f(pe['volume_l'])} L vessel at PS "
            f"{_f(pe['ps_bar'])} bar: {pe['category']}"
        )
        print(f"  {pe['note']}")
    for note in d["notes"]:
        print(f"note: {note}")
    print()
    for line in d["safety"]:
        print(line)
