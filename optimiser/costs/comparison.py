"""Costs: capex, energy, total cost of ownership and payback against the pump-only supplies.

Five options are priced side by side:

* ``"design"``: the designed supply (accumulator bank, pump, motor; or a pump-only design when
  the search found no accumulator worth its price);
* the pump-only alternatives of :mod:`stowflow.search.baseline`, each the least-power design
  of its kind from the same catalogue: ``"fixed"`` (fixed pump with unloading and relief
  valve), ``"compensated"`` (pressure-compensated pump), ``"variable-speed"`` (fixed pump on a
  variable-speed drive), ``"load-sensing"`` (load-sensing pump).

The energy per cycle of each option is electrical (motor and drive input) with the part-load
loss models of :mod:`stowflow.physics.machines`, and comes split into its parts
(:class:`~stowflow.physics.machines.EnergyBreakdown`): the design's from the time-domain
verification of the recommended controller (mean of its coldest and hottest run,
:mod:`stowflow.costs.energy`) when it was run, else from the design's quasi-static schedule;
the alternatives' from :mod:`stowflow.search.baseline`.  The design is judged against the
alternative with the least total cost of ownership, the *strongest* (:attr:`Comparison.strongest`).
This module converts energy per cycle into money:

.. math::
    E_{year} = E_{cycle}\\, \\frac{t_{op}}{t_{cycle}}, \\qquad
    C_{year} = c_e\\, E_{year}, \\qquad
    \\mathrm{TCO} = k_{inst}\\, \\Sigma\\,\\text{prices} + C_{year}\\, a(r, N),
    \\qquad a(r, N) = \\frac{1 - (1 + r)^{-N}}{r}

with :math:`a(r, N)` the present value of an annuity of 1 per year for N years at discount
rate r (:math:`a = N` for r = 0).  The pure money functions (annuity, payback, motor input)
live in :mod:`stowflow.costs.finance` and are re-exported here.

References
----------
R. A. Brealey, S. C. Myers, F. Allen, *Principles of Corporate Finance*, McGraw-Hill
(present value of an annuity; payback period).
A. Esposito, *Fluid Power with Applications*, Pearson (cost of electrical energy to drive a
pump, example 5-10).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from stowflow.costs.energy import design_energy
from stowflow.costs.finance import (
    annuity_factor,
    discounted_payback,
    electrical_power,
    present_value,
    simple_payback,
    verdict,
)
from stowflow.cycle.duty import DutyCycle
from stowflow.errors import SettingsError
from stowflow.physics.machines import EnergyBreakdown
from stowflow.search.baseline import KINDS
from stowflow.search.settings import DesignSettings
from stowflow.search.solution import Baseline, Design
from stowflow.units import HOUR, KW, KWH

__all__ = [
    "KIND_WORDS",
    "OPTION_KEYS",
    "OPTION_LABELS",
    "Comparison",
    "CostSettings",
    "OptionCost",
    "Payback",
    "annual_energy_cost",
    "annuity_factor",
    "compare",
    "discounted_payback",
    "electrical_power",
    "energy_value",
    "present_value",
    "simple_payback",
]

#: The priced options, in the order the report shows them: the design, then the pump-only
#: alternatives (:data:`stowflow.search.baseline.KINDS`).
OPTION_KEYS: tuple[str, ...] = ("design", *KINDS)

#: What each option is, in words.
OPTION_LABELS: dict[str, str] = {
    "design": "accumulator supply (this design)",
    "fixed": "pump-only: fixed pump, unloading and relief valve",
    "compensated": "pump-only: pressure-compensated pump",
    "variable-speed": "pump-only: fixed pump on a variable-speed drive",
    "load-sensing": "pump-only: load-sensing pump",
}

#: Each pump-only kind in a sentence ("a pump-only <words> costs less ...").
KIND_WORDS: dict[str, str] = {
    "fixed": "fixed pump with unloading and relief valve",
    "compensated": "pressure-compensated pump",
    "variable-speed": "fixed pump on a variable-speed drive",
    "load-sensing": "load-sensing pump",
}


@dataclass(frozen=True)
class CostSettings:
    """What energy costs and how long the machine runs (SI inside).

    Attributes
    ----------
    energy_price : float
        Price of electrical energy, [currency/J].  Default 0.25 per kWh (an example; use your
        tariff).
    operating_time : float
        Operating time per year, [s].  Default 4000 h (an example: two shifts, five days a
        week; common practice, no published source).
    cycle_time : float or None
        Time from one cycle start to the next, [s].  None: the cycle runs back to back, so the
        cycle time is the cycle's own length.
    years : int
        Horizon of the total cost of ownership, [year].  Default 10 (an example).
    discount_rate : float
        Annual discount rate, [1/year].  Default 0.05 (an example).
    installation_factor : float
        Installed cost over catalogue price, [-].  Default 1.0 (catalogue prices only).
    currency : str
        Currency label of every price; "" means the catalogue's currency.
    """

    energy_price: float = 0.25 / KWH
    operating_time: float = 4000.0 * HOUR
    cycle_time: float | None = None
    years: int = 10
    discount_rate: float = 0.05
    installation_factor: float = 1.0
    currency: str = ""

    def __post_init__(self) -> None:
        def bad(msg: str) -> SettingsError:
            return SettingsError(f"cost settings: {msg}")

        def finite(v) -> bool:
            return isinstance(v, int | float) and not isinstance(v, bool) and math.isfinite(v)

        if not (finite(self.energy_price) and self.energy_price >= 0):
            raise bad(f"energy price must be ≥ 0, got {self.energy_price!r} per J")
        year = 8766.0 * HOUR  # a year of 365.25 days
        if not (finite(self.operating_time) and 0 < self.operating_time <= year * (1 + 1e-9)):
            raise bad(
                f"operating time must be > 0 h and at most 8766 h per year, got "
                f"{self.operating_time / HOUR!r} h"
            )
        if self.cycle_time is not None and not (finite(self.cycle_time) and self.cycle_time > 0):
            raise bad(f"cycle time must be > 0 s, got {self.cycle_time!r}")
        if isinstance(self.years, bool) or not isinstance(self.years, int) or self.years < 1:
            raise bad(f"years must be a whole number ≥ 1, got {self.years!r}")
        if not (finite(self.discount_rate) and -0.5 < self.discount_rate <= 1.0):
            raise bad(f"discount rate must lie in (−50 %, 100 %], got {self.discount_rate!r}")
        if not (finite(self.installation_factor) and self.installation_factor > 0):
            raise bad(f"installation factor must be > 0, got {self.installation_factor!r}")
        if not isinstance(self.currency, str) or len(self.currency) > 16:
            raise bad(
                f"currency label must be text of at most 16 characters, got {self.currency!r}"
            )

    @property
    def energy_price_per_kwh(self) -> float:
        """Energy price, [currency/kWh]."""
        return self.energy_price * KWH

    def as_dict(self) -> dict:
        """The settings in trade units for reports (per kWh, h, s, %)."""
        return {
            "energy_price_per_kwh": self.energy_price_per_kwh,
            "hours_per_year": self.operating_time / HOUR,
            "cycle_time_s": self.cycle_time,
            "years": self.years,
            "discount_rate": self.discount_rate,
            "installation_factor": self.installation_factor,
            "currency": self.currency,
        }


# -- yearly energy cost ---------------------------------------------------------------


def energy_value(settings: CostSettings, duration: float) -> float:
    """Present value of one joule per cycle over the horizon, per unit of catalogue price.

    The total cost of ownership of a supply is ``f·capex + c_e·n·a·E`` (installation factor
    ``f``, energy price ``c_e``, cycles a year ``n``, annuity factor ``a``, energy per cycle
    ``E``), so ranking by TCO is ranking by ``capex + w·E`` with this ``w = c_e·n·a / f``: the
    weight of the design search's ``"tco"`` objective.

    Parameters
    ----------
    settings : CostSettings
        Price, operating time, cycle time, horizon, discount rate, installation factor.
    duration : float
        The cycle's own length, [s] (the cycle time when the settings give none).

    Returns
    -------
    float
        ``w``, [currency/J].
    """
    cycle_time = duration if settings.cycle_time is None else max(settings.cycle_time, duration)
    cycles = settings.operating_time / cycle_time
    af = annuity_factor(settings.discount_rate, settings.years)
    return settings.energy_price * cycles * af / settings.installation_factor


def annual_energy_cost(power: float, settings: CostSettings) -> float:
    """Cost of drawing a constant electrical ``power`` over a year of operation.

    .. math:: C_{year} = c_e\\, P_{el}\\, t_{op}

    Parameters
    ----------
    power : float
        Electrical power, [W].
    settings : CostSettings
        Energy price and operating time.

    Returns
    -------
    float
        Energy cost per year, [currency/year].
    """
    return settings.energy_price * power * settings.operating_time


# -- results -------------------------------------------------------------------------------


@dataclass(frozen=True)
class OptionCost:
    """The money side of one supply option.  NaN numbers when ``feasible`` is False.

    Attributes
    ----------
    key : str
        One of :data:`OPTION_KEYS`.
    label : str
        What the option is, in words.
    feasible : bool
        Whether the option exists (a design was found; the catalogue has parts for it).
    reason : str or None
        Why it does not exist.
    has_accumulator : bool
        True when the option stores oil in an accumulator bank.
    installed_power : float
        Rated motor power, [W].
    component_price : float
        Sum of catalogue prices, [currency].
    capex : float
        Installed cost: component price × installation factor, [currency].
    energy_per_cycle : float
        Electrical energy per cycle, [J].
    energy_source : str
        Which stage computed the energy per cycle.
    energy_per_year : float
        Electrical energy per year of operation, [J].
    energy_cost_per_year : float
        [currency/year].
    energy_cost_present_value : float
        Present value of the energy cost over the horizon, [currency].
    tco : float
        Total cost of ownership over the horizon: capex + present value of energy, [currency].
    mean_power : float
        Mean electrical power while the cycle runs, [W].
    motor_load : float
        Mean shaft power over rated motor power, [-].
    motor_efficiency : float
        Motor efficiency from the catalogue (at rated load), [-]; the energy uses the
        motor's part-load loss model.
    motor_efficiency_class : str or None
        Efficiency class from the catalogue (e.g. IE3).
    pump_efficiency : float
        Pump overall efficiency from the catalogue, [-].
    pump_flow : float
        Pump effective delivery, [m³/s].
    working_pressure : float
        Pump-only options: the relief (fixed) or compensator / drive setting; design: the
        highest working pressure; absolute, [Pa].
    components : tuple of str
        Catalogue names: accumulator bank (``"3 × name"``), pump, motor, drive.
    breakdown : EnergyBreakdown or None
        Where the energy per cycle goes (None when it could not be split).
    heat_load : float
        Mean heat put into the oil while the cycle runs, [W].
    drive_price : float
        Price of the drive (0 without one), [currency].
    notes : tuple of str
        How the option runs, in words.
    """

    key: str
    label: str
    feasible: bool
    reason: str | None
    has_accumulator: bool = False
    installed_power: float = math.nan
    component_price: float = math.nan
    capex: float = math.nan
    energy_per_cycle: float = math.nan
    energy_source: str = ""
    energy_per_year: float = math.nan
    energy_cost_per_year: float = math.nan
    energy_cost_present_value: float = math.nan
    tco: float = math.nan
    mean_power: float = math.nan
    motor_load: float = math.nan
    motor_efficiency: float = math.nan
    motor_efficiency_class: str | None = None
    pump_efficiency: float = math.nan
    pump_flow: float = math.nan
    working_pressure: float = math.nan
    components: tuple[str, ...] = ()
    breakdown: EnergyBreakdown | None = None
    heat_load: float = math.nan
    drive_price: float = 0.0
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class Payback:
    """The designed supply against one pump-only alternative.

    Attributes
    ----------
    baseline : str
        The alternative's kind (one of :data:`stowflow.search.baseline.KINDS`).
    installed_power_saved : float
        Baseline's rated motor power minus the design's, [W].
    extra_capex : float
        Design capex minus baseline capex, [currency]; negative when the design is cheaper.
    energy_saved_per_year : float
        [J/year].
    savings_per_year : float
        Energy cost saved per year, [currency/year].
    tco_saving : float
        Baseline TCO minus design TCO over the horizon, [currency].
    simple_years : float or None
        Simple payback, [year]; 0 when the design costs no more up front; None: never.
    discounted_years : float or None
        Discounted payback, [year]; same conventions.
    note : str
        The verdict in words (:func:`stowflow.costs.finance.verdict`).
    verdict : str
        The verdict's code, one of :data:`stowflow.costs.finance.VERDICTS`.
    pays_off : bool
        True when the design costs no more than the alternative over the horizon.
    """

    baseline: str
    installed_power_saved: float
    extra_capex: float
    energy_saved_per_year: float
    savings_per_year: float
    tco_saving: float
    simple_years: float | None
    discounted_years: float | None
    note: str
    verdict: str = ""
    pays_off: bool = False


@dataclass(frozen=True)
class Comparison:
    """Costs of the designed supply against the pump-only supplies.

    Attributes
    ----------
    feasible : bool
        True when the design option has numbers.
    reason : str or None
        Why the design has none (the design's reason).
    currency : str
        Currency label ("" = the catalogue's).
    settings : CostSettings
        The cost settings used.
    cycle_time : float
        Time between cycle starts used, [s].
    cycles_per_year : float
        Cycles per year of operation, [1/year].
    annuity_factor : float
        Present value of 1 per year over the horizon, [year].
    options : tuple of OptionCost
        In :data:`OPTION_KEYS` order.
    paybacks : tuple of Payback
        The design against each feasible alternative (empty when the design is infeasible).
    notes : tuple of str
        Assumptions behind the numbers (loss models, standby losses, energy sources).
    """

    feasible: bool
    reason: str | None
    currency: str
    settings: CostSettings
    cycle_time: float
    cycles_per_year: float
    annuity_factor: float
    options: tuple[OptionCost, ...]
    paybacks: tuple[Payback, ...] = ()
    notes: tuple[str, ...] = field(default=())

    def option(self, key: str) -> OptionCost:
        """The option ``key`` (one of :data:`OPTION_KEYS`)."""
        for o in self.options:
            if o.key == key:
                return o
        raise KeyError(f"no option '{key}'; known: {', '.join(OPTION_KEYS)}")

    def payback(self, baseline: str) -> Payback | None:
        """The payback against ``baseline``, or None when there is none."""
        return next((p for p in self.paybacks if p.baseline == baseline), None)

    @property
    def alternatives(self) -> tuple[OptionCost, ...]:
        """The pump-only options, in :data:`stowflow.search.baseline.KINDS` order."""
        return tuple(o for o in self.options if o.key != "design")

    @property
    def strongest(self) -> OptionCost | None:
        """The priced pump-only alternative with the least total cost of ownership (the
        first in :data:`stowflow.search.baseline.KINDS` order among equals), or None."""
        priced = [o for o in self.alternatives if o.feasible and math.isfinite(o.tco)]
        return min(priced, key=lambda o: o.tco) if priced else None

    @property
    def reference(self) -> Payback | None:
        """The payback against the strongest alternative (:attr:`strongest`), or None."""
        best = self.strongest
        return None if best is None else self.payback(best.key)

    @property
    def recommended(self) -> str | None:
        """The option to build: ``"design"`` unless the strongest alternative costs less
        over the horizon (then its kind); None when nothing is priced."""
        d, best = self.option("design"), self.strongest
        if best is None:
            return "design" if d.feasible else None
        if not d.feasible or best.tco < d.tco:
            return best.key
        return "design"

    def cost_timeline(self, years: int | None = None) -> pd.DataFrame:
        """Cumulative discounted cost of each feasible option, year by year.

        Parameters
        ----------
        years : int, optional
            Last year shown, [year]; default the TCO horizon.

        Returns
        -------
        pandas.DataFrame
            Indexed by ``year [-]`` from 0; one column per option key: capex + present value
            of the energy cost up to that year, [currency].
        """
        n = self.settings.years if years is None else int(years)
        t = np.arange(n + 1)
        r = self.settings.discount_rate
        factor = np.array([annuity_factor(r, k) for k in t])
        data = {
            o.key: o.capex + o.energy_cost_per_year * factor for o in self.options if o.feasible
        }
        return pd.DataFrame(data, index=pd.Index(t, name="year [-]"))


# -- compare -------------------------------------------------------------------------------


def _priced(
    base: OptionCost, energy_per_cycle: float, settings: CostSettings, cycles: float, af: float
) -> dict:
    e_year = energy_per_cycle * cycles
    c_year = settings.energy_price * e_year
    capex = base.component_price * settings.installation_factor
    return {
        "capex": capex,
        "energy_per_cycle": energy_per_cycle,
        "energy_per_year": e_year,
        "energy_cost_per_year": c_year,
        "energy_cost_present_value": c_year * af,
        "tco": capex + c_year * af,
    }


def _option(
    key: str,
    label: str,
    pump,
    motor,
    energy: float,
    source: str,
    duration: float,
    pressure: float,
    *,
    has_accumulator: bool,
    price: float,
    components: tuple[str, ...],
    breakdown: EnergyBreakdown | None,
    drive=None,
    notes: tuple[str, ...] = (),
) -> OptionCost:
    """An option with its parts and energy, not yet priced."""
    mean_power = energy / duration
    shaft = None
    if breakdown is not None:
        shaft = breakdown.electrical - breakdown.motor - breakdown.drive
    return OptionCost(
        key,
        label,
        True,
        None,
        has_accumulator=has_accumulator,
        installed_power=motor.rated_power,
        component_price=price,
        energy_per_cycle=energy,
        energy_source=source,
        mean_power=mean_power,
        motor_load=(mean_power * motor.efficiency if shaft is None else shaft / duration)
        / motor.rated_power,
        motor_efficiency=motor.efficiency,
        motor_efficiency_class=motor.efficiency_class,
        pump_efficiency=pump.overall_efficiency,
        pump_flow=pump.flow,
        working_pressure=pressure,
        components=components,
        breakdown=breakdown,
        heat_load=math.nan if breakdown is None else breakdown.heat_load,
        drive_price=0.0 if drive is None else drive.price,
        notes=notes,
    )


def _design_option(design: Design, verification, cycle: DutyCycle, standby: float) -> OptionCost:
    key = "design"
    if not design.feasible:
        return OptionCost(key, OPTION_LABELS[key], False, design.reason or "no design found")
    energy, breakdown, source = design_energy(design, verification, cycle, standby)
    label = OPTION_LABELS[key] if design.bank is not None else "pump-only supply (this design)"
    parts = (design.pump.name, design.motor.name)
    if design.bank is not None:
        parts = (f"{design.bank.count} × {design.bank.option.name}", *parts)
    return _option(
        key,
        label,
        design.pump,
        design.motor,
        energy,
        source,
        cycle.duration,
        design.p_max,
        has_accumulator=design.bank is not None,
        price=design.capex,
        components=parts,
        breakdown=breakdown,
    )


def _baseline_option(b: Baseline | None, key: str, duration: float) -> OptionCost:
    if b is None:
        return OptionCost(key, OPTION_LABELS[key], False, "not computed")
    if b.pump is None or b.motor is None or not math.isfinite(b.energy_per_cycle):
        return OptionCost(key, OPTION_LABELS[key], False, b.reason or "no parts in the catalogue")
    parts = (b.pump.name, b.motor.name) + ((b.drive.name,) if b.drive is not None else ())
    return _option(
        key,
        OPTION_LABELS[key],
        b.pump,
        b.motor,
        b.energy_per_cycle,
        "pump-only model (quasi-static); part-load loss models of pump and motor"
        + (" and drive" if b.drive is not None else ""),
        duration,
        b.pressure,
        has_accumulator=False,
        price=b.capex,
        components=parts,
        breakdown=b.breakdown,
        drive=b.drive,
        notes=b.notes,
    )


def _payback(d: OptionCost, b: OptionCost, settings: CostSettings, currency: str) -> Payback:
    extra = d.capex - b.capex
    saved = b.energy_cost_per_year - d.energy_cost_per_year
    code, note, pays_off = verdict(extra, saved, settings.discount_rate, settings.years, currency)
    return Payback(
        baseline=b.key,
        installed_power_saved=b.installed_power - d.installed_power,
        extra_capex=extra,
        energy_saved_per_year=b.energy_per_year - d.energy_per_year,
        savings_per_year=saved,
        tco_saving=b.tco - d.tco,
        simple_years=simple_payback(extra, saved),
        discounted_years=discounted_payback(extra, saved, settings.discount_rate),
        note=note,
        verdict=code,
        pays_off=pays_off,
    )


def compare(
    design: Design,
    verification,
    cycle: DutyCycle,
    cost_settings: CostSettings | None = None,
    *,
    design_settings: DesignSettings | None = None,
) -> Comparison:
    """Price the designed supply against the pump-only alternatives.

    Parameters
    ----------
    design : Design
        The design (may be infeasible: its option then has no numbers and carries the reason).
    verification : Verification or None
        Time-domain verdict; when given, the design's energy per cycle is the mean of the
        recommended controller's coldest and hottest runs.
    cycle : DutyCycle
        The duty cycle (its length is the cycle time unless the settings give one).
    cost_settings : CostSettings, optional
        Prices and operating time; default :class:`CostSettings`.
    design_settings : DesignSettings, optional
        The design's settings (the standby pressure of an unloaded pump); default
        :class:`~stowflow.search.settings.DesignSettings`.

    Returns
    -------
    Comparison

    Raises
    ------
    SettingsError
        The cycle time is shorter than the cycle itself.
    """
    s = cost_settings or CostSettings()
    duration = cycle.duration
    cycle_time = duration if s.cycle_time is None else float(s.cycle_time)
    if cycle_time < duration * (1 - 1e-9):
        raise SettingsError(
            f"cost settings: cycle time {cycle_time:g} s is shorter than the cycle itself "
            f"({duration:g} s); a cycle cannot restart before it ends"
        )
    cycles = s.operating_time / cycle_time
    af = annuity_factor(s.discount_rate, s.years)
    standby = (design_settings or DesignSettings()).standby_pressure
    by_kind = {b.kind: b for b in design.baselines}
    raw = [
        _design_option(design, verification, cycle, standby),
        *(_baseline_option(by_kind.get(k), k, duration) for k in KINDS),
    ]
    options = []
    for o in raw:
        if o.feasible:
            priced = _priced(o, o.energy_per_cycle, s, cycles, af)
            o = OptionCost(**{**o.__dict__, **priced})
        options.append(o)
    d = options[0]
    paybacks = tuple(
        _payback(d, b, s, s.currency) for b in options[1:] if d.feasible and b.feasible
    )
    notes = _notes(s, options, cycle_time, duration)
    return Comparison(
        feasible=d.feasible,
        reason=d.reason,
        currency=s.currency,
        settings=s,
        cycle_time=cycle_time,
        cycles_per_year=cycles,
        annuity_factor=af,
        options=tuple(options),
        paybacks=paybacks,
        notes=tuple(notes),
    )


def _notes(s: CostSettings, options: list[OptionCost], cycle_time: float, duration: float):
    notes = [
        f"energy at {s.energy_price_per_kwh:.4g} per kWh over {s.operating_time / HOUR:,.0f} h "
        f"per year, {s.operating_time / cycle_time:,.0f} cycles per year; capex = catalogue "
        f"prices × {s.installation_factor:g} (installation factor); TCO over {s.years} years "
        f"at {s.discount_rate:.1%} discount (present value of an annuity, energy paid at each "
        "year's end)",
        "part-load efficiencies: motor losses split into constant and load losses "
        "(IEC 60034-2-1's summation of losses; constant share 36 % of the rated losses, which "
        "puts the best efficiency at 75 % load as the U.S. DOE fact sheet 'Determining "
        "Electric Motor Load and Efficiency' says), pump leakage growing with pressure and "
        "friction and drag torque (Wilson's loss structure, from the catalogue's efficiencies "
        "at the pump's rated pressure), drive losses constant plus in proportion to current; "
        "catalogue points override each curve",
        "standby losses: an unloaded pump circulates its flow at the standby pressure; a "
        "variable pump at zero stroke pays its leakage and drag at its setting and its "
        "control flow; the fixed pump-only supply unloads only in idle stretches the switching "
        "limits allow",
    ]
    if cycle_time > duration * (1 + 1e-9):
        notes.append(
            f"cycle time {cycle_time:g} s is longer than the cycle ({duration:g} s): only the "
            "cycles are costed; the supplies are taken as stopped between them"
        )
    for o in options:
        if not o.feasible:
            notes.append(f"{o.label}: not priced ({o.reason})")
        elif o.breakdown is not None:
            notes.append(
                f"{o.label}: heat into the oil {o.heat_load / KW:.3g} kW while the cycle runs"
                + (f"; {'; '.join(o.notes)}" if o.notes else "")
            )
    sources = sorted({o.energy_source for o in options if o.feasible})
    if sources:
        notes.append("energy per cycle from: " + "; ".join(sources))
    return notes
