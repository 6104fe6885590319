"""Which low level groups are a stopped machine, and which are a running level.

Part of run-state classification (see :mod:`schedcheck.runstate.onofflevel`). Two questions the
level histogram alone cannot answer:

* Is a low group, above the floor, a stopped machine (at the sensor's resolution, or shaken
  by machines outside the unit) or a fan at reduced speed? :func:`idle_reason`.
* Do two running groups take turns within days (speeds) or occupy separate blocks of weeks (a
  level that drifted or jumped: a filter loading up, a belt wearing, a sensor re-mounted)?
  :func:`level_blocks`.

Defaults (each with its source):

* ``STOPPED_STEPS`` = 10: a lowest group within ten reading steps of zero is the sensor at rest
  (a whole-mg sensor's own noise is a few mg per axis; common practice, no source).
* ``IDLE_RATIO`` = 0.085 (setting ``idle_ratio``): a low group at most this share of the running
  level (both measured above the noise of a stopped group below, in quadrature) is idle
  vibration of a stopped machine. A
  fan set back to 30 % speed reads about 0.3^2 = 9 % of its full level if vibration follows
  the square of speed (an imbalance force, F = m e w^2, in any machine dynamics text) and more
  (10-20 %) where it follows a lower power; idle vibration carried from neighbours is
  typically 3-8 % (common practice, no source); the default lies between. A setback fan down
  to about 30 % speed is therefore *running* by default.
* ``SHIFT_DAYS`` = 7 (setting ``shift_days``): blocks of at least a week on average, with at
  least ``BLOCK_SHARE`` = 90 % of the lower group's readings on days where it holds at least
  90 % of the running readings, are a level shift, not a second speed (common practice, no
  source).
"""

from __future__ import annotations

import datetime as dt

import numpy as np

STOPPED_STEPS = 10.0       # [reading steps]
IDLE_RATIO = 0.085         # [-]
SHIFT_DAYS = 7             # [d]
BLOCK_SHARE = 0.9          # [-]
_DAY = 86_400 * 10**9


def idle_reason(low: float, running: float, step: float,
                idle_ratio: float = IDLE_RATIO, *, noise: float = 0.0) -> str | None:
    """Why a low group (median ``low``) counts as stopped, or None when it is a running level.

    Parameters
    ----------
    low, running : float
        Medians of the low group and of the running group above it [reading unit].
    step : float
        The reading step (0 = not quantised) [reading unit].
    idle_ratio : float
        Largest share of the running level an idle group may have [-].
    noise : float
        Median of a stopped group below (0: none) [reading unit]. Independent vibrations add
        in quadrature (RMS of uncorrelated signals), so the ratio compares the levels above
        this noise: sqrt(low^2 - noise^2) against sqrt(running^2 - noise^2).
    """
    if step > 0 and low <= STOPPED_STEPS * step:
        return (f"the low group (median {low:.3g}) lies within {STOPPED_STEPS:g} reading steps "
                f"({step:g}) of zero, the sensor's own noise: stopped")
    own, top = np.sqrt(max(low**2 - noise**2, 0.0)), np.sqrt(max(running**2 - noise**2, 0.0))
    if top > 0 and own <= idle_ratio * top:
        above = " above the stopped level's noise" if noise > 0 else ""
        return (f"the low group (median {low:.3g}) reads {own / top:.1%} of the running "
                f"level{above} (at most {idle_ratio:.1%}): idle vibration of a stopped machine")
    return None


def level_blocks(t: np.ndarray, lower: np.ndarray, running: np.ndarray,
                 shift_days: int = SHIFT_DAYS) -> list[tuple[dt.date, dt.date]] | None:
    """Blocks of days in which the lower of two running groups holds the running readings.

    Parameters
    ----------
    t : ndarray of int64
        Reading instants [ns since epoch, UTC].
    lower, running : ndarray of bool
        Readings in the lower group; readings in either running group.
    shift_days : int
        Smallest average block length [d].

    Returns
    -------
    list of (date, date) or None
        First and last UTC date of each block when the groups occupy separate blocks of at
        least ``shift_days`` days on average; None when they alternate within days.
    """
    if t.size != lower.size or not running.any() or not lower.any():
        return None
    day = t[running] // _DAY
    low = lower[running]
    days, inv = np.unique(day, return_inverse=True)
    total = np.bincount(inv).astype(float)
    nlow = np.bincount(inv, weights=low.astype(float))
    low_day = nlow >= BLOCK_SHARE * total
    if low_day.all() or nlow[low_day].sum() < BLOCK_SHARE * nlow.sum():
        return None
    edges = np.flatnonzero(np.diff(np.concatenate([[0], low_day.astype(np.int8), [0]])))
    first, last = edges[0::2], edges[1::2] - 1
    length = (days[last] - days[first] + 1).astype(float)
    if length.mean() < shift_days:
        return None
    epoch = dt.date(1970, 1, 1)
    return [(epoch + dt.timedelta(days=int(days[a])), epoch + dt.timedelta(days=int(days[b])))
            for a, b in zip(first, last, strict=True)]


def describe_blocks(blocks: list[tuple[dt.date, dt.date]], low: float, high: float) -> str:
    """One warning naming the dates of a level shift."""
    spans = ", ".join(f"{a.isoformat()} to {b.isoformat()}" for a, b in blocks[:4])
    more = f" and {len(blocks) - 4} more" if len(blocks) > 4 else ""
    return (f"the running level shifted: from {spans}{more} it was about {low:.3g} instead of "
            f"{high:.3g} (a filter loading up, a belt wearing or a re-mounted sensor?); both "
            "counted as running")
