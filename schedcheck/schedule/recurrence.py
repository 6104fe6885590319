"""How recurrence rules and event lengths are read where RFC 5545 leaves room or the rule
library strays from it (docs/calendars.md, "How recurrence is read").

:func:`read_rules` rewrites, on a copy of the calendar, the rules that the rule library
(python-dateutil, through recurring-ical-events) would expand differently from the RFC, and
refuses the one construct it cannot be steered around:

* **BYHOUR/BYMINUTE/BYSECOND on an all-day event** are dropped. RFC 5545 section 3.3.10: "The
  BYSECOND, BYMINUTE and BYHOUR rule parts MUST NOT be specified when the associated "DTSTART"
  property has a DATE value type. These rule parts MUST be ignored in RECUR value that violate
  the above requirement". The library expands them into extra instances that use up COUNT.
* **YEARLY with BYWEEKNO and no BYDAY** (nor BYMONTHDAY or BYYEARDAY) occurs on DTSTART's
  weekday of each listed week, as libical does and as RFC 8984 (JSCalendar) section 4.3.3.1
  spells out for its equivalent rule; the library gives all seven days of each week (seven
  occupied days where one was meant).
* **YEARLY with BYMONTHDAY and no BYMONTH** (nor BYWEEKNO, BYYEARDAY or BYDAY) occurs in
  DTSTART's month of each year, as libical does (its own test data, src/test/icalrecur_test.txt,
  expects ``FREQ=YEARLY;BYMONTHDAY=29`` from 29 February to give 29 February of leap years);
  the library gives that day of every month. "Yearly on the 1st" means once a year.
* **YEARLY with BYWEEKNO and INTERVAL above 1 from a DTSTART whose week belongs to another
  year** (2 January 2010 is in week 53 of 2009) is refused: libical counts the years from the
  week's year, the library from the calendar year, and RFC 5545 does not say which (libical's
  test data, src/test/icalrecur_test.txt, has both kinds of case).
* **WEEKLY with BYSETPOS and a DTSTART that is not on the week's first day** (WKST, Monday by
  default) is refused: RFC 5545 section 3.3.10 says the set for BYSETPOS "starts at the
  beginning of the interval defined by the FREQ rule part", but the library counts the first
  week's positions from DTSTART (an open python-dateutil issue, #1398), so the first week would
  be silently wrong. Moving DTSTART to the week's first day gives the same series without the
  ambiguity.

:func:`occurrence_end` gives an occurrence's end. RFC 5545 section 3.3.6 makes the time part of a
DURATION exact and the day and week parts nominal, so ``DTSTART:...T070000`` with
``DURATION:PT10H`` lasts exactly ten hours even on a daylight-saving day, and an occurrence
whose start falls in the spring gap keeps its length. An event given with DTEND ends at its
DTEND's wall-clock time on every date: an explicit choice for occupancy calendars (a building's
17:00 is 17:00 on the clock on the change day too), where RFC 5545 section 3.8.5.3 would give
every instance "the same exact duration" as the first. Only where the wall-clock end would come
at or before the start (a start in the spring gap) is the exact duration used instead, so no
occurrence is dropped because its start fell into a gap.
"""

from __future__ import annotations

import copy
import datetime as dt
import zoneinfo

import icalendar

from schedcheck.errors import InputError
from schedcheck.schedule.guards import event_label, rule_dicts

_WEEKDAYS = ("MO", "TU", "WE", "TH", "FR", "SA", "SU")
_TIME_PARTS = ("BYHOUR", "BYMINUTE", "BYSECOND")


def _first(rule, part: str):
    value = rule.get(part)
    if value is None:
        return None
    return value[0] if isinstance(value, list) and value else value


