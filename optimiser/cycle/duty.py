"""Duty cycles: read a machine's repeating demand from CSV onto a uniform time grid.

A duty cycle is the flow a machine draws from the pressure line, and the pressure it needs,
over one repeating cycle.  Two CSV forms are read (units in brackets in the header, pressures
**gauge**):

* a *phase table* ``duration [s], flow [L/min], pressure [bar], label`` - one row per phase
  of constant demand;
* a *sample table* ``time [s], flow [L/min], pressure [bar], label`` - logged samples,
  interpolated linearly; the cycle runs from the first time stamp to the last.

The result is a :class:`DutyCycle`: ``N`` uniform steps of ``dt`` seconds, SI inside
(m³/s, Pa absolute), periodic.  Per step the demand is the **mean** over the step (the
volume per cycle is kept exactly) and the required pressure is the **maximum** within the
step (conservative).  :func:`summarize` gives the numbers a designer looks at first.

Examples
--------
>>> from stowflow.cycle.duty import parse_cycle_text, summarize
>>> c = parse_cycle_text("duration [s], flow [L/min], pressure [bar]\\n2, 120, 200\\n8, 0, 50")
>>> c.n_steps, c.dt
(5, 2.0)
>>> round(summarize(c).as_dict()["mean_flow_lpm"], 6)
24.0
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd
from stowflow.cycle._grid import exact_signal, peak_product, to_steps
from stowflow.cycle.csvtable import RawTable, check_option, check_steps, decode_bytes, read_table
from stowflow.errors import CycleError
from stowflow.units import P_AMBIENT, abs_to_gauge, gauge_to_abs, to_unit

__all__ = [
    "DEFAULT_MAX_STEPS",
    "FORMS",
    "GRIDS",
    "STEP_MAX_STEPS",
    "CycleSummary",
    "DutyCycle",
    "cycle_from_arrays",
    "load_cycle",
    "parse_cycle_bytes",
    "parse_cycle_text",
    "summarize",
]

#: Largest number of time steps the automatic grid produces, [-].
DEFAULT_MAX_STEPS: int = 20_000
#: Largest number of time steps the command line accepts for a step the user gave without a
#: limit of their own (``--step`` without ``--max-steps``): a 1-hour cycle at 0.1 s is 36,000;
#: a typo such as ``--step 1ms`` on it (3.6 million) is still refused, [-].
STEP_MAX_STEPS: int = 100_000

#: The two CSV forms.
FORMS: tuple[str, ...] = ("phases", "samples")

#: How the steps relate to the input (see :attr:`DutyCycle.grid`).
GRIDS: tuple[str, ...] = ("exact", "averaged", "interpolated")


@dataclass(frozen=True, eq=False)
class DutyCycle:
    """One repeating machine cycle on a uniform time grid (SI inside, periodic).

    Construct it with :func:`load_cycle`, :func:`parse_cycle_text`, :func:`parse_cycle_bytes`
    or :func:`cycle_from_arrays`; the constructor validates the arrays again and stores
    read-only copies.

    Attributes
    ----------
    name : str
        Cycle name (the file stem unless given).
    source : str
        File path, ``"<memory>"`` or ``"<upload>"``.
    form : str
        ``"phases"`` or ``"samples"``: the CSV form it was read from.
    dt : float
        Step length, [s].
    flow : numpy.ndarray
        Demand per step, the mean over the step, shape (N,), [m³/s].
    pressure : numpy.ndarray or None
        Required pressure per step, the maximum within the step, **absolute**, shape (N,),
        [Pa]; None when neither a pressure column nor ``min_pressure`` was given.
    labels : tuple of str
        Label per step ("" where none): the label of the phase or sample segment holding the
        step's midpoint.
    table : pandas.DataFrame
        The input rows as read, in SI with units in the column names (``line``,
        ``start [s]``/``duration [s]`` or ``time [s]``, ``flow [m³/s]``, ``pressure [Pa]``
        absolute without ``min_pressure``, ``label``).  :func:`summarize` takes exact peaks
        and integrals from it, so it must describe the same cycle as the steps.  None builds
        it from the steps (each step a phase).
    p_ambient : float
        Ambient pressure used for gauge → absolute, [Pa].
    notes : tuple of str
        What the reader did that the user should know (averaged peaks, options applied).
    grid : str
        ``"exact"``: every step lies inside one phase, so the steps reproduce the phases;
        ``"averaged"``: some steps span a phase boundary (mean flow, maximum pressure);
        ``"interpolated"``: a sample table, interpolated linearly.
    min_pressure : float or None
        The ``min_pressure`` option applied to the required pressure, gauge, [Pa].
    """

    name: str
    source: str
    form: str
    dt: float
    flow: np.ndarray
    pressure: np.ndarray | None
    labels: tuple[str, ...]
    table: pd.DataFrame | None = field(default=None, repr=False)
    p_ambient: float = P_AMBIENT
    notes: tuple[str, ...] = ()
    grid: str = "exact"
    min_pressure: float | None = None

    def __post_init__(self) -> None:
        where = f"{self.source} (cycle '{self.name}')"
        if self.form not in FORMS:
            raise CycleError(f"{where}: form '{self.form}'; expected one of {', '.join(FORMS)}")
        if self.grid not in GRIDS:
            raise CycleError(f"{where}: grid '{self.grid}'; expected one of {', '.join(GRIDS)}")
        check_option(where, "dt", self.dt, "step")
        if not (np.isfinite(self.p_ambient) and self.p_ambient > 0):
            raise CycleError(f"{where}: p_ambient {self.p_ambient!r} Pa; expected a value > 0")
        flow = _as_floats(where, "flow", self.flow)
        if flow.ndim != 1 or flow.size < 1:
            raise CycleError(f"{where}: flow has shape {flow.shape}; expected (N,) with N >= 1")
        check_steps(where, "flow", flow, 0.0, "flow")
        if not np.any(flow > 0):
            raise CycleError(f"{where}: every flow is 0; expected some demand > 0 in the cycle")
        pressure = None
        if self.pressure is not None:
            pressure = _as_floats(where, "pressure", self.pressure)
            if pressure.shape != flow.shape:
                raise CycleError(
                    f"{where}: pressure has shape {pressure.shape}; expected {flow.shape} like flow"
                )
            check_steps(where, "pressure", abs_to_gauge(pressure, self.p_ambient), 0.0, "pressure")
        labels = tuple(str(x) for x in self.labels)
        if len(labels) != flow.size:
            raise CycleError(f"{where}: {len(labels)} labels; expected one per step ({flow.size})")
        if self.min_pressure is not None:
            check_option(where, "min_pressure", self.min_pressure, "pressure", allow_zero=True)
        for array in (flow, pressure):
            if array is not None:
                array.setflags(write=False)
        if self.table is None:
            object.__setattr__(self, "table", _steps_table(float(self.dt), flow, pressure, labels))
        object.__setattr__(self, "dt", float(self.dt))
        object.__setattr__(self, "flow", flow)
        object.__setattr__(self, "pressure", pressure)
        object.__setattr__(self, "labels", labels)
        object.__setattr__(self, "notes", tuple(str(x) for x in self.notes))

    @property
    def n_steps(self) -> int:
        """Number of time steps N, [-]."""
        return int(self.flow.size)

    @property
    def duration(self) -> float:
        """Cycle length N·dt, [s]."""
        return self.n_steps * self.dt

    @property
    def time(self) -> np.ndarray:
        """Start time of each step, from 0, [s]."""
        return np.arange(self.n_steps) * self.dt

    @property
    def volume_per_cycle(self) -> float:
        """Oil volume drawn per cycle, Σ flow·dt, [m³]."""
        return float(np.sum(self.flow) * self.dt)

    def to_frame(self) -> pd.DataFrame:
        """The steps as a table in the trade's units.

        Returns
        -------
        pandas.DataFrame
            Indexed by ``time [s]`` (step start); columns ``flow [L/min]`` (the demand, the
            mean over the step), ``required_pressure [bar]`` (gauge, the maximum within the
            step, ``min_pressure`` applied; NaN without pressure) and ``label``.

        Examples
        --------
        >>> text = "duration [s], flow [L/min], pressure [bar]\\n2, 120, 200\\n8, 0, 50"
        >>> f = parse_cycle_text(text).to_frame()
        >>> f.index.name, list(f.columns)
        ('time [s]', ['flow [L/min]', 'required_pressure [bar]', 'label'])
        >>> f.iloc[:2].to_dict("list")
        {'flow [L/min]': [120.0, 0.0], 'required_pressure [bar]': [200.0, 50.0], 'label': ['', '']}
        """
        if self.pressure is None:
            required = np.full(self.n_steps, np.nan)
        else:
            required = to_unit(abs_to_gauge(self.pressure, self.p_ambient), "bar", "pressure")
        return pd.DataFrame(
            {
                "flow [L/min]": to_unit(self.flow, "L/min", "flow"),
                "required_pressure [bar]": required,
                "label": list(self.labels),
            },
            index=pd.Index(self.time, name="time [s]"),
        )


def load_cycle(
    path: str | Path,
    *,
    step: float | None = None,
    min_pressure: float | None = None,
    name: str | None = None,
    p_ambient: float = P_AMBIENT,
    max_steps: int = DEFAULT_MAX_STEPS,
) -> DutyCycle:
    """Read a duty-cycle CSV file (phase or sample table).

    Parameters
    ----------
    path : str or pathlib.Path
        The CSV file.
    step : float, optional
        Step length instead of the automatic one; it must divide the cycle duration, [s].
    min_pressure : float, optional
        Minimum working pressure, **gauge**, [Pa].  Without a pressure column it becomes the
        required pressure of every step; with one, each step requires the larger of the two
        (the cycle's notes say so).
    name : str, optional
        Cycle name; the file stem by default.
    p_ambient : float
        Ambient pressure for gauge → absolute, [Pa].
    max_steps : int
        Largest number of steps the grid may have, [-].

    Returns
    -------
    DutyCycle
        The cycle on a uniform grid.

    Raises
    ------
    CycleError
        The file is missing or unreadable, or its content is not a valid cycle (the message
        names the file, line, column, what was found and what is expected).
    """
    path = Path(path)
    if not path.exists():
        raise CycleError(f"{path}: file not found; expected a duty-cycle CSV file")
    if path.is_dir():
        raise CycleError(f"{path}: is a folder; expected a duty-cycle CSV file")
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise CycleError(
            f"{path}: cannot read the file ({exc.strerror}); expected a readable CSV"
        ) from None
    return parse_cycle_bytes(
        data,
        source=str(path),
        name=name or path.stem,
        step=step,
        min_pressure=min_pressure,
        p_ambient=p_ambient,
        max_steps=max_steps,
    )


def parse_cycle_bytes(
    data: bytes,
    *,
    source: str = "<upload>",
    name: str | None = None,
    step: float | None = None,
    min_pressure: float | None = None,
    p_ambient: float = P_AMBIENT,
    max_rows: int | None = None,
    max_steps: int = DEFAULT_MAX_STEPS,
) -> DutyCycle:
    """Read a duty cycle from raw bytes (e.g. a web upload), refusing binary or non-UTF-8 data.

    Parameters
    ----------
    data : bytes
        File content, UTF-8 (a byte-order mark is allowed).
    source : str
        Name used in messages, e.g. the uploaded file name.
    max_rows : int, optional
        Refuse files with more data rows than this, [-].
    name, step, min_pressure, p_ambient, max_steps
        As in :func:`load_cycle` ([s], gauge [Pa], [Pa], [-]).

    Returns
    -------
    DutyCycle
        The cycle on a uniform grid.
    """
    text = decode_bytes(bytes(data), source)
    return _from_raw(
        read_table(text, source, max_rows=max_rows),
        name=name,
        step=step,
        min_pressure=min_pressure,
        p_ambient=p_ambient,
        max_steps=max_steps,
    )


def parse_cycle_text(
    text: str,
    *,
    source: str = "<memory>",
    name: str | None = None,
    step: float | None = None,
    min_pressure: float | None = None,
    p_ambient: float = P_AMBIENT,
    max_rows: int | None = None,
    max_steps: int = DEFAULT_MAX_STEPS,
) -> DutyCycle:
    """Read a duty cycle from CSV text.

    Parameters
    ----------
    text : str
        CSV text as described in the module docstring.
    source, name, step, min_pressure, p_ambient, max_rows, max_steps
        As in :func:`parse_cycle_bytes` ([s], gauge [Pa], [Pa], [-]).

    Returns
    -------
    DutyCycle
        The cycle on a uniform grid.
    """
    return parse_cycle_bytes(
        str(text).encode("utf-8", errors="surrogatepass"),
        source=source,
        name=name,
        step=step,
        min_pressure=min_pressure,
        p_ambient=p_ambient,
        max_rows=max_rows,
        max_steps=max_steps,
    )


def cycle_from_arrays(
    dt: float,
    flow,
    pressure=None,
    *,
    name: str = "array",
    labels=None,
    p_ambient: float = P_AMBIENT,
    source: str = "<memory>",
) -> DutyCycle:
    """Build a duty cycle directly from per-step arrays (tests and the Python API).

    Parameters
    ----------
    dt : float
        Step length, [s].
    flow : array_like
        Demand per step, ≥ 0, [m³/s].
    pressure : array_like, optional
        Required pressure per step, **absolute**, [Pa].
    name : str
        Cycle name.
    labels : sequence of str, optional
        Label per step.
    p_ambient : float
        Ambient pressure, [Pa].
    source : str
        Name used in messages.

    Returns
    -------
    DutyCycle
        A cycle of form ``"phases"`` whose phases are the steps.
    """
    labels = ("",) * int(np.size(flow)) if labels is None else tuple(labels)
    return DutyCycle(name, source, "phases", dt, flow, pressure, labels, None, p_ambient)


@dataclass(frozen=True)
class CycleSummary:
    """The numbers a designer looks at first (SI; pressures absolute).

    Peaks, means and integrals are taken from the exact input signal (phases, or linear
    interpolation between samples), not from the averaged steps; ``peak_step_flow`` is the
    largest step value for comparison.  Hydraulic power is flow × **gauge** pressure.

    Attributes
    ----------
    name, source, form : str
        As in :class:`DutyCycle`.
    duration : float
        Cycle length, [s].
    steps : int
        Number of time steps, [-].
    step : float
        Step length, [s].
    peak_flow : float
        True peak demand of the input, [m³/s].
    peak_step_flow : float
        Largest per-step (averaged) demand, [m³/s].
    mean_flow, rms_flow : float
        Mean and root-mean-square demand over the cycle, [m³/s].
    volume_per_cycle : float
        Oil drawn per cycle, [m³].
    peak_required_pressure, min_required_pressure : float or None
        Highest and lowest required pressure, absolute, [Pa].
    peak_hydraulic_power, mean_hydraulic_power : float or None
        Peak and mean of flow × gauge required pressure, [W].
    pump_only_flow : float
        Flow a pump-only supply must deliver (the peak demand), [m³/s].
    pump_only_hydraulic_power : float or None
        Peak flow × highest gauge required pressure: what a fixed pump-only supply delivers
        when it is sized for the worst moment, [W].
    mean_to_peak_ratio : float
        Mean over peak demand, [-]; small values mean an accumulator pays off.
    grid : str
        ``exact``, ``averaged`` or ``interpolated`` (see :attr:`DutyCycle.grid`).
    p_ambient : float
        Ambient pressure, [Pa].
    notes : tuple of str
        Reader notes and remarks on the numbers.
    """

    name: str
    source: str
    form: str
    duration: float
    steps: int
    step: float
    peak_flow: float
    peak_step_flow: float
    mean_flow: float
    rms_flow: float
    volume_per_cycle: float
    peak_required_pressure: float | None
    min_required_pressure: float | None
    peak_hydraulic_power: float | None
    mean_hydraulic_power: float | None
    pump_only_flow: float
    pump_only_hydraulic_power: float | None
    mean_to_peak_ratio: float
    grid: str
    p_ambient: float
    notes: tuple[str, ...]

    def as_dict(self) -> dict:
        """The summary in the trade's units, keys suffixed with their unit.

        Returns
        -------
        dict
            ``duration_s``, ``steps``, ``step_s``, ``peak_flow_lpm``, ``peak_step_flow_lpm``,
            ``mean_flow_lpm``, ``rms_flow_lpm``, ``volume_per_cycle_l``,
            ``peak_required_pressure_bar``, ``min_required_pressure_bar`` (gauge),
            ``peak_hydraulic_power_kw``, ``mean_hydraulic_power_kw``, ``pump_only_flow_lpm``,
            ``pump_only_hydraulic_power_kw``, ``mean_to_peak_ratio``, ``grid``, ``notes``
            plus ``name``, ``source``, ``form``.  Pressure-based values are None without a
            required pressure.
        """

        def lpm(q):
            return to_unit(q, "L/min", "flow")

        def bar(p):
            return (
                None if p is None else to_unit(abs_to_gauge(p, self.p_ambient), "bar", "pressure")
            )

        def kw(w):
            return None if w is None else to_unit(w, "kW", "power")

        return {
            "name": self.name,
            "source": self.source,
            "form": self.form,
            "duration_s": self.duration,
            "steps": self.steps,
            "step_s": self.step,
            "peak_flow_lpm": lpm(self.peak_flow),
            "peak_step_flow_lpm": lpm(self.peak_step_flow),
            "mean_flow_lpm": lpm(self.mean_flow),
            "rms_flow_lpm": lpm(self.rms_flow),
            "volume_per_cycle_l": to_unit(self.volume_per_cycle, "L", "volume"),
            "peak_required_pressure_bar": bar(self.peak_required_pressure),
            "min_required_pressure_bar": bar(self.min_required_pressure),
            "peak_hydraulic_power_kw": kw(self.peak_hydraulic_power),
            "mean_hydraulic_power_kw": kw(self.mean_hydraulic_power),
            "pump_only_flow_lpm": lpm(self.pump_only_flow),
            "pump_only_hydraulic_power_kw": kw(self.pump_only_hydraulic_power),
            "mean_to_peak_ratio": self.mean_to_peak_ratio,
            "grid": self.grid,
            "notes": list(self.notes),
        }


def summarize(cycle: DutyCycle) -> CycleSummary:
    """Summarise a duty cycle from its exact input signal.

    Parameters
    ----------
    cycle : DutyCycle
        The cycle.

    Returns
    -------
    CycleSummary
        Peak, mean and RMS demand [m³/s], volume [m³], pressures [Pa abs], powers [W].
    """
    notes = list(cycle.notes)
    seg = exact_signal(cycle, notes)
    volume = seg.volume()
    mean = volume / seg.duration
    peak = float(max(seg.q0.max(), seg.q1.max()))
    peak_step = float(cycle.flow.max())
    if peak_step < peak * (1 - 1e-9):
        notes.append(
            f"peak flow {to_unit(peak, 'L/min', 'flow'):.4g} L/min is the input's true peak; "
            f"the largest step value is {to_unit(peak_step, 'L/min', 'flow'):.4g} L/min "
            "(averaged over its step)"
        )
    p_max = p_min = power_peak = power_mean = power_pump_only = None
    if seg.p0 is None:
        notes.append(
            "no required pressure: the file has no pressure column; give a minimum working "
            "pressure (--min-pressure) for pressure and power figures"
        )
    else:
        p_max = float(max(seg.p0.max(), seg.p1.max()))
        p_min = float(min(seg.p0.min(), seg.p1.min()))
        power_peak = peak_product(seg)
        power_mean = seg.energy() / seg.duration
        power_pump_only = peak * p_max
        p_max, p_min = gauge_to_abs(p_max, cycle.p_ambient), gauge_to_abs(p_min, cycle.p_ambient)
    return CycleSummary(
        name=cycle.name,
        source=cycle.source,
        form=cycle.form,
        duration=cycle.duration,
        steps=cycle.n_steps,
        step=cycle.dt,
        peak_flow=peak,
        peak_step_flow=peak_step,
        mean_flow=mean,
        rms_flow=float(np.sqrt(seg.square_integral() / seg.duration)),
        volume_per_cycle=volume,
        peak_required_pressure=p_max,
        min_required_pressure=p_min,
        peak_hydraulic_power=power_peak,
        mean_hydraulic_power=power_mean,
        pump_only_flow=peak,
        pump_only_hydraulic_power=power_pump_only,
        mean_to_peak_ratio=mean / peak,
        grid=cycle.grid,
        p_ambient=cycle.p_ambient,
        notes=tuple(notes),
    )


# -- building ------------------------------------------------------------------------------


def _from_raw(raw: RawTable, *, name, step, min_pressure, p_ambient, max_steps) -> DutyCycle:
    if min_pressure is not None:
        check_option(raw.source, "min_pressure", min_pressure, "pressure", allow_zero=True)
    if step is not None:
        check_option(raw.source, "step", step, "step")
    if int(max_steps) < 1:
        raise CycleError(f"{raw.source}: max_steps {max_steps}; expected at least 1")
    steps = to_steps(raw, step, int(max_steps))
    notes = list(steps.notes)
    gauge = steps.pressure
    if min_pressure is not None:
        shown = f"{to_unit(min_pressure, 'bar', 'pressure'):.4g} bar"
        if gauge is None:
            gauge = np.full(steps.flow.size, float(min_pressure))
            notes.append(f"required pressure {shown} gauge in every step (min_pressure option)")
        else:
            below = int(np.count_nonzero(raw.pressure < min_pressure))
            gauge = np.maximum(gauge, min_pressure)
            notes.append(
                f"required pressure raised to at least {shown} gauge (min_pressure option) "
                f"in {below} of {raw.pressure.size} rows"
            )
    return DutyCycle(
        name=name or _default_name(raw.source),
        source=raw.source,
        form=raw.form,
        dt=steps.dt,
        flow=steps.flow,
        pressure=None if gauge is None else gauge_to_abs(gauge, p_ambient),
        labels=tuple(raw.labels[i] for i in steps.origin),
        table=raw.frame(p_ambient),
        p_ambient=p_ambient,
        notes=tuple(notes),
        grid=steps.grid,
        min_pressure=min_pressure,
    )


def _as_floats(where: str, what: str, values) -> np.ndarray:
    """A float array copy of ``values``, or a CycleError naming ``what``."""
    try:
        return np.array(values, dtype=float)
    except (TypeError, ValueError):
        raise CycleError(f"{where}: {what} is not numeric; expected an array of numbers") from None


def _steps_table(dt: float, flow, pressure, labels) -> pd.DataFrame:
    """Input table of a cycle given as steps: each step a phase (SI, pressure absolute)."""
    n = flow.size
    columns = {
        "line": np.arange(1, n + 1),
        "start [s]": np.arange(n) * dt,
        "duration [s]": np.full(n, dt),
        "flow [m³/s]": flow.copy(),
    }
    if pressure is not None:
        columns["pressure [Pa]"] = pressure.copy()
    columns["label"] = list(labels)
    return pd.DataFrame(columns)


def _default_name(source: str) -> str:
    if source.startswith("<"):
        return "cycle"
    return Path(source).stem or "cycle"
