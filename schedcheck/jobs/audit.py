"""The audit job: site file in, audit files out (``schedcheck audit``).

Opens the site and its readings (:mod:`schedcheck.jobs.common`), reads the calendars, classifies
run states (:func:`schedcheck.runstate.classify.classify_unit`), expands the intended schedule
(:func:`schedcheck.schedule.intended.expand_unit_schedule`), runs the core audit
(:func:`schedcheck.audit.run.run_audit`) and writes the files (:mod:`schedcheck.outputs.files`) and
the report. Prints nothing: progress goes to the optional ``progress`` callback.
"""

from __future__ import annotations

import datetime as dt
import re
from collections.abc import Callable
from pathlib import Path

from schedcheck.audit.run import AuditResult, run_audit
from schedcheck.inputs.readings_files import ReadingsSource
from schedcheck.readings.window_clip import audit_window, clip_readings, window_warnings
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
    from schedcheck.runstate.classify import classify_unit

    say = progress or (lambda _msg: None)
    first, last, start, end, readings = window_readings(
        site, first, last, skip_bad_rows=skip_bad_rows, say=say, source=source)
    states: dict[str, object] = {}
    for unit in site.units:
        say(f"classifying run states of {unit.id}")
        states.update(classify_unit(unit, readings.by_sensor, start, end,
                                    site.readings.max_gap, site.run_state,
                                    level_unit=site.readings.unit))
    load_warnings = window_warnings(readings, start, end, site.timezone)
    say("expanding the intended schedule")
    schedules = unit_schedules(site, first, last)
    say("comparing and pricing")
    bad = {"count": int(readings.bad_rows_count),
           "examples": list(readings.bad_rows_examples)[:20]}
    result = run_audit(
        site, states, schedules, start, end, first_date=first, last_date=last,
        health=readings.health, bad_rows=bad,
        warnings=load_warnings + [str(w) for w in readings.warnings]
        + [f"{u}: {w}" for u, s in schedules.items() for w in s.warnings],
    )
    return result


def window_readings(site: Site, first: dt.date | None, last: dt.date | None, *,
                    skip_bad_rows: bool = False, say: Callable[[str], None] = lambda _m: None,
                    source: ReadingsSource | None = None):
    """The local dates to audit, their UTC window and the readings of it.

    Missing dates come from the whole days covered by the data: then every reading is loaded
    once and the window is cut from it (:func:`schedcheck.readings.window_clip.clip_readings`).

    Returns
    -------
    first, last, start, end, readings
    """
    from schedcheck.jobs.common import load_readings

    if first is None or last is None:
        say("reading all readings to find the whole days they cover")
        everything = load_readings(site, skip_bad_rows=skip_bad_rows, source=source)
        first, last = audit_window(site, first, last, everything)
        start, end = day_window(first, last, site.timezone)
        return first, last, start, end, clip_readings(everything, start, end,
                                                      site.readings.max_gap)
    first, last = audit_window(site, first, last)
    start, end = day_window(first, last, site.timezone)
    say(f"reading readings for {first} .. {last}")
    return first, last, start, end, load_readings(site, start, end,
                                                  skip_bad_rows=skip_bad_rows, source=source)


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
    from schedcheck.outputs.folder import output_folder

    say = progress or (lambda _msg: None)
    site = open_site(site_path)
    result = audit_result(site, first, last, skip_bad_rows=skip_bad_rows, progress=say)
    outdir = Path(out) if out is not None else default_outdir(site)
    say(f"writing files to {outdir}")
    with output_folder(outdir, complete="summary.json") as stage:
        staged = write_audit_files(result, stage.path)
        staged["report.html"] = write_report_file(stage.path)
    result.files = {name: outdir / path.name for name, path in staged.items()}
    result.outdir = outdir
    return result


def write_report_file(outdir: Path) -> Path:
    """The self-contained report, drawn from the files just written to ``outdir``."""
    from schedcheck.outputs.report import write_report

    return Path(write_report(outdir))
