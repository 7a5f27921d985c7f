"""Money over time: the pure functions behind :mod:`stowflow.costs.comparison`.

Electrical input of a motor, the present value of a constant annual amount (annuity), the
simple and discounted payback of an extra purchase price, and the verdict in words.  Inputs
and outputs in SI units and the user's currency; no state.

References
----------
R. A. Brealey, S. C. Myers, F. Allen, *Principles of Corporate Finance*, McGraw-Hill
(present value of an annuity; payback period).
"""

from __future__ import annotations

import math

from stowflow.errors import SettingsError

__all__ = [
    "VERDICTS",
    "annuity_factor",
    "discounted_payback",
    "electrical_power",
    "payback_words",
    "present_value",
    "simple_payback",
    "verdict",
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


def payback_words(years: float | None) -> str:
    """A payback time in words: "at once", "under 1 month", "5 months", "2.3 years", "never".

    Parameters
    ----------
    years : float or None
        Payback time, [year]; None: never.

    Returns
    -------
    str
    """
    if years is None or not math.isfinite(years):
        return "never"
    if years <= 0:
        return "at once"
    months = 12.0 * years
    if months < 1.0:
        return "under 1 month"
    if round(months) < 12:
        k = round(months)
        return f"{k} month" if k == 1 else f"{k} months"
    return f"{years:.1f} years"


#: The verdicts of one comparison: the accumulator supply against one alternative.
VERDICTS: tuple[str, ...] = ("cheaper", "pays-back", "cheaper-to-buy", "no-payback")


def verdict(
    extra_capex: float,
    savings_per_year: float,
    rate: float,
    years: int,
    currency: str = "",
) -> tuple[str, str, bool]:
    """The verdict of an option against an alternative, in a code and in words.

    * ``"cheaper"``: it costs no more to buy and no more to run: "costs less to buy and to
      run";
    * ``"pays-back"``: it costs more to buy, and the discounted savings repay that within the
      horizon: "pays back in 1.4 years (1.5 discounted)" (payback times by
      :func:`payback_words`: "under 1 month" rather than "0.0 years");
    * ``"no-payback"``: it costs more to buy, and the discounted savings do not repay that
      within the horizon: "does not pay back within 10 years (...)";
    * ``"cheaper-to-buy"``: it costs less to buy but more to run; the words say which costs
      less over the horizon.

    Parameters
    ----------
    extra_capex : float
        Capex of the option over the alternative's, [currency].
    savings_per_year : float
        Running cost saved per year, [currency/year].
    rate : float
        Discount rate, [1/year].
    years : int
        Horizon, [year].
    currency : str
        Currency label for the words.

    Returns
    -------
    code : str
        One of :data:`VERDICTS`.
    words : str
        The verdict in words.
    pays_off : bool
        True when the option costs no more than the alternative over the horizon.
    """
    cur = f" {currency}" if currency else ""
    simple = simple_payback(extra_capex, savings_per_year)
    disc = discounted_payback(extra_capex, savings_per_year, rate)
    if extra_capex <= 0 and savings_per_year >= 0:
        return "cheaper", "costs less to buy and to run", True
    if extra_capex <= 0:
        over = annuity_factor(rate, years) * -savings_per_year + extra_capex
        less = over <= 0
        return (
            "cheaper-to-buy",
            f"costs {-extra_capex:,.0f}{cur} less to buy but {-savings_per_year:,.0f}{cur} a "
            f"year more to run: costs {'less' if less else 'more'} over {years} years",
            less,
        )
    if disc is not None and disc <= years:
        when = payback_words(simple)
        if abs(disc - simple) * 12 >= 0.5:
            when += f" ({payback_words(disc)} discounted)"
        return "pays-back", f"pays back in {when}", True
    if savings_per_year < 0:
        why = "it costs more to buy and more to run"
    elif simple is None:
        why = "it costs more to buy and saves nothing a year"
    elif disc is None:
        why = (
            f"simple payback {payback_words(simple)}, but at {rate:.1%} discount the savings "
            "never repay the extra capex"
        )
    else:
        why = f"simple payback {payback_words(simple)}, {payback_words(disc)} discounted"
    return "no-payback", f"does not pay back within {years} years ({why})", False
