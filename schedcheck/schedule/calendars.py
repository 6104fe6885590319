"""iCalendar (RFC 5545) expansion with guard rails: parsed calendars -> event intervals (UTC).

Each VEVENT of an occupancy calendar is a period the unit is meant to run. The expansion turns
a parsed :class:`icalendar.Calendar` into concrete ``[start, end)`` intervals inside an audit
window of local dates, exactly as RFC 5545 defines them (RRULE, RDATE, EXDATE, RECURRENCE-ID
overrides including ``RANGE=THISANDFUTURE``), using the recurring-ical-events library.

Time rules
----------
- A DATE-TIME with ``TZID`` is read in that zone (an IANA name, a CLDR-mapped descriptive name, any
  name defined by a VTIMEZONE in the same file); one ending in ``Z`` is UTC; a *floating* one
  (no zone) is read in the site's zone. A calendar with ``X-WR-TIMEZONE`` (written by some
  calendar programs) is first converted to that zone, as those programs mean it: floating
  and UTC times, and the rules built on them, then follow that zone's wall clock.
- All-day events (DATE values) run from local midnight of the first date to local midnight of
  the DTEND date, which is exclusive (RFC 5545 section 3.6.1); without DTEND, one day.
- An event given with DTEND ends at its DTEND's wall-clock time on every date, including
  daylight-saving change days (a night from 22:00 to 06:00 is then 7 or 9 hours); the hours
  and minutes of a DURATION are exact (RFC 5545 section 3.3.6), its days nominal. See
  :mod:`schedcheck.schedule.recurrence` and docs/calendars.md, "How recurrence is read".
- A local time that does not exist (spring gap) is read with the UTC offset before the gap; a
  local time that occurs twice (autumn fold) is the first of the two (RFC 5545 section 3.3.5).
  An occurrence whose start falls in the gap keeps its length; one written with no length (no
  DTEND or DURATION) is left out with a warning naming it.
- ``STATUS:CANCELLED`` occurrences are not periods (RFC 5545 section 3.8.1.11).
- An event whose CATEGORIES contain ``OPEN-ON-HOLIDAYS`` (any case) also applies on public
  holidays and closure dates; see :mod:`schedcheck.schedule.intended`.

Guard rails
-----------
The library silently drops or reinterprets some faults, and some rules would hang or exhaust
the machine; :func:`schedcheck.schedule.guards.check_calendar` refuses them all up front,
naming file and event: a missing DTSTART, a property that does not parse, a TZID that matches
no VTIMEZONE and no IANA zone, DTEND before DTSTART, DTEND together with DURATION, DTSTART and
DTEND of different value types, a negative DURATION, an RRULE without FREQ or with
``FREQ=SECONDLY``/``MINUTELY``, ``INTERVAL`` or ``COUNT`` below 1, more than
``MAX_STARTS_PER_DAY`` starts a day from BYHOUR x BYMINUTE x BYSECOND, and a rule whose dates
can never occur (e.g. 30 February). :func:`expand_calendar` adds the window caps
:data:`MAX_WINDOW_DAYS`, :data:`MAX_RULE_STEPS` and :data:`MAX_OCCURRENCES`.
"""

from __future__ import annotations

import copy
import datetime as dt
import zoneinfo
from dataclasses import dataclass, field
from pathlib import Path

import icalendar
import numpy as np
import pandas as pd
import recurring_ical_events

from schedcheck.errors import InputError, InputProblems
from schedcheck.intervals import from_ns
from schedcheck.schedule.guards import (
    as_naive,
    check_calendar,
    event_label,
    event_summary,
    rule_dicts,
)
from schedcheck.schedule.recurrence import has_duration, occurrence_end, read_rules
from schedcheck.window import day_window, local_midnight

HOLIDAY_MARKER = "OPEN-ON-HOLIDAYS"
"""CATEGORIES value that makes an event apply on holidays and closures too (our own name)."""

MAX_WINDOW_DAYS = 1100
"""Longest audit window [days]: three years and a little, enough for any year-on-year review
while bounding memory (our own choice, common practice, no source)."""

