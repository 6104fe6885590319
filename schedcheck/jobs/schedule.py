"""The intended schedule of a site's units: open the site, read the calendars, expand.

Default window: the whole local dates covered by the readings
(:func:`schedcheck.readings.spans.data_days`); when the site has no readings (or they
cannot be read), the current local calendar month.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
from dataclasses import dataclass, field
from pathlib import Path
from zoneinfo import ZoneInfo

import icalendar

from schedcheck.errors import InputError
from schedcheck.inputs.calendar_files import read_checked_calendar
from schedcheck.readings.spans import DataSpanError
from schedcheck.schedule.intended import UnitSchedule, expand_unit_schedule
from schedcheck.site import Site


@dataclass
class SiteSchedule:
    """Expanded schedules of one site.

    Attributes
    ----------
    site : Site
    first, last : datetime.date
        The window's local dates, both inclusive.
    units : list of (str, UnitSchedule)
        In the order of the site file.
    window_note : str
        How the window was chosen (``given``, ``data`` or ``this month``).
    """

    site: Site
    first: dt.date
    last: dt.date
    units: list[tuple[str, UnitSchedule]] = field(default_factory=list)
    window_note: str = "given"

    @property
    def warnings(self) -> list[str]:
        return [f"{u}: {w}" for u, s in self.units for w in s.warnings]


def unit_schedules(site: Site, first: dt.date, last: dt.date,
                   unit: str | None = None) -> dict[str, UnitSchedule]:
    """Expand every unit's schedule (or only ``unit``) for local dates ``first..last``.

    Calendar files shared by several units are read once. The audit job can call this.
    """
    units = site.units
    if unit is not None:
        units = tuple(u for u in site.units if u.id == unit)
        if not units:
            known = ", ".join(u.id for u in site.units)
            raise InputError(f"no unit {unit!r} in the site file (units: {known})", key="--unit")
    cache: dict[Path, icalendar.Calendar] = {}

    def cals(paths) -> list[tuple[Path, icalendar.Calendar]]:
        out = []
        for p in paths:
            if p not in cache:
                cache[p] = read_checked_calendar(p)
            out.append((p, cache[p]))
        return out

    result: dict[str, UnitSchedule] = {}
    shared: dict[object, UnitSchedule] = {}    # units with the same schedule settings
    for u in units:
        s = u.schedule
        try:
            done = shared.get(s)
        except TypeError:                      # settings that cannot be a key: no sharing
            done = None
        if done is not None:
            result[u.id] = dataclasses.replace(done, unit=u.id,
                                               intervals=done.intervals.copy(),
                                               days_off=done.days_off.copy(),
                                               warnings=list(done.warnings))
            continue
        result[u.id] = expand_unit_schedule(
            cals(s.occupied), cals(s.allowed), site.timezone, first, last,
            early_start=s.early_start, late_stop=s.late_stop, holidays=site.holidays,
            unit=u.id, site_path=site.path, allowed_limits=s.allowed_limits,
            standby_speed=s.standby_speed,
        )
        try:
            shared[s] = result[u.id]
        except TypeError:
            pass
    return result


def _default_window(site: Site) -> tuple[dt.date, dt.date, str]:
    if site.readings.files:
        from schedcheck.jobs.common import data_time_range

        try:
            first, last = data_time_range(site)
            return first, last, "data"
        except DataSpanError:
            raise   # readings exist but span too long: say so, do not show another month
        except InputError:
            pass   # no readings yet: fall back to this month
    today = dt.datetime.now(ZoneInfo(site.timezone)).date()
    first = today.replace(day=1)
    nxt = (first + dt.timedelta(days=32)).replace(day=1)
    return first, nxt - dt.timedelta(days=1), "this month"


def site_schedule(
    site_path: str | Path,
    unit: str | None = None,
    first: dt.date | None = None,
    last: dt.date | None = None,
) -> SiteSchedule:
    """Open a site file and expand the intended schedule of its units.

    Parameters
    ----------
    site_path : str or Path
        The site file (TOML).
    unit : str, optional
        Only this unit.
    first, last : datetime.date, optional
        Local dates, both inclusive. Missing both: the default window (module docstring);
        only ``first``: through the end of its month; only ``last``: from the start of its
        month.
    """
    from schedcheck.jobs.common import open_site

    # the schedule needs no readings: a site being set up can see its calendars first
    site = open_site(site_path, require_readings=False)
    note = "given"
    if first is None and last is None:
        first, last, note = _default_window(site)
    elif first is None:
        first = last.replace(day=1)
    elif last is None:
        last = (first.replace(day=1) + dt.timedelta(days=32)).replace(day=1) - dt.timedelta(days=1)
    if last < first:
        raise InputError(f"--to {last} is before --from {first}", key="--to")
    schedules = unit_schedules(site, first, last, unit)
    return SiteSchedule(site=site, first=first, last=last,
                        units=list(schedules.items()), window_note=note)
