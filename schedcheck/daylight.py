"""Daylight-saving changes of a time zone, and how far before a window the clock check reaches.

Shared by the look-back (:mod:`schedcheck.runstate.lookback`, which reads enough days before a
window) and the clock rule (:mod:`schedcheck.findings.clock`, which compares the days around a
change). It sits at the top of the package, beside :mod:`schedcheck.window`, so that the run
states stage does not import the findings stage (the data flow runs runstate -> findings).
"""

from __future__ import annotations

import datetime as dt
from zoneinfo import ZoneInfo

#: The reference days reach this far before the latest change before a window: the clock
#: rule's ten working days and a week for holidays and gaps. Common practice, no source.
CLOCK_REACH = dt.timedelta(days=21)


def changes(first: dt.date, last: dt.date, tz: str) -> list[tuple[dt.date, float]]:
    """Daylight-saving changes: (local date of the change, change of UTC offset [min])."""
    zone = ZoneInfo(tz)

    def offset(day: dt.date) -> float:
        return dt.datetime(day.year, day.month, day.day, 12, tzinfo=zone).utcoffset() \
            .total_seconds() / 60

    out = []
    prev = offset(first - dt.timedelta(days=1))
    for i in range((last - first).days + 1):
        day = first + dt.timedelta(days=i)
        now = offset(day)
        if now != prev:
            out.append((day, now - prev))
        prev = now
    return out


def reference_first(first: dt.date, tz: str) -> dt.date | None:
    """The first local date the clock rule needs before a window that begins on ``first``:
    :data:`CLOCK_REACH` before the latest daylight-saving change in the year before it (None
    where the zone had no change)."""
    found = changes(first - dt.timedelta(days=366), first - dt.timedelta(days=1), tz)
    return found[-1][0] - CLOCK_REACH if found else None
