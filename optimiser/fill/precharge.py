"""The precharge a gauge should read at a measured temperature (for checks on site).

The precharge is a mass of nitrogen fixed at 20 °C; at any other temperature the gauge reads
the pressure on the isochore through (p0 at 20 °C, 293.15 K): real gas from the Span et al.
(2000) equation of state, ideal gas :math:`p_0(T) = p_{0,ref} T / 293.15\\,K` (absolute).

References
----------
.. [1] R. Span et al., J. Phys. Chem. Ref. Data 29(6), 1361-1433 (2000),
   doi:10.1063/1.1349047.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from stowflow.physics.gas import precharge_at
from stowflow.units import bar_gauge, kelvin_to_celsius, to_unit

__all__ = ["precharge_table"]


def precharge_table(p0_ref: float, temperatures, model: str = "real") -> pd.DataFrame:
    """The precharge a gauge should read at each temperature (isochore through 20 °C).

    .. math:: p_0(T) = p(\\rho_0, T), \\quad \\rho_0 = \\rho(p_{0,ref}, 293.15\\,K);
              \\qquad \\text{ideal: } p_0(T) = p_{0,ref}\\, T / 293.15\\,K

    Parameters
    ----------
    p0_ref : float
        Precharge at 20 °C, absolute, [Pa].
    temperatures : array_like
        Temperatures at which it is read, [K].
    model : {"real", "ideal"}
        Gas model.

    Returns
    -------
    pandas.DataFrame
        ``temperature [°C]``, ``precharge_gauge [bar]``, ``precharge_absolute [bar]``.
    """
    ts = np.atleast_1d(np.asarray(temperatures, dtype=float))
    p = np.atleast_1d(precharge_at(p0_ref, ts, model))
    return pd.DataFrame(
        {
            "temperature [°C]": kelvin_to_celsius(ts),
            "precharge_gauge [bar]": bar_gauge(p),
            "precharge_absolute [bar]": to_unit(p, "bar", "pressure"),
        }
    )
