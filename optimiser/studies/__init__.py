"""Studies at scale on Dask: a fleet of cycles (``stowflow batch``) and one design's
trade-off front and sensitivity (``stowflow explore``).

* :mod:`~stowflow.studies.cluster`: the Dask client, a local cluster sized to the machine
  or an existing scheduler's address;
* :mod:`~stowflow.studies.batch`: every cycle of a folder or glob designed with shared
  settings and per-cycle overrides, one output folder each, ``summary.csv`` and
  ``fleet.html``;
* :mod:`~stowflow.studies.explore`: the non-dominated designs of the screen over installed
  power, capex, TCO and gas volume, and the chosen design re-verified under changed
  conditions (one at a time, combined, Monte Carlo).

The layer sits beside the front door: it runs :func:`stowflow.pipeline.run` and writes with
:mod:`stowflow.report`; the CLI and :mod:`stowflow.api` are thin shells over it.
"""

from __future__ import annotations

__all__: list[str] = []
