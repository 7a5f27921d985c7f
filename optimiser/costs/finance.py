"""Money over time: the pure functions behind :mod:`stowflow.costs.comparison`.

Electrical input of a motor, the present value of a constant annual amount (annuity), and the
simple and discounted payback of an extra purchase price.  Inputs and outputs in SI units and
the user's currency; no state.

References
----------
R. A. Brealey, S. C. Myers, F. Allen, *Principles of Corporate Finance*, McGraw-Hill
(present value of an annuity; payback period).
"""

from __future__ import annotations

import math

from stowflow.errors import SettingsError

__all__ = [
    "annuity_factor",
    "discounted_payback",
    "electrical_power",
    "present_value",
    "simple_payback",
]


def electrical_power(shaft_power: float, motor_efficiency: float) -> float:
    """Electrical input of a motor delivering ``shaft_power``.

    .. math:: P_{el} = P_{shaft} / \\eta_m

    Parameters
    ----------
    shaft_power : float
        Mechanical output of the motor (pump input), [W].
    motor_efficiency : float
        Motor efficiency at that load, [-].

    Returns
    -------
    float
        Electrical input power, [W].
    """
    if not (0 < motor_efficiency <= 1):
        raise SettingsError(f"motor efficiency must lie in (0, 1], got {motor_efficiency!r}")
    return shaft_power / motor_efficiency


def annuity_factor(rate: float, years: float) -> float:
    """Present value of 1 per year, paid at each year's end for ``years`` years.

    .. math:: a(r, N) = \\frac{1 - (1 + r)^{-N}}{r}, \\qquad a(0, N) = N

    Parameters
    ----------
    rate : float
        Discount rate, [1/year].
    years : float
        Number of years, [year].

    Returns
    -------
    float
        Annuity factor, [year].

    References
    ----------
    Brealey, Myers & Allen, *Principles of Corporate Finance*, McGraw-Hill: present value of
    an annuity.
    """
    if abs(rate) < 1e-12:
        return float(years)
    return (1.0 - (1.0 + rate) ** (-years)) / rate


def present_value(annual: float, rate: float, years: float) -> float:
    """Present value of a constant annual amount, [currency]: ``annual`` · a(r, N)."""
    return annual * annuity_factor(rate, years)


def simple_payback(extra_capex: float, savings_per_year: float) -> float | None:
    """Years until the savings repay the extra purchase price (no discounting).

    Parameters
    ----------
    extra_capex : float
        Extra capex of the option over the baseline, [currency]; ≤ 0 when it is cheaper.
    savings_per_year : float
        Running-cost saving per year, [currency/year].

    Returns
    -------
    float or None
        Payback time, [year]; 0 when the option costs no more up front, None when it never
        pays back.
    """
    if not (math.isfinite(extra_capex) and math.isfinite(savings_per_year)):
        return None
    if extra_capex <= 0:
        return 0.0
    if savings_per_year <= 0:
        return None
    return extra_capex / savings_per_year


def discounted_payback(extra_capex: float, savings_per_year: float, rate: float) -> float | None:
    """Years until the present value of the savings repays the extra purchase price.

    Solves :math:`s\\, a(r, t) = \\Delta C` for t, with the annuity factor taken continuous in t:

    .. math:: t = -\\ln(1 - r\\,\\Delta C / s) / \\ln(1 + r)

    Parameters
    ----------
    extra_capex : float
        Extra capex over the baseline, [currency].
    savings_per_year : float
        Saving per year, [currency/year].
    rate : float
        Discount rate, [1/year].

    Returns
    -------
    float or None
        Discounted payback, [year]; 0 when the option costs no more up front, None when the
        discounted savings never repay it.

    References
    ----------
    Brealey, Myers & Allen, *Principles of Corporate Finance*, McGraw-Hill: payback and
    present value of an annuity.
    """
    simple = simple_payback(extra_capex, savings_per_year)
    if simple is None or simple == 0.0 or abs(rate) < 1e-12:
        return simple
    k = 1.0 - rate * extra_capex / savings_per_year
    if k <= 0:
        return None  # the annuity's limit s/r never reaches the extra capex
    return -math.log(k) / math.log(1.0 + rate)
