"""Durations as users write them (``90min``, ``2h``, ``1h30min``, ``PT2H``), and as the core
keeps them.

Durations inside the core are :class:`pandas.Timedelta`.
"""

from __future__ import annotations

import re

import pandas as pd

_SIMPLE = re.compile(
    r"^\s*(?:(\d+(?:\.\d+)?)\s*d)?\s*(?:(\d+(?:\.\d+)?)\s*h)?\s*"
    r"(?:(\d+(?:\.\d+)?)\s*min)?\s*(?:(\d+(?:\.\d+)?)\s*s)?\s*$"
)
_ISO = re.compile(
    r"^P(?:(\d+)D)?(?:T(?:(\d+(?:\.\d+)?)H)?(?:(\d+(?:\.\d+)?)M)?(?:(\d+(?:\.\d+)?)S)?)?$"
)


def parse_duration(text: str | int | float) -> pd.Timedelta:
    """Parse a duration: ``90min``, ``2h``, ``1h30min``, ``45s``, ``1d`` or ISO 8601 ``PT2H``.

    A bare number is minutes. Negative durations are refused.

    Raises
    ------
    ValueError
        With a message that says which forms are accepted (callers add file and key).
    """
    if isinstance(text, bool):
        raise ValueError(
            f"{text!r} is not a duration; write e.g. '90min', '2h', '1h30min' or 'PT2H'"
        )
    if isinstance(text, (int, float)):
        if text < 0:
            raise ValueError(f"duration {text!r} is negative")
        return _timedelta(text, minutes=float(text))
    if not isinstance(text, str):
        raise ValueError(
            f"{text!r} is not a duration; write e.g. '90min', '2h', '1h30min' or 'PT2H'"
        )
    s = text.strip()
    m = _ISO.match(s.upper()) if s.upper().startswith("P") else None
    if m and any(m.groups()):
        d, h, mi, sec = (float(g) if g else 0.0 for g in m.groups())
        return _timedelta(text, days=d, hours=h, minutes=mi, seconds=sec)
    m = _SIMPLE.match(s.lower())
    if s and m and any(m.groups()):
        d, h, mi, sec = (float(g) if g else 0.0 for g in m.groups())
        return _timedelta(text, days=d, hours=h, minutes=mi, seconds=sec)
    raise ValueError(f"{text!r} is not a duration; write e.g. '90min', '2h', '1h30min' or 'PT2H'")


def _timedelta(text, **parts: float) -> pd.Timedelta:
    """``pd.Timedelta(**parts)``, with a plain message when the value is beyond its range."""
    try:
        return pd.Timedelta(**parts)
    except (OverflowError, ValueError):
        raise ValueError(f"{text!r} is too long for a duration") from None


def format_duration(td: pd.Timedelta) -> str:
    """Short human form of a duration: ``2h``, ``1h30min``, ``45s``."""
    total = int(round(pd.Timedelta(td).total_seconds()))
    sign = "-" if total < 0 else ""
    total = abs(total)
    h, rem = divmod(total, 3600)
    m, s = divmod(rem, 60)
    out = (f"{h}h" if h else "") + (f"{m}min" if m else "") + (f"{s}s" if s else "")
    return sign + (out or "0min")
