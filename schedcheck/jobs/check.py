"""The check job (``schedcheck check``): validate every input, collect every problem.

Order: the site file (all of its problems), then each calendar file, then the readings (file
problems, bad rows, per-sensor data health). When the site file itself has problems, the
calendars and readings cannot be located reliably and are not read; the report says so.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from schedcheck.errors import InputError, InputProblems
from schedcheck.inputs.calendar_files import check_calendar_file
from schedcheck.inputs.readings_files import read_readings
from schedcheck.readings.cleaning import SensorHealth
from schedcheck.readings.health import health_over_data_span
from schedcheck.readings.spans import data_days
from schedcheck.site import Site


@dataclass
class CheckReport:
    """What ``schedcheck check`` found."""

    path: Path                                   # the site file
    site: Site | None = None                     # None when the site file has problems
    problems: list[InputError] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    health: list[SensorHealth] = field(default_factory=list)
    unconfigured: dict[str, int] = field(default_factory=dict)   # sensor -> rows
    calendars: list[Path] = field(default_factory=list)
    files: tuple[str, ...] = ()                  # readings files read
    bad_rows_count: int = 0
    bad_rows_examples: list[str] = field(default_factory=list)
    # per trend point: coverage (inputs.trend_files.Trends.coverage) and ``used_by``
    trends: list[dict] = field(default_factory=list)
    unused_points: list[str] = field(default_factory=list)   # in the exports, named by none

    @property
    def ok(self) -> bool:
        return not self.problems


def _problems(exc: InputError) -> list[InputError]:
    return list(exc.problems) if isinstance(exc, InputProblems) else [exc]


def site_calendars(site: Site) -> list[Path]:
    """Every calendar file the site uses (site default and unit overrides), once each."""
    out: list[Path] = []
    for sched in [site.schedule] + [u.schedule for u in site.units]:
        for p in (*sched.occupied, *sched.allowed):
            if p not in out:
                out.append(p)
    return out


def check_calendars(site: Site, paths: list[Path]) -> list[InputError]:
    """Problems in the calendar files: missing ones, and every problem in their contents."""
    out: list[InputError] = []
    for p in paths:
        if not p.is_file():
            out.append(InputError("calendar file does not exist", path=p))
        else:
            out.extend(check_calendar_file(p, site.timezone))
    return out


def check_site(path: str | Path, skip_bad_rows: bool = False,
               progress: Callable[[str], None] | None = None) -> CheckReport:
    """Validate a site file, its calendars and its readings; never raises for input problems.

    Parameters
    ----------
    path : str or Path
        The site file (TOML).
    skip_bad_rows : bool
        Treat malformed readings rows as skipped (counted, listed) rather than as problems; also
        on when the site file sets ``[readings] skip_bad_rows = true``.
    progress : callable, optional
        Called with a short message before each readings file is read.

    Returns
    -------
    CheckReport
        ``problems`` is empty when every input is usable.
    """
    from schedcheck.inputs.site_file import load_site

    report = CheckReport(path=Path(path))
    try:
        site = load_site(path)
    except InputError as e:
        report.problems.extend(_problems(e))
        report.notes.append("calendars and readings are checked once the site file is valid")
        return report
    report.site = site
    report.calendars = site_calendars(site)
    calendar_problems = check_calendars(site, report.calendars)
    report.problems.extend(calendar_problems)
    report.problems.extend(check_weather(site))
    report.problems.extend(check_trends(site, report, skip_bad_rows or
                                        site.readings.skip_bad_rows))
    skip = skip_bad_rows or site.readings.skip_bad_rows
    try:
        # read with skipping so that the health table is complete; bad rows become problems
        # below unless the user asked to skip them
        readings = read_readings(site, skip_bad_rows=True, progress=progress)
    except InputError as e:
        report.problems.extend(_problems(e))
        return report
    report.health = health_over_data_span(readings, site.readings.max_gap)
    report.unconfigured = dict(sorted(readings.unconfigured.items()))
    report.files = readings.files
    report.bad_rows_count = readings.bad_rows_count
    report.bad_rows_examples = list(readings.bad_rows_examples)
    if skip:
        report.warnings.extend(readings.warnings)
    else:
        report.problems.extend(readings.bad_rows_problems)
        report.warnings.extend(w for w in readings.warnings
                               if w is not readings.bad_rows_warning)
    before = len(report.problems)
    if not calendar_problems:
        report.warnings.extend(_schedule_warnings(site, readings, report))
    if not any(p.key == "readings.files" for p in report.problems[before:]):
        # silences are measured over the data's span: not when the span itself is wrong
        report.warnings.extend(silence_warnings(report.health))
    return report


def silence_warnings(health: list[SensorHealth]) -> list[str]:
    """The audit's warning on long silences (the share of ``NO_DATA_WARN.note``), measured
    over the span of all sensors' data, for each sensor mapped to a component."""
    from schedcheck.runstate.states import NO_DATA_WARN

    firsts = [h.first for h in health if h.first is not None]
    if not firsts:
        return []
    span_h = (max(h.last for h in health if h.last is not None) - min(firsts)) / pd.Timedelta(
        "1h")
    out = []
    for h in health:
        if h.component and span_h > 0 and h.gap_hours > NO_DATA_WARN.note * span_h:
            out.append(f"{h.component} (sensor {h.sensor}): {h.gap_hours:.1f} h without "
                       f"readings ({h.gap_hours / span_h:.1%} of the data's span; longest "
                       f"silence {h.longest_gap_hours:.1f} h)")
    return out


