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
from schedcheck.readings import Readings
from schedcheck.site import Site, load_site
from schedcheck.window import whole_days_covered


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
    return read_readings(site, start, end, skip_bad_rows=skip)


def data_span(readings: Readings) -> tuple[pd.Timestamp, pd.Timestamp]:
    """First and last reading over all configured sensors (UTC)."""
    firsts = [h.first for h in readings.health.values() if h.first is not None]
    lasts = [h.last for h in readings.health.values() if h.last is not None]
    if not firsts:
        raise InputProblems([InputError("no readings for any configured sensor")])
    return min(firsts), max(lasts)


def data_time_range(site: Site) -> tuple[dt.date, dt.date]:
    """The default audit window: the local dates wholly covered by the data (both inclusive).

    Data that starts within a minute after local midnight still counts the day as whole
    (see :func:`schedcheck.window.whole_days_covered`); when no day is whole, the partial days
    are returned. Bad rows are skipped here (they do not move the range); the later
    :func:`load_readings` of the window reports them.
    """
    from schedcheck.inputs.readings_files import read_readings

    # the whole read is kept for the caller's next load_readings of its window
    first, last = data_span(read_readings(site, skip_bad_rows=True, keep=True))
    return whole_days_covered(first, last, site.timezone)
