"""One cycle's trade-offs: the front of the screen's designs and the chosen design's
sensitivity, as Dask tasks.

**Trade-off front.**  :func:`stowflow.search.screen.all_candidates` enumerates every pump,
motor and accumulator row that meets the cycle at every motor rating (the least bank of
each, and each pump-only supply), exactly as the design's screen judges them.  Each gets
its installed power, capex (catalogue prices × the installation factor), gas volume and a
TCO whose energy is the designer's own estimate for ranking ties: the least energy per cycle
under an ideal pressure switch over up to :data:`FRONT_PRECHARGES` of its precharges
(:func:`stowflow.search.designer.ideal_energies`).  The front is the set no other candidate
beats or equals on all four (:func:`non_dominated`).

**Sensitivity.**  The chosen design (the pipeline's, verified) is verified again, not
redesigned, with its switch settings kept, under the changes of :data:`CHANGES`, one at a
time and all together at each change's worse side; each case reports its least pressure
margin and whether it passes.  ``nothing changed`` reproduces the design's verified margin.

**Monte Carlo** (optional): the same changes drawn at random from the distributions of
:func:`draw_cases`, with a seed; the share of samples that fail is the probability of a
shortfall.
"""

from __future__ import annotations

import io
import math
from collections.abc import Callable
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, Any, NamedTuple

import numpy as np

if TYPE_CHECKING:  # pragma: no cover - typing only
    import pandas as pd
    from stowflow.catalogue import Catalogue
    from stowflow.costs.comparison import CostSettings
    from stowflow.cycle.duty import DutyCycle
    from stowflow.pipeline import StudyResult
    from stowflow.search.settings import DesignSettings

__all__ = [
    "CHANGES",
    "EXPLORE_OUTPUTS",
    "FRONT_COLUMNS",
    "FRONT_PRECHARGES",
    "SAMPLE_COLUMNS",
    "Case",
    "Exploration",
    "apply_case",
    "draw_cases",
    "explore_cycle",
    "front_frame",
    "non_dominated",
    "sensitivity_cases",
    "write_exploration",
]

#: Precharges per candidate at which the front's energy estimate is taken, [-].
FRONT_PRECHARGES = 3
#: Candidates per Dask task of the front's energy estimate, [-].
FRONT_CHUNK = 100
#: The objectives of the front, all minimised (columns of the front table).
OBJECTIVES: tuple[str, ...] = ("motor [kW]", "capex", "tco", "total_gas_volume [L]")
#: Columns of the front table (``front.csv``).
FRONT_COLUMNS: tuple[str, ...] = (
    "supply",
    "accumulator",
    "count",
    "pump",
    "motor",
    *OBJECTIVES,
    "energy_per_cycle [kJ]",
    "precharge [bar]",
    "on_front",
    "chosen",
)
#: The one-at-a-time changes: name → (field of :class:`Case`, values).  Precharge and pump
#: flow as fractions lost, temperatures in K beyond the range, the time constant as a factor,
#: the cycle's flow as a fraction gained, the efficiencies in points (fractions) lost.
CHANGES: dict[str, tuple[str, tuple[float, ...]]] = {
    "precharge": ("precharge_loss", (0.05, 0.10)),
    "colder": ("colder", (10.0,)),
    "hotter": ("hotter", (10.0,)),
    "time constant": ("tau_factor", (0.5, 2.0)),
    "pump flow": ("pump_flow_loss", (0.10,)),
    "cycle flow": ("cycle_flow_gain", (0.10,)),
    "efficiencies": ("efficiency_loss", (0.03,)),
}


#: The files ``stowflow explore`` writes (``monte_carlo.csv`` holds only its header without
#: samples).
EXPLORE_OUTPUTS: tuple[str, ...] = (
    "explore.html",
    "front.csv",
    "sensitivity.csv",
    "monte_carlo.csv",
)


@dataclass(frozen=True)
class Case:
    """Changed conditions under which the chosen design is verified again.

    Attributes
    ----------
    name : str
        What changed, in words.
    precharge_loss : float
        Share of the gauge precharge lost, [-].
    colder, hotter : float
        How far the coldest / hottest temperature moves outwards, [K].
    tau_factor : float
        Factor on the thermal time constant, [-].
    pump_flow_loss : float
        Share of the pump's delivery lost (internal leakage: the shaft power at a pressure
        stays), [-].
    cycle_flow_gain : float
        Share added to the cycle's flow at every step, [-].
    efficiency_loss : float
        Points taken off the pump's overall and the motor's efficiency, [-] (0.03 = 3 points).
    """

    name: str
    precharge_loss: float = 0.0
    colder: float = 0.0
    hotter: float = 0.0
    tau_factor: float = 1.0
    pump_flow_loss: float = 0.0
    cycle_flow_gain: float = 0.0
    efficiency_loss: float = 0.0


