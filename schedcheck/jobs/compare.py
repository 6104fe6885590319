"""The compare job (``schedcheck compare``): load the site and its readings, audit the days
around a controls change and compare them (:mod:`schedcheck.changes.compare`). Never prints."""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable
from pathlib import Path

from schedcheck.changes.compare import (
    DEFAULT_DAYS,
    CompareResult,
    check_change_date,
    check_periods,
    compare_audit,
    compare_window,
)

__all__ = ["DEFAULT_DAYS", "compare_site"]


def compare_site(
    site_path: str | Path,
    change: dt.date,
    before: int = DEFAULT_DAYS,
    after: int = DEFAULT_DAYS,
    skip_bad_rows: bool = False,
    progress: Callable[[str], None] | None = None,
) -> CompareResult:
    """Compare the days before a controls change with the days after it, for every component.

    Parameters
    ----------
    site_path : str or Path
        The site file (TOML).
    change : datetime.date
        Local date of the change; the "after" period starts at its local midnight.
    before, after : int
        Whole days in each period [days], at least
        :data:`schedcheck.changes.compare.MIN_DAYS`.
    skip_bad_rows : bool
        Skip unreadable readings rows (counted) instead of stopping at the first.
    progress : callable, optional
        Called with a short line at each stage.

    Returns
    -------
    CompareResult
    """
    from schedcheck.jobs.audit import audit_result
    from schedcheck.jobs.common import data_time_range, open_readings, open_site

    before, after = check_periods(before, after)
    site = open_site(site_path)
    source = open_readings(site)
    # the files are read once: the windowed read of the audit reuses this whole read
    d0, d1 = data_time_range(site, limit=False, source=source)   # the window is the options'
    check_change_date(change, d0, d1)
    first, last = compare_window(change, before, after)
    result = audit_result(site, first, last, skip_bad_rows=skip_bad_rows, progress=progress,
                          source=source)
    return compare_audit(result, site, change, before, after)