MAX_OCCURRENCES = 100_000
"""Most occurrences one calendar may produce in the window [-]. A busy occupancy calendar has a
few periods a day, about 3,000 over three years; 100,000 leaves room for per-room calendars
while stopping a runaway rule before it exhausts memory (common practice, no source)."""

MAX_RULE_STEPS = 200_000
"""Most periods (days for DAILY, hours for HOURLY, ...) a rule may have to step through from
its DTSTART to the end of the window [-]. The rule library walks them one by one, 5 to 11
microseconds each (measured on the development machine with dateutil 2.9), so this bounds one
rule to about two seconds; a daily rule may start in 1900, an hourly one about 22 years back
(our own choice, common practice, no source)."""

_FREQ_STEP = {  # length of one step of the rule library [s] (nominal)
    "HOURLY": 3600, "DAILY": 86400, "WEEKLY": 7 * 86400, "MONTHLY": 28 * 86400,
    "YEARLY": 365 * 86400,
}
_MARGIN = dt.timedelta(days=2)   # extra query span around the window: covers every UTC offset

EVENT_COLUMNS = ["start", "end", "source", "uid", "open_on_holidays", "event_start", "event_end"]


@dataclass(frozen=True, slots=True)
class _Occurrence:
    """One occurrence kept by the expansion: a row of :attr:`CalendarExpansion.events`."""

    start: int                 # clipped to the window [ns UTC]
    end: int                   # clipped to the window [ns UTC]
    source: str                # the event's SUMMARY
    uid: str
    open_on_holidays: bool
    event_start: int           # the occurrence before clipping [ns UTC]
    event_end: int             # the occurrence before clipping [ns UTC]


def _events_frame(kept: list[_Occurrence]) -> pd.DataFrame:
    """The occurrences as the :data:`EVENT_COLUMNS` frame (instants ``datetime64[ns, UTC]``)."""

    def instants(name: str) -> pd.Series:
        return from_ns(np.asarray([getattr(o, name) for o in kept], dtype="int64"))

    return pd.DataFrame({
        "start": instants("start"),
        "end": instants("end"),
        "source": pd.Series([o.source for o in kept], dtype=object),
        "uid": pd.Series([o.uid for o in kept], dtype=object),
        "open_on_holidays": pd.Series([o.open_on_holidays for o in kept], dtype=bool),
        "event_start": instants("event_start"),
        "event_end": instants("event_end"),
    })


@dataclass
class CalendarExpansion:
    """Expanded events of one calendar.

    Attributes
    ----------
    events : pandas.DataFrame
        One row per occurrence that overlaps the window, clipped to it: ``start``, ``end``
        (``datetime64[ns, UTC]``), ``source`` (the event's SUMMARY), ``uid``,
        ``open_on_holidays`` (bool), ``event_start``, ``event_end`` (the occurrence before
        clipping, UTC). Rows are in no particular order and may overlap.
    warnings : list of str
        One line each, naming file and event.
    free : list of (str, int, int)
        Occurrences marked free (``TRANSP:TRANSPARENT``) that overlap the window: the event
        named with its file, start and end [ns UTC, unclipped]. They are periods like any
        other (the caller may warn).
    """

    events: pd.DataFrame
    warnings: list[str] = field(default_factory=list)
    free: list[tuple[str, int, int]] = field(default_factory=list)