#: Columns of a verified case (``sensitivity.csv`` adds ``margin_change [bar]`` and
#: ``breaks_first``; ``monte_carlo.csv`` has these).
SAMPLE_COLUMNS: tuple[str, ...] = (
    "case",
    "precharge_loss",
    "colder",
    "hotter",
    "tau_factor",
    "pump_flow_loss",
    "cycle_flow_gain",
    "efficiency_loss",
    "passed",
    "min_margin [bar]",
    "controller",
    "energy_per_cycle [kJ]",
    "reason",
)


def _percent(x: float) -> str:
    return f"{x * 100:g} %"


def sensitivity_cases() -> list[Case]:
    """``nothing changed``, then each change of :data:`CHANGES` on its own."""
    words = {
        "precharge_loss": lambda v: f"precharge −{_percent(v)}",
        "colder": lambda v: f"coldest −{v:g} K",
        "hotter": lambda v: f"hottest +{v:g} K",
        "tau_factor": lambda v: f"time constant ×{v:g}",
        "pump_flow_loss": lambda v: f"pump flow −{_percent(v)}",
        "cycle_flow_gain": lambda v: f"cycle flow +{_percent(v)}",
        "efficiency_loss": lambda v: f"efficiencies −{v * 100:g} points",
    }
    cases = [Case("nothing changed")]
    for field_name, values in CHANGES.values():
        cases += [Case(words[field_name](v), **{field_name: v}) for v in values]
    return cases


def draw_cases(samples: int, seed: int = 0) -> list[Case]:
    """Random changes for a Monte Carlo study, each variable drawn on its own.

    Distributions (stated; uniform unless said): precharge loss 0–10 %; coldest temperature
    0–10 K lower and hottest 0–10 K higher; time constant ×2^U(−1, 1) (log-uniform between
    ×0.5 and ×2); pump flow loss 0–10 %; cycle flow gain 0–10 %; efficiencies 0–3 points
    lower.

    Parameters
    ----------
    samples : int
        Number of cases, [-].
    seed : int
        Seed of :func:`numpy.random.default_rng`.

    Returns
    -------
    list of Case
    """
    rng = np.random.default_rng(seed)
    u = rng.uniform(size=(samples, 7))
    return [
        Case(
            f"sample {k + 1}",
            precharge_loss=0.10 * r[0],
            colder=10.0 * r[1],
            hotter=10.0 * r[2],
            tau_factor=float(2.0 ** (2.0 * r[3] - 1.0)),
            pump_flow_loss=0.10 * r[4],
            cycle_flow_gain=0.10 * r[5],
            efficiency_loss=0.03 * r[6],
        )
        for k, r in enumerate(u)
    ]


def apply_case(case: Case, design, cycle: DutyCycle, settings: DesignSettings):
    """The design, cycle and settings under a case's changes (SI; nothing else changes).

    Returns
    -------
    tuple
        (design, cycle, settings).
    """
    s = settings
    d = design
    if case.precharge_loss and d.bank is not None:
        p0 = d.bank.precharge
        lost = s.p_ambient + (p0 - s.p_ambient) * (1.0 - case.precharge_loss)
        d = replace(d, bank=replace(d.bank, precharge=lost))
    if case.pump_flow_loss or case.efficiency_loss:
        pump, motor = d.pump, d.motor
        keep = 1.0 - case.pump_flow_loss
        pump = replace(
            pump,
            volumetric_efficiency=pump.volumetric_efficiency * keep,
            overall_efficiency=pump.overall_efficiency * keep - case.efficiency_loss,
        )
        motor = replace(motor, efficiency=motor.efficiency - case.efficiency_loss)
        d = replace(d, pump=pump, motor=motor)
    if case.colder or case.hotter or case.tau_factor != 1.0:
        s = s.with_(
            t_min=s.t_min - case.colder,
            t_max=s.t_max + case.hotter,
            time_constant=s.time_constant * case.tau_factor,
        )
    if case.cycle_flow_gain:
        cycle = replace(cycle, flow=cycle.flow * (1.0 + case.cycle_flow_gain), table=None)
    return d, cycle, s


