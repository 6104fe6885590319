"""The span of the readings: first and last reading, and the local days they wholly cover."""

from __future__ import annotations

import datetime as dt

import pandas as pd

from schedcheck.errors import InputError, InputProblems
from schedcheck.readings.cleaning import Readings
from schedcheck.schedule.calendars import MAX_WINDOW_DAYS
from schedcheck.site import Site
from schedcheck.window import whole_days_covered


def data_span(readings: Readings) -> tuple[pd.Timestamp, pd.Timestamp]:
    """First and last reading over all configured sensors (UTC)."""
    firsts = [h.first for h in readings.health.values() if h.first is not None]
    lasts = [h.last for h in readings.health.values() if h.last is not None]
    if not firsts:
        raise InputProblems([InputError("no readings for any configured sensor")])
    return min(firsts), max(lasts)


class DataSpanError(InputError):
    """The readings span more days than one window may cover (often one stray time stamp)."""


def data_days(readings: Readings, site: Site, *, limit: bool = True) -> tuple[dt.date, dt.date]:
    """The local dates wholly covered by ``readings`` (both inclusive).

    Data that starts within a minute after local midnight still counts the day as whole
    (see :func:`schedcheck.window.whole_days_covered`); when no day is whole, the partial days
    are returned. With ``limit``, a span longer than one window may be (usually one reading
    with a reset sensor clock, years away from the rest) is a :class:`DataSpanError` that names
    the earliest and latest readings, rather than a complaint about a --to nobody gave.
    """
    first, last = data_span(readings)
    d0, d1 = whole_days_covered(first, last, site.timezone)
    days = (d1 - d0).days + 1
    if limit and days > MAX_WINDOW_DAYS:
        health = readings.health
        s0 = min((h for h in health.values() if h.first is not None), key=lambda h: h.first)
        s1 = max((h for h in health.values() if h.last is not None), key=lambda h: h.last)
        raise DataSpanError(
            f"the readings span {d0} to {d1} ({days:,} days; one window covers at most "
            f"{MAX_WINDOW_DAYS:,}): the earliest is sensor {s0.sensor} at "
            f"{first:%Y-%m-%d %H:%M:%S}Z, the latest sensor {s1.sensor} at "
            f"{last:%Y-%m-%d %H:%M:%S}Z; remove a stray time stamp (a reset sensor clock?) or "
            "give --from and --to", path=site.path, key="readings.files")
    return d0, d1
