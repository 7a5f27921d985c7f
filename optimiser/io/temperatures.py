"""A bare temperature range that the accumulator types in play make implausible.

A range typed without a unit is °C.  Typed by someone who thinks in °F (``30..110``), it
asks for gas at 110 °C - above what a bladder or diaphragm elastomer takes.  Rather than
design for that silently, :func:`check_bare_range` refuses it and says why and how to write
what was meant; with a unit (``30degF..110degF``, ``30degC..110degC``) the range stands as
written.
"""

from __future__ import annotations

import re
from collections.abc import Iterable

from stowflow.errors import SettingsError
from stowflow.units import kelvin_to_celsius

__all__ = ["ELASTOMER_LIMIT_C", "check_bare_range", "is_bare"]

#: Highest gas/oil temperature [°C] an accumulator type's elastomer separator takes in
#: ordinary service.  Nitrile (NBR) bladders and diaphragms, the usual make, are rated to
#: about 80 °C (common practice, no published source); a piston type has no elastomer
#: separator of that kind and no entry here.
ELASTOMER_LIMIT_C: dict[str, float] = {"bladder": 80.0, "diaphragm": 80.0}

_UNIT = re.compile(r"[a-z°]", re.I)


def is_bare(text) -> bool:
    """True when a temperature text carries no unit ("30..110"; not "30degF..110degF")."""
    return isinstance(text, str) and _UNIT.search(text.replace("e", "")) is None


def check_bare_range(text, t_max: float, types: Iterable[str], option: str) -> None:
    """Refuse a bare range whose hot end is above the elastomer limit of a type in play.

    Parameters
    ----------
    text : str
        The range as typed.
    t_max : float
        Its hot end, [K].
    types : iterable of str
        Accumulator types the design may use.
    option : str
        The option's name as the user sees it (``"--temperature"``).

    Raises
    ------
    SettingsError
        The range is bare and too hot for a bladder or diaphragm among ``types``; the message
        gives the limit, its standing and the two ways to write what was meant.
    """
    if not is_bare(text):
        return
    hot = float(kelvin_to_celsius(t_max))
    over = [t for t in types if t in ELASTOMER_LIMIT_C and hot > ELASTOMER_LIMIT_C[t]]
    if not over:
        return
    limit = min(ELASTOMER_LIMIT_C[t] for t in over)
    s = str(text).strip()
    lo_hi = s.split("..")
    f_form = "..".join(f"{v.strip()}degF" for v in lo_hi)
    c_form = "..".join(f"{v.strip()}degC" for v in lo_hi)
    raise SettingsError(
        f"{option}: '{s}' is read as °C and has {hot:g} °C, above the {limit:g} °C a "
        f"{' or '.join(over)} elastomer takes (common practice); if you meant °F write "
        f"{f_form}; if you meant °C write {c_form} (a piston type has no such elastomer)"
    )
