"""stowflow from Python: read a cycle, design, simulate and size, with DataFrames out.

The functions here run the same jobs as the commands, through the same readers, option
parsers and pipeline, so a script gets exactly what ``stowflow design`` writes:

* :func:`read_cycle`: a duty cycle from a CSV file or a :class:`pandas.DataFrame` with the
  same unit-bearing columns (``stowflow check``);
* :func:`load_catalogue`: the component catalogue (default: the bundled demo catalogue);
* :func:`design`: design → verify → cost (``stowflow design``/``demo``), a
  :class:`DesignResult` with ``summary``, ``schedule``, ``costs``, ``verification``,
  ``to_dict()`` (design.json) and ``write(folder)``;
* :func:`simulate`: the time-domain verification of a given design (``stowflow simulate``),
  a :class:`SimulationResult`;
* :func:`size`: single-point accumulator sizing (``stowflow size``), a :class:`pandas.Series`;
* :func:`batch`: a fleet of cycles on Dask (``stowflow batch``), the summary as a DataFrame;
* :func:`explore`: one design's trade-off front and sensitivity (``stowflow explore``);
* :func:`settings`: the settings objects the keywords of :func:`design` make.

Quantities are given with their units as text, the way the command line takes them
(``"150bar"``, ``"10..50"`` in °C, ``"10%"``, ``"5s"``), or as plain numbers in SI (Pa, s,
m³, K; fractions as fractions).  Pressures are **gauge** unless a parameter says otherwise.
Tables come back in the trade's units with the unit in the column or key name (bar gauge, L,
L/min, kW, °C, s).  Bad input raises a one-line :class:`~stowflow.errors.StowflowError`.

Everything heavy (pandas, Pyomo, the simulator) is imported when a function first needs it,
so ``import stowflow`` stays quick.

Examples
--------
>>> import stowflow
>>> cycle = stowflow.read_cycle("duty_cycles/forming_press.csv")
>>> cycle.n_steps, cycle.dt
(640, 0.05)
"""

from __future__ import annotations

import copy
import difflib
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass
from functools import cached_property
from pathlib import Path
from typing import TYPE_CHECKING, Any, NamedTuple

from stowflow.errors import CycleError, SettingsError

if TYPE_CHECKING:  # pragma: no cover - typing only
    import pandas as pd
    from stowflow.catalogue import Catalogue
    from stowflow.costs.comparison import CostSettings
    from stowflow.cycle.duty import DutyCycle
    from stowflow.pipeline import StudyResult
    from stowflow.search.settings import DesignSettings
    from stowflow.search.solution import Design
    from stowflow.simulation.verify import Verification

__all__ = [
    "DesignResult",
    "Settings",
    "SimulationResult",
    "batch",
    "design",
    "explore",
    "load_catalogue",
    "read_cycle",
    "settings",
    "simulate",
    "size",
]

#: Source name of a cycle read from a DataFrame (its messages count lines as in the CSV the
#: frame becomes: line 1 is the header, line 2 the first row).
FRAME_SOURCE = "<DataFrame>"

#: What a plain number means for a setting that otherwise takes text with a unit: the unit
#: written after it before the option parser reads it ("" = the number as it is).  Numbers
#: are SI except where the setting's name carries its unit (``hours_per_year`` [h],
#: ``cycles_per_hour`` [1/h]) or the setting counts per hour (``max_load_events`` [1/h]).
NUMBER_UNITS: dict[str, str] = {
    # design settings (stowflow.io.options.DESIGN_OPTIONS)
    "time_constant": "s",
    "line_loss": "Pa",
    "relief_margin": "",
    "standby_pressure": "Pa",
    "min_loaded_dwell": "s",
    "min_unloaded_dwell": "s",
    "max_load_events": "/h",
    "flow_margin": "",
    "switch_differential": "",
    "switch_tolerance": "",
    "max_count": "",
    "precharge_step": "Pa",
    "time_limit": "s",
    "mip_gap": "",
    "motor_voltage": "",
    "motor_frequency": "",
    "motor_poles": "",
    # cost settings (stowflow.io.options.COST_OPTIONS)
    "energy_price": "/J",
    "hours_per_year": "",
    "cycles_per_hour": "",
    "cycle_time": "s",
    "years": "",
    "discount_rate": "",
    "installation_factor": "",
}

#: Settings beyond the option tables: both dwell times at once [s] (as ``--min-dwell``) and
#: whether a pump without accumulator may be the design (``--no-pump-only`` sets it False).
EXTRA_SETTINGS: tuple[str, ...] = ("min_dwell", "allow_pump_only")


# -- settings --------------------------------------------------------------------------------


class Settings(NamedTuple):
    """The settings objects one call's keywords make.

    Attributes
    ----------
    design : DesignSettings
        Design settings (SI inside).
    costs : CostSettings
        Cost settings (SI inside).
    """

    design: DesignSettings
    costs: CostSettings


def _number_text(key: str, value) -> str:
    """A plain number as the text the option parser reads, with :data:`NUMBER_UNITS`' unit."""
    import numpy as np

    if isinstance(value, bool) or not isinstance(value, int | float | np.integer | np.floating):
        raise SettingsError(
            f"setting '{key}': {value!r} is not a number or text; write it like the command "
            "line does (e.g. '5bar', '10%') or give a number in SI"
        )
    number = float(value)
    if not np.isfinite(number):
        raise SettingsError(f"setting '{key}': {value!r} is not a finite number")
    return np.format_float_positional(number, trim="-") + NUMBER_UNITS[key]


def _kelvin_pair(value) -> tuple[float, float]:
    """``temperature`` given as numbers: one temperature or (coldest, hottest), [K]."""
    import numpy as np

    values = np.atleast_1d(np.asarray(value, dtype=object))
    try:
        numbers = [float(v) for v in values if not isinstance(v, bool | str)]
    except (TypeError, ValueError):
        numbers = []
    if len(numbers) != len(values) or len(values) not in (1, 2):
        raise SettingsError(
            f"setting 'temperature': {value!r} is neither a range in °C such as '10..50' "
            "nor one or two temperatures in K"
        )
    return numbers[0], numbers[-1]


