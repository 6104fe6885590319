"""Whether a recurrence rule with an INTERVAL above 1 can ever occur, found in bounded time.

A rule such as ``FREQ=DAILY;INTERVAL=7;BYDAY=MO`` from a Tuesday visits only Tuesdays, so its
BYDAY filter never lets a date through; the rule library (python-dateutil) then steps through
every period up to the year 9999 looking for one, about a second per event. The date filters
alone (the probe in :mod:`.guards`) match Mondays, so INTERVAL must be taken into account.

The Gregorian calendar repeats every 400 years: 146,097 days (exactly 20,871 weeks), 4,800
months. A rule stepping ``n`` periods at a time therefore visits, from its DTSTART, a set of
calendar positions that repeats after ``P / gcd(n, P)`` steps (``P`` the periods in 400 years),
so searching that many steps decides whether it ever occurs:

* DAILY: the visited days of one whole cycle are tested at once (numpy) against BYMONTH,
  BYMONTHDAY, BYYEARDAY and BYDAY, which only filter days for this frequency (RFC 5545
  section 3.3.10, the table of BYxxx rule parts).
* WEEKLY, MONTHLY, YEARLY: the rule library itself is asked, from a DTSTART moved on by a
  whole number of 400-year cycles (the same weekday and date), so close to the year 9999 that
  its search ends after about one cycle: at most 20,871, 4,800 or 400 steps.
"""

from __future__ import annotations

import datetime as dt
import math

import icalendar
import numpy as np
from dateutil.rrule import rrulestr

#: periods of each frequency in one 400-year Gregorian cycle
_CYCLE = {"DAILY": 146_097, "WEEKLY": 20_871, "MONTHLY": 4_800, "YEARLY": 400}
_DAY_FILTERS = {"BYMONTH", "BYMONTHDAY", "BYYEARDAY", "BYDAY"}
_WEEKDAYS = ("MO", "TU", "WE", "TH", "FR", "SA", "SU")
_KEEP = ("FREQ", "INTERVAL", "WKST", "BYMONTH", "BYWEEKNO", "BYYEARDAY", "BYMONTHDAY", "BYDAY",
         "BYSETPOS", "BYHOUR", "BYMINUTE", "BYSECOND")


def ever_occurs(rule, freq: str, interval: int, start: dt.datetime) -> bool | None:
    """True or False when decided; None when this probe does not apply (left to the others).

    Parameters
    ----------
    rule : icalendar.vRecur
        The RRULE.
    freq, interval : str, int
        Its FREQ and INTERVAL (above 1 for this probe to apply).
    start : datetime.datetime
        DTSTART as a naive wall-clock time.
    """
    if interval <= 1 or freq not in _CYCLE:
        return None
    parts = set(rule.keys())
    if freq == "DAILY":
        if parts & {"BYWEEKNO", "BYSETPOS"} or not _DAY_FILTERS & parts:
            return None
        if "BYDAY" in parts:
            # the weekdays visited: DTSTART's, stepped by INTERVAL modulo 7 (exact, at once)
            seen = {(start.weekday() + k * interval) % 7 for k in range(7)}
            if not seen & set(_weekdays(rule)):
                return False
            if parts & _DAY_FILTERS == {"BYDAY"}:
                return True
        return _daily(rule, interval, start)
    if freq == "MONTHLY" and "BYMONTH" in parts:
        # the months of the year visited: DTSTART's, stepped by INTERVAL modulo 12
        seen = {(start.month - 1 + k * interval) % 12 + 1 for k in range(12)}
        if not seen & set(_ints(rule, "BYMONTH")):
            return False
    return _by_library(rule, freq, interval, start)


def _weekdays(rule) -> list[int]:
    """BYDAY as weekday numbers (Monday 0); an ordinal (1MO) is dropped, as the library
    does for frequencies finer than MONTHLY (RFC 5545 allows none there)."""
    value = rule["BYDAY"]
    return [_WEEKDAYS.index(str(d).upper()[-2:])
            for d in (value if isinstance(value, list) else [value])]


def _ints(rule, part: str) -> list[int]:
    value = rule.get(part, [])
    return [int(v) for v in (value if isinstance(value, list) else [value])]


def _daily(rule, interval: int, start: dt.datetime) -> bool:
    steps = _CYCLE["DAILY"] // math.gcd(interval, _CYCLE["DAILY"])
    day0 = np.datetime64(start.date(), "D")
    days = day0 + interval * np.arange(steps, dtype=np.int64)
    months = days.astype("datetime64[M]")
    years = days.astype("datetime64[Y]")
    mday = (days - months).astype(np.int64) + 1
    mlen = ((months + 1).astype("datetime64[D]") - months.astype("datetime64[D]")).astype(
        np.int64)
    yday = (days - years).astype(np.int64) + 1
    ylen = ((years + 1).astype("datetime64[D]") - years.astype("datetime64[D]")).astype(
        np.int64)
    ok = np.ones(steps, dtype=bool)
    if "BYMONTH" in rule:
        ok &= np.isin(months.astype(np.int64) % 12 + 1, _ints(rule, "BYMONTH"))
    if "BYMONTHDAY" in rule:
        hit = np.zeros(steps, dtype=bool)
        for v in _ints(rule, "BYMONTHDAY"):
            hit |= (mday == v) if v > 0 else (mday - mlen - 1 == v)
        ok &= hit
    if "BYYEARDAY" in rule:
        hit = np.zeros(steps, dtype=bool)
        for v in _ints(rule, "BYYEARDAY"):
            hit |= (yday == v) if v > 0 else (yday - ylen - 1 == v)
        ok &= hit
    if "BYDAY" in rule:
        weekday = (days.astype(np.int64) + 3) % 7          # 1970-01-01 was a Thursday
        ok &= np.isin(weekday, _weekdays(rule))
    return bool(ok.any())


def _by_library(rule, freq: str, interval: int, start: dt.datetime) -> bool | None:
    years = 400 * interval // math.gcd(interval, _CYCLE[freq])   # one whole cycle of visits
    cycles = (dt.MAXYEAR - 1 - years - start.year) // 400
    if cycles < 0:
        return None       # an interval of centuries: nothing to gain
    moved = start.replace(year=start.year + 400 * cycles)
    probe = icalendar.vRecur({k: v for k, v in rule.items() if k in _KEEP})
    try:
        first = rrulestr(probe.to_ical().decode(), dtstart=moved, ignoretz=True).after(
            moved, inc=True)
    except (ValueError, TypeError, OverflowError):
        return None       # left to the full parse
    return first is not None