def _vtimezone_mismatches(cal: icalendar.Calendar, tz: str, first: dt.date,
                          last: dt.date) -> list[str]:
    """Notes for VTIMEZONE blocks that mostly agree with the site's zone but not on every day.

    Calendar programs sometimes carry outdated daylight-saving rules in a VTIMEZONE (the US
    rules before 2007 changed in April and October). RFC 5545 says its own rules apply, so the
    events are read by them; the user is told on which days that differs from the site's zone.
    Blocks that disagree on most days (a calendar kept in another zone on purpose) and blocks
    named with an IANA zone are left alone.
    """
    site = zoneinfo.ZoneInfo(tz)
    iana = zoneinfo.available_timezones()
    notes = []
    # judged over the whole years the window touches, so that a short window inside the
    # stretch of differing days is still told
    y0, y1 = dt.date(first.year, 1, 1), dt.date(last.year, 12, 31)
    days = [y0 + dt.timedelta(days=i) for i in range((y1 - y0).days + 1)]
    for block in cal.walk("VTIMEZONE"):
        name = str(block.get("TZID", "")).strip()
        if not name or name in iana:
            continue
        try:
            own = block.to_tz(lookup_tzid=False)   # this block's rules, not a kept one
            off = [d for d in days
                   if dt.datetime(d.year, d.month, d.day, 12, tzinfo=own).utcoffset()
                   != dt.datetime(d.year, d.month, d.day, 12, tzinfo=site).utcoffset()]
        except Exception:  # noqa: BLE001 - a block the library cannot use is checked elsewhere
            continue
        differ = [d for d in off if first <= d <= last]
        if differ and len(off) <= len(days) // 2:
            notes.append(
                f"VTIMEZONE {name!r} gives a different UTC offset from the site's zone {tz} on "
                f"{len(differ)} day{'s' if len(differ) > 1 else ''} of the window (first "
                f"{differ[0]}, last {differ[-1]}): its daylight-saving dates differ, as in a "
                "calendar program with outdated rules. Events written in it are read by its "
                "own rules (RFC 5545), an hour off the site's clock on those days; check the "
                "export")
    return notes


def is_open_on_holidays(event: icalendar.cal.Component) -> bool:
    """True when the event's CATEGORIES contain :data:`HOLIDAY_MARKER` (case-insensitive)."""
    cats = event.get("CATEGORIES")
    if cats is None:
        return False
    values: list[str] = []
    for c in cats if isinstance(cats, list) else [cats]:
        if hasattr(c, "cats"):
            values.extend(str(v) for v in c.cats)
        else:
            values.extend(str(c).split(","))
    return any(v.strip().upper() == HOLIDAY_MARKER for v in values)


# -- expansion -------------------------------------------------------------------------------
def check_window(first: dt.date, last: dt.date, max_days: int = MAX_WINDOW_DAYS) -> None:
    """Refuse windows that end before they start or exceed ``max_days`` [days]."""
    if last < first:
        raise InputError(f"the window ends ({last}) before it starts ({first})", key="--to")
    days = (last - first).days + 1
    if days > max_days:
        raise InputError(f"the window {first}..{last} is {days} days long; the most is "
                         f"{max_days} days, split it into shorter windows", key="--to")


def _to_utc_ns(value, zone: zoneinfo.ZoneInfo, tz: str) -> int:
    """A DATE, floating DATE-TIME or aware DATE-TIME to int64 ns UTC (RFC 5545 time rules)."""
    if not isinstance(value, dt.datetime):
        return int(local_midnight(value, tz).value)
    if value.tzinfo is None:
        value = value.replace(tzinfo=zone, fold=0)
    # fold=0: first of two repeated times; in a gap, the offset before the gap (RFC 5545 3.3.5)
    return int(pd.Timestamp(value.astimezone(dt.UTC)).as_unit("ns").value)


def _end_ns(occ, comp, start_ns: int, zone: zoneinfo.ZoneInfo, tz: str) -> int:
    """An occurrence's end [ns UTC]: exact DURATION hours, wall-clock DTEND
    (:func:`schedcheck.schedule.recurrence.occurrence_end`)."""
    start = occ.start
    if isinstance(start, dt.datetime) and start.tzinfo is None:
        start = start.replace(tzinfo=zone)
    duration = comp["DURATION"].dt if has_duration(comp) else None
    wall = (occ.end - occ.start) if isinstance(occ.start, dt.datetime) else dt.timedelta(0)
    return occurrence_end(start_ns, _to_utc_ns(occ.end, zone, tz), start, duration, wall,
                          lambda v: _to_utc_ns(v, zone, tz))


def _source_component(occ) -> icalendar.cal.Component:
    """The VEVENT an occurrence comes from (the series, or its changed instance).

    Reads the library's adapter directly: building a full copy per occurrence with
    ``as_component`` costs ~0.2 ms, which made the occurrence cap take many seconds to reach.
    """
    comp = getattr(getattr(occ, "_adapter", None), "_component", None)
    return comp if comp is not None else occ.as_component(False)