def _unknown(key: str, known: Iterable[str]) -> SettingsError:
    known = sorted(known)
    close = difflib.get_close_matches(key, known, n=3, cutoff=0.6)
    hint = f"did you mean {', '.join(repr(k) for k in close)}? " if close else ""
    return SettingsError(f"unknown setting '{key}'; {hint}known: {', '.join(known)}")


def _build_settings(
    values: Mapping[str, Any],
    *,
    base: DesignSettings | None = None,
    costs: bool = True,
) -> Settings:
    """Design and cost settings from keywords (text with units, or numbers in SI)."""
    from stowflow.costs.comparison import CostSettings
    from stowflow.io.options import COST_OPTIONS, DESIGN_OPTIONS, cost_settings, design_settings
    from stowflow.search.settings import DesignSettings

    known = set(DESIGN_OPTIONS) | set(EXTRA_SETTINGS) | (set(COST_OPTIONS) if costs else set())
    design_text: dict[str, str] = {}
    cost_text: dict[str, str] = {}
    start = base or DesignSettings()
    changes: dict[str, Any] = {}
    for key, value in values.items():
        if key not in known:
            raise _unknown(key, known)
        if value is None:
            continue
        if key == "allow_pump_only":
            if not isinstance(value, bool):
                raise SettingsError(f"setting 'allow_pump_only': {value!r} is not True or False")
            changes["allow_pump_only"] = value
            continue
        if key == "temperature" and not isinstance(value, str):
            changes["t_min"], changes["t_max"] = _kelvin_pair(value)
            continue
        if key in ("types", "prefer_types") and not isinstance(value, str):
            value = ",".join(str(t) for t in value)
        if not isinstance(value, str):
            if key not in NUMBER_UNITS and key != "min_dwell":
                raise SettingsError(f"setting '{key}': {value!r} is not text")
            value = _number_text("min_loaded_dwell" if key == "min_dwell" else key, value)
        (cost_text if key in COST_OPTIONS else design_text)[key] = value
    both = design_text.pop("min_dwell", None)
    if both is not None:
        design_text.setdefault("min_loaded_dwell", both)
        design_text.setdefault("min_unloaded_dwell", both)
    if changes:
        start = start.with_(**changes)
    return Settings(
        design_settings(design_text, start),
        cost_settings(cost_text) if cost_text else CostSettings(),
    )


def settings(**settings: Any) -> Settings:
    """The design and cost settings that keywords of :func:`design` make.

    Parameters
    ----------
    **settings
        Any option of ``stowflow design`` with ``_`` for ``-`` (the keys of
        :data:`stowflow.io.options.DESIGN_OPTIONS` and
        :data:`~stowflow.io.options.COST_OPTIONS`), plus ``min_dwell`` and
        ``allow_pump_only``.  A value is text as on the command line (``line_loss="5bar"``,
        ``temperature="10..50"`` in °C, ``flow_margin="10%"``, ``energy_price="0.25/kWh"``)
        or a number in SI: Pa for pressures, s for times, a fraction for shares
        (``flow_margin=0.1``), K for ``temperature`` (one value or a pair), currency per J
        for ``energy_price``; ``hours_per_year`` [h], ``cycles_per_hour`` and
        ``max_load_events`` [1/h] as their names say.  ``types`` also takes a list; None
        keeps the default.

    Returns
    -------
    Settings
        ``(design, costs)``: a :class:`~stowflow.search.settings.DesignSettings` and a
        :class:`~stowflow.costs.comparison.CostSettings`.

    Raises
    ------
    SettingsError
        An unknown keyword (the message lists close matches), or a value out of range.
    UnitsError
        A unit that is unknown or of the wrong dimension.

    Examples
    --------
    >>> import stowflow
    >>> s = stowflow.settings(temperature="0..40", line_loss="3bar", flow_margin="5%")
    >>> round(s.design.t_min, 2), s.design.line_loss, s.design.flow_margin
    (273.15, 300000.0, 0.05)
    >>> stowflow.settings(line_loss=3e5).design == s.design.with_(
    ...     t_min=283.15, t_max=323.15, flow_margin=0.1)
    True
    >>> stowflow.settings(line_los="3bar")
    Traceback (most recent call last):
    ...
    stowflow.errors.SettingsError: unknown setting 'line_los'; did you mean 'line_loss'? ...
    """
    return _build_settings(settings)


# -- reading -----------------------------------------------------------------------------


def _quantity(value, dimension: str, what: str) -> float | None:
    """Text with a unit → SI through the option parsers (:mod:`stowflow.io.quantities`, the
    same as the command line's; pressures stay gauge); numbers pass as SI."""
    if value is None:
        return None
    if isinstance(value, str):
        from stowflow.io import quantities as q

        parse = {
            "pressure": q.parse_pressure_difference,
            "volume": q.parse_volume,
            "time": q.parse_duration,
        }[dimension]
        return parse(value, what)
    if isinstance(value, bool):
        raise SettingsError(f"{what}: {value!r} is not a quantity")
    try:
        return float(value)
    except (TypeError, ValueError):
        raise SettingsError(
            f"{what}: {value!r} is not a quantity; write it with a unit, e.g. "
            f"{'150bar' if dimension == 'pressure' else '5L' if dimension == 'volume' else '1s'}"
        ) from None


