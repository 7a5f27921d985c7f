"""Cost options shared by the commands that price a design (``design``, ``demo``).

:func:`add_cost_options` adds one argument group built from
:data:`stowflow.io.options.COST_OPTIONS`; :func:`cost_settings_from_args` hands the parsed
strings to :func:`stowflow.io.options.cost_settings`, the parser the web page uses too.  Values
carry their units: ``--energy-price 0.25/kWh`` (or ``0.25EUR/kWh``, ``250/MWh``),
``--hours-per-year 4000``, ``--cycle-time 40s``.  Bad values raise a one-line
:class:`~stowflow.errors.UnitsError` or :class:`~stowflow.errors.SettingsError` that names
the option (the parsers of :mod:`stowflow.io.quantities`).
"""

from __future__ import annotations

import argparse

from stowflow.costs.comparison import CostSettings
from stowflow.io.options import COST_OPTIONS, EXCLUSIVE_COST_OPTIONS, cost_settings

__all__ = ["add_cost_options", "cost_settings_from_args"]


def add_cost_options(parser: argparse.ArgumentParser) -> argparse._ArgumentGroup:
    """Add the ``costs`` option group to ``parser`` and return it."""
    g = parser.add_argument_group(
        "costs", "what energy costs and how long the machine runs (defaults are examples)"
    )
    rate = g.add_mutually_exclusive_group()
    for key, (metavar, text) in COST_OPTIONS.items():
        target = rate if key in EXCLUSIVE_COST_OPTIONS else g
        target.add_argument(
            "--" + key.replace("_", "-"),
            metavar=metavar,
            help=text.replace("%", "%%"),
        )
    return g


def cost_settings_from_args(args: argparse.Namespace) -> CostSettings:
    """Build :class:`CostSettings` from parsed arguments (missing options keep the defaults).

    Parameters
    ----------
    args : argparse.Namespace
        Arguments of a parser that :func:`add_cost_options` extended.

    Returns
    -------
    CostSettings
        The settings, validated.
    """
    return cost_settings({key: getattr(args, key, None) for key in COST_OPTIONS})
