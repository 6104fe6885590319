"""The audit job: site file in, audit files out (``schedcheck audit``).

Opens the site and its readings (:mod:`schedcheck.jobs.common`), reads the calendars, classifies
run states (:func:`schedcheck.runstate.classify.classify_unit`), expands the intended schedule
(:func:`schedcheck.schedule.intended.expand_unit_schedule`), runs the core audit
(:func:`schedcheck.audit.run.run_audit`) and writes the files (:mod:`schedcheck.outputs.files`) and
the report. Prints nothing: progress goes to the optional ``progress`` callback.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import re
from collections.abc import Callable
from pathlib import Path

import numpy as np
import pandas as pd

from schedcheck.audit.run import AuditResult, run_audit
from schedcheck.errors import InputError
from schedcheck.intervals import to_ns
from schedcheck.site import Site
from schedcheck.window import day_window, last_local_date


def default_outdir(site: Site) -> Path:
    """``audit-<site name as a slug>`` in the current folder, e.g. ``audit-fjordside-hall``."""
    slug = re.sub(r"[^a-z0-9]+", "-", site.name.lower()).strip("-") or "site"
    return Path.cwd() / f"audit-{slug}"


def audit_window(site: Site, first: dt.date | None, last: dt.date | None, readings=None
                 ) -> tuple[dt.date, dt.date]:
    """The local dates to audit: the options, else the whole days covered by the data.

    ``readings`` (all readings of the site, unwindowed) saves reading the files again.
    """
    if first is None or last is None:
        from schedcheck.jobs.common import data_days, data_time_range

        if readings is not None:
            d0, d1 = data_days(readings, site)
        else:
            d0, d1 = data_time_range(site)
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


def clip_readings(readings, start: pd.Timestamp, end: pd.Timestamp, max_gap: pd.Timedelta):
    """Readings loaded without a window, cut to ``[start, end)`` with health for that window.

    Counts of duplicates and out-of-order rows stay those of the whole load; first, last,
    count, median interval and gaps are recomputed for the window.
    """
    from schedcheck.readings import cleaning as rd

    by_sensor, health = {}, {}
    for sensor, frame in readings.by_sensor.items():
        keep = ((frame["timestamp"] >= start) & (frame["timestamp"] < end)).to_numpy()
        clipped = frame[keep].reset_index(drop=True)
        by_sensor[sensor] = clipped
        h = dataclasses.replace(readings.health[sensor], first=None, last=None,
                                median_interval=None, count=len(clipped))
        rd.measure_gaps(h, np.asarray(to_ns(clipped["timestamp"]), dtype=np.int64), start, end,
                        max_gap)
        health[sensor] = h
    for sensor, h in readings.health.items():
        if sensor not in health:
            health[sensor] = dataclasses.replace(h, first=None, last=None, count=0)
            rd.measure_gaps(health[sensor], np.empty(0, np.int64), start, end, max_gap)
    return dataclasses.replace(readings, by_sensor=by_sensor, health=health, start=start, end=end)


def audit_result(
    site: Site,
    first: dt.date | None = None,
    last: dt.date | None = None,
    skip_bad_rows: bool = False,
    progress: Callable[[str], None] | None = None,
) -> AuditResult:
    """Audit a loaded site over local dates ``first`` .. ``last`` without writing any file.

    The computing half of :func:`audit_site` (also used by ``schedcheck compare``); the
    parameters are as there.
    """
    from schedcheck.jobs.common import load_readings
    from schedcheck.jobs.schedule import unit_schedules
    from schedcheck.runstate.classify import classify_unit

    say = progress or (lambda _msg: None)
    if first is None or last is None:
        say("reading all readings to find the whole days they cover")
        everything = load_readings(site, skip_bad_rows=skip_bad_rows)
        first, last = audit_window(site, first, last, everything)
        start, end = day_window(first, last, site.timezone)
        readings = clip_readings(everything, start, end, site.readings.max_gap)
    else:
        first, last = audit_window(site, first, last)
        start, end = day_window(first, last, site.timezone)
        say(f"reading readings for {first} .. {last}")
        readings = load_readings(site, start, end, skip_bad_rows=skip_bad_rows)
    states: dict[str, object] = {}
    for unit in site.units:
        say(f"classifying run states of {unit.id}")
        states.update(classify_unit(unit, readings.by_sensor, start, end,
                                    site.readings.max_gap, site.run_state,
                                    level_unit=site.readings.unit))
    load_warnings = _window_warnings(readings, start, end, site.timezone)
    say("expanding the intended schedule")
    schedules = unit_schedules(site, first, last)
    say("comparing and pricing")
    bad = {"count": int(getattr(readings, "bad_rows_count", 0) or 0),
           "examples": list(getattr(readings, "bad_rows_examples", []) or [])[:20]}
    result = run_audit(
        site, states, schedules, start, end, first_date=first, last_date=last,
        health=getattr(readings, "health", {}), bad_rows=_bad_rows(bad),
        warnings=load_warnings + [str(w) for w in getattr(readings, "warnings", []) or []]
        + [f"{u}: {w}" for u, s in schedules.items() for w in getattr(s, "warnings", []) or []],
    )
    return result


def audit_site(
    site_path: str | Path,
    first: dt.date | None = None,
    last: dt.date | None = None,
    out: str | Path | None = None,
    skip_bad_rows: bool = False,
    progress: Callable[[str], None] | None = None,
) -> AuditResult:
    """Audit a site and write its files.

    Parameters
    ----------
    site_path : str or Path
        The site file (TOML).
    first, last : date, optional
        Local dates to audit, both inclusive; default the whole days covered by the data.
    out : str or Path, optional
        Folder for the files; default :func:`default_outdir`.
    skip_bad_rows : bool
        Skip unreadable readings rows (counted and reported) instead of stopping.
    progress : callable, optional
        Called with a short line at each stage (the CLI shows them on a terminal).

    Returns
    -------
    AuditResult
        With ``outdir`` and ``files`` (name -> path) set.
    """
    from schedcheck.jobs.common import open_site
    from schedcheck.outputs.files import write_audit_files

    say = progress or (lambda _msg: None)
    site = open_site(site_path)
    result = audit_result(site, first, last, skip_bad_rows=skip_bad_rows, progress=say)
    outdir = Path(out) if out is not None else default_outdir(site)
    say(f"writing files to {outdir}")
    if outdir.exists() and not outdir.is_dir():
        raise InputError("exists and is not a folder; give another --out", path=outdir)
    try:
        result.files = write_audit_files(result, outdir)
        result.files["report.html"] = write_report_file(outdir)
    except OSError as e:
        raise InputError(f"cannot write the audit files here ({e.strerror or e})",
                         path=outdir) from None
    result.outdir = outdir
    return result


def _window_warnings(readings, start: pd.Timestamp, end: pd.Timestamp, tz: str) -> list[str]:
    """Say so when the audit window reaches beyond the readings."""
    firsts = [h.first for h in readings.health.values() if h.first is not None]
    lasts = [h.last for h in readings.health.values() if h.last is not None]
    out = []
    slack = pd.Timedelta("1h")   # common practice, no source: ignore edges within an hour
    if firsts and min(firsts) - start > slack:
        out.append(f"the window starts with {start.tz_convert(tz):%Y-%m-%d} but the first "
                   f"reading is at {min(firsts).tz_convert(tz):%Y-%m-%d %H:%M}; the time "
                   "before it is counted as no data")
    if lasts and end - max(lasts) > slack:
        out.append(f"the window ends with {last_local_date(end, tz)} but the last "
                   f"reading is at {max(lasts).tz_convert(tz):%Y-%m-%d %H:%M}; the time "
                   "after it is counted as no data")
    return out


def _bad_rows(bad) -> dict:
    """Rejected readings rows as ``{count, examples}``."""
    if bad is None:
        return {"count": 0, "examples": []}
    if isinstance(bad, dict):
        return {"count": int(bad.get("count", 0)), "examples": list(bad.get("examples", []))}
    if hasattr(bad, "__len__") and not isinstance(bad, str):
        rows = list(bad.itertuples(index=False)) if hasattr(bad, "itertuples") else list(bad)
        return {"count": len(rows), "examples": [str(r) for r in rows[:5]]}
    return {"count": int(bad), "examples": []}


def write_report_file(outdir: Path) -> Path:
    """The self-contained report, drawn from the files just written to ``outdir``."""
    from schedcheck.outputs.report import write_report

    return Path(write_report(outdir))
