"""Audit windows: local dates (inclusive) to UTC instants ``[start, end)``."""

from __future__ import annotations

import datetime as dt
import functools
import zoneinfo

import pandas as pd


@functools.lru_cache(maxsize=65536)   # pure: the audit asks for the same days thousands of times
def local_midnight(day: dt.date, tz: str) -> pd.Timestamp:
    """The first instant of local date ``day`` in zone ``tz`` (UTC).

    Where midnight itself does not exist (a daylight-saving change at 00:00, or a whole day
    skipped, as Pacific/Apia skipped 30 December 2011), the day starts at the first valid local
    instant after it: the end of the gap. (pandas' ``nonexistent="shift_forward"`` moves by an
    hour, not by the gap, so a skipped day would come out 25 h long and the next -1 h.)
    """
    ts = pd.Timestamp(dt.datetime(day.year, day.month, day.day))
    try:
        return ts.tz_localize(tz, nonexistent="raise", ambiguous=True).tz_convert("UTC").as_unit(
            "ns")
    except Exception:  # noqa: BLE001 - pytz-style NonExistentTimeError from pandas
        return _gap_end(day, tz)


def _gap_end(day: dt.date, tz: str) -> pd.Timestamp:
    """The UTC instant at which the daylight-saving gap holding local midnight of ``day`` ends."""
    zone = zoneinfo.ZoneInfo(tz)
    naive = dt.datetime(day.year, day.month, day.day)
    lo = int(naive.replace(tzinfo=zone, fold=1).timestamp())   # read with the offset after
    hi = int(naive.replace(tzinfo=zone, fold=0).timestamp())   # ... and with the one before
    lo, hi = min(lo, hi), max(lo, hi)

    def offset(t: int) -> dt.timedelta:
        return dt.datetime.fromtimestamp(t, zone).utcoffset()

    before = offset(lo - 1)
    while hi - lo > 1:                 # the offset changes once in [lo, hi]: find where
        mid = (lo + hi) // 2
        if offset(mid) == before:
            lo = mid
        else:
            hi = mid
    end = hi if offset(hi) != before else lo
    return pd.Timestamp(end, unit="s", tz="UTC").as_unit("ns")


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
    # a local date that does not exist (Pacific/Apia skipped 30 December 2011) starts and ends
    # at one instant: it has no row
    keep = [i for i in range(len(dates)) if edges[i + 1] > edges[i]]
    if len(keep) < len(dates):
        dates = [dates[i] for i in keep]
        edges = [edges[i] for i in keep] + [edges[-1]]
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
