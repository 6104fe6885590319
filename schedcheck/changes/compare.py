"""The controls-change check (``schedcheck compare``): did a change work, and when did
behaviour change?

The audit's own computation (:func:`schedcheck.audit.run.run_audit`) runs over the window
``[change - before days, change + after days)``; its daily rows per component give the series
compared here (:func:`compare_audit`). Nothing is recomputed: off-schedule hours, kWh and missed
hours are the audit's. Pure: no file is read or written here; the JSON form is
:func:`schedcheck.outputs.compare_json.compare_json`.

Per component:

* before / after figures per day (off-schedule hours, off-schedule kWh, missed hours, running
  hours), and the difference with a 95% interval
  (:func:`schedcheck.changes.before_after`, occupied days compared with occupied days and
  unoccupied days with unoccupied days);
* the dates where the daily pattern of off-schedule hours changed, found by PELT over the
  whole window (PELT with the capped cost), whatever date the user gave. PELT reads the
  series the behaviour episodes are dated on (:func:`schedcheck.changes.episodes.dating_hours`:
  the share of the possible off-schedule time run, with allowed windows filled in as the unit
  behaved next to them), so allowed windows starting or stopping (night cooling allowed from
  May, say) do not date a change the unit never made; the means before and after each date are
  the plain off-schedule hours;
* the behaviour episode that dates the change (:func:`dating_episode`): the start or end of a
  collective episode (:mod:`schedcheck.changes.episodes`) within :data:`NEAR_DAYS` of the given
  date, nearest first, or a note that none begins or ends near it.

Days with more than ``max_no_data_h`` hours of no data are left out of both and counted, never
dropped silently. Both periods are judged against the schedule in the site file as it is now:
when the change *was* a schedule change, the "before" figures say how the old behaviour looks
against the new schedule.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from schedcheck.audit.run import AuditResult
from schedcheck.changes.capa import Episode
from schedcheck.changes.change_points import (
    BeforeAfter,
    before_after,
    change_point_ranges,
    mean_shift_penalty,
    pelt_mean_shift,
    robust_sigma,
    segment_means,
)
from schedcheck.changes.episodes import (
    component_episodes,
    dating_hours,
    episode_settings,
    window_edges,
)
from schedcheck.errors import InputError
from schedcheck.intervals import NS_PER_H
from schedcheck.schedule.calendars import MAX_WINDOW_DAYS
from schedcheck.site import Site
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

#: An episode that begins or ends this close to the given change date dates it [days]: a week
#: either way, since a controls change is often logged a few days from when it was made.
#: Common practice, no source.
NEAR_DAYS = 7

FIGURES = {  # name in the output -> how to read it from the audit's daily rows
    "off_schedule_h_per_day": lambda d: d["off_schedule_ns"] / NS_PER_H,
    "kwh_per_day": lambda d: d["off_schedule_kwh"].astype(float),
    "missed_h_per_day": lambda d: d["missed_ns"] / NS_PER_H,
    "running_h_per_day": lambda d: d["running_ns"] / NS_PER_H,
}


#: What a note of :func:`compare_daily` is about (``CompareNote.kind``).
LEFT_OUT = "left_out"            # days left out for no data
FEW_DAYS = "few_days"            # too few usable days to trust the interval
NOT_COMPARED = "not_compared"    # the component could not be compared at all
FIGURE_NOTE = "figure"           # a note of the before/after comparison of a figure


class CompareNote(str):
    """A note on one component's comparison: its text, with what it is about in ``kind``
    (one of :data:`LEFT_OUT`, :data:`FEW_DAYS`, :data:`NOT_COMPARED`, :data:`FIGURE_NOTE`) and,
    for :data:`NOT_COMPARED`, the reason alone in ``reason``."""

    kind: str
    reason: str

    def __new__(cls, text: str, kind: str, reason: str = "") -> CompareNote:
        note = super().__new__(cls, text)
        note.kind, note.reason = kind, reason
        return note


@dataclass
class ChangePoint:
    """A date from which the daily off-schedule hours settle at another level."""

    date: dt.date                 # first local date of the new level (earliest the data allow)
    latest: dt.date               # latest date the new level may have begun on, same cost
    before_mean: float            # mean off-schedule hours per day before it [h/day]
    after_mean: float             # ... and from it on, until the next change [h/day]


@dataclass
class EpisodeDate:
    """The behaviour episode nearest the given change date: it ``began`` or ``ended`` there."""

    date: dt.date                 # the first local date of the new behaviour
    how: str                      # "began" (an episode started) | "ended" (the day after it)
    episode: Episode


@dataclass
class ComponentChange:
    """The before/after comparison of one component."""

    id: str
    unit: str
    role: str
    days: dict[str, dict[str, int]]                  # before/after -> days, used, no_data
    figures: dict[str, BeforeAfter]                  # FIGURES name -> comparison
    change_points: list[ChangePoint]
    notes: list[CompareNote] = field(default_factory=list)
    episodes: list[Episode] = field(default_factory=list)   # over the compare window
    dated: EpisodeDate | None = None   # the episode boundary nearest the change, if near


@dataclass
class CompareResult:
    """What :func:`compare_audit` found."""

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


def compare_daily(
    daily: pd.DataFrame,
    change: dt.date,
    before: int,
    after: int,
    *,
    max_no_data_h: float = MAX_NO_DATA_H,
    dating: np.ndarray | None = None,
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
    dating : ndarray, optional
        The series the change points are found on, one figure per row of ``daily`` (NaN: no
        figure) [h/day]; by default the plain off-schedule hours. The means around each change
        point are always the plain off-schedule hours.

    Returns
    -------
    figures, change_points, days, notes
        ``figures`` maps each name of :data:`FIGURES` to a :class:`BeforeAfter`; ``days``
        gives, per period, the days in it, the days used and the days left out for no data;
        ``notes`` are :class:`CompareNote` (plain text, with what each is about).
    """
    dates = [pd.Timestamp(d).date() for d in daily["date"]]
    no_data_h = (daily["no_data_ns"] / NS_PER_H).to_numpy()
    usable = no_data_h <= max_no_data_h
    types = pd.Series(np.where(daily["scheduled_ns"].to_numpy() > 0, "occupied", "unoccupied"),
                      index=dates)
    side = np.array(["before" if d < change else "after" for d in dates])
    days = {p: {"days": int((side == p).sum()), "used": int(((side == p) & usable).sum()),
                "no_data": int(((side == p) & ~usable).sum())} for p in ("before", "after")}
    notes = [CompareNote(f"{days[p]['no_data']} day(s) {p} the change left out: more than "
                         f"{max_no_data_h:g} h of no data", LEFT_OUT)
             for p in ("before", "after") if days[p]["no_data"]]
    notes += [CompareNote(f"only {days[p]['used']} usable day(s) {p} the change (fewer than "
                          f"{MIN_DAYS}): the interval rests on too few days to trust; a period "
                          "of whole weeks is better", FEW_DAYS)
              for p in ("before", "after") if 0 < days[p]["used"] < MIN_DAYS]
    figures = {}
    try:
        for name, read in FIGURES.items():
            values = np.where(usable, read(daily).to_numpy(dtype=float), np.nan)
            series = pd.Series(values, index=dates)
            figures[name] = before_after(series, change, before, after, day_types=types)
    except InputError as e:  # this component cannot be compared; the others still can
        return {}, [], days, [*notes, CompareNote(f"not compared: {e.message}", NOT_COMPARED,
                                                  e.message)]
    notes += [CompareNote(f"off-schedule hours: {n}", FIGURE_NOTE)
              for n in figures["off_schedule_h_per_day"].notes]
    plain = (daily["off_schedule_ns"] / NS_PER_H).to_numpy(dtype=float)
    series = plain if dating is None else np.asarray(dating, dtype=float)
    dated = usable & np.isfinite(series)
    y = series[dated]
    g = types.to_numpy()[dated]
    used_dates = [d for d, u in zip(dates, dated, strict=True) if u]
    points: list[ChangePoint] = []
    if len(y) >= 2 * MIN_SEGMENT_DAYS:
        sigma = max(robust_sigma(y, g), SIGMA_FLOOR_H)
        pen = mean_shift_penalty(y, g, sigma_floor=SIGMA_FLOOR_H)
        cap = CAP_SIGMAS * sigma
        idx = pelt_mean_shift(y, pen, groups=g, min_size=MIN_SEGMENT_DAYS, cap=cap)
        spans = change_point_ranges(y, idx, groups=g, min_size=MIN_SEGMENT_DAYS, cap=cap)
        means = segment_means(plain[dated], idx, g)
        points = [ChangePoint(used_dates[a], used_dates[b], means[k], means[k + 1])
                  for k, (a, b) in enumerate(spans)]
    return figures, points, days, notes


