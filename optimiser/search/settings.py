"""Design settings: every knob of the search, with units, defaults and their sources.

Defaults marked *common practice* are the usual values of the trade with no published source;
they are editable and the report lists them.  Internally SI: Pa, s, K.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field, replace

import numpy as np
from stowflow.catalogue import ACCUMULATOR_TYPES
from stowflow.errors import SettingsError
from stowflow.physics.valves import switch_band
from stowflow.search.objective import CATEGORIES, OBJECTIVES
from stowflow.units import BAR, P_AMBIENT, celsius_to_kelvin, kelvin_to_celsius

__all__ = ["ACCUMULATOR_TYPES", "DEFAULT_SETTINGS", "MOTOR_SIZING", "DesignSettings"]

#: How the motor is sized: at the relief setting (full flow over the relief valve) or at the
#: working (unload) pressure.
MOTOR_SIZING: tuple[str, ...] = ("relief", "working")


@dataclass(frozen=True)
class DesignSettings:
    """Settings of one design study.

    Attributes
    ----------
    t_min : float
        Coldest operating temperature of gas and oil, [K].  Default 10 °C (example).
    t_max : float
        Hottest operating temperature, [K].  Default 50 °C (example).
    gas_model : str
        ``"real"`` (nitrogen, Span et al. 2000 EOS via CoolProp tables) or ``"ideal"``.
    process : str
        ``"auto"`` (effective polytropic index from the cycle's time scale and the thermal time
        constant), ``"isothermal"``, ``"adiabatic"`` or ``"polytropic:<n>"``.
    time_constant : float
        Thermal time constant of the gas charge, [s].  Default 5 s: typical values are about
        1–10 s for litre-size gas volumes (Pourmovahed & Otis 1990, from memory).
    line_loss : float
        Pressure allowance between accumulator and consumer added to every required pressure,
        [Pa].  Default 5 bar (common practice, no published source).
    relief_margin : float
        Relief valve setting above the unload pressure, as a fraction of the unload gauge
        pressure, [-].  Default 0.10 (common practice, no published source).
    relief_margin_min : float
        Least relief margin in absolute terms, [Pa].  Default 5 bar (common practice).
    standby_pressure : float
        Gauge pressure at which an unloaded pump circulates oil to tank, [Pa].  Default 5 bar
        (common practice, no published source).
    min_loaded_dwell, min_unloaded_dwell : float
        Least time the pump stays loaded / unloaded once switched, [s].  Default 1 s each
        (common practice for unloading valves, no published source).  0 disables.
    max_load_events_per_hour : float | None
        Most load events (unloaded → loaded) in any hour, [1/h].  Default 360 (common
        practice, no published source).  None disables.
    flow_margin : float
        Share of the pump's catalogue flow the design must do without, [-]: the cycle must
        still be met when wear has cut the delivery by this much (the pump-only baselines
        get the same margin), and the verification runs the design at the worn flow too.
        Default 0.10 (common practice, no published source).
    switch_differential : float
        Least differential of the pressure switch (or accumulator charging valve) that loads
        and unloads the pump, as a fraction of its cut-out gauge pressure, [-].  Default 0.10:
        about the least a pressure switch or charging valve holds in practice (common
        practice, from memory).  The search plans the store from the load point this leaves,
        and the verification never derives a narrower band.
    switch_differential_min : float
        Least differential in absolute terms, [Pa] (the larger of the two applies).
        Default 0.
    switch_tolerance : float
        Repeatability of the switch's settings, as a fraction of each setting (gauge), [-]:
        the verification runs the switch with both settings this much low (the store's
        worst case) and checks that the unload setting this much high stays below the relief
        setting.  Default 0.01 (±1 %, from memory).
    motor_sizing : str
        ``"relief"`` (default): the motor drives the pump at full flow at the relief setting,
        so a stuck unloading valve cannot overload it (shaft power at the cracking pressure,
        common practice).  ``"working"``: at the unload pressure only; the report then carries
        a caution.
    max_count : int
        Most accumulators of one size in a bank, [-].  Default 8.
    min_gas_volume : float
        Least gas volume of a bank, [m³].  Default 0; the closed loop sets it when a bank ran
        empty in the verification (more gas, not more pressure, cures that).
    precharge_step : float
        Resolution of the precharge grid the search scans, gauge at 20 °C, [Pa].  Default 1 bar.
    types : tuple[str, ...]
        Accumulator types the search may use.
    allow_pump_only : bool
        Whether a pump without accumulator is itself a candidate.
    mip_gap : float
        Relative MIP gap for the schedule model, [-].  Default 1e-3 (0.1 %).
    time_limit : float
        Wall-clock limit of one schedule solve, [s].  Default 60 s.
    max_model_steps : int
        Largest number of time steps the schedule model is built with before it aggregates
        steps into blocks (certified block aggregation), [-].
    p_ambient : float
        Ambient pressure, [Pa].  Default 101 325 Pa (standard atmosphere).
    motor_voltage : float
        Supply voltage of the electric motor, line to line, [V].  Default 400 V (the European
        low-voltage three-phase supply); it goes into the specification, not the search.
    motor_frequency : float
        Supply frequency, [Hz].  Default 50 Hz.
    motor_poles : int
        Poles of the motor, [-].  Default 4 (synchronous speed 1500 rpm at 50 Hz).
    objective : str
        What the search puts first (:data:`stowflow.search.objective.OBJECTIVES`): ``"power"``
        (default: least installed power, then capex), ``"capex"``, ``"tco"`` or ``"volume"``.
    max_category : str or None
        Highest pressure-equipment category hint of one vessel
        (:data:`stowflow.search.objective.CATEGORIES`); None: no cap.
    prefer_types : tuple[str, ...]
        Accumulator types in order of preference among designs tied on the objective.
    energy_value : float
        Present value of one joule per cycle over the cost horizon, per catalogue price unit,
        [currency/J]: the weight of the energy in the ``"tco"`` objective.  Default 0; the
        pipeline sets it from the cost settings.
    """

    t_min: float = celsius_to_kelvin(10.0)
    t_max: float = celsius_to_kelvin(50.0)
    gas_model: str = "real"
    process: str = "auto"
    time_constant: float = 5.0
    line_loss: float = 5 * BAR
    relief_margin: float = 0.10
    relief_margin_min: float = 5 * BAR
    standby_pressure: float = 5 * BAR
    min_loaded_dwell: float = 1.0
    min_unloaded_dwell: float = 1.0
    max_load_events_per_hour: float | None = 360.0
    flow_margin: float = 0.10
    switch_differential: float = 0.10
    switch_differential_min: float = 0.0
    switch_tolerance: float = 0.01
    motor_sizing: str = "relief"
    max_count: int = 8
    min_gas_volume: float = 0.0
    precharge_step: float = 1 * BAR
    types: tuple[str, ...] = ACCUMULATOR_TYPES
    allow_pump_only: bool = True
    mip_gap: float = 1e-3
    time_limit: float = 60.0
    max_model_steps: int = 3000
    p_ambient: float = P_AMBIENT
    motor_voltage: float = 400.0
    motor_frequency: float = 50.0
    motor_poles: int = 4
    objective: str = "power"
    max_category: str | None = None
    prefer_types: tuple[str, ...] = ()
    energy_value: float = 0.0
    extra: dict = field(default_factory=dict, compare=False, hash=False)

    def __post_init__(self) -> None:
        def bad(msg: str) -> SettingsError:
            return SettingsError(f"design settings: {msg}")

        for name in ("t_min", "t_max", "time_constant", "precharge_step", "time_limit"):
            v = getattr(self, name)
            if not (isinstance(v, int | float) and math.isfinite(v) and v > 0):
                raise bad(f"{name} must be a positive finite number, got {v!r}")
        if self.t_min > self.t_max:
            raise bad(
                f"coldest temperature {kelvin_to_celsius(self.t_min):.1f} °C is above the "
                f"hottest {kelvin_to_celsius(self.t_max):.1f} °C"
            )
        if self.t_min < 200.0 or self.t_max > 450.0:
            raise bad("operating temperatures must lie between −73 °C and 177 °C")
        if self.gas_model not in ("real", "ideal"):
            raise bad(f"gas model '{self.gas_model}' is not 'real' or 'ideal'")
        if self.process != "auto":
            from stowflow.physics.gas import parse_process

            try:
                parse_process(self.process)
            except Exception as exc:
                raise bad(
                    f"process '{self.process}' is not auto, isothermal, adiabatic or "
                    f"polytropic:N ({exc})"
                ) from None
        for name in (
            "line_loss",
            "relief_margin",
            "relief_margin_min",
            "standby_pressure",
            "min_loaded_dwell",
            "min_unloaded_dwell",
        ):
            v = getattr(self, name)
            if not (math.isfinite(v) and v >= 0):
                raise bad(f"{name} must be ≥ 0, got {v!r}")
        if self.max_load_events_per_hour is not None and not (self.max_load_events_per_hour >= 1):
            raise bad("max load events per hour must be ≥ 1 (or None for no limit)")
        if not (0 <= self.switch_differential < 0.5):
            raise bad(
                f"switch differential must be 0 … 50 % of the cut-out pressure, got "
                f"{self.switch_differential:.0%}"
            )
        if not (math.isfinite(self.switch_differential_min) and self.switch_differential_min >= 0):
            raise bad(f"switch_differential_min must be ≥ 0, got {self.switch_differential_min!r}")
        if not (0 <= self.switch_tolerance < 0.1):
            raise bad(
                f"switch tolerance must be 0 … 10 % of the setting, got {self.switch_tolerance:.1%}"
            )
        if self.motor_sizing not in MOTOR_SIZING:
            raise bad(f"motor sizing '{self.motor_sizing}' is not one of {', '.join(MOTOR_SIZING)}")
        if not (0 <= self.flow_margin < 0.5):
            raise bad(f"flow margin must be 0 … 50 %, got {self.flow_margin:.0%}")
        if not (math.isfinite(self.min_gas_volume) and self.min_gas_volume >= 0):
            raise bad(f"min_gas_volume must be ≥ 0, got {self.min_gas_volume!r}")
        if not (1 <= int(self.max_count) <= 64):
            raise bad(f"max count per bank must be 1…64, got {self.max_count}")
        unknown = set(self.types) - set(ACCUMULATOR_TYPES)
        if unknown:
            raise bad(
                f"unknown accumulator type(s) {sorted(unknown)}; known: {list(ACCUMULATOR_TYPES)}"
            )
        if not (0 < self.mip_gap < 0.5):
            raise bad(f"MIP gap must be in (0, 0.5), got {self.mip_gap}")
        if self.max_model_steps < 50:
            raise bad("max_model_steps must be ≥ 50")
        if not (math.isfinite(self.motor_voltage) and 24.0 <= self.motor_voltage <= 15000.0):
            raise bad(f"motor voltage must be 24 … 15000 V, got {self.motor_voltage!r}")
        if not (math.isfinite(self.motor_frequency) and 10.0 <= self.motor_frequency <= 400.0):
            raise bad(f"motor frequency must be 10 … 400 Hz, got {self.motor_frequency!r}")
        if self.objective not in OBJECTIVES:
            raise bad(f"objective '{self.objective}' is not one of {', '.join(OBJECTIVES)}")
        if self.max_category is not None and self.max_category not in CATEGORIES:
            raise bad(
                f"category cap '{self.max_category}' is not one of {', '.join(CATEGORIES[1:])}"
            )
        unknown = set(self.prefer_types) - set(ACCUMULATOR_TYPES)
        if unknown:
            raise bad(f"unknown preferred type(s) {sorted(unknown)}")
        if not (math.isfinite(self.energy_value) and self.energy_value >= 0):
            raise bad(f"energy_value must be ≥ 0, got {self.energy_value!r}")
        if int(self.motor_poles) != self.motor_poles or not (
            2 <= self.motor_poles <= 16 and self.motor_poles % 2 == 0
        ):
            raise bad(f"motor poles must be an even number 2 … 16, got {self.motor_poles!r}")

    def with_(self, **changes) -> DesignSettings:
        """Return a copy with some settings changed (validated again)."""
        return replace(self, **changes)

    def as_dict(self) -> dict:
        """Settings in trade units for reports (°C, bar, s)."""
        d = asdict(self)
        d.pop("extra", None)
        out = {
            "temperature_min_c": round(kelvin_to_celsius(self.t_min), 3),
            "temperature_max_c": round(kelvin_to_celsius(self.t_max), 3),
            "gas_model": self.gas_model,
            "process": self.process,
            "time_constant_s": self.time_constant,
            "line_loss_bar": self.line_loss / BAR,
            "relief_margin": self.relief_margin,
            "relief_margin_min_bar": self.relief_margin_min / BAR,
            "standby_pressure_bar": self.standby_pressure / BAR,
            "min_loaded_dwell_s": self.min_loaded_dwell,
            "min_unloaded_dwell_s": self.min_unloaded_dwell,
            "max_load_events_per_hour": self.max_load_events_per_hour,
            "flow_margin": self.flow_margin,
            "switch_differential": self.switch_differential,
            "switch_differential_min_bar": self.switch_differential_min / BAR,
            "switch_tolerance": self.switch_tolerance,
            "motor_sizing": self.motor_sizing,
            "max_count": self.max_count,
            "precharge_step_bar": self.precharge_step / BAR,
            "types": list(self.types),
            "allow_pump_only": self.allow_pump_only,
            "mip_gap": self.mip_gap,
            "time_limit_s": self.time_limit,
            "ambient_pressure_bar": self.p_ambient / BAR,
            "motor_voltage_v": self.motor_voltage,
            "motor_frequency_hz": self.motor_frequency,
            "motor_poles": self.motor_poles,
            "objective": self.objective,
            "max_category": self.max_category,
            "prefer_types": list(self.prefer_types),
        }
        return out

    def switch_band(self, p_unload):
        """Least pressure-switch differential below an unload (cut-out) pressure.

        Parameters
        ----------
        p_unload : float or array_like
            Unload pressure, absolute, [Pa].

        Returns
        -------
        float or numpy.ndarray
            ``max(switch_differential · gauge, switch_differential_min)``, [Pa]
            (:func:`stowflow.physics.valves.switch_band`).
        """
        return switch_band(
            np.asarray(p_unload, float) - self.p_ambient,
            self.switch_differential,
            self.switch_differential_min,
        )

    def worst_setting(self, p_setting):
        """A switch setting at the low end of its repeatability, absolute, [Pa].

        Parameters
        ----------
        p_setting : float or array_like
            Nominal setting, absolute, [Pa].

        Returns
        -------
        float or numpy.ndarray
            ``p_amb + (1 − switch_tolerance)·(p_setting − p_amb)``, [Pa].
        """
        return self.p_ambient + (1.0 - self.switch_tolerance) * (
            np.asarray(p_setting, float) - self.p_ambient
        )

    def relief_setting(self, p_unload: float) -> float:
        """Relief cracking pressure for an unload pressure.

        Parameters
        ----------
        p_unload : float
            Unload (maximum working) pressure, absolute, [Pa].

        Returns
        -------
        float
            Relief setting, absolute, [Pa]: the unload gauge pressure raised by
            ``relief_margin`` but at least ``relief_margin_min``.
        """
        g = p_unload - self.p_ambient
        return self.p_ambient + g + max(self.relief_margin * g, self.relief_margin_min)

    def max_unload_for_relief(self, p_limit: float) -> float:
        """Highest unload pressure whose relief setting stays at or below ``p_limit``.

        Parameters
        ----------
        p_limit : float
            Maximum allowable pressure the relief must protect, absolute, [Pa].

        Returns
        -------
        float
            Unload pressure, absolute, [Pa] (inverse of :meth:`relief_setting`).
        """
        g_lim = p_limit - self.p_ambient
        g1 = g_lim / (1.0 + self.relief_margin)
        g2 = g_lim - self.relief_margin_min
        # relief = g + max(m·g, m_min): the binding branch gives the smaller unload pressure.
        return self.p_ambient + min(g1, g2)


DEFAULT_SETTINGS = DesignSettings()