def _verify_case(case: Case, design, cycle, settings, setpoints) -> dict:
    """One case verified (a Dask task): its row of the sensitivity table."""
    from stowflow.errors import StowflowError, one_line
    from stowflow.simulation.verify import CONTROLLERS, verify

    row: dict[str, Any] = {"case": case.name}
    row |= {k: v for k, v in case.__dict__.items() if k != "name"}
    # The design's schedule was planned for the catalogue pump and the cycle as given: with
    # either changed only the switches can run (they react to what happens).
    controllers = CONTROLLERS
    if case.pump_flow_loss or case.cycle_flow_gain:
        controllers = tuple(c for c in CONTROLLERS if c != "schedule")
    try:
        d, c, s = apply_case(case, design, cycle, settings)
        v = verify(d, c, s, setpoints=setpoints, controllers=controllers)
    except StowflowError as exc:
        return row | {"passed": False, "min_margin [bar]": math.nan, "reason": one_line(exc)}
    energy = [r.energy_per_cycle for r in v.runs if r.controller == v.controller]
    return row | {
        "passed": bool(v.passed),
        "min_margin [bar]": v.min_margin / 1e5,
        "controller": v.controller,
        "energy_per_cycle [kJ]": float(np.mean(energy)) / 1e3 if energy else math.nan,
        "reason": v.reason,
    }


def non_dominated(values: np.ndarray) -> np.ndarray:
    """Which rows no other row beats or equals on every column (all minimised).

    Parameters
    ----------
    values : numpy.ndarray
        Shape (N, K), the objectives.

    Returns
    -------
    numpy.ndarray
        Boolean mask of shape (N,); of rows equal on every objective, the first is kept.
    """
    v = np.asarray(values, float)
    keep = np.ones(len(v), bool)
    for i in range(len(v)):
        le = np.all(v <= v[i], axis=1)
        lt = np.any(v < v[i], axis=1)
        dominated = le & lt
        same = np.all(v == v[i], axis=1)
        same[i:] = False  # an equal row before this one stands for it
        keep[i] = not (dominated.any() or same.any())
    return keep


def _energy_task(cycle, catalogue, settings, cands: list, per_set: int) -> list:
    """The energy estimate of some candidates (a Dask task): (energy [J], precharge [Pa])
    each, nan where no trajectory exists."""
    from stowflow.search.designer import ideal_energies
    from stowflow.search.problem import make_problem

    problem = make_problem(cycle, settings)
    found = {id(c): (e, p0) for c, e, p0 in ideal_energies(problem, cands, catalogue, per_set)}
    return [found.get(id(c), (math.nan, math.nan)) for c in cands]


def _candidate_row(cand, energy: float, p0: float, settings, costs, cycle) -> dict:
    from stowflow.costs.finance import annuity_factor
    from stowflow.physics.accumulator import nominal_gas_volume, rules_for

    cycle_time = cycle.duration if costs.cycle_time is None else costs.cycle_time
    per_year = costs.operating_time / cycle_time
    capex = cand.capex * costs.installation_factor
    energy_cost = costs.energy_price * energy * per_year
    opt = cand.option
    gas = 0.0
    if opt is not None:
        gas = cand.count * nominal_gas_volume(opt.type, opt.nominal_volume, rules_for(opt.type))
    bank = "none (pump only)" if opt is None else f"{cand.count} × {opt.name}"
    return {
        "supply": f"{bank}; {cand.pump.name}; {cand.motor.name}",
        "accumulator": None if opt is None else opt.name,
        "count": cand.count,
        "pump": cand.pump.name,
        "motor": cand.motor.name,
        "motor [kW]": cand.motor.rated_power / 1e3,
        "capex": capex,
        "tco": capex + energy_cost * annuity_factor(costs.discount_rate, costs.years),
        "total_gas_volume [L]": gas * 1e3,
        "energy_per_cycle [kJ]": energy / 1e3,
        "precharge [bar]": (p0 - settings.p_ambient) / 1e5 if math.isfinite(p0) else math.nan,
    }


