"""Audit windows: local dates (inclusive) to UTC instants ``[start, end)``."""

from __future__ import annotations

import datetime as dt

import pandas as pd


def local_midnight(day: dt.date, tz: str) -> pd.Timestamp:
    """The first instant of local date ``day`` in zone ``tz`` (UTC).

    Where midnight itself does not exist (a daylight-saving change at 00:00), the day starts at
    the first valid local instant after it.
    """
    ts = pd.Timestamp(dt.datetime(day.year, day.month, day.day))
    return (
        ts.tz_localize(tz, nonexistent="shift_forward", ambiguous=True)
        .tz_convert("UTC")
        .as_unit("ns")
    )


def last_local_date(end: pd.Timestamp, tz: str) -> dt.date:
    """The local date of the last instant of a window ``[start, end)`` in zone ``tz``."""
    return (end - pd.Timedelta(1, "ns")).tz_convert(tz).date()


def day_window(first: dt.date, last: dt.date, tz: str) -> tuple[pd.Timestamp, pd.Timestamp]:
    """UTC ``[start, end)`` covering local dates ``first`` .. ``last``, both inclusive."""
    if last < first:
        raise ValueError(f"the window ends ({last}) before it starts ({first})")
    return local_midnight(first, tz), local_midnight(last + dt.timedelta(days=1), tz)


def day_edges(first: dt.date, last: dt.date, tz: str) -> tuple[list[dt.date], pd.DatetimeIndex]:
    """Local dates first..last and the UTC instants of their boundaries (len(dates) + 1)."""
    dates = [first + dt.timedelta(days=i) for i in range((last - first).days + 1)]
    edges = [local_midnight(d, tz) for d in dates] + [
        local_midnight(last + dt.timedelta(days=1), tz)
    ]
    return dates, pd.DatetimeIndex(edges)


def whole_days_covered(
    first_instant: pd.Timestamp, last_instant: pd.Timestamp, tz: str
) -> tuple[dt.date, dt.date]:
    """Local dates fully covered by data running from ``first_instant`` to ``last_instant``.

    A day counts when the data starts at or before its local midnight (within a minute) and ends
    at or after the next; when no day is whole, the partial days are returned so that there is
    always a window.
    """
    slack = pd.Timedelta("1min")
    a = first_instant.tz_convert(tz)
    b = last_instant.tz_convert(tz)
    first = a.date()
    if (a - local_midnight(first, tz).tz_convert(tz)) > slack:
        first = first + dt.timedelta(days=1)
    last = b.date()
    if (local_midnight(last + dt.timedelta(days=1), tz).tz_convert(tz) - b) > slack:
        last = last - dt.timedelta(days=1)
    if last < first:
        return a.date(), b.date()
    return first, last
