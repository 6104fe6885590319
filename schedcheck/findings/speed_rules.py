"""Finding kinds of reduced-speed running: ``setback`` and ``over_speed``.

The time rules (:mod:`.rules`) find off-schedule running by when it happens (``night``,
``weekend``, ``holiday``). Where the running a finding covers is mostly at reduced speed, the
finding is a ``setback`` (set back instead of stopped); where it is mostly above the limit of an
allowed window with ``max_speed`` or of ``standby_speed``, it is ``over_speed``. A finding keeps
its interval, hours and energy (each off-schedule minute belongs to one finding); only its kind
and sentence change.

Defaults (common practice, no source):

* ``MOSTLY`` = 0.9: the share of a finding's off-schedule running that decides its kind.
* ``REDUCED`` = 0.75: a speed at most this share of the top running speed is reduced.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from schedcheck.intervals import NS_PER_H, Intervals, to_ns
from schedcheck.runstate.speeds import SpeedPieces

MOSTLY = 0.9
REDUCED = 0.75
RETYPED = ("night", "weekend", "holiday", "continuous")


def _share(part: Intervals, whole: Intervals, s: np.ndarray, e: np.ndarray) -> np.ndarray:
    a = part.cumulative_ns(e) - part.cumulative_ns(s)
    b = whole.cumulative_ns(e) - whole.cumulative_ns(s)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(b > 0, a / b, 0.0)


def speed_kinds(found: pd.DataFrame, pieces: SpeedPieces, off_schedule: Intervals,
                zones: Intervals, tz: str) -> pd.DataFrame:
    """``found`` (one component's findings) with ``setback`` and ``over_speed`` kinds.

    Parameters
    ----------
    found : DataFrame
        ``kind``, ``start``, ``end`` (UTC), ``detail``.
    pieces : SpeedPieces
        The component's run time by speed.
    off_schedule : Intervals
        Its off-schedule running [UTC ns].
    zones : Intervals
        Where a speed limit applies (allowed windows with ``max_speed``, standby) [UTC ns].
    tz : str
        The site's zone, for the sentence's clock times.
    """
    if len(found) == 0 or pieces.starts.size == 0:
        return found
    f = found.copy()
    s, e = to_ns(f["start"]), to_ns(f["end"])
    top = float(pieces.speed.max())
    low = Intervals.from_arrays(pieces.starts[pieces.speed <= REDUCED * top],
                                pieces.ends[pieces.speed <= REDUCED * top]) & off_schedule
    over = off_schedule & zones
    kinds = f["kind"].astype(str).to_numpy()
    retype = np.isin(kinds, RETYPED)
    is_over = retype & (_share(over, off_schedule, s, e) >= MOSTLY)
    is_low = retype & ~is_over & (_share(low, off_schedule, s, e) >= MOSTLY)
    details = f["detail"].astype(str).tolist()
    for i in np.flatnonzero(is_over | is_low):
        inside = off_schedule & Intervals.from_arrays([s[i]], [e[i]])
        w = pieces.overlap_ns(inside)
        sp = float((pieces.speed * w).sum() / w.sum()) if w.sum() > 0 else top
        a = pd.Timestamp(int(inside.starts[0]) if len(inside) else s[i], tz="UTC").tz_convert(tz)
        b = pd.Timestamp(int(inside.ends[-1]) if len(inside) else e[i], tz="UTC").tz_convert(tz)
        hours = inside.duration_ns() / NS_PER_H
        when = (f"from {a:%H:%M} to {b:%H:%M}" if b - a < pd.Timedelta("1D") else
                f"outside the occupied periods from {a:%Y-%m-%d %H:%M} to {b:%Y-%m-%d %H:%M}")
        if is_over[i]:
            kinds[i] = "over_speed"
            details[i] = (f"ran at about {sp:.0%} speed above the allowed speed {when} "
                          f"({hours:.1f} h); only the energy above the "
                          f"limit is counted{{energy}}. " + details[i].replace("{energy}", ""))
        else:
            kinds[i] = "setback"
            details[i] = (f"set back to about {sp:.0%} speed {when} "
                          f"({hours:.1f} h) instead of stopped: stopped would save the "
                          f"energy{{energy}}. " + details[i].replace("{energy}", ""))
    f["kind"] = kinds
    f["detail"] = details
    return f