def _frame_csv(frame: pd.DataFrame) -> str:
    """A cycle DataFrame as the CSV text the cycle reader takes (no parsing here)."""
    import pandas as pd

    if any(n is not None for n in frame.index.names):
        frame = frame.reset_index()
    frame = frame.rename(columns=str)
    # Text columns last, so that no row starts with a label that reads as a '#' comment.
    text = [c for c in frame.columns if not pd.api.types.is_numeric_dtype(frame[c])]
    for col in text:
        bad = frame[col].astype(str).str.contains(r"[\r\n]", regex=True).to_numpy()
        if bad.any():
            row = int(bad.argmax())
            raise CycleError(
                f"{FRAME_SOURCE}, row {row + 1}, column '{col}': a line break in the text; "
                "expected one line per cell"
            )
    frame = frame[[c for c in frame.columns if c not in text] + text]
    return frame.to_csv(index=False, lineterminator="\n")


def read_cycle(
    source: str | Path | pd.DataFrame,
    *,
    min_pressure: str | float | None = None,
    step: str | float | None = None,
    name: str | None = None,
) -> DutyCycle:
    """Read a duty cycle from a CSV file or a DataFrame, as ``stowflow check`` does.

    Parameters
    ----------
    source : str, pathlib.Path or pandas.DataFrame
        A duty-cycle CSV (see the README's input format), or a DataFrame with the same
        unit-bearing column headers: ``duration [s]`` (phase table) or ``time [s]`` (sample
        table; also as the index), ``flow [L/min]``, optionally ``pressure [bar]`` (gauge)
        and ``label``; any unit the CSV takes.  The frame is written as CSV text and read by
        the same reader with the same checks; its messages name ``<DataFrame>`` and count
        lines as in that CSV (line 2 is the first row).
    min_pressure : str or float, optional
        Minimum working pressure, **gauge**: ``"150bar"`` or [Pa].  Without a pressure column
        it is the requirement of every step; with one, each step needs at least this.
    step : str or float, optional
        Time step of the grid: ``"50ms"`` or [s] (default: chosen automatically).
    name : str, optional
        Cycle name (default: the file stem; ``"cycle"`` for a DataFrame).

    Returns
    -------
    DutyCycle
        The cycle on a uniform grid (SI inside); ``.to_frame()`` gives its steps as a table
        indexed by ``time [s]`` with ``flow [L/min]``, ``required_pressure [bar]`` (gauge) and
        ``label``.

    Raises
    ------
    CycleError
        The file or frame is not a valid cycle (the message names the line and column).
    UnitsError
        An option's unit is unknown or of the wrong dimension.

    Examples
    --------
    >>> import pandas as pd
    >>> import stowflow
    >>> frame = pd.DataFrame({"duration [s]": [2.0, 8.0], "flow [L/min]": [120, 0],
    ...                       "pressure [bar]": [200, 50], "label": ["press", "wait"]})
    >>> cycle = stowflow.read_cycle(frame)
    >>> cycle.duration, cycle.n_steps
    (10.0, 5)
    >>> cycle.to_frame()["flow [L/min]"].tolist()
    [120.0, 0.0, 0.0, 0.0, 0.0]
    >>> stowflow.read_cycle("duty_cycles/forming_press.csv", min_pressure="100bar").name
    'forming_press'
    """
    from stowflow.cycle.duty import load_cycle, parse_cycle_text

    options = {
        "min_pressure": _quantity(min_pressure, "pressure", "min_pressure"),
        "step": _quantity(step, "time", "step"),
        "name": name,
    }
    if isinstance(source, str | Path):
        return load_cycle(source, **options)
    import pandas as pd

    if isinstance(source, pd.DataFrame):
        return parse_cycle_text(_frame_csv(source), source=FRAME_SOURCE, **options)
    raise CycleError(f"read_cycle: {type(source).__name__} is not a CSV path or a pandas DataFrame")


def load_catalogue(path: str | Path | None = None) -> Catalogue:
    """Read a component catalogue (TOML), by default the bundled demo catalogue.

    Parameters
    ----------
    path : str or pathlib.Path, optional
        The catalogue file (see the README); None for ``duty_cycles/catalogue.toml``, the
        invented demo catalogue with placeholder prices.

    Returns
    -------
    Catalogue
        Accumulators, pumps and motors in SI, with prices and the currency label.

    Raises
    ------
    CatalogueError
        The file is missing or not a valid catalogue (the message names line and key).

    Examples
    --------
    >>> import stowflow
    >>> cat = stowflow.load_catalogue()
    >>> cat.accumulator_types
    ('gas-over-oil', 'bladder', 'diaphragm', 'piston', 'piston-bottles')
    >>> len(cat.pumps) > 0 and len(cat.motors) > 0
    True
    """
    from stowflow.catalogue import default_catalogue_path
    from stowflow.catalogue import load_catalogue as read

    return read(default_catalogue_path() if path is None else path)


# -- design ----------------------------------------------------------------------------------


def _rows_frame(rows: list[dict], index: str | None = None) -> pd.DataFrame:
    import pandas as pd

    frame = pd.DataFrame(rows)
    return frame.set_index(index) if index and not frame.empty else frame


@dataclass(frozen=True)
class _Verified:
    """What :func:`stowflow.report.content.verification_rows` reads of a result."""

    verification: Verification | None
    settings: DesignSettings


