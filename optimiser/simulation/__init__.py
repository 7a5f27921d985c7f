"""The time-domain verification of a design, with real nitrogen and heat exchange.

* :mod:`~stowflow.simulation.verify`: ``verify()`` at the coldest and hottest temperature;
* :mod:`~stowflow.simulation.controllers`: schedule, pressure-switch and position-switch
  controllers and the search of their settings;
* private: ``_setup`` (plant and starting state), ``_loop`` (event loop to the periodic
  steady state), ``_integrator`` (gas charge, plant, step maps), ``_assess`` (checks and
  figures of a steady state).  Only this subpackage imports them.
"""
