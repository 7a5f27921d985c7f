"""Plain JSON types from the numpy-laden values of results (design.json, ``--json``)."""

from __future__ import annotations

import math
from typing import Any

__all__ = ["to_jsonable"]


def to_jsonable(obj: Any) -> Any:
    """Turn numpy scalars/arrays, tuples, dataclass-like dicts into plain JSON types.

    Non-finite floats become ``null`` (JSON has no NaN).
    """
    try:
        import numpy as np
    except ImportError:  # pragma: no cover
        np = None
    if isinstance(obj, dict):
        return {str(k): to_jsonable(v) for k, v in obj.items()}
    if isinstance(obj, list | tuple):
        return [to_jsonable(v) for v in obj]
    if np is not None:
        if isinstance(obj, np.ndarray):
            return [to_jsonable(v) for v in obj.tolist()]
        if isinstance(obj, np.bool_):
            return bool(obj)
        if isinstance(obj, np.integer):
            return int(obj)
        if isinstance(obj, np.floating):
            obj = float(obj)
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    return obj
