"""The audit window: which local dates to audit, readings cut to it, and what its edges say."""

from __future__ import annotations

import dataclasses
import datetime as dt

import pandas as pd

from schedcheck.errors import InputError
from schedcheck.readings.cleaning import Readings
from schedcheck.readings.health import health_over
from schedcheck.readings.spans import data_days
from schedcheck.site import Site
from schedcheck.window import last_local_date

#: Edges of the window within this of the first or last reading are not mentioned. Common
#: practice, no source.
EDGE_SLACK = pd.Timedelta("1h")


def audit_window(site: Site, first: dt.date | None, last: dt.date | None,
                 readings: Readings | None = None) -> tuple[dt.date, dt.date]:
    """The local dates to audit: the options, else the whole days covered by the data.

    Parameters
    ----------
    site : Site
    first, last : datetime.date, optional
        Local dates given by the user, both inclusive.
    readings : Readings, optional
        All readings of the site (unwindowed); needed when ``first`` or ``last`` is missing.
    """
    if first is None or last is None:
        if readings is None:
            raise ValueError("audit_window needs the readings to find a missing date")
        d0, d1 = data_days(readings, site)
        if first is not None and first > d1:
            raise InputError(f"{first} is after the last whole day of readings ({d1}); give "
                             "--to as well to audit days without data", key="--from")
        if last is not None and last < d0:
            raise InputError(f"{last} is before the first whole day of readings ({d0}); give "
                             "--from as well to audit days without data", key="--to")
        first = first or d0
        last = last or d1
    if last < first:
        raise InputError(f"the window ends ({last}) before it starts ({first})", key="--to")
    return first, last


def clip_readings(readings: Readings, start: pd.Timestamp, end: pd.Timestamp,
                  max_gap: pd.Timedelta) -> Readings:
    """Readings loaded without a window, cut to ``[start, end)`` with health for that window.

    Counts of duplicates and out-of-order rows stay those of the whole load; first, last,
    count, median interval and gaps are measured for the window (:func:`health_over`).
    """
    by_sensor = {}
    for sensor, frame in readings.by_sensor.items():
        keep = ((frame["timestamp"] >= start) & (frame["timestamp"] < end)).to_numpy()
        by_sensor[sensor] = frame[keep].reset_index(drop=True)
    health = health_over(readings, start, end, max_gap)
    return dataclasses.replace(readings, by_sensor=by_sensor, health=health, start=start, end=end)


def window_warnings(readings: Readings, start: pd.Timestamp, end: pd.Timestamp,
                    tz: str) -> list[str]:
    """Say so when the audit window reaches beyond the readings (by more than
    :data:`EDGE_SLACK`)."""
    firsts = [h.first for h in readings.health.values() if h.first is not None]
    lasts = [h.last for h in readings.health.values() if h.last is not None]
    out = []
    if firsts and min(firsts) - start > EDGE_SLACK:
        out.append(f"the window starts with {start.tz_convert(tz):%Y-%m-%d} but the first "
                   f"reading is at {min(firsts).tz_convert(tz):%Y-%m-%d %H:%M}; the time "
                   "before it is counted as no data")
    if lasts and end - max(lasts) > EDGE_SLACK:
        out.append(f"the window ends with {last_local_date(end, tz)} but the last "
                   f"reading is at {max(lasts).tz_convert(tz):%Y-%m-%d %H:%M}; the time "
                   "after it is counted as no data")
    return out
