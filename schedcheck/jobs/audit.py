"""The audit job: site file in, audit files out (``schedcheck audit``).

Opens the site and its readings (:mod:`schedcheck.jobs.common`), reads the calendars, classifies
run states (:func:`schedcheck.runstate.classify.classify_unit`), expands the intended schedule
(:func:`schedcheck.schedule.intended.expand_unit_schedule`), runs the core audit
(:func:`schedcheck.audit.run.run_audit`), finds the behaviour episodes
(:func:`schedcheck.changes.episodes.with_episodes`) and writes the files
(:mod:`schedcheck.outputs.files`) and the report. Prints nothing: progress goes to the
optional ``progress`` callback.
"""

from __future__ import annotations

import datetime as dt
import re
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import pandas as pd

from schedcheck.audit.evidence import evidence_levels
from schedcheck.audit.run import AuditResult, Lookback, run_audit
from schedcheck.audit.trends_step import with_trends
from schedcheck.changes.episodes import with_episodes
from schedcheck.errors import InputError
from schedcheck.inputs.provenance import provenance
from schedcheck.inputs.readings_files import ReadingsSource
from schedcheck.readings.window_clip import audit_window, clip_readings, window_warnings
from schedcheck.runstate.lookback import (
    classify_with_lookback,
    learns_from_all,
    lookahead_last,
    lookback_dates,
)
from schedcheck.site import Site
from schedcheck.window import day_window


def default_outdir(site: Site) -> Path:
    """``audit-<site name as a slug>`` in the current folder, e.g. ``audit-fjordside-hall``."""
    slug = re.sub(r"[^a-z0-9]+", "-", site.name.lower()).strip("-") or "site"
    return Path.cwd() / f"audit-{slug}"


def audit_result(
    site: Site,
    first: dt.date | None = None,
    last: dt.date | None = None,
    skip_bad_rows: bool = False,
    progress: Callable[[str], None] | None = None,
    source: ReadingsSource | None = None,
) -> AuditResult:
    """Audit a loaded site over local dates ``first`` .. ``last`` without writing any file.

    The computing half of :func:`audit_site` (also used by ``schedcheck compare``); the
    parameters are as there, and ``source`` the command's readings
    (:func:`schedcheck.jobs.common.open_readings`).
    """
    from schedcheck.jobs.schedule import unit_schedules

    say = progress or (lambda _msg: None)
    first, last, start, end, readings, span = window_readings(
        site, first, last, skip_bad_rows=skip_bad_rows, say=say, source=source)
    states, whole = classify_with_lookback(
        site.units, span.by_sensor, span.start, start, end, site.readings.max_gap,
        site.run_state, level_unit=site.readings.unit, progress=say, ahead_end=span.end)
    load_warnings = window_warnings(readings, start, end, site.timezone)
    say("expanding the intended schedule")
    schedules = unit_schedules(site, first, last)
    weather = None
    if site.weather is not None:
        from schedcheck.inputs.weather_files import read_weather

        say(f"reading the weather file {site.weather.file.name}")
        weather = read_weather(site.weather, site.timezone,
                               years=tuple(range(first.year, last.year + 1)))
    lookback = (Lookback(span.start, span.end, whole,
                         unit_schedules(site, span.first, span.last))
                if span.start < start or span.end > end else None)
    trends = None
    if site.trends is not None:
        from schedcheck.inputs.trend_files import load_site_trends

        say("reading the building-system trends")
        trends = load_site_trends(site, skip_bad_rows=skip_bad_rows)
        load_warnings += trends.warnings
    say("comparing and pricing")
    bad = {"count": int(readings.bad_rows_count),
           "examples": list(readings.bad_rows_examples)[:20]}
    result = run_audit(
        site, states, schedules, start, end, first_date=first, last_date=last,
        health=readings.health, bad_rows=bad,
        warnings=load_warnings + [str(w) for w in readings.warnings]
        + [f"{u}: {w}" for u, s in schedules.items() for w in s.warnings],
        lookback=lookback,
        weather=weather,
        find=with_trends(trends.samples, site.trends.max_gap) if trends is not None else None,
    )
    with_episodes(result)   # behaviour episodes, and the findings told since when
    result.levels = evidence_levels(result.findings, {c.key: c.sensor for c in site.components},
                                    readings.by_sensor, start, end,
                                    run_starts={c.key: c.account.states.of("run").starts
                                                for c in result.components})
    return result


