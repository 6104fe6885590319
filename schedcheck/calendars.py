"""iCalendar (RFC 5545) expansion with guard rails: parsed calendars -> event intervals (UTC).

Each VEVENT of an occupancy calendar is a period the unit is meant to run. The expansion turns
a parsed :class:`icalendar.Calendar` into concrete ``[start, end)`` intervals inside an audit
window of local dates, exactly as RFC 5545 defines them (RRULE, RDATE, EXDATE, RECURRENCE-ID
overrides including ``RANGE=THISANDFUTURE``), using the recurring-ical-events library.

Time rules
----------
- A DATE-TIME with ``TZID`` is read in that zone (an IANA name, a Windows zone name, or any
  name defined by a VTIMEZONE in the same file); one ending in ``Z`` is UTC; a *floating* one
  (no zone) is read in the site's zone. A calendar with ``X-WR-TIMEZONE`` (written by some
  calendar programs) is first converted to that zone, as those programs mean it: floating
  and UTC times, and the rules built on them, then follow that zone's wall clock.
- All-day events (DATE values) run from local midnight of the first date to local midnight of
  the DTEND date, which is exclusive (RFC 5545 section 3.6.1); without DTEND, one day.
- Event ends follow the wall clock: an event from 07:00 to 17:00 ends at 17:00 local time on
  every date, including daylight-saving change days (a 9 or 11 hour period then); a DURATION
  is added on the wall clock too.
- A local time that does not exist (spring gap) is read with the UTC offset before the gap; a
  local time that occurs twice (autumn fold) is the first of the two (RFC 5545 section 3.3.5).
  An occurrence that ends up with zero or negative length is dropped with a warning naming it.
- ``STATUS:CANCELLED`` occurrences are not periods (RFC 5545 section 3.8.1.11).
- An event whose CATEGORIES contain ``OPEN-ON-HOLIDAYS`` (any case) also applies on public
  holidays and closure dates; see :mod:`schedcheck.schedule`.

Guard rails
-----------
The library silently drops or reinterprets some faults, and some rules would hang or exhaust
the machine; :func:`check_calendar` refuses them all up front, naming file and event: a missing
DTSTART, a property that does not parse, a TZID that matches no VTIMEZONE and no IANA zone,
DTEND before DTSTART, DTEND together with DURATION, DTSTART and DTEND of different value types,
a negative DURATION, an RRULE without FREQ or with ``FREQ=SECONDLY``/``MINUTELY``, ``INTERVAL``
or ``COUNT`` below 1, more than :data:`MAX_STARTS_PER_DAY` starts a day from BYHOUR x BYMINUTE
x BYSECOND, and a rule whose dates can never occur (e.g. 30 February). :func:`expand_calendar`
adds the window caps :data:`MAX_WINDOW_DAYS`, :data:`MAX_RULE_STEPS` and
:data:`MAX_OCCURRENCES`.
"""

from __future__ import annotations

import datetime as dt
import zoneinfo
from dataclasses import dataclass, field
from pathlib import Path

import icalendar
import numpy as np
import pandas as pd
import recurring_ical_events
from dateutil.rrule import rrulestr

from schedcheck.errors import InputError, InputProblems
from schedcheck.intervals import from_ns
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

MAX_STARTS_PER_DAY = 48
"""Most starts a day one RRULE may define through BYHOUR x BYMINUTE x BYSECOND (or an HOURLY
frequency) [-]. Occupancy changes at most every half hour in any building we know of, so 48
(every 30 minutes) is already far denser than an occupancy calendar needs (common practice,
no source)."""

MAX_RULE_STEPS = 200_000
"""Most periods (days for DAILY, hours for HOURLY, ...) a rule may have to step through from
its DTSTART to the end of the window [-]. The rule library walks them one by one, 5 to 11
microseconds each (measured on the development machine with dateutil 2.9), so this bounds one
rule to about two seconds; a daily rule may start in 1900, an hourly one about 22 years back
(our own choice, no source)."""

_ALLOWED_FREQ = ("HOURLY", "DAILY", "WEEKLY", "MONTHLY", "YEARLY")
_FREQ_STEP = {  # length of one step of the rule library [s] (nominal)
    "HOURLY": 3600, "DAILY": 86400, "WEEKLY": 7 * 86400, "MONTHLY": 28 * 86400,
    "YEARLY": 365 * 86400,
}
_MARGIN = dt.timedelta(days=2)   # extra query span around the window: covers every UTC offset

