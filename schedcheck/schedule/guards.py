"""Static guard rails for iCalendar events: everything that can be checked without a window.

Used by :mod:`.calendars` before every expansion and by ``schedcheck check`` through
:func:`schedcheck.inputs.calendar_files.check_calendar_file`. The list of rails and their
reasons is in the docstring of :mod:`schedcheck.schedule.calendars` and in docs/calendars.md.
"""

from __future__ import annotations

import datetime as dt
import difflib
import functools
import zoneinfo
from pathlib import Path

import icalendar
from dateutil.rrule import rrulestr

from schedcheck.errors import InputError
from schedcheck.schedule.interval_probe import ever_occurs

MAX_STARTS_PER_DAY = 48
"""Most starts a day one RRULE may define through BYHOUR x BYMINUTE x BYSECOND (or an HOURLY
frequency) [-]. Occupancy changes at most every half hour in any building we know of, so 48
(every 30 minutes) is already far denser than an occupancy calendar needs (common practice,
no source)."""

_ALLOWED_FREQ = ("HOURLY", "DAILY", "WEEKLY", "MONTHLY", "YEARLY")


def event_summary(event: icalendar.cal.Component) -> str:
    """The event's SUMMARY, stripped; ``(no summary)`` where it has none."""
    return str(event.get("SUMMARY", "")).strip() or "(no summary)"


def event_label(event: icalendar.cal.Component, *, override: bool = True) -> str:
    """``event 'SUMMARY' (UID)`` for messages; works on incomplete events.

    With ``override``, an event with a RECURRENCE-ID is named as the override of that date.
    """
    summary = event_summary(event)
    uid = str(event.get("UID", "")).strip() or "no UID"
    rid = event.get("RECURRENCE-ID")
    extra = ""
    if override and rid is not None and hasattr(rid, "dt"):
        extra = f", override of {rid.dt.isoformat()}"
    return f"event {summary!r} ({uid}{extra})"



def _values(prop) -> list:
    """The date/datetime values of a property that may be a list, a vDDDLists or a single value."""
    out = []
    for p in prop if isinstance(prop, list) else [prop]:
        if hasattr(p, "dts"):
            out.extend((d.dt, d.params) for d in p.dts)
        elif hasattr(p, "dt"):
            out.append((p.dt, getattr(p, "params", {})))
    return out


@functools.cache
def _zone_names() -> tuple[str, ...]:
    return tuple(sorted(zoneinfo.available_timezones()))


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
                    close = difflib.get_close_matches(str(tzid), _zone_names(), n=1)
                    hint = f"; did you mean {close[0]!r}?" if close else ""
                    return (f"{name} has TZID={tzid!r}, which matches no VTIMEZONE in the "
                            f"file and no IANA time zone{hint}")
    return None


def rule_dicts(event) -> list:
    """The RRULE values (icalendar vRecur) of an event, as a list."""
    prop = event.get("RRULE")
    if prop is None:
        return []
    return prop if isinstance(prop, list) else [prop]


def as_naive(value) -> dt.datetime:
    """A date or datetime as a naive datetime (wall clock, zone dropped)."""
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
        parsed = rrulestr(text, dtstart=as_naive(start), ignoretz=True)
    except (ValueError, TypeError, OverflowError) as exc:
        return f"RRULE {text!r} does not parse: {exc}"
    return _never_occurs(rule, freq, parsed, text) or _never_at_interval(
        rule, freq, int(interval), start, text)


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


def _never_at_interval(rule, freq: str, interval: int, start, text: str) -> str | None:
    """Rules whose dates exist but are never reached at their INTERVAL from DTSTART
    (``FREQ=DAILY;INTERVAL=7;BYDAY=MO`` from a Tuesday); decided in bounded time by
    :func:`schedcheck.schedule.interval_probe.ever_occurs`."""
    if ever_occurs(rule, freq, interval, as_naive(start)) is False:
        return (f"RRULE {text!r} can never occur: stepping INTERVAL={interval} from DTSTART "
                f"({as_naive(start):%Y-%m-%d, a %A}) never reaches a date its BY parts allow")
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
    for rule in rule_dicts(event):
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