def front_frame(rows: list[dict], chosen: tuple | None) -> pd.DataFrame:
    """Every candidate with ``on_front`` and ``chosen`` marked (a frame of
    :data:`FRONT_COLUMNS`); ``chosen`` is (accumulator name or None, count, pump, motor)."""
    import pandas as pd

    frame = pd.DataFrame(
        rows, columns=[c for c in FRONT_COLUMNS if c not in ("on_front", "chosen")]
    )
    finite = frame[list(OBJECTIVES)].notna().all(axis=1).to_numpy()
    mask = np.zeros(len(frame), bool)
    mask[finite] = non_dominated(frame.loc[finite, list(OBJECTIVES)].to_numpy())
    frame["on_front"] = mask
    key = list(
        zip(frame["accumulator"], frame["count"], frame["pump"], frame["motor"], strict=True)
    )
    frame["chosen"] = [k == chosen for k in key]
    return frame


def _design_row(study: StudyResult) -> dict:
    """The chosen design as a row of the front table (its costs from the comparison)."""
    d, o = study.design, study.comparison.option("design")
    bank = d.bank
    name = "none (pump only)" if bank is None else f"{bank.count} × {bank.option.name}"
    return {
        "supply": f"{name}; {d.pump.name}; {d.motor.name}",
        "accumulator": None if bank is None else bank.option.name,
        "count": 0 if bank is None else bank.count,
        "pump": d.pump.name,
        "motor": d.motor.name,
        "motor [kW]": d.motor.rated_power / 1e3,
        "capex": o.capex,
        "tco": o.tco,
        "total_gas_volume [L]": 0.0 if bank is None else bank.gas_volume * 1e3,
        "energy_per_cycle [kJ]": o.energy_per_cycle / 1e3,
        "precharge [bar]": math.nan
        if bank is None
        else (bank.precharge - study.settings.p_ambient) / 1e5,
        "on_front": False,
        "chosen": True,
    }


class Exploration(NamedTuple):
    """What :func:`explore_cycle` found (the frames the files hold).

    Attributes
    ----------
    front : pandas.DataFrame
        ``front.csv``: the designs on the front, and the chosen design (``chosen``).
    candidates : pandas.DataFrame
        Every candidate the screen found (the chart's grey points).
    sensitivity : pandas.DataFrame
        ``sensitivity.csv``: one row per case, with ``breaks_first`` marked.
    monte_carlo : pandas.DataFrame
        ``monte_carlo.csv``: one row per sample (empty without ``samples``).
    study : StudyResult
        The chosen design as the pipeline made it.
    """

    front: pd.DataFrame
    candidates: pd.DataFrame
    sensitivity: pd.DataFrame
    monte_carlo: pd.DataFrame
    study: StudyResult


def _chosen_key(d) -> tuple | None:
    if not d.feasible:
        return None
    bank = d.bank
    return (
        None if bank is None else bank.option.name,
        0 if bank is None else bank.count,
        d.pump.name,
        d.motor.name,
    )


def _sensitivity_frame(rows: list[dict], base_margin: float) -> pd.DataFrame:
    import pandas as pd

    frame = pd.DataFrame(rows, columns=list(SAMPLE_COLUMNS))
    frame["margin_change [bar]"] = frame["min_margin [bar]"] - base_margin / 1e5
    # Of the changes on their own, the one that leaves the least margin breaks first.
    single = frame["case"].isin([c.name for c in sensitivity_cases()[1:]])
    order = frame["min_margin [bar]"].fillna(-np.inf).where(single, np.inf)
    frame["breaks_first"] = False
    if single.any():
        frame.loc[order.idxmin(), "breaks_first"] = True
    return frame


def _combined(rows: list[dict]) -> Case:
    """Every change at the side that left the smaller margin on its own."""
    worst: dict[str, float] = {}
    for field_name, _values in CHANGES.values():
        neutral = 1.0 if field_name == "tau_factor" else 0.0
        mine = [r for r in rows if r[field_name] != neutral]
        if mine:
            pick = min(mine, key=lambda r: _margin_key(r["min_margin [bar]"]))
            worst[field_name] = pick[field_name]
    return Case("all together (each at its worse side)", **worst)


def _margin_key(x: float) -> float:
    return -math.inf if x is None or not math.isfinite(x) else float(x)


