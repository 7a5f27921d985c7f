"""Valve and switch characteristics shared by the design search and the verification.

The search and the simulator must agree on how the supply's valves behave; keeping these
constants here, below both, lets the search use them without importing the simulator.

* :data:`RELIEF_OVERRIDE`: the relief valve's pressure override at full pump flow;
* :func:`switch_band`: the differential of a pressure switch or accumulator charging valve
  (the design settings give its fraction and least value);
* :data:`MIN_BAND_FRACTION`, :data:`MIN_BAND_PRESSURE`: the narrowest band a switch can
  resolve at all (its repeatability), and :func:`narrowest_band`;
* :data:`MIN_BAND_STROKE`: the narrowest position-switch band tried (piston types).
"""

from __future__ import annotations

import numpy as np
from stowflow.units import BAR

__all__ = [
    "MIN_BAND_FRACTION",
    "MIN_BAND_PRESSURE",
    "MIN_BAND_STROKE",
    "RELIEF_OVERRIDE",
    "narrowest_band",
    "switch_band",
]

#: Relief valve characteristic: it passes the full pump flow at this fraction of its cracking
#: gauge pressure above cracking (linear in between), [-].  Common practice for direct-acting
#: relief valves ("pressure override" of some 5-15 %), no published source.
RELIEF_OVERRIDE = 0.10

#: Narrowest pressure-switch band tried, as a fraction of the unload gauge pressure, [-], and
#: at least :data:`MIN_BAND_PRESSURE`.  About the repeatability of an industrial pressure
#: switch; common practice, no published source.
MIN_BAND_FRACTION = 0.01
#: Narrowest pressure-switch band tried, [Pa] (1 bar; common practice, no published source).
MIN_BAND_PRESSURE = 1.0 * BAR
#: Narrowest position-switch band tried, fraction of the stroke, [-] (common practice, no
#: published source).
MIN_BAND_STROKE = 0.01


def narrowest_band(off_gauge):
    """Narrowest pressure band tried for an unload gauge pressure.

    Parameters
    ----------
    off_gauge : float or array_like
        Unload (cut-out) gauge pressure, [Pa].

    Returns
    -------
    float or numpy.ndarray
        ``max(MIN_BAND_PRESSURE, MIN_BAND_FRACTION · off_gauge)``, [Pa].

    Examples
    --------
    The project's own rule (common practice, no published source): 1 % of the unload gauge
    pressure, and at least 1 bar.

    >>> from stowflow.units import BAR
    >>> print(f"{narrowest_band(200 * BAR) / BAR:.2f} bar")  # 1 % of 200 bar
    2.00 bar
    >>> print(f"{narrowest_band(50 * BAR) / BAR:.2f} bar")  # at least 1 bar
    1.00 bar
    """
    return np.maximum(MIN_BAND_PRESSURE, MIN_BAND_FRACTION * np.asarray(off_gauge, float))


def switch_band(off_gauge, fraction: float, minimum: float = 0.0):
    """Differential of a pressure switch below its cut-out (unload) setting.

    .. math:: \\Delta p_{sw} = \\max(f\\,p_{off,g},\\; \\Delta p_{min})

    A pressure switch or an accumulator charging valve loads the pump at
    :math:`p_{off} - \\Delta p_{sw}` and unloads it at :math:`p_{off}`.  Real switches hold a
    differential of about 10 % of the cut-out pressure at the least (common practice, from
    memory).  A differential of zero is the ideal switch of a hand calculation; a simulated
    switch is never narrower than :func:`narrowest_band`.

    Parameters
    ----------
    off_gauge : float or array_like
        Cut-out (unload) gauge pressure, [Pa].
    fraction : float
        Least differential as a fraction of the cut-out gauge pressure, [-].
    minimum : float
        Least differential in absolute terms, [Pa].

    Returns
    -------
    float or numpy.ndarray
        The differential, [Pa].

    Examples
    --------
    >>> round(float(switch_band(200e5, 0.10)) / 1e5, 1)  # 10 % of a 200 bar cut-out
    20.0
    >>> round(float(switch_band(200e5, 0.0, 15e5)) / 1e5, 1)  # a stated 15 bar
    15.0
    """
    off = np.asarray(off_gauge, float)
    return np.maximum(fraction * off, minimum)