class DesignResult:
    """The whole job's result: the design, its verification and its costs, as tables.

    Attributes
    ----------
    study : StudyResult
        Everything the pipeline produced (SI inside): ``design``, ``verification``,
        ``comparison``, ``cycle``, ``catalogue``, ``settings``, ``cost_settings``,
        ``attempts``, ``timings``.
    """

    def __init__(self, study: StudyResult) -> None:
        self.study = study

    def __repr__(self) -> str:
        d = self.study.design
        parts = [d.status]
        if d.feasible:
            bank = "pump only" if d.bank is None else f"{d.bank.count} × {d.bank.option.name}"
            parts += [bank, f"motor {d.motor.rated_power / 1e3:g} kW"]
        v = self.study.verification
        if v is not None:
            parts.append(f"verification {'passed' if v.passed else 'failed'}")
        return f"<DesignResult {self.study.name!r}: {', '.join(parts)}>"

    @property
    def name(self) -> str:
        """Study name."""
        return self.study.name

    @property
    def feasible(self) -> bool:
        """True when a design was found (and passed the verification, when verified)."""
        return bool(self.study.design.feasible)

    @cached_property
    def _record(self) -> dict:
        from stowflow.report.exports import design_record

        return design_record(self.study)

    def to_dict(self) -> dict:
        """What ``design.json`` holds (schema ``stowflow.design/1``), as plain Python.

        Returns
        -------
        dict
            A fresh copy: pressures bar gauge, volumes L, flows L/min, power kW, energy kWh,
            time s, prices in ``costs.currency``; missing numbers are None.
        """
        return copy.deepcopy(self._record)

    @cached_property
    def summary(self) -> pd.Series:
        """The verdict in one column, keys named with their units.

        ``name``, ``status``, ``reason``, ``accumulator_type``, ``accumulator_count``,
        ``nominal_volume_l``, ``total_gas_volume_l``, ``precharge_bar`` (gauge at 20 °C),
        ``min_pressure_bar``, ``max_pressure_bar`` (the working window, gauge),
        ``relief_bar``, ``pump``, ``pump_flow_lpm``, ``motor``, ``motor_rated_kw``,
        ``lower_bound_power_kw``, ``pump_only_motor_kw`` (the strongest pump-only supply:
        the one with the least total cost of ownership, named by ``pump_only_kind``),
        ``verified`` (True/False; None when not verified), ``controller``,
        ``min_margin_bar``, ``load_below_bar``, ``unload_above_bar`` (pressure switch,
        gauge), ``capex``, ``energy_per_year_kwh``, ``energy_cost_per_year``, ``tco``,
        ``payback_years`` and ``verdict`` (against the strongest pump-only supply),
        ``recommended`` (``"design"`` or the kind of a cheaper pump-only supply), ``currency``.
        None where a value does not apply;
        ``accumulator_count`` and ``total_gas_volume_l`` are 0 without an accumulator.  The
        numbers are design.json's (:meth:`to_dict`).
        """
        import pandas as pd

        r = self._record
        acc = r["accumulator"] or {}
        pump, motor = r["pump"] or {}, r["motor"] or {}
        ver, sp, costs = r["verification"], r["setpoints"], r["costs"]
        baseline = r["baseline"]["motor"] or {}
        return pd.Series(
            {
                "name": r["name"],
                "status": r["status"],
                "reason": r["reason"],
                "accumulator_type": acc.get("type"),
                "accumulator_count": acc.get("count", 0),
                "nominal_volume_l": acc.get("nominal_volume_l"),
                "total_gas_volume_l": acc.get("total_gas_volume_l", 0.0),
                "precharge_bar": acc.get("precharge_bar_at_20c"),
                "min_pressure_bar": acc.get("min_pressure_bar"),
                "max_pressure_bar": acc.get("max_pressure_bar"),
                "relief_bar": r.get("relief_bar"),
                "pump": pump.get("name"),
                "pump_flow_lpm": pump.get("flow_lpm"),
                "motor": motor.get("name"),
                "motor_rated_kw": motor.get("rated_kw"),
                "lower_bound_power_kw": r["lower_bound_power_kw"],
                "pump_only_motor_kw": baseline.get("rated_kw"),
                "pump_only_kind": costs["payback_against"],
                "verified": ver["passed"],
                "controller": ver.get("controller"),
                "min_margin_bar": ver["min_margin_bar"],
                "load_below_bar": sp["load_below_bar"],
                "unload_above_bar": sp["unload_above_bar"],
                "capex": costs["capex"],
                "energy_per_year_kwh": costs["energy_per_year"],
                "energy_cost_per_year": costs["energy_cost_per_year"],
                "tco": costs["tco"],
                "payback_years": costs["payback_years"],
                "verdict": costs["verdict_note"],
                "recommended": costs["recommended"],
                "currency": costs["currency"],
            },
            name=r["name"],
            dtype=object,
        )

    @cached_property
    def schedule(self) -> pd.DataFrame:
        """``schedule.csv`` indexed by ``time [s]``: one row per step of the cycle grid.

        Columns as the file: ``demand [L/min]``, ``pump_loaded`` (0/1), ``pump_flow
        [L/min]``, ``accumulator_oil [L]``, ``pressure [bar]`` (the quasi-static pressure at
        the coldest temperature, gauge), ``required_pressure [bar]``, ``pressure_cold
        [bar]``, ``pressure_hot [bar]``, ``relief_flow [L/min]``, ``consumer_pressure
        [bar]``, ``label``.
        """
        from stowflow.report.exports import schedule_frame

        return schedule_frame(self.study).set_index("time [s]")

    @cached_property
    def costs(self) -> pd.DataFrame:
        """One row per supply: ``design``, then the pump-only ``fixed``, ``compensated``,
        ``variable-speed`` and ``load-sensing``.

        Columns as design.json's ``costs.options``: ``label``, ``feasible``, ``reason``,
        ``installed_power_kw``, ``component_price``, ``capex``, ``energy_per_cycle_kj``,
        ``energy_source``, ``energy_per_year_kwh``, ``energy_cost_per_year``, ``tco``,
        ``mean_power_kw``, ``motor_load`` [-], ``components``, ``heat_load_kw``, then the
        design against each pump-only row: ``payback_years``, ``discounted_payback_years``,
        ``verdict`` (code), ``verdict_note`` (words), ``pays_back`` (the design costs no more
        over the horizon), and ``strongest`` (True on the least-TCO pump-only row).  Prices in
        the summary's ``currency``.
        """
        costs = self._record["costs"]
        rows = []
        for key, option in costs["options"].items():
            back = costs["paybacks"].get(key) or {}
            rows.append(
                {"supply": key}
                | option
                | {
                    "payback_years": back.get("simple_payback_years"),
                    "discounted_payback_years": back.get("discounted_payback_years"),
                    "verdict": back.get("code"),
                    "verdict_note": back.get("note"),
                    "pays_back": back.get("pays_back"),
                    "strongest": key == costs["payback_against"],
                }
            )
        return _rows_frame(rows, "supply")

    @cached_property
    def verification(self) -> pd.DataFrame:
        """One row per controller × temperature simulated (empty when not verified).

        Columns: ``controller``, ``recommended``, ``temperature_c``, ``passed``,
        ``min_margin_bar``, ``min_margin_time_s``, ``peak_pressure_bar`` (gauge),
        ``gas_temperature_min_c``, ``gas_temperature_max_c``, ``energy_per_cycle_kj``,
        ``load_events_per_hour``, ``relief_volume_l``, ``cycles_to_steady``, ``reason``.
        """
        from stowflow.report.content import verification_rows

        return _rows_frame(verification_rows(self.study))

    @cached_property
    def traces(self) -> pd.DataFrame:
        """The verification's runs over one steady-state cycle, one block per run.

        Columns as ``simulation.csv`` of ``stowflow simulate`` (see
        :func:`stowflow.report.exports.traces_frame`); empty when not verified.
        """
        import pandas as pd
        from stowflow.report.exports import traces_frame

        v = self.study.verification
        return pd.DataFrame() if v is None else traces_frame(v, self.study.settings.p_ambient)

    def write(self, folder: str | Path) -> dict[str, Path]:
        """Write the files ``stowflow design`` writes into ``folder`` (created if missing).

        Parameters
        ----------
        folder : str or pathlib.Path
            Output folder.

        Returns
        -------
        dict of str to pathlib.Path
            ``report.html``, ``design.json``, ``schedule.csv`` and ``spec.csv`` → their paths.
        """
        from stowflow.report import write_study

        return write_study(self.study, folder)


