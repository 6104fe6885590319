"""Application helpers shared by the commands: open a site, find its data range, load readings.

These sit between the file readers (:mod:`schedcheck.inputs`) and the commands; they never
print. Every input problem is raised as :class:`schedcheck.errors.InputError` (or
:class:`~schedcheck.errors.InputProblems`).
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable
from pathlib import Path

import pandas as pd

from schedcheck.errors import InputError, InputProblems, NoReadingsError
from schedcheck.inputs.readings_files import ReadingsSource
from schedcheck.inputs.site_file import load_site
from schedcheck.readings.cleaning import Readings
from schedcheck.readings.spans import data_days
from schedcheck.site import Site
from schedcheck.window import last_local_date


def open_site(path: str | Path, *, require_readings: bool = True) -> Site:
    """Load and validate a site file (every problem at once, as :class:`InputProblems`).

    ``require_readings=False`` accepts readings patterns that match no file yet.
    """
    return load_site(path, require_readings=require_readings)


def open_readings(site: Site) -> ReadingsSource:
    """The site's readings files for one command (remembers a whole read for one window)."""
    return ReadingsSource(site)


def load_readings(site: Site, start: pd.Timestamp | None = None,
                  end: pd.Timestamp | None = None, skip_bad_rows: bool = False, *,
                  source: ReadingsSource | None = None,
                  progress: Callable[[str], None] | None = None) -> Readings:
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
    source : ReadingsSource, optional
        The command's readings (:func:`open_readings`); a whole read it remembers is reused.
    progress : callable, optional
        Called with a short message before each file is read.
    """
    source = source or ReadingsSource(site)
    start = None if start is None else pd.Timestamp(start).tz_convert("UTC").as_unit("ns")
    end = None if end is None else pd.Timestamp(end).tz_convert("UTC").as_unit("ns")
    if start is not None and end is not None and end <= start:
        raise InputError(f"the window ends ({end}) before it starts ({start})")
    skip = bool(skip_bad_rows or site.readings.skip_bad_rows)
    try:
        return source.read(start, end, skip_bad_rows=skip, progress=progress)
    except InputProblems as e:
        first = e.problems[0]
        if start is None or end is None or not (isinstance(first, NoReadingsError)
                                                and first.nothing_else):
            raise
        # the files are fine, the asked days hold nothing: point at the dates, in local time
        raise no_readings_error(site, start, end) from None


def no_readings_error(site: Site, start: pd.Timestamp, end: pd.Timestamp) -> InputError:
    """The error for a window ``[start, end)`` in which no configured sensor has a reading."""
    d0 = start.tz_convert(site.timezone).date()
    d1 = last_local_date(end, site.timezone)
    return InputError(
        f"no readings for any configured sensor on {d0} to {d1} (local dates); choose days "
        f"the readings cover (`schedcheck check {site.path}` lists each sensor's first and "
        "last reading)", key="--from/--to")


def data_time_range(site: Site, *, limit: bool = True,
                    source: ReadingsSource | None = None) -> tuple[dt.date, dt.date]:
    """The default audit window: the local dates wholly covered by the data (both inclusive;
    :func:`schedcheck.readings.spans.data_days`).

    Bad rows are skipped here (they do not move the range); the later :func:`load_readings`
    of the window reports them. With ``source``, the whole read is remembered there for the
    caller's next :func:`load_readings` of its window.
    """
    source = source or ReadingsSource(site)
    return data_days(source.read(skip_bad_rows=True, keep=True), site, limit=limit)
