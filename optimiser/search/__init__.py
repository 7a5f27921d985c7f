"""The design search: from a duty cycle and a catalogue to the least-installed-power design.

It never imports the time-domain verification (:mod:`stowflow.simulation`), which checks its
answer independently.

* :mod:`~stowflow.search.settings`: :class:`DesignSettings`, every knob of the search;
* :mod:`~stowflow.search.problem`: the cycle prepared for the search (:class:`Problem`) and
  the gas process of its discharge (``auto`` from the thermal time-constant model);
* :mod:`~stowflow.search.store`: the store curve on the quasi-static gas law (oil fraction and
  pressure, top of the window, heat of the refills) and a bank's bounds per precharge;
* :mod:`~stowflow.search.screen`: the exact screen (levels 1 and 2: least installed power,
  then least capex) and the reason when nothing meets the cycle;
* :mod:`~stowflow.search.schedule`: store balance, greedy schedule, independent checker;
* :mod:`~stowflow.search.milp`: the schedule MILP (Pyomo, solved by HiGHS), level 3;
* :mod:`~stowflow.search.designer`: ``design()``, screen → ranking → MILP → check;
* :mod:`~stowflow.search.baseline`: the pump-only supplies;
* :mod:`~stowflow.search.solution`: the result dataclasses (:class:`Design`, :class:`Bank`, …).
"""