EVENT_COLUMNS = ["start", "end", "source", "uid", "open_on_holidays"]


@dataclass
class CalendarExpansion:
    """Expanded events of one calendar.

    Attributes
    ----------
    events : pandas.DataFrame
        One row per occurrence that overlaps the window, clipped to it: ``start``, ``end``
        (``datetime64[ns, UTC]``), ``source`` (the event's SUMMARY), ``uid``,
        ``open_on_holidays`` (bool). Rows are in no particular order and may overlap.
    warnings : list of str
        One line each, naming file and event.
    """

    events: pd.DataFrame
    warnings: list[str] = field(default_factory=list)


def event_label(event: icalendar.cal.Component, *, override: bool = True) -> str:
    """``event 'SUMMARY' (UID)`` for messages; works on incomplete events.

    With ``override``, an event with a RECURRENCE-ID is named as the override of that date.
    """
    summary = str(event.get("SUMMARY", "")).strip() or "(no summary)"
    uid = str(event.get("UID", "")).strip() or "no UID"
    rid = event.get("RECURRENCE-ID")
    extra = ""
    if override and rid is not None and hasattr(rid, "dt"):
        extra = f", override of {rid.dt.isoformat()}"
    return f"event {summary!r} ({uid}{extra})"


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


# -- static checks ---------------------------------------------------------------------------
def _values(prop) -> list:
    """The date/datetime values of a property that may be a list, a vDDDLists or a single value."""
    out = []
    for p in prop if isinstance(prop, list) else [prop]:
        if hasattr(p, "dts"):
            out.extend((d.dt, d.params) for d in p.dts)
        elif hasattr(p, "dt"):
            out.append((p.dt, getattr(p, "params", {})))
    return out


def _unresolved_tzid(event) -> str | None:
    for name in ("DTSTART", "DTEND", "RECURRENCE-ID", "EXDATE", "RDATE"):
        prop = event.get(name)
        if prop is None:
            continue
        props = prop if isinstance(prop, list) else [prop]
        for p in props:
            tzid = getattr(p, "params", {}).get("TZID")
            for value, _ in _values(p):
                first = value[0] if isinstance(value, tuple) else value
                if tzid and isinstance(first, dt.datetime) and first.tzinfo is None:
                    return (f"{name} has TZID={tzid!r}, which matches no VTIMEZONE in the "
                            "file and no IANA time zone")
    return None


def _rule_dicts(event) -> list:
    prop = event.get("RRULE")
    if prop is None:
        return []
    return prop if isinstance(prop, list) else [prop]


def _as_naive(value) -> dt.datetime:
    if isinstance(value, dt.datetime):
        return value.replace(tzinfo=None)
    return dt.datetime(value.year, value.month, value.day)