def design(
    cycle: DutyCycle | str | Path | pd.DataFrame,
    catalogue: Catalogue | str | Path | None = None,
    *,
    min_pressure: str | float | None = None,
    step: str | float | None = None,
    name: str | None = None,
    verify: bool = True,
    progress: Callable[[float, str], None] | None = None,
    **settings: Any,
) -> DesignResult:
    """Design, verify and cost the supply for a duty cycle: the job of ``stowflow design``.

    Runs :func:`stowflow.pipeline.run`: the least installed motor power (then the least
    capital cost, then the least energy), verified in the time domain at the coldest and the
    hottest temperature (raising the requirement and designing again where the pressure
    falls short), then costed against the pump-only supplies.

    Parameters
    ----------
    cycle : DutyCycle, str, pathlib.Path or pandas.DataFrame
        The duty cycle, or what :func:`read_cycle` reads it from.
    catalogue : Catalogue, str or pathlib.Path, optional
        Components, or their TOML file; None for the bundled demo catalogue.
    min_pressure : str or float, optional
        Minimum working pressure, **gauge** (``"150bar"`` or [Pa]), when reading the cycle.
    step : str or float, optional
        Time step of the cycle grid (``"50ms"`` or [s]), when reading the cycle.
    name : str, optional
        Study name (default: the cycle's name).
    verify : bool
        Run the time-domain verification (default True; without it the design is not
        proven).
    progress : callable, optional
        ``progress(fraction, label)``, called as the stages advance.
    **settings
        Design and cost settings as :func:`settings` takes them: the options of ``stowflow
        design`` with ``_`` for ``-``, as text with units (``temperature="10..50"``,
        ``line_loss="5bar"``, ``flow_margin="10%"``, ``energy_price="0.25/kWh"``) or numbers
        in SI.

    Returns
    -------
    DesignResult
        ``.summary`` (Series), ``.schedule``, ``.costs``, ``.verification``, ``.traces``
        (DataFrames), ``.to_dict()`` (design.json), ``.write(folder)``; ``.study`` holds
        the SI objects.  An infeasible study is a result with status ``infeasible`` and a
        reason, not an error.

    Raises
    ------
    SettingsError
        An unknown keyword (the message lists close matches) or a setting out of range.
    CycleError, CatalogueError, UnitsError
        Bad input files or units.

    Examples
    --------
    >>> import stowflow
    >>> r = stowflow.design("duty_cycles/forming_press.csv", temperature="10..50")
    >>> r.summary[["status", "accumulator_count", "motor_rated_kw"]].tolist()
    ['optimal', 5, 22.0]
    >>> float(r.costs.loc["fixed", "installed_power_kw"])
    132.0
    """
    from stowflow.cycle.duty import DutyCycle
    from stowflow.pipeline import Study, run

    made = _build_settings(settings)
    if not isinstance(cycle, DutyCycle):
        cycle = read_cycle(cycle, min_pressure=min_pressure, step=step)
    elif min_pressure is not None or step is not None:
        raise SettingsError(
            "min_pressure and step apply when the cycle is read; give them to read_cycle()"
        )
    study = Study(
        cycle=cycle,
        catalogue=catalogue,
        settings=made.design,
        costs=made.costs,
        name=name,
        verify=verify,
    )
    return DesignResult(run(study, progress=progress))


# -- studies on Dask (the bodies live in stowflow.studies) -----------------------------------