def dating_episode(episodes: list[Episode], change: dt.date, near: int = NEAR_DAYS
                   ) -> EpisodeDate | None:
    """The collective episode boundary nearest ``change`` within ``near`` days: where one began
    (its start) or ended (the day after its end); None if none is that near. On a tie the
    earlier date wins."""
    found = []
    for ep in episodes:
        if ep.kind != "collective":
            continue
        found.append(EpisodeDate(ep.start, "began", ep))
        found.append(EpisodeDate(ep.end + dt.timedelta(days=1), "ended", ep))
    found = [f for f in found if abs((f.date - change).days) <= near]
    return min(found, key=lambda f: (abs((f.date - change).days), f.date), default=None)


def check_periods(before: int, after: int) -> tuple[int, int]:
    """The period lengths as whole days, or an :class:`InputError` naming the option.

    Each must be a whole number of days, at least :data:`MIN_DAYS`; together at most
    :data:`schedcheck.schedule.calendars.MAX_WINDOW_DAYS` (named here: the window check would
    blame a --to nobody gave).
    """
    for name, n in (("--before", before), ("--after", after)):
        if int(n) != n or n < MIN_DAYS:
            raise InputError(f"must be a whole number of days, at least {MIN_DAYS}; got {n}",
                             key=name)
    before, after = int(before), int(after)
    if before + after > MAX_WINDOW_DAYS:
        raise InputError(f"--before {before} and --after {after} make {before + after:,} days; "
                         f"the most is {MAX_WINDOW_DAYS:,}",
                         key="--before" if before >= after else "--after")
    return before, after