def _schedule_warnings(site: Site, readings, report: CheckReport) -> list[str]:
    """The schedule's warnings (empty or cancelled calendars, events left out, no occupied
    period) over the days the data covers, as the audit will show them."""
    from schedcheck.jobs.schedule import unit_schedules

    try:
        first, last = data_days(readings, site)
        schedules = unit_schedules(site, first, last)
    except InputError as e:
        report.problems.extend(_problems(e))
        return []
    for unit in site.units:
        sched = schedules.get(unit.id)
        if sched is not None and not (sched.intervals["kind"] == "occupied").any():
            names = ", ".join(p.name for p in unit.schedule.occupied or site.schedule.occupied)
            report.problems.append(InputError(
                f"unit {unit.id} has no occupied hour from {first} to {last} in {names}: "
                "every event lacks a length (DTEND or DURATION), or holidays and closures "
                "take them all; nothing could be judged", path=site.path,
                key=f"unit[{unit.id}].schedule.occupied"))
    return [f"{u}: {w}" for u, s in schedules.items() for w in s.warnings]


def check_weather(site: Site) -> list[InputError]:
    """Problems in the site's weather file (every bad row, up to a limit), if it has one."""
    if site.weather is None:
        return []
    from schedcheck.inputs.weather_files import read_weather

    try:
        read_weather(site.weather, site.timezone)
    except InputError as e:
        return _problems(e)
    return []


def check_trends(site: Site, report: CheckReport, skip_bad_rows: bool) -> list[InputError]:
    """Read the ``[trends]`` exports: their problems, coverage per point (into ``report``)
    and the points no component names."""
    if site.trends is None:
        return []
    from schedcheck.inputs.site_trends import wanted_points
    from schedcheck.inputs.trend_files import check_points, read_trends

    t = site.trends
    try:
        trends = read_trends(site.base_dir, t.files, columns=t.columns,
                             naive_time=t.naive_time, tz=site.timezone,
                             skip_bad_rows=skip_bad_rows)
    except InputError as e:
        return _problems(e)
    report.warnings.extend(trends.warnings)
    used = {}
    for c in site.components:
        for role in ("command", "status"):
            if getattr(c, role) is not None:
                used[getattr(c, role)] = f"{c.key} {role}"
    report.trends = [row | {"used_by": used.get(row["point"], "")}
                     for row in trends.coverage(t.max_gap)]
    report.unused_points = sorted(set(trends.samples) - set(used))
    return check_points(trends, wanted_points(site.components), path=site.path)