def batch(
    cycles: str | Path,
    out: str | Path,
    catalogue: Catalogue | str | Path | None = None,
    *,
    overrides: str | Path | pd.DataFrame | None = None,
    min_pressure: str | float | None = None,
    step: str | float | None = None,
    verify: bool = True,
    scheduler: str | None = None,
    workers: int | None = None,
    force: bool = False,
    **settings: Any,
) -> pd.DataFrame:
    """Design every cycle of a folder or glob on Dask, as ``stowflow batch`` does.

    Parameters
    ----------
    cycles : str or pathlib.Path
        A folder of cycle CSVs, one CSV or a glob.
    out : str or pathlib.Path
        Output folder: one folder per cycle, ``summary.csv`` and ``fleet.html``.
    catalogue : Catalogue, str or pathlib.Path, optional
        Shared catalogue (default: the bundled demo catalogue).
    overrides : str, pathlib.Path or pandas.DataFrame, optional
        Per-cycle options: a ``cycle`` column (the file's stem) and option columns, values
        as text with units.
    min_pressure, step : str or float, optional
        As in :func:`read_cycle` (gauge [Pa]; [s]), shared by every cycle.
    verify : bool
        Run the time-domain verification (default True).
    scheduler : str, optional
        A running Dask scheduler, ``tcp://HOST:PORT`` (default: a local cluster).
    workers : int, optional
        Worker processes of the local cluster, [-].
    force : bool
        Design every cycle again, even one whose inputs are unchanged.
    **settings
        Shared design and cost settings, as :func:`settings` takes them.

    Returns
    -------
    pandas.DataFrame
        ``summary.csv`` as written (:data:`stowflow.studies.batch.COLUMNS`).
    """
    from stowflow.studies.batch import run_batch

    made = _build_settings(settings)
    return run_batch(
        cycles,
        out,
        catalogue=catalogue,
        design=made.design,
        costs=made.costs,
        overrides=overrides,
        min_pressure=_quantity(min_pressure, "pressure", "min_pressure"),
        step=_quantity(step, "time", "step"),
        verify=verify,
        scheduler=scheduler,
        workers=workers,
        force=force,
    )


def explore(
    cycle: DutyCycle | str | Path | pd.DataFrame,
    catalogue: Catalogue | str | Path | None = None,
    *,
    out: str | Path | None = None,
    samples: int = 0,
    seed: int = 0,
    min_pressure: str | float | None = None,
    step: str | float | None = None,
    scheduler: str | None = None,
    workers: int | None = None,
    **settings: Any,
):
    """Trade-off front and sensitivity of a cycle's design on Dask, as ``stowflow explore``.

    Parameters
    ----------
    cycle : DutyCycle, str, pathlib.Path or pandas.DataFrame
        The duty cycle, or what :func:`read_cycle` reads it from.
    catalogue : Catalogue, str or pathlib.Path, optional
        Components (default: the bundled demo catalogue).
    out : str or pathlib.Path, optional
        When given, the folder the files of ``stowflow explore`` are written to.
    samples : int
        Monte Carlo samples, [-] (0: none).
    seed : int
        Seed of the Monte Carlo draws.
    min_pressure, step : str or float, optional
        As in :func:`read_cycle` (gauge [Pa]; [s]).
    scheduler : str, optional
        A running Dask scheduler, ``tcp://HOST:PORT`` (default: a local cluster).
    workers : int, optional
        Worker processes of the local cluster, [-].
    **settings
        Design and cost settings, as :func:`settings` takes them.

    Returns
    -------
    stowflow.studies.explore.Exploration
        ``.front``, ``.sensitivity``, ``.monte_carlo`` (the CSV files' frames),
        ``.candidates`` (every candidate of the screen) and ``.study`` (the design).
    """
    from stowflow.cycle.duty import DutyCycle
    from stowflow.studies.explore import explore_cycle, write_exploration

    made = _build_settings(settings)
    if not isinstance(cycle, DutyCycle):
        cycle = read_cycle(cycle, min_pressure=min_pressure, step=step)
    cat = catalogue if not isinstance(catalogue, str | Path | None) else load_catalogue(catalogue)
    if samples < 0:
        raise SettingsError(f"samples: {samples}; expected a whole number ≥ 0")
    ex = explore_cycle(
        cycle,
        cat,
        made.design,
        made.costs,
        samples=samples,
        seed=seed,
        scheduler=scheduler,
        workers=workers,
    )
    if out is not None:
        write_exploration(ex, out)
    return ex


# -- simulate --------------------------------------------------------------------------------


class SimulationResult:
    """The time-domain verification of one design, as tables.

    Attributes
    ----------
    raw : Verification
        The verdict in SI (:class:`stowflow.simulation.verify.Verification`).
    design : Design
        The design simulated.
    settings : DesignSettings
        Temperatures, gas model, time constant and the other settings used.
    notes : tuple of str
        What the reader of a design file and the simulation want known.
    """

    def __init__(
        self, raw: Verification, design: Design, settings: DesignSettings, notes: Iterable[str]
    ) -> None:
        self.raw, self.design, self.settings = raw, design, settings
        self.notes = tuple(notes)

    def __repr__(self) -> str:
        v = self.raw
        verdict = "passed" if v.passed else "failed"
        return f"<SimulationResult: {verdict} ({v.controller}), {len(v.runs)} runs>"

    @property
    def passed(self) -> bool:
        """True when the recommended controller passes at both temperature ends."""
        return bool(self.raw.passed)

    @cached_property
    def summary(self) -> pd.Series:
        """The verdict in one column: ``passed``, ``controller`` (recommended), ``reason``,
        ``min_margin_bar``, the switch settings (``load_below_bar``, ``unload_above_bar``
        gauge; ``load_below_stroke``, ``unload_above_stroke`` [-] for a piston),
        ``temperature_min_c``, ``temperature_max_c``, ``time_constant_s``, ``gas_model``.
        """
        import pandas as pd
        from stowflow.units import abs_to_gauge, kelvin_to_celsius, to_unit

        v, s = self.raw, self.settings
        out: dict[str, Any] = {
            "passed": bool(v.passed),
            "controller": v.controller,
            "reason": v.reason,
            "min_margin_bar": float(to_unit(v.min_margin, "bar", "pressure")),
        }
        for key in ("load_below", "unload_above"):
            p = v.setpoints.get(key)
            gauge = None if p is None else abs_to_gauge(p, s.p_ambient)
            out[f"{key}_bar"] = None if p is None else float(to_unit(gauge, "bar", "pressure"))
        for key in ("load_below_stroke", "unload_above_stroke"):
            if key in v.setpoints:
                out[key] = float(v.setpoints[key])
        out |= {
            "temperature_min_c": float(kelvin_to_celsius(s.t_min)),
            "temperature_max_c": float(kelvin_to_celsius(s.t_max)),
            "time_constant_s": float(v.time_constant),
            "gas_model": v.gas_model,
        }
        return pd.Series(out, dtype=object)

    @cached_property
    def verification(self) -> pd.DataFrame:
        """One row per controller × temperature, as :attr:`DesignResult.verification`."""
        from stowflow.report.content import verification_rows

        return _rows_frame(verification_rows(_Verified(self.raw, self.settings)))

    @cached_property
    def traces(self) -> pd.DataFrame:
        """Every run over one steady-state cycle, the columns of ``simulation.csv``."""
        from stowflow.report.exports import traces_frame

        return traces_frame(self.raw, self.settings.p_ambient)