def _rule_steps(event, window_end: dt.datetime) -> int:
    start = event.get("DTSTART").dt
    most = 0
    for rule in rule_dicts(event):
        freq = str(rule.get("FREQ", ["DAILY"])[0]).upper()
        interval = rule.get("INTERVAL", [1])
        interval = int(interval[0] if isinstance(interval, list) else interval)
        span = (window_end - as_naive(start)).total_seconds()
        most = max(most, int(span // (_FREQ_STEP.get(freq, 86400) * max(interval, 1))))
    return most


def _date_until_inclusive(cal: icalendar.Calendar) -> tuple[icalendar.Calendar, list[str]]:
    """Read a DATE ``UNTIL`` on a DATE-TIME event as the end of that date (a common slip).

    RFC 5545 requires UNTIL to have DTSTART's type; the rule library reads a bare date as
    00:00 UTC and silently drops the last day. We keep the whole day, on a copy of the
    calendar, and say so in a note.
    """
    todo = []
    for i, event in enumerate(cal.walk("VEVENT")):
        start = event.get("DTSTART")
        if start is None or not isinstance(start.dt, dt.datetime):
            continue
        for j, rule in enumerate(rule_dicts(event)):
            until = rule.get("UNTIL", [None])[0]
            if isinstance(until, dt.date) and not isinstance(until, dt.datetime):
                todo.append((i, j, until))
    if not todo:
        return cal, []
    cal = copy.deepcopy(cal)
    events = cal.walk("VEVENT")
    notes = []
    for i, j, until in todo:
        event = events[i]
        tzinfo = event["DTSTART"].dt.tzinfo
        end = dt.datetime.combine(until, dt.time(23, 59, 59), tzinfo=tzinfo)
        if tzinfo is not None:
            end = end.astimezone(dt.UTC)
        rule_dicts(event)[j]["UNTIL"] = [end]
        notes.append(f"{event_label(event)}: RRULE UNTIL={until:%Y%m%d} is a date but DTSTART "
                     "has a time; read as the end of that date (RFC 5545 wants a date-time)")
    return cal, notes


def _check_rule_steps(cal: icalendar.Calendar, window_end: dt.datetime, path) -> None:
    """Refuse a rule that would step more than :data:`MAX_RULE_STEPS` times to the window."""
    for event in cal.walk("VEVENT"):
        steps = _rule_steps(event, window_end)
        if steps > MAX_RULE_STEPS:
            raise InputError(
                f"its RRULE would step {steps:,} times from DTSTART to the end of the window "
                f"(at most {MAX_RULE_STEPS:,}); move DTSTART closer to the window",
                path=path, key=event_label(event))


def _content_warnings(cal: icalendar.Calendar, where: str,
                      dropped: dict[tuple[str, str], list]) -> list[str]:
    """Warnings for a calendar without (live) events and for occurrences left out."""
    warnings = []
    vevents = cal.walk("VEVENT")
    if not vevents:
        warnings.append(f"{where}the calendar holds no events (VEVENT)")
    elif all(str(v.get("STATUS", "")).upper() == "CANCELLED" for v in vevents):
        warnings.append(f"{where}every event of the calendar is cancelled (STATUS:CANCELLED), "
                        "so it gives no periods")
    for (label, why), when in dropped.items():
        n = len(when)
        at = when[0].isoformat() + (f" and {n - 1} more" if n > 1 else "")
        warnings.append(f"{label}: the occurrence at {at} {why}; left out")
    return warnings


def expand_calendar(
    cal: icalendar.Calendar,
    tz: str,
    first: dt.date,
    last: dt.date,
    *,
    path: str | Path | None = None,
    max_days: int = MAX_WINDOW_DAYS,
) -> CalendarExpansion:
    """Expand a calendar's events into intervals that overlap local dates ``first..last``.

    Parameters
    ----------
    cal : icalendar.Calendar
        The parsed calendar.
    tz : str
        The site's IANA zone; floating times and all-day events are read in it.
    first, last : datetime.date
        Local dates of the window, both inclusive.
    path : str or Path, optional
        The calendar file, named in errors and warnings.
    max_days : int
        Longest window allowed [days]; callers that pad the user's window raise it by the pad.

    Returns
    -------
    CalendarExpansion
        Events clipped to the window (UTC) and warnings.

    Raises
    ------
    InputError
        For every guard rail (see the module docstring); several at once as InputProblems.
    """
    check_window(first, last, max_days)
    problems = check_calendar(cal, path=path)
    if problems:
        raise problems[0] if len(problems) == 1 else InputProblems(problems)
    cal, notes = _date_until_inclusive(cal)
    cal, rule_notes = read_rules(cal, path=path)
    notes = notes + rule_notes
    zone = zoneinfo.ZoneInfo(tz)
    w0, w1 = day_window(first, last, tz)
    w0_ns, w1_ns = int(w0.value), int(w1.value)
    q0 = dt.datetime.combine(first, dt.time()) - _MARGIN
    q1 = dt.datetime.combine(last, dt.time()) + dt.timedelta(days=1) + _MARGIN
    _check_rule_steps(cal, q1, path)
    try:
        query = recurring_ical_events.of(cal)
        series_list = list(query.series)
    except Exception as exc:  # noqa: BLE001 - the library's errors name no event; ours do
        raise InputError(f"the calendar cannot be expanded: {exc}", path=path) from None

    kept: list[_Occurrence] = []
    dropped: dict[tuple[str, str], list] = {}
    meta: dict[int, tuple[bool, str, str, bool]] = {}   # per source component
    free: list[tuple[str, int, int]] = []                # occurrences marked free
    generated = 0
    where = f"{path}: " if path is not None else ""
    for series in series_list:
        try:
            for occ in series.between(q0, q1):
                generated += 1
                comp = _source_component(occ)
                if generated > MAX_OCCURRENCES:
                    raise InputError(
                        f"more than {MAX_OCCURRENCES:,} occurrences in the window "
                        f"{first}..{last}; shorten the window or simplify the rule",
                        path=path, key=event_label(comp, override=False))
                key = id(comp)
                if key not in meta:
                    meta[key] = (str(comp.get("STATUS", "")).upper() == "CANCELLED",
                                 event_summary(comp),
                                 str(comp.get("UID", "")), is_open_on_holidays(comp))
                cancelled, summary, uid, open_on_holidays = meta[key]
                if cancelled:
                    continue
                s = _to_utc_ns(occ.start, zone, tz)
                e = _end_ns(occ, comp, s, zone, tz)
                if e <= s:
                    if not w0_ns <= s < w1_ns:
                        continue   # outside the window: not this window's concern
                    label = f"{where}{event_label(comp, override=False)}"
                    if occ.start == occ.end:
                        why = ("has no length as written (no DTEND or DURATION, or DTEND equal "
                               "to DTSTART): an instant, not a period")
                    else:
                        why = (f"has {'zero' if e == s else 'negative'} length in {tz} local "
                               "time (a daylight-saving change)")
                    dropped.setdefault((label, why), []).append(occ.start)
                    continue
                if e <= w0_ns or s >= w1_ns:
                    continue
                kept.append(_Occurrence(start=max(s, w0_ns), end=min(e, w1_ns), source=summary,
                                        uid=uid, open_on_holidays=open_on_holidays,
                                        event_start=s, event_end=e))
                if str(comp.get("TRANSP", "")).strip().upper() == "TRANSPARENT":
                    free.append((f"{where}{event_label(comp, override=False)}", s, e))
        except InputError:
            raise
        except Exception as exc:  # noqa: BLE001 - name the event, never a traceback
            core = getattr(series.components[0], "_component", icalendar.Event())
            raise InputError(f"cannot be expanded: {exc}", path=path,
                             key=event_label(core)) from None
    notes = notes + _vtimezone_mismatches(cal, tz, first, last)
    warnings = [f"{where}{note}" for note in notes] + _content_warnings(cal, where, dropped)
    return CalendarExpansion(events=_events_frame(kept), warnings=warnings, free=free)
