"""stowflow: least-installed-power hydraulic supply design with gas-loaded accumulators.

From Python (the functions live in :mod:`stowflow.api`)::

    import stowflow
    cycle = stowflow.read_cycle("duty_cycles/forming_press.csv")   # or a DataFrame
    r = stowflow.design(cycle, temperature="10..50")   # design → verify → costs
    r.summary["motor_rated_kw"], r.schedule, r.costs, r.verification
    r.write("reports/press")                            # the files `stowflow design` writes

* :func:`read_cycle`: a duty cycle from a CSV file or a DataFrame with the same columns;
* :func:`load_catalogue`: a component catalogue (default: the bundled demo one);
* :func:`design`: the whole job of ``stowflow design``, a :class:`DesignResult`;
* :func:`simulate`: the time-domain verification of a design, a :class:`SimulationResult`;
* :func:`size`: single-point accumulator sizing, a :class:`pandas.Series`;
* :func:`batch`, :func:`explore`: a fleet of cycles, one design's trade-offs (on Dask);
* :func:`settings`: the settings objects that :func:`design`'s keywords make;
* :class:`StowflowError`: what every bad input raises (one line).

The names are imported on first use, so ``import stowflow`` (and the command line's
start-up) loads neither pandas nor the optimiser.

The subpackages follow the data flow: :mod:`~stowflow.physics` (nitrogen, heat exchange,
accumulator types, valves), :mod:`~stowflow.cycle` (the duty-cycle CSV and its grid),
:mod:`~stowflow.catalogue`, :mod:`~stowflow.search` (the design search and the schedule MILP),
:mod:`~stowflow.simulation` (the time-domain verification), :mod:`~stowflow.costs`,
:mod:`~stowflow.report`, then :mod:`~stowflow.pipeline` and :mod:`~stowflow.api` on top;
:mod:`~stowflow.cli` and :mod:`~stowflow.web` are thin shells over them.
"""

from __future__ import annotations

from stowflow._deps import trim_pyomo_scipy_hook
from stowflow.version import __version__

trim_pyomo_scipy_hook()

#: The front door's names and the module each comes from (imported on first use, PEP 562).
_LAZY: dict[str, str] = {
    "DesignResult": "api",
    "SimulationResult": "api",
    "batch": "api",
    "design": "api",
    "explore": "api",
    "load_catalogue": "api",
    "read_cycle": "api",
    "settings": "api",
    "simulate": "api",
    "size": "api",
    "StowflowError": "errors",
}

__all__ = [
    "DesignResult",
    "SimulationResult",
    "StowflowError",
    "__version__",
    "batch",
    "design",
    "explore",
    "load_catalogue",
    "read_cycle",
    "settings",
    "simulate",
    "size",
]


def __getattr__(name: str):
    """Import a front-door name on first use (PEP 562)."""
    where = _LAZY.get(name)
    if where == "api":
        from stowflow import api as module
    elif where == "errors":
        from stowflow import errors as module
    else:
        raise AttributeError(f"module 'stowflow' has no attribute {name!r}")
    value = getattr(module, name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    """The module's names with the lazy ones (PEP 562)."""
    return sorted(set(globals()) | set(__all__))
