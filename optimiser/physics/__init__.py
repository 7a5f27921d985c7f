"""Physics: nitrogen, heat exchange, accumulator types and valve characteristics.

Pure functions and constants in SI units (Pa absolute, m³, K); nothing here imports anything
above it (only :mod:`stowflow.units`, :mod:`stowflow.errors` and third-party packages).

* :mod:`~stowflow.physics.gas`: ideal and real nitrogen (Span et al. 2000), precharge
  temperature shift, isothermal/isentropic/polytropic p–V maps;
* :mod:`~stowflow.physics.nitrogen`: the nitrogen property table built from CoolProp;
* :mod:`~stowflow.physics.thermal`: the Otis & Pourmovahed thermal time-constant model;
* :mod:`~stowflow.physics.accumulator`: accumulator types, their limits and precharge rules;
* :mod:`~stowflow.physics.valves`: relief-valve override and pressure-switch bands.
"""