def simulate(
    design: DesignResult | str | Path,
    cycle: DutyCycle | str | Path | pd.DataFrame | None = None,
    *,
    catalogue: Catalogue | str | Path | None = None,
    controllers: Iterable[str] | None = None,
    schedule: str | Path | None = None,
    min_pressure: str | float | None = None,
    step: str | float | None = None,
    progress: Callable[[float, str], None] | None = None,
    **settings: Any,
) -> SimulationResult:
    """Verify a design in the time domain, as ``stowflow simulate`` does.

    Each controller runs cycle after cycle to the periodic steady state at the coldest and
    the hottest temperature, with real-gas nitrogen, heat exchange through the thermal time
    constant, discharge limits and the relief valve
    (:func:`stowflow.simulation.verify.verify`).

    Parameters
    ----------
    design : DesignResult, str or pathlib.Path
        A result of :func:`design` (its settings and switch settings are the starting
        point), or a ``design.json`` (schema ``stowflow.design/1``, possibly edited by hand;
        read by :func:`stowflow.io.designfile.load_design`, its setpoints are checked).
    cycle : DutyCycle, str, pathlib.Path or pandas.DataFrame, optional
        The duty cycle (see :func:`read_cycle`); default: the cycle the result was designed
        for.  Required with a design file.
    catalogue : Catalogue, str or pathlib.Path, optional
        Where a design file's components are looked up (default: the bundled catalogue).
    controllers : iterable of str, optional
        Some of ``"schedule"``, ``"pressure-switch"``, ``"position-switch"`` (default: every
        one that applies).
    schedule : str or pathlib.Path, optional
        ``schedule.csv`` for the schedule controller of a design file (default: the one
        beside it).
    min_pressure, step : str or float, optional
        As in :func:`read_cycle` (gauge [Pa]; [s]), when the cycle is read here.
    progress : callable, optional
        ``progress(fraction, label)``.
    **settings
        Design settings that change the simulation, as :func:`settings` takes them (e.g.
        ``temperature="0..60"``, ``time_constant="2s"``, ``gas="ideal"``); cost settings do
        not apply.

    Returns
    -------
    SimulationResult
        ``.passed``, ``.summary`` (Series), ``.verification`` (one row per run) and
        ``.traces`` (DataFrames); ``.raw`` holds the SI verdict.

    Raises
    ------
    SettingsError
        An infeasible design, an unknown keyword or controller, or a setting out of range.
    DesignFileError
        The design file is missing or not usable.

    Examples
    --------
    >>> import stowflow
    >>> r = stowflow.design("duty_cycles/forming_press.csv")
    >>> sim = stowflow.simulate(r, temperature="0..60", controllers=["pressure-switch"])
    >>> sim.verification[["temperature_c", "pump_flow"]].values.tolist()
    [[0.0, 'catalogue'], [60.0, 'catalogue'], [0.0, 'worn'], [60.0, 'worn']]
    """
    from stowflow.catalogue import Catalogue
    from stowflow.cycle.duty import DutyCycle
    from stowflow.io.designfile import load_design, read_setpoints
    from stowflow.simulation.verify import CONTROLLERS, verify

    notes: list[str] = []
    if isinstance(design, DesignResult):
        study = design.study
        d, base = study.design, study.settings
        if not d.feasible:
            raise SettingsError(
                f"design is {d.status} ({d.reason}); only a feasible design can be simulated"
            )
        if cycle is None:
            cycle = study.cycle
        v = study.verification
        given = dict(v.setpoints) if v is not None and v.setpoints else None
    elif isinstance(design, str | Path):
        if cycle is None:
            raise SettingsError(f"{design}: give the duty cycle the design is for")
        path = Path(design)
        cat = catalogue if isinstance(catalogue, Catalogue) else load_catalogue(catalogue)
        if not isinstance(cycle, DutyCycle):
            cycle = read_cycle(cycle, min_pressure=min_pressure, step=step)
        from stowflow.search.settings import DesignSettings

        sched = Path(schedule) if schedule else path.with_name("schedule.csv")
        d, base, notes = load_design(
            path, cat, DesignSettings(), sched, cycle, schedule_required=bool(schedule)
        )
        given = read_setpoints(path, base.p_ambient) or None
    else:
        raise SettingsError(
            f"simulate: {type(design).__name__} is neither a design() result nor a design.json"
        )
    if not isinstance(cycle, DutyCycle):
        cycle = read_cycle(cycle, min_pressure=min_pressure, step=step)
    made = _build_settings(settings, base=base, costs=False)
    chosen = tuple(dict.fromkeys(controllers or CONTROLLERS))
    v = verify(d, cycle, made.design, controllers=chosen, setpoints=given, progress=progress)
    return SimulationResult(v, d, made.design, [*notes, *v.notes])


# -- size ------------------------------------------------------------------------------------