def explore_cycle(
    cycle: DutyCycle,
    catalogue: Catalogue,
    design: DesignSettings,
    costs: CostSettings,
    *,
    samples: int = 0,
    seed: int = 0,
    scheduler: str | None = None,
    workers: int | None = None,
    progress: Callable[[int, int, str], None] | None = None,
) -> Exploration:
    """The trade-off front and the sensitivity of one cycle's design, on Dask.

    Parameters
    ----------
    cycle : DutyCycle
        The duty cycle.
    catalogue : Catalogue
        Components.
    design, costs : DesignSettings, CostSettings
        Settings of the design and of its costs.
    samples : int
        Monte Carlo samples, [-] (0: none).
    seed : int
        Seed of the Monte Carlo draws.
    scheduler : str, optional
        A running Dask scheduler's address (default: a local cluster).
    workers : int, optional
        Worker processes of the local cluster, [-].
    progress : callable, optional
        ``progress(done, total, label)``.

    Returns
    -------
    Exploration
    """
    import pandas as pd
    from stowflow.pipeline import Study, run
    from stowflow.search.problem import make_problem
    from stowflow.search.screen import all_candidates
    from stowflow.studies.cluster import open_client

    report = progress or (lambda done, total, label: None)
    problem = make_problem(cycle, design)
    cands = all_candidates(problem, catalogue)
    chunks = [(i, min(i + FRONT_CHUNK, len(cands))) for i in range(0, len(cands), FRONT_CHUNK)]
    with open_client(scheduler, workers=workers) as client:
        [cyc_f, cat_f] = client.scatter([cycle, catalogue], broadcast=True)
        study = Study(cycle=cycle, catalogue=catalogue, settings=design, costs=costs)
        study_f = client.submit(run, study, pure=False)
        energy_fs = [
            client.submit(
                _energy_task, cyc_f, cat_f, design, cands[a:b], FRONT_PRECHARGES, pure=False
            )
            for a, b in chunks
        ]
        total = 1 + len(chunks) + len(sensitivity_cases()) + 1 + samples
        done = 0
        study = study_f.result()
        done += 1
        report(done, total, "designed")
        energies: list = []
        for f in energy_fs:
            energies += f.result()
            done += 1
            report(done, total, "trade-off front")
        sens_rows: list[dict] = []
        mc_rows: list[dict] = []
        d, v = study.design, study.verification
        if d.feasible and v is not None:
            setpoints = dict(v.setpoints) or None

            def submit(cases):
                return [
                    client.submit(_verify_case, c, d, cyc_f, design, setpoints, pure=False)
                    for c in cases
                ]

            one_at_a_time = submit(sensitivity_cases())
            mc = submit(draw_cases(samples, seed)) if samples > 0 else []
            for f in one_at_a_time:
                sens_rows.append(f.result())
                done += 1
                report(done, total, "sensitivity")
            [combined] = submit([_combined(sens_rows)])
            sens_rows.append(combined.result())
            done += 1
            for f in mc:
                mc_rows.append(f.result())
                done += 1
                report(done, total, "Monte Carlo")
    rows = [
        _candidate_row(c, e, p0, design, costs, cycle)
        for c, (e, p0) in zip(cands, energies, strict=True)
    ]
    allc = front_frame(rows, _chosen_key(study.design))
    front = allc[allc["on_front"] | allc["chosen"]].reset_index(drop=True)
    if not front["chosen"].any() and study.design.feasible:
        # The verification raised the requirement: the design is not one of the screen's
        # candidates; shown with its own costs (from the verified energy).
        front = pd.concat([front, pd.DataFrame([_design_row(study)])], ignore_index=True)
    base = study.verification.min_margin if study.verification is not None else math.nan
    sens = _sensitivity_frame(sens_rows, base)
    mc = pd.DataFrame(mc_rows, columns=list(SAMPLE_COLUMNS))
    return Exploration(*(_as_written(f) for f in (front, allc, sens, mc)), study)


def _csv(frame: pd.DataFrame) -> str:
    return frame.to_csv(index=False, lineterminator="\n")


def _as_written(frame: pd.DataFrame) -> pd.DataFrame:
    """The frame as its CSV file reads back (what a script gets equals what the files hold)."""
    import pandas as pd

    return pd.read_csv(io.StringIO(_csv(frame)))


def write_exploration(ex: Exploration, out) -> dict:
    """Write :data:`EXPLORE_OUTPUTS` into ``out`` as one set; return name → path."""
    from stowflow.report.folder import write_set
    from stowflow.studies.explore_html import render_explore

    texts = {
        "explore.html": render_explore(ex),
        "front.csv": _csv(ex.front),
        "sensitivity.csv": _csv(ex.sensitivity),
        "monte_carlo.csv": _csv(ex.monte_carlo),
    }
    return write_set(out, texts, "--out")