def read_rules(cal: icalendar.Calendar, *, path=None) -> tuple[icalendar.Calendar, list[str]]:
    """The calendar with its rules read as the module docstring says, and notes about them.

    Returns the calendar itself when nothing needs rewriting, else a rewritten copy.

    Raises
    ------
    InputError
        For a WEEKLY rule with BYSETPOS whose DTSTART is not on the week's first day.
    """
    todo: list[tuple[int, int, str]] = []
    for i, event in enumerate(cal.walk("VEVENT")):
        start = event.get("DTSTART")
        if start is None:
            continue
        for j, rule in enumerate(rule_dicts(event)):
            freq = str(_first(rule, "FREQ") or "").upper()
            if not isinstance(start.dt, dt.datetime) and any(p in rule for p in _TIME_PARTS):
                todo.append((i, j, "date-time-parts"))
            if (freq == "YEARLY" and "BYWEEKNO" in rule
                    and not any(p in rule for p in ("BYDAY", "BYMONTHDAY", "BYYEARDAY"))):
                todo.append((i, j, "weekno-day"))
            if (freq == "YEARLY" and "BYMONTHDAY" in rule
                    and not any(p in rule for p in ("BYMONTH", "BYWEEKNO", "BYYEARDAY",
                                                    "BYDAY", "BYSETPOS"))):
                todo.append((i, j, "monthday-month"))
            interval = int(_first(rule, "INTERVAL") or 1)
            if (freq == "YEARLY" and "BYWEEKNO" in rule and interval > 1
                    and start.dt.isocalendar()[0] != start.dt.year):
                raise InputError(
                    f"its RRULE counts every {interval} years by week number (BYWEEKNO) from a "
                    f"DTSTART ({start.dt:%Y-%m-%d}) that lies in a week of "
                    f"{start.dt.isocalendar()[0]}; implementations count such years "
                    "differently (RFC 5545 leaves it open); move DTSTART into a week of its "
                    "own year", path=path, key=event_label(event))
            if freq == "WEEKLY" and "BYSETPOS" in rule:
                wkst = str(_first(rule, "WKST") or "MO").upper()
                if _WEEKDAYS[start.dt.weekday()] != wkst:
                    raise InputError(
                        f"its RRULE has FREQ=WEEKLY with BYSETPOS but DTSTART "
                        f"({start.dt:%Y-%m-%d}, a {_WEEKDAYS[start.dt.weekday()]}) is not on "
                        f"the week's first day (WKST={wkst}); the rule library would count "
                        "the first week's positions from DTSTART, not from the start of the "
                        "week as RFC 5545 section 3.3.10 says; move DTSTART to the first day "
                        "of its week", path=path, key=event_label(event))
    if not todo:
        return cal, []
    cal = copy.deepcopy(cal)
    events = cal.walk("VEVENT")
    notes = []
    for i, j, what in todo:
        event = events[i]
        rule = rule_dicts(event)[j]
        if what == "date-time-parts":
            parts = [p for p in _TIME_PARTS if p in rule]
            for p in parts:
                del rule[p]
            notes.append(f"{event_label(event)}: {'/'.join(parts)} ignored on an all-day "
                         "event (RFC 5545 section 3.3.10)")
        elif what == "weekno-day":
            rule["BYDAY"] = [_WEEKDAYS[event["DTSTART"].dt.weekday()]]
        else:
            rule["BYMONTH"] = [event["DTSTART"].dt.month]
    return cal, notes


def has_duration(event: icalendar.cal.Component) -> bool:
    """True when the event's length is given by DURATION (not DTEND)."""
    return event.get("DURATION") is not None and event.get("DTEND") is None


def occurrence_end(start_ns: int, wall_end_ns: int, start, duration: dt.timedelta | None,
                   wall_length: dt.timedelta, to_ns) -> int:
    """The end of one occurrence [int64 ns UTC], as the module docstring says.

    Parameters
    ----------
    start_ns : int
        The occurrence's start [ns UTC].
    wall_end_ns : int
        Its end as the rule library gives it (wall clock) [ns UTC].
    start : datetime.date or datetime.datetime
        The occurrence's start as written (a DATE for all-day events).
    duration : datetime.timedelta or None
        The event's DURATION, or None when DTEND gives its length.
    wall_length : datetime.timedelta
        The occurrence's end minus start on the wall clock.
    to_ns : callable
        Converts a DATE or (floating or aware) DATE-TIME to ns UTC by the calendar's time rules.
    """
    if not isinstance(start, dt.datetime):
        return wall_end_ns                      # all-day: days are nominal
    if duration is not None and wall_length == duration:
        # (an RDATE with a PERIOD value brings its own end: wall_length differs, kept as given)
        days = dt.timedelta(days=duration.days)
        exact = duration - days
        return to_ns(start + days) + int(exact.total_seconds() * 1e9) if days else (
            start_ns + int(exact.total_seconds() * 1e9))
    if wall_end_ns <= start_ns and _in_gap(start) and wall_length > dt.timedelta(0):
        return start_ns + int(wall_length.total_seconds() * 1e9)
    return wall_end_ns


def _in_gap(value: dt.datetime) -> bool:
    """True when a local wall-clock time does not exist (a spring-forward gap)."""
    zone = value.tzinfo
    if not isinstance(zone, zoneinfo.ZoneInfo):
        return False
    naive = value.replace(tzinfo=None)
    there_and_back = naive.replace(tzinfo=zone).astimezone(dt.UTC).astimezone(zone)
    return there_and_back.replace(tzinfo=None) != naive