def check_change_date(change: dt.date, first_day: dt.date, last_day: dt.date) -> None:
    """Refuse a change date with no day of readings before it or from it on.

    ``first_day``, ``last_day``: the local dates wholly covered by the readings. Without this
    a date outside the readings failed as "no readings for any sensor" between two UTC
    instants, which did not point at --change.
    """
    if not first_day < change <= last_day:
        side = "before" if change <= first_day else "from"
        raise InputError(f"no day of readings {side} {change} (the readings cover {first_day} "
                         f"to {last_day}); choose a date after the first day and on or before "
                         "the last", key="--change")


def compare_window(change: dt.date, before: int, after: int) -> tuple[dt.date, dt.date]:
    """The local dates of both periods together, both inclusive."""
    return change - dt.timedelta(days=before), change + dt.timedelta(days=after - 1)


def compare_audit(result: AuditResult, site: Site, change: dt.date, before: int, after: int
                  ) -> CompareResult:
    """Compare the days before ``change`` with the days from it on, for every component.

    Parameters
    ----------
    result : AuditResult
        The audit of the local dates :func:`compare_window` gives.
    site : Site
        The audited site (name, time zone, energy price).
    change : datetime.date
        First local date of the "after" period.
    before, after : int
        Period lengths [days], as :func:`check_periods` returns them.

    Raises
    ------
    InputError
        When no component can be compared (keyed ``--change``).
    """
    first, last = compare_window(change, before, after)
    comps = []
    for comp in result.components:
        dates = [pd.Timestamp(d).date() for d in comp.daily["date"]]
        dating = dating_hours(comp, window_edges(dates, result))
        figures, points, days, notes = compare_daily(comp.daily, change, before, after,
                                                     dating=dating)
        if not comp.account.counts_missed:
            figures.pop("missed_h_per_day", None)
        eps = (result.episodes[comp.key] if comp.key in result.episodes
               else component_episodes(comp, result, **episode_settings(result)))
        dated = dating_episode(eps, change)
        off = figures.get("off_schedule_h_per_day")
        moved = bool(points) or (off is not None and (off.ci95[0] > 0 or off.ci95[1] < 0))
        if dated is None and moved:   # something changed, but no episode dates it
            notes.append(CompareNote(f"no behaviour episode begins or ends within {NEAR_DAYS} "
                                     f"days of {change}: the data do not date a change of "
                                     "behaviour near it", FIGURE_NOTE))
        comps.append(ComponentChange(comp.key, comp.unit.id, comp.component.role, days,
                                     figures, points, notes, eps, dated))
    if comps and not any(c.figures for c in comps):
        reason = next(n.reason for n in comps[0].notes if n.kind == NOT_COMPARED)
        raise InputError(f"no component can be compared: {comps[0].id}: {reason}",
                         key="--change")
    e = site.energy
    return CompareResult(
        site_name=site.name, timezone=site.timezone, change=change, before_days=before,
        after_days=after, before_start=local_midnight(first, site.timezone),
        change_start=local_midnight(change, site.timezone),
        after_end=local_midnight(last + dt.timedelta(days=1), site.timezone),
        currency=e.currency, price=e.price, components=comps, warnings=list(result.warnings),
    )