def size(
    volume: str | float,
    min_pressure: str | float,
    max_pressure: str | float,
    *,
    precharge: str | float | None = None,
    temperature: str | float | tuple[float, float] = "20",
    process: str = "adiabatic",
    gas: str = "real",
    absolute: bool = False,
    max_allowable_pressure: str | float | None = None,
    types: Iterable[str] | None = None,
    charge: str = "slow",
) -> pd.Series:
    """Size an accumulator for one oil volume and pressure window, as ``stowflow size`` does.

    The gas volume that exchanges the oil volume between the two working pressures at the
    worst temperature of the range, with the precharge at 20 °C and the types that meet
    their limits (:func:`stowflow.duties.sizing.size_accumulator`).

    Parameters
    ----------
    volume : str or float
        Oil volume to exchange: ``"5L"`` or [m³].
    min_pressure, max_pressure : str or float
        Working pressures p1 < p2: ``"100bar"`` or [Pa]; **gauge** unless ``absolute``.
    precharge : str or float, optional
        Nitrogen precharge at 20 °C (gauge unless ``absolute``); default: each type's rule at
        the hottest temperature.
    temperature : str, float or tuple of float
        Operating temperatures: ``"10..50"`` or ``"20"`` in °C, or one or two values in [K].
    process : str
        The process of the discharge: ``"adiabatic"`` (default, a fast discharge of a gas at
        rest), ``"isothermal"`` or ``"polytropic:N"``.
    gas : str
        Nitrogen model, ``"real"`` (Span et al. 2000 EOS) or ``"ideal"``.
    absolute : bool
        The pressures given are absolute.
    max_allowable_pressure : str or float, optional
        The vessel's PS, always **gauge** (as on the nameplate): checked, and used for the
        pressure-equipment category hint.
    types : iterable of str, optional
        Accumulator types to consider (default: all).
    charge : str
        ``"slow"`` (default: the pump charges the gas to the maximum pressure at rest at the
        oil temperature, isothermal, the usual duty and the one :func:`design` models) or
        ``"fast"`` (the charge follows ``process`` from the precharge like the discharge).

    Returns
    -------
    pandas.Series
        ``required_gas_volume_l`` (worst case, governing type), ``governing_type``,
        ``precharge_bar`` (gauge at 20 °C), ``precharge_by_rule``, ``worst_temperature_c``,
        ``shell_volume_l``, ``oil_volume_l``, ``min_pressure_bar``, ``max_pressure_bar``
        (gauge), ``temperature_min_c``, ``temperature_max_c``, ``gas_model``, ``process``,
        ``polytropic_index``, ``charge``, ``admissible_types`` (comma-separated), and with PS
        ``pressure_equipment_category``.

    Raises
    ------
    SizingError
        An impossible duty (precharge at or above p1, p2 not above p1, no admissible type).
    UnitsError, SettingsError
        A quantity without a valid unit, a bad temperature range.

    Examples
    --------
    >>> import stowflow
    >>> s = stowflow.size("5L", "100bar", "200bar", temperature="10..50")
    >>> s["governing_type"], round(s["required_gas_volume_l"], 1), s["admissible_types"]
    ('piston', 25.9, 'bladder, diaphragm, piston, piston-bottles')
    >>> si = stowflow.size(5e-3, 100e5, 200e5, temperature=(283.15, 323.15))  # m³, Pa, K
    >>> round(si["required_gas_volume_l"], 1)
    25.9
    """
    from stowflow.duties.sizing import size_accumulator
    from stowflow.io.quantities import parse_temperature_range
    from stowflow.units import gauge_to_abs

    if isinstance(temperature, str):
        t_min, t_max = parse_temperature_range(temperature, "temperature")
    else:
        t_min, t_max = _kelvin_pair(temperature)
    ps = _quantity(max_allowable_pressure, "pressure", "max_allowable_pressure")
    p_min = _quantity(min_pressure, "pressure", "min_pressure")
    p_max = _quantity(max_pressure, "pressure", "max_pressure")
    p0 = _quantity(precharge, "pressure", "precharge")
    if not absolute:
        p_min, p_max = gauge_to_abs(p_min), gauge_to_abs(p_max)
        p0 = None if p0 is None else gauge_to_abs(p0)
    result = size_accumulator(
        _quantity(volume, "volume", "volume"),
        p_min,
        p_max,
        precharge=p0,
        process=process,
        model=gas,
        T_min=t_min,
        T_max=t_max,
        types=list(types) if types is not None else None,
        max_allowable_pressure=None if ps is None else gauge_to_abs(ps),
        charge=charge,
    )
    return _sizing_series(result)


def _sizing_series(result) -> pd.Series:
    """A :class:`SizingResult` as the Series :func:`size` returns (trade units)."""
    import pandas as pd

    d = result.as_dict()
    out = {
        "required_gas_volume_l": d["required_gas_volume_l"],
        "governing_type": d["governing_type"],
        "precharge_bar": d["precharge_bar_at_20c"],
        "precharge_by_rule": d["precharge_by_rule"],
        "worst_temperature_c": d["worst_temperature_c"],
        "shell_volume_l": d["types"][d["governing_type"]]["shell_volume_l"],
        "oil_volume_l": d["oil_volume_l"],
        "min_pressure_bar": d["min_pressure_bar"],
        "max_pressure_bar": d["max_pressure_bar"],
        "temperature_min_c": d["temperature_c"]["min"],
        "temperature_max_c": d["temperature_c"]["max"],
        "gas_model": d["gas_model"],
        "process": d["process"],
        "polytropic_index": d["polytropic_index"],
        "charge": d["charge"],
        "admissible_types": ", ".join(d["admissible_types"]),
    }
    if d["pressure_equipment"] is not None:
        out["pressure_equipment_category"] = d["pressure_equipment"]["category"]
    return pd.Series(out, dtype=object)
