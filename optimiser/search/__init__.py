"""The design search: from a duty cycle and a catalogue to the least-installed-power design.

It never imports the time-domain verification (:mod:`stowflow.simulation`), which checks its
answer independently.

* :mod:`~stowflow.search.settings`: :class:`DesignSettings`, every knob of the search;
* :mod:`~stowflow.search.screen`: problem preparation, the store curve and the exact screen
  (levels 1 and 2: least installed power, then least capex);
* :mod:`~stowflow.search.schedule`: store balance, greedy schedule, independent checker;
* :mod:`~stowflow.search.milp`: the schedule MILP (Pyomo, solved by HiGHS), level 3;
* :mod:`~stowflow.search.designer`: ``design()``, screen → ranking → MILP → check;
* :mod:`~stowflow.search.baseline`: the pump-only supplies;
* :mod:`~stowflow.search.solution`: the result dataclasses (:class:`Design`, :class:`Bank`, …).
"""