def _check_rule(rule, start) -> str | None:
    """Why an RRULE (icalendar vRecur) is refused, or None."""
    freq = [str(f).upper() for f in rule.get("FREQ", [])]
    if not freq:
        return "RRULE has no FREQ"
    freq = freq[0]
    if freq in ("SECONDLY", "MINUTELY"):
        return (f"RRULE FREQ={freq} is far denser than an occupancy calendar needs; "
                "write each period as an event with a DTEND")
    if freq not in _ALLOWED_FREQ:
        return f"RRULE FREQ={freq} is not an RFC 5545 frequency"
    interval = rule.get("INTERVAL", [1])
    interval = interval[0] if isinstance(interval, list) else interval
    if int(interval) < 1:
        return f"RRULE INTERVAL={interval} must be 1 or more (0 would repeat for ever)"
    count = rule.get("COUNT")
    if count is not None and int(count[0] if isinstance(count, list) else count) < 1:
        return "RRULE COUNT must be 1 or more"
    hourly = max(1, 24 // int(interval)) if freq == "HOURLY" else 1
    n_hours = len(rule.get("BYHOUR", [])) or hourly
    per_day = n_hours * (len(rule.get("BYMINUTE", [])) or 1) * (len(rule.get("BYSECOND", [])) or 1)
    if per_day > MAX_STARTS_PER_DAY:
        return (f"RRULE defines {per_day} starts a day (BYHOUR x BYMINUTE x BYSECOND), more than "
                f"the {MAX_STARTS_PER_DAY} an occupancy calendar can need")
    text = rule.to_ical().decode()
    try:
        parsed = rrulestr(text, dtstart=_as_naive(start), ignoretz=True)
    except (ValueError, TypeError, OverflowError) as exc:
        return f"RRULE {text!r} does not parse: {exc}"
    return _never_occurs(rule, freq, parsed, text)


def _never_occurs(rule, freq: str, parsed, text: str) -> str | None:
    """Detect rules whose dates can never occur (e.g. BYMONTH=2;BYMONTHDAY=30).

    The rule library would step through every period up to the year 9999 looking for one
    (seconds to minutes for a daily rule), so such rules are refused. The date filters are
    probed with a YEARLY rule, which steps one year at a time (about 0.2 s in the worst case).
    """
    parts = {"BYMONTH", "BYMONTHDAY", "BYYEARDAY", "BYWEEKNO", "BYDAY"}
    if not parts & set(rule.keys()):
        return None
    probe = icalendar.vRecur({k: v for k, v in rule.items() if k in parts})
    probe["FREQ"] = "YEARLY"
    if freq == "MONTHLY" and "BYMONTH" not in rule:
        probe["BYMONTH"] = list(range(1, 13))   # nth weekday counts within the month
    try:
        first = rrulestr(probe.to_ical().decode(), dtstart=dt.datetime(1970, 1, 1),
                         ignoretz=True).after(dt.datetime(1970, 1, 1), inc=True)
    except (ValueError, TypeError, OverflowError):
        return None   # leave the verdict to the full parse
    if first is None:
        return f"RRULE {text!r} can never occur (no date matches all its BY parts)"
    return None


def _comparable(a, b):
    if isinstance(a, dt.datetime) and isinstance(b, dt.datetime):
        if (a.tzinfo is None) != (b.tzinfo is None):
            return a.replace(tzinfo=None), b.replace(tzinfo=None)
    return a, b


def check_event(event: icalendar.cal.Component) -> list[str]:
    """Every reason to refuse one VEVENT, as plain sentences (empty when it is fine)."""
    problems: list[str] = []
    for name, msg in getattr(event, "errors", []) or []:
        problems.append(f"{name} does not parse: {msg}")
    if problems:
        return problems
    start_prop = event.get("DTSTART")
    if start_prop is None or not hasattr(start_prop, "dt"):
        return ["has no DTSTART (RFC 5545 requires one when the calendar has no METHOD)"]
    start = start_prop.dt
    tz_problem = _unresolved_tzid(event)
    if tz_problem:
        problems.append(tz_problem)
    end_prop, dur_prop = event.get("DTEND"), event.get("DURATION")
    if end_prop is not None and dur_prop is not None:
        problems.append("has both DTEND and DURATION (RFC 5545 allows one or the other)")
    if end_prop is not None:
        end = end_prop.dt
        if isinstance(start, dt.datetime) != isinstance(end, dt.datetime):
            problems.append("DTSTART and DTEND differ in value type (one DATE, one DATE-TIME)")
        else:
            a, b = _comparable(start, end)
            if b < a:
                problems.append(f"DTEND {end.isoformat()} is before DTSTART {start.isoformat()}")
    if dur_prop is not None and hasattr(dur_prop, "dt") and isinstance(dur_prop.dt, dt.timedelta):
        if dur_prop.dt < dt.timedelta(0):
            problems.append(f"DURATION {dur_prop.to_ical().decode()} is negative")
    for rule in _rule_dicts(event):
        why = _check_rule(rule, start)
        if why:
            problems.append(why)
    return problems


def check_calendar(cal: icalendar.Calendar, *, path: str | Path | None = None) -> list[InputError]:
    """Run every guard rail that needs no window; one :class:`InputError` per problem.

    Parameters
    ----------
    cal : icalendar.Calendar
        The parsed calendar.
    path : str or Path, optional
        The file it came from, for the messages.
    """
    out: list[InputError] = []
    scale = str(cal.get("CALSCALE", "GREGORIAN")).upper()
    if scale != "GREGORIAN":
        out.append(InputError(f"CALSCALE {scale} is not supported; only GREGORIAN", path=path))
    xwr = cal.get("X-WR-TIMEZONE")
    if xwr is not None:
        try:
            zoneinfo.ZoneInfo(str(xwr).strip())
        except (zoneinfo.ZoneInfoNotFoundError, ValueError):
            out.append(InputError(f"X-WR-TIMEZONE {str(xwr)!r} is not an IANA time zone",
                                  path=path))
    for event in cal.walk("VEVENT"):
        for why in check_event(event):
            out.append(InputError(why, path=path, key=event_label(event)))
    return out


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


def _rule_steps(event, window_end: dt.datetime) -> int:
    start = event.get("DTSTART").dt
    most = 0
    for rule in _rule_dicts(event):
        freq = str(rule.get("FREQ", ["DAILY"])[0]).upper()
        interval = rule.get("INTERVAL", [1])
        interval = int(interval[0] if isinstance(interval, list) else interval)
        span = (window_end - _as_naive(start)).total_seconds()
        most = max(most, int(span // (_FREQ_STEP.get(freq, 86400) * max(interval, 1))))
    return most


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
    zone = zoneinfo.ZoneInfo(tz)
    w0, w1 = day_window(first, last, tz)
    w0_ns, w1_ns = int(w0.value), int(w1.value)
    q0 = dt.datetime.combine(first, dt.time()) - _MARGIN
    q1 = dt.datetime.combine(last, dt.time()) + dt.timedelta(days=1) + _MARGIN
    for event in cal.walk("VEVENT"):
        steps = _rule_steps(event, q1)
        if steps > MAX_RULE_STEPS:
            raise InputError(
                f"its RRULE would step {steps:,} times from DTSTART to the end of the window "
                f"(at most {MAX_RULE_STEPS:,}); move DTSTART closer to the window",
                path=path, key=event_label(event))
    try:
        query = recurring_ical_events.of(cal)
        series_list = list(query.series)
    except Exception as exc:  # noqa: BLE001 - the library's errors name no event; ours do
        raise InputError(f"the calendar cannot be expanded: {exc}", path=path) from None

    starts: list[int] = []
    ends: list[int] = []
    sources: list[str] = []
    uids: list[str] = []
    opens: list[bool] = []
    dropped: dict[tuple[str, str], list] = {}
    where = f"{path}: " if path is not None else ""
    for series in series_list:
        try:
            for occ in series.between(q0, q1):
                if len(starts) >= MAX_OCCURRENCES:
                    comp = occ.as_component(False)
                    raise InputError(
                        f"more than {MAX_OCCURRENCES:,} occurrences in the window "
                        f"{first}..{last}; shorten the window or simplify the rule",
                        path=path, key=event_label(comp, override=False))
                comp = occ.as_component(False)
                if str(comp.get("STATUS", "")).upper() == "CANCELLED":
                    continue
                s = _to_utc_ns(occ.start, zone, tz)
                e = _to_utc_ns(occ.end, zone, tz)
                if e <= s:
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
                starts.append(max(s, w0_ns))
                ends.append(min(e, w1_ns))
                sources.append(str(comp.get("SUMMARY", "")).strip() or "(no summary)")
                uids.append(str(comp.get("UID", "")))
                opens.append(is_open_on_holidays(comp))
        except InputError:
            raise
        except Exception as exc:  # noqa: BLE001 - name the event, never a traceback
            core = getattr(series.components[0], "_component", icalendar.Event())
            raise InputError(f"cannot be expanded: {exc}", path=path,
                             key=event_label(core)) from None
    warnings = []
    for (label, why), when in dropped.items():
        n = len(when)
        at = when[0].isoformat() + (f" and {n - 1} more" if n > 1 else "")
        warnings.append(f"{label}: the occurrence at {at} {why}; left out")
    events = pd.DataFrame({
        "start": from_ns(np.asarray(starts, dtype="int64")),
        "end": from_ns(np.asarray(ends, dtype="int64")),
        "source": pd.Series(sources, dtype=object),
        "uid": pd.Series(uids, dtype=object),
        "open_on_holidays": pd.Series(opens, dtype=bool),
    })
    return CalendarExpansion(events=events, warnings=warnings)
