"""Application helpers shared by the commands: open a site, find its data range, load readings.

These sit between the file readers (:mod:`schedcheck.inputs`) and the commands; they never
print. Every input problem is raised as :class:`schedcheck.errors.InputError` (or
:class:`~schedcheck.errors.InputProblems`).
"""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import pandas as pd

from schedcheck.errors import InputError, InputProblems
from schedcheck.inputs.site_file import load_site
from schedcheck.readings.cleaning import Readings
from schedcheck.site import Site
from schedcheck.window import last_local_date, whole_days_covered


def open_site(path: str | Path, *, require_readings: bool = True) -> Site:
    """Load and validate a site file (every problem at once, as :class:`InputProblems`).

    ``require_readings=False`` accepts readings patterns that match no file yet.
    """
    return load_site(path, require_readings=require_readings)


def load_readings(site: Site, start: pd.Timestamp | None = None,
                  end: pd.Timestamp | None = None, skip_bad_rows: bool = False) -> Readings:
    """Clean readings of the site's configured sensors in the UTC window ``[start, end)``.

    Parameters
    ----------
    site : Site
        The validated site.
    start, end : pandas.Timestamp, optional
        UTC window; None reads everything.
    skip_bad_rows : bool
        Drop malformed rows instead of failing (also on when the site file sets
        ``[readings] skip_bad_rows = true``). Dropped rows are counted in the result.
    """
    from schedcheck.inputs.readings_files import read_readings

    start = None if start is None else pd.Timestamp(start).tz_convert("UTC").as_unit("ns")
    end = None if end is None else pd.Timestamp(end).tz_convert("UTC").as_unit("ns")
    if start is not None and end is not None and end <= start:
        raise InputError(f"the window ends ({end}) before it starts ({start})")
    skip = bool(skip_bad_rows or site.readings.skip_bad_rows)
    try:
        return read_readings(site, start, end, skip_bad_rows=skip)
    except InputProblems as e:
        first = e.problems[0]
        if start is None or end is None or not getattr(first, "nothing_else", False):
            raise
        # the files are fine, the asked days hold nothing: point at the dates, in local time
        d0 = start.tz_convert(site.timezone).date()
        d1 = last_local_date(end, site.timezone)
        raise InputError(
            f"no readings for any configured sensor on {d0} to {d1} (local dates); choose days "
            f"the readings cover (`schedcheck check {site.path}` lists each sensor's first and "
            "last reading)", key="--from/--to") from None


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

    With ``limit``, a span longer than one window may be (usually one reading with a reset
    sensor clock, years away from the rest) is a :class:`DataSpanError` that names the
    earliest and latest readings, rather than a complaint about a --to nobody gave.
    """
    from schedcheck.schedule.calendars import MAX_WINDOW_DAYS

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


def data_time_range(site: Site, *, limit: bool = True) -> tuple[dt.date, dt.date]:
    """The default audit window: the local dates wholly covered by the data (both inclusive).

    Data that starts within a minute after local midnight still counts the day as whole
    (see :func:`schedcheck.window.whole_days_covered`); when no day is whole, the partial days
    are returned. Bad rows are skipped here (they do not move the range); the later
    :func:`load_readings` of the window reports them.
    """
    from schedcheck.inputs.readings_files import read_readings

    # the whole read is kept for the caller's next load_readings of its window
    return data_days(read_readings(site, skip_bad_rows=True, keep=True), site, limit=limit)
