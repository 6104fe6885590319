"""How the audit's files write values: local instants to the second, rounded figures, plain JSON.

Hours are rounded to :data:`HOURS_DECIMALS` decimals (the identities between them hold exactly
before rounding, and ``summary.json`` also carries the exact ``seconds``).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pandas as pd

from schedcheck.outputs.instants import local_iso  # noqa: F401 - the one rounding rule

HOURS_DECIMALS = 3      # 0.001 h = 3.6 s: finer than the one-minute readings
ENERGY_DECIMALS = 3     # kWh and kg CO2e
COST_DECIMALS = 2


def _r(x: float, nd: int) -> float:
    x = float(x)
    return round(x, nd) + 0.0 if math.isfinite(x) else None


def _plain(value):
    """JSON-safe scalars and containers from numpy/pandas/dataclass values."""
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {f.name: _plain(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple, np.ndarray, pd.Index, pd.Series)):
        return [_plain(v) for v in list(value)]
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        return _r(value, 6)
    if isinstance(value, pd.Timedelta):
        return value.total_seconds()
    if isinstance(value, pd.Timestamp):
        return None if pd.isna(value) else value.isoformat()
    if value is None or (not isinstance(value, str) and pd.isna(value)):
        return None
    if hasattr(value, "isoformat"):
        return value.isoformat()
    return str(value)
