"""The controls-change check (``schedcheck compare``): did a change work, and when did
behaviour change?

The audit's own computation (:func:`schedcheck.jobs.audit.audit_result`) runs over the window
``[change - before days, change + after days)``; its daily rows per component give the series
compared here. Nothing is recomputed: off-schedule hours, kWh and missed hours are the audit's.

Per component:

* before / after figures per day (off-schedule hours, off-schedule kWh, missed hours, running
  hours), and the difference with a 95% interval
  (:func:`schedcheck.changes.before_after`, occupied days compared with occupied days and
  unoccupied days with unoccupied days);
* the dates where the daily pattern of off-schedule hours changed, found by PELT over the
  whole window (PELT with the capped cost), whatever
  date the user gave.

Days with more than ``max_no_data_h`` hours of no data are left out of both and counted, never
dropped silently. Both periods are judged against the schedule in the site file as it is now:
when the change *was* a schedule change, the "before" figures say how the old behaviour looks
against the new schedule.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from schedcheck.changes.change_points import (
    BeforeAfter,
    before_after,
    change_point_ranges,
    mean_shift_penalty,
    pelt_mean_shift,
    robust_sigma,
    segment_means,
)
from schedcheck.errors import InputError
from schedcheck.intervals import NS_PER_H
from schedcheck.schedule.calendars import MAX_WINDOW_DAYS
from schedcheck.window import local_midnight

#: Default length of each period [days]: four whole weeks, so that both hold the same number of
#: each weekday. Common practice, no source.
DEFAULT_DAYS = 28

#: Fewest days a period may have [days]: below a week the weekday mix cannot balance.
#: Common practice, no source.
MIN_DAYS = 7

#: A day with more hours than this of no data is left out of the comparison [h]. Common
#: practice, no source.
MAX_NO_DATA_H = 2.0

#: Lowest day-to-day scatter of off-schedule hours assumed by the change-point search [h/day]:
#: half an hour, the usual wander of start and stop times; keeps a perfectly regular unit from
#: turning every small wobble into a change. Common practice, no source.
SIGMA_FLOOR_H = 0.5

#: Residual (in noise levels) beyond which one day costs no more in the change-point search:
#: 3 sigma, from memory of the biweight examples of Fearnhead and Rigaill (2019); not checked.
CAP_SIGMAS = 3.0

#: Fewest days in a segment between change points [days]: a new pattern must hold for a
#: week to count as one, so that a few odd days together (Easter, an override left on over
#: a long weekend) do not. Common practice, no source.
MIN_SEGMENT_DAYS = 7

FIGURES = {  # name in the output -> how to read it from the audit's daily rows
    "off_schedule_h_per_day": lambda d: d["off_schedule_ns"] / NS_PER_H,
    "kwh_per_day": lambda d: d["off_schedule_kwh"].astype(float),
    "missed_h_per_day": lambda d: d["missed_ns"] / NS_PER_H,
    "running_h_per_day": lambda d: d["running_ns"] / NS_PER_H,
}


def _round(x: float, digits: int) -> float:
    """Rounded, without a negative zero in the output."""
    return round(float(x), digits) + 0.0


@dataclass
class ChangePoint:
    """A date from which the daily off-schedule hours settle at another level."""

    date: dt.date                 # first local date of the new level (earliest the data allow)
    latest: dt.date               # latest date the new level may have begun on, same cost
    before_mean: float            # mean off-schedule hours per day before it [h/day]
    after_mean: float             # ... and from it on, until the next change [h/day]


@dataclass
class ComponentChange:
    """The before/after comparison of one component."""

    id: str
    unit: str
    role: str
    days: dict[str, dict[str, int]]                  # before/after -> days, used, no_data
    figures: dict[str, BeforeAfter]                  # FIGURES name -> comparison
    change_points: list[ChangePoint]
    notes: list[str] = field(default_factory=list)


@dataclass
class CompareResult:
    """What :func:`compare_site` found."""

    site_name: str
    timezone: str
    change: dt.date
    before_days: int
    after_days: int
    before_start: pd.Timestamp    # local midnight [UTC]
    change_start: pd.Timestamp    # local midnight of the change date [UTC]
    after_end: pd.Timestamp       # exclusive [UTC]
    currency: str
    price: float                  # [currency/kWh]
    components: list[ComponentChange]
    warnings: list[str] = field(default_factory=list)

    def as_json(self) -> dict:
        """The JSON form (interface section 5, with extra fields)."""
        iso = lambda t: t.tz_convert(self.timezone).isoformat()  # noqa: E731
        comps = []
        for c in self.components:
            fig = c.figures
            side = {
                p: {k: _round(getattr(v, f"{p}_mean"), 3) for k, v in fig.items()}
                | {"days": c.days[p]["days"], "days_used": c.days[p]["used"],
                   "days_no_data": c.days[p]["no_data"]}
                for p in ("before", "after")
            }
            diff = {}
            for k, v in fig.items():
                diff[k] = _round(v.difference, 3)
                name = "ci95" if k == "off_schedule_h_per_day" else f"{k}_ci95"
                diff[name] = [_round(v.ci95[0], 3), _round(v.ci95[1], 3)]
            if "kwh_per_day" in fig:
                per_year = fig["kwh_per_day"].difference * 365.0
                diff["kwh_per_year"] = _round(per_year, 1)
                diff["cost_per_year"] = _round(per_year * self.price, 1)
            comps.append({
                "id": c.id, "unit": c.unit, "role": c.role,
                "before": side["before"], "after": side["after"], "difference": diff,
                "change_points": [
                    {"date": p.date.isoformat(), "latest": p.latest.isoformat(),
                     "before_mean": _round(p.before_mean, 3),
                     "after_mean": _round(p.after_mean, 3)} for p in c.change_points],
                "notes": list(c.notes),
            })
        return {
            "change": self.change.isoformat(),
            "before": {"start": iso(self.before_start), "end": iso(self.change_start),
                       "days": self.before_days},
            "after": {"start": iso(self.change_start), "end": iso(self.after_end),
                      "days": self.after_days},
            "site": {"name": self.site_name, "timezone": self.timezone},
            "currency": self.currency,
            "components": comps,
            "warnings": list(self.warnings),
        }


def compare_daily(
    daily: pd.DataFrame,
    change: dt.date,
    before: int,
    after: int,
    *,
    max_no_data_h: float = MAX_NO_DATA_H,
) -> tuple[dict[str, BeforeAfter], list[ChangePoint], dict[str, dict[str, int]], list[str]]:
    """Before/after figures and change points from one component's daily rows (pure).

    Parameters
    ----------
    daily : pandas.DataFrame
        The audit's daily rows (:mod:`schedcheck.audit.accounting`): ``date``, ``scheduled_ns``,
        ``off_schedule_ns``, ``missed_ns``, ``running_ns``, ``no_data_ns``,
        ``off_schedule_kwh``, one row per local date of the window.
    change : datetime.date
        First local date of the "after" period.
    before, after : int
        Period lengths [days].
    max_no_data_h : float
        Days with more no data than this are left out [h].

    Returns
    -------
    figures, change_points, days, notes
        ``figures`` maps each name of :data:`FIGURES` to a :class:`BeforeAfter`; ``days``
        gives, per period, the days in it, the days used and the days left out for no data.
    """
    dates = [pd.Timestamp(d).date() for d in daily["date"]]
    no_data_h = (daily["no_data_ns"] / NS_PER_H).to_numpy()
    usable = no_data_h <= max_no_data_h
    types = pd.Series(np.where(daily["scheduled_ns"].to_numpy() > 0, "occupied", "unoccupied"),
                      index=dates)
    side = np.array(["before" if d < change else "after" for d in dates])
    days = {p: {"days": int((side == p).sum()), "used": int(((side == p) & usable).sum()),
                "no_data": int(((side == p) & ~usable).sum())} for p in ("before", "after")}
    notes = [f"{days[p]['no_data']} day(s) {p} the change left out: more than "
             f"{max_no_data_h:g} h of no data" for p in ("before", "after") if days[p]["no_data"]]
    notes += [f"only {days[p]['used']} usable day(s) {p} the change (fewer than {MIN_DAYS}): "
              "the interval rests on too few days to trust; a period of whole weeks is better"
              for p in ("before", "after") if 0 < days[p]["used"] < MIN_DAYS]
    figures = {}
    try:
        for name, read in FIGURES.items():
            values = np.where(usable, read(daily).to_numpy(dtype=float), np.nan)
            series = pd.Series(values, index=dates)
            figures[name] = before_after(series, change, before, after, day_types=types)
    except InputError as e:  # this component cannot be compared; the others still can
        return {}, [], days, [*notes, f"not compared: {e.message}"]
    notes += [f"off-schedule hours: {n}" for n in figures["off_schedule_h_per_day"].notes]
    y = (daily["off_schedule_ns"] / NS_PER_H).to_numpy(dtype=float)[usable]
    g = types.to_numpy()[usable]
    used_dates = [d for d, u in zip(dates, usable, strict=True) if u]
    points: list[ChangePoint] = []
    if len(y) >= 2 * MIN_SEGMENT_DAYS:
        sigma = max(robust_sigma(y, g), SIGMA_FLOOR_H)
        pen = mean_shift_penalty(y, g, sigma_floor=SIGMA_FLOOR_H)
        cap = CAP_SIGMAS * sigma
        idx = pelt_mean_shift(y, pen, groups=g, min_size=MIN_SEGMENT_DAYS, cap=cap)
        spans = change_point_ranges(y, idx, groups=g, min_size=MIN_SEGMENT_DAYS, cap=cap)
        means = segment_means(y, idx, g)
        points = [ChangePoint(used_dates[a], used_dates[b], means[k], means[k + 1])
                  for k, (a, b) in enumerate(spans)]
    return figures, points, days, notes


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
        Whole days in each period [days], at least :data:`MIN_DAYS`.
    skip_bad_rows : bool
        Skip unreadable readings rows (counted) instead of stopping at the first.
    progress : callable, optional
        Called with a short line at each stage.

    Returns
    -------
    CompareResult
    """
    from schedcheck.jobs.audit import audit_result
    from schedcheck.jobs.common import data_time_range, open_site

    for name, n in (("--before", before), ("--after", after)):
        if int(n) != n or n < MIN_DAYS:
            raise InputError(f"must be a whole number of days, at least {MIN_DAYS}; got {n}",
                             key=name)
    before, after = int(before), int(after)
    if before + after > MAX_WINDOW_DAYS:   # named here: the window check would blame --to
        raise InputError(f"--before {before} and --after {after} make {before + after:,} days; "
                         f"the most is {MAX_WINDOW_DAYS:,}",
                         key="--before" if before >= after else "--after")
    site = open_site(site_path)
    # a change date outside the readings otherwise failed as "no readings for any sensor"
    # between two UTC instants, which did not point at --change (the files are read once:
    # the windowed read below reuses this whole read)
    d0, d1 = data_time_range(site, limit=False)   # the window is the options', not this
    if not d0 < change <= d1:
        side = "before" if change <= d0 else "from"
        raise InputError(f"no day of readings {side} {change} (the readings cover {d0} to "
                         f"{d1}); choose a date after the first day and on or before the last",
                         key="--change")
    first = change - dt.timedelta(days=before)
    last = change + dt.timedelta(days=after - 1)
    result = audit_result(site, first, last, skip_bad_rows=skip_bad_rows, progress=progress)
    warnings = list(result.warnings)
    comps = []
    for comp in result.components:
        daily = comp.daily
        figures, points, days, notes = compare_daily(daily, change, before, after)
        if not comp.account.counts_missed:
            figures.pop("missed_h_per_day", None)
        comps.append(ComponentChange(comp.key, comp.unit.id, comp.component.role, days,
                                     figures, points, notes))
    if comps and not any(c.figures for c in comps):
        first_note = next(n for n in comps[0].notes if n.startswith("not compared: "))
        raise InputError(f"no component can be compared: {comps[0].id}: "
                         f"{first_note.removeprefix('not compared: ')}", key="--change")
    e = site.energy
    return CompareResult(
        site_name=site.name, timezone=site.timezone, change=change, before_days=before,
        after_days=after, before_start=local_midnight(first, site.timezone),
        change_start=local_midnight(change, site.timezone),
        after_end=local_midnight(last + dt.timedelta(days=1), site.timezone),
        currency=e.currency, price=e.price, components=comps, warnings=warnings,
    )