def window_readings(site: Site, first: dt.date | None, last: dt.date | None, *,
                    skip_bad_rows: bool = False, say: Callable[[str], None] = lambda _m: None,
                    source: ReadingsSource | None = None):
    """The local dates to audit, their UTC window and the readings of it with its look-back.

    Missing dates come from the whole days covered by the data: then every reading is loaded
    once and the window is cut from it (:func:`schedcheck.readings.window_clip.clip_readings`).
    The look-back (:func:`schedcheck.runstate.lookback.lookback_dates`) is read with the
    window.

    Returns
    -------
    first, last, start, end, readings, span
        ``readings`` cut to the window (its health that of the window); ``span`` the
        :class:`Span` classified: the look-back and the days after the window where readings
        exist (:func:`schedcheck.runstate.lookback.lookahead_last`), with the frames to learn
        from.
    """
    from schedcheck.jobs.common import load_readings, no_readings_error

    everything = None
    if first is None or last is None or learns_from_all(site.run_state):
        say("reading all readings (the levels are learned from all of them)")
        everything = load_readings(site, skip_bad_rows=skip_bad_rows, source=source)
    first, last = audit_window(site, first, last, everything)
    start, end = day_window(first, last, site.timezone)
    want = lookback_dates(first, site.timezone, site.run_state)
    lb_start = day_window(want, last, site.timezone)[0]
    if everything is None:
        say(f"reading readings for {want} .. {last} (look-back and window)")
        everything = load_readings(site, lb_start, end, skip_bad_rows=skip_bad_rows,
                                   source=source)
    d0, d1 = data_dates(everything, site.timezone)
    lb_first = min(max(want, d0 or first), first)
    ahead = max(min(lookahead_last(last, site.run_state), d1 or last), last)
    lb_start, ahead_end = day_window(lb_first, ahead, site.timezone)
    window = clip_readings(everything, start, end, site.readings.max_gap)
    if not any(len(f) for f in window.by_sensor.values()):
        raise no_readings_error(site, start, end)
    learn = (everything if learns_from_all(site.run_state)
             else clip_readings(everything, lb_start, end, site.readings.max_gap))
    return (first, last, start, end, window,
            Span(lb_first, ahead, lb_start, ahead_end, learn.by_sensor))


@dataclass(frozen=True)
class Span:
    """The local dates ``first`` .. ``last`` and the instants ``[start, end)`` classified for a
    window (its look-back and the days after it), and the readings to learn from by sensor."""

    first: dt.date
    last: dt.date
    start: pd.Timestamp
    end: pd.Timestamp
    by_sensor: dict


def data_dates(readings, tz: str) -> tuple[dt.date | None, dt.date | None]:
    """The local dates of the first and the last reading of any sensor (None: no readings)."""
    firsts = [h.first for h in readings.health.values() if h.first is not None]
    lasts = [h.last for h in readings.health.values() if h.last is not None]
    if not firsts:
        return None, None
    return min(firsts).tz_convert(tz).date(), max(lasts).tz_convert(tz).date()


def audit_site(
    site_path: str | Path,
    first: dt.date | None = None,
    last: dt.date | None = None,
    out: str | Path | None = None,
    skip_bad_rows: bool = False,
    progress: Callable[[str], None] | None = None,
    excel: bool = False,
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
    excel : bool
        Write the CSV files as UTF-8 with a byte-order mark, for spreadsheet programs.

    Returns
    -------
    AuditResult
        With ``outdir`` and ``files`` (name -> path) set.
    """
    from schedcheck.jobs.common import open_site
    from schedcheck.outputs.files import write_audit_files
    from schedcheck.outputs.folder import output_folder

    say = progress or (lambda _msg: None)
    site = open_site(site_path)
    result = audit_result(site, first, last, skip_bad_rows=skip_bad_rows, progress=say)
    outdir = Path(out) if out is not None else default_outdir(site)
    say(f"writing files to {outdir}")
    if outdir.exists() and not outdir.is_dir():
        raise InputError("exists and is not a folder; give another --out", path=outdir)
    say("hashing the input files")
    prov = provenance(site)
    try:
        with output_folder(outdir, complete="summary.json") as stage:
            staged = write_audit_files(result, stage.path, provenance=prov,
                                       levels=result.levels, excel=excel)
            staged["report.html"] = write_report_file(stage.path)
    except OSError as e:
        raise InputError(f"cannot write the audit files here ({e.strerror or e})",
                         path=outdir) from None
    result.files = {name: outdir / path.name for name, path in staged.items()}
    result.outdir = outdir
    return result


def write_report_file(outdir: Path) -> Path:
    """The self-contained report, drawn from the files just written to ``outdir``."""
    from schedcheck.outputs.report import write_report

    return Path(write_report(outdir))
