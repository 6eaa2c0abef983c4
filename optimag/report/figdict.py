"""Figures as plain dicts, the way plotly.js takes them.

A figure is ``{"data": [trace, ...], "layout": {...}}`` with JSON values only (no
plotly graph objects, no numpy arrays): the renderers build these dicts directly, the
page embeds them as compact JSON and plotly.js draws each one when it comes into view.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pandas as pd

#: A figure as plotly.js takes it: ``{"data": [...], "layout": {...}}``.
Figure = dict[str, Any]

def trace(kind: str, **keys: Any) -> dict[str, Any]:
    """One trace as plotly.js takes it: its ``type`` and its keys."""
    return {"type": kind, **keys}


def _number(value: float) -> float | None:
    return value if math.isfinite(value) else None


def plain(value: Any) -> Any:
    """``value`` with numpy arrays, pandas Series and numpy scalars turned into lists,
    floats and ints (full precision: a drawn value is the record's value); non-finite
    numbers become None (JSON null: a gap to plotly.js)."""
    if isinstance(value, dict):
        return {str(key): plain(item) for key, item in value.items()}
    if isinstance(value, pd.Series | pd.Index):
        return plain(value.tolist())
    if isinstance(value, np.ndarray):
        return plain(value.tolist())
    if isinstance(value, list | tuple):
        return [plain(item) for item in value]
    if isinstance(value, bool | np.bool_):
        return bool(value)
    if isinstance(value, int | np.integer):
        return int(value)
    if isinstance(value, float | np.floating):
        return _number(float(value))
    if value is None or isinstance(value, str):
        return value
    if value is pd.NA or value is pd.NaT:
        return None
    raise TypeError(f"not a figure value: {type(value).__name__}")
