"""Speed and memory of the schedule expansion: one year of a realistic occupancy calendar.

Target (issue 4): expanding a valid calendar over one year takes well under a second.
Usage: ``python benchmarks/bench_schedule.py [--repeat N]``. The calendar (a fictional office
building of our own) has weekday hours, a late Thursday, Saturday mornings, a moved and a
cancelled occurrence, all-day closure events and a nightly purge calendar; the unit schedule
adds Norwegian public holidays, a closure range and allowances. Also times the worst hostile
rule the guard rails let through (an hourly rule at the step cap) and the never-occurs probe.
Prints the best of N wall-clock times and the peak memory traced by tracemalloc.
"""

from __future__ import annotations

import argparse
import datetime as dt
import time
import tracemalloc

import icalendar
import pandas as pd

from schedcheck.errors import InputError
from schedcheck.schedule.calendars import (
    MAX_OCCURRENCES,
    MAX_RULE_STEPS,
    check_calendar,
    expand_calendar,
)
from schedcheck.schedule.intended import expand_unit_schedule
from schedcheck.site import HolidaySettings

TARGET_S = 1.0
TZ = "Europe/Oslo"

OFFICE = """BEGIN:VCALENDAR
VERSION:2.0
PRODID:-//Brattli Tower//bench//EN
BEGIN:VEVENT
UID:weekdays@brattli.example
SUMMARY:Office hours
DTSTART;TZID=Europe/Oslo:20250106T070000
DTEND;TZID=Europe/Oslo:20250106T170000
RRULE:FREQ=WEEKLY;BYDAY=MO,TU,WE,TH,FR
EXDATE;TZID=Europe/Oslo:20260511T070000
END:VEVENT
BEGIN:VEVENT
UID:weekdays@brattli.example
RECURRENCE-ID;TZID=Europe/Oslo:20260304T070000
SUMMARY:Office hours (fire drill day)
DTSTART;TZID=Europe/Oslo:20260304T060000
DTEND;TZID=Europe/Oslo:20260304T190000
SEQUENCE:1
END:VEVENT
BEGIN:VEVENT
UID:late-thursday@brattli.example
SUMMARY:Late opening
DTSTART;TZID=Europe/Oslo:20250102T170000
DTEND;TZID=Europe/Oslo:20250102T210000
RRULE:FREQ=WEEKLY;BYDAY=TH
END:VEVENT
BEGIN:VEVENT
UID:saturday@brattli.example
SUMMARY:Saturday service
DTSTART:20250104T090000
DTEND:20250104T130000
RRULE:FREQ=WEEKLY;BYDAY=SA
END:VEVENT
BEGIN:VEVENT
UID:board@brattli.example
SUMMARY:Board meeting
DTSTART;TZID=Europe/Oslo:20250115T180000
DTEND;TZID=Europe/Oslo:20250115T220000
RRULE:FREQ=MONTHLY;BYDAY=MO,TU,WE,TH,FR;BYSETPOS=-1
END:VEVENT
END:VCALENDAR
"""

PURGE = """BEGIN:VCALENDAR
VERSION:2.0
PRODID:-//Brattli Tower//bench//EN
BEGIN:VEVENT
UID:purge@brattli.example
SUMMARY:Night purge
DTSTART;TZID=Europe/Oslo:20250101T030000
DTEND;TZID=Europe/Oslo:20250101T050000
RRULE:FREQ=DAILY
END:VEVENT
END:VCALENDAR
"""


def best_of(repeat: int, fn) -> float:
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args()
    office = icalendar.Calendar.from_ical(OFFICE)
    purge = icalendar.Calendar.from_ical(PURGE)
    first, last = dt.date(2026, 1, 1), dt.date(2026, 12, 31)
    holidays = HolidaySettings(country="NO", closed=((dt.date(2026, 7, 13), dt.date(2026, 7, 31)),))

    t_cal = best_of(args.repeat, lambda: expand_calendar(office, TZ, first, last))
    n_events = len(expand_calendar(office, TZ, first, last).events)

    def unit():
        return expand_unit_schedule([("office.ics", office)], [("purge.ics", purge)], TZ,
                                    first, last, early_start=pd.Timedelta("2h"),
                                    late_stop=pd.Timedelta("30min"), holidays=holidays)

    t_unit = best_of(args.repeat, unit)
    tracemalloc.start()
    sched = unit()
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    kinds = sched.intervals["kind"].value_counts().to_dict()

    # the slowest rule the guard rails admit: hourly, DTSTART just inside the step cap
    years_back = MAX_RULE_STEPS / 8766 - 1.2
    start = dt.datetime(2027, 1, 3) - dt.timedelta(days=365.25 * years_back)
    hourly = icalendar.Calendar.from_ical(
        "BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//bench//EN\r\nBEGIN:VEVENT\r\nUID:h\r\n"
        f"SUMMARY:hourly\r\nDTSTART:{start:%Y%m%dT%H0000}\r\nDURATION:PT30M\r\n"
        "RRULE:FREQ=HOURLY;BYHOUR=7,12\r\nEND:VEVENT\r\nEND:VCALENDAR\r\n")
    t_worst = best_of(1, lambda: expand_calendar(hourly, TZ, first, last))
    never = icalendar.Calendar.from_ical(
        "BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//bench//EN\r\nBEGIN:VEVENT\r\nUID:n\r\n"
        "SUMMARY:never\r\nDTSTART:20260101T070000\r\nDURATION:PT1H\r\n"
        "RRULE:FREQ=DAILY;BYMONTH=2;BYMONTHDAY=30\r\nEND:VEVENT\r\nEND:VCALENDAR\r\n")
    t_never = best_of(1, lambda: check_calendar(never))
    # 100 events whose INTERVAL never reaches their BYDAY (every 7 days from a Tuesday)
    weekly_never = icalendar.Calendar.from_ical(
        "BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//bench//EN\r\n" + "".join(
            f"BEGIN:VEVENT\r\nUID:w{i}\r\nSUMMARY:never {i}\r\nDTSTART:20260303T070000\r\n"
            "DURATION:PT1H\r\nRRULE:FREQ=DAILY;INTERVAL=7;BYDAY=MO\r\nEND:VEVENT\r\n"
            for i in range(100)) + "END:VCALENDAR\r\n")
    t_interval = best_of(1, lambda: check_calendar(weekly_never))

    # the time to refuse a calendar at the occurrence cap: three half-hourly rules, 3 years
    hours = ",".join(str(h) for h in range(24))
    dense = icalendar.Calendar.from_ical(
        "BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//bench//EN\r\n" + "".join(
            f"BEGIN:VEVENT\r\nUID:d{i}\r\nSUMMARY:dense {i}\r\nDTSTART:20250101T000{i}00\r\n"
            f"DURATION:PT10M\r\nRRULE:FREQ=DAILY;BYHOUR={hours};BYMINUTE={i},{i + 30}\r\n"
            "END:VEVENT\r\n" for i in range(3)) + "END:VCALENDAR\r\n")

    def refuse_dense():
        try:
            expand_calendar(dense, TZ, dt.date(2025, 1, 1), dt.date(2027, 12, 31))
        except InputError:
            return
        raise AssertionError("the dense calendar was not refused")

    t_dense = best_of(1, refuse_dense)

    print(f"one calendar, one year: {n_events} occurrences in {t_cal * 1000:.0f} ms "
          f"(target < {TARGET_S:.1f} s)")
    print(f"unit schedule, one year (2 calendars, holidays, closures, allowances): "
          f"{t_unit * 1000:.0f} ms, peak {peak / 1e6:.1f} MB traced, intervals {kinds}")
    print(f"worst admitted rule (hourly, {years_back:.1f} years of steps): {t_worst:.2f} s")
    print(f"never-occurs probe (FREQ=DAILY;BYMONTH=2;BYMONTHDAY=30 refused): {t_never:.2f} s")
    print(f"INTERVAL probe, 100 events FREQ=DAILY;INTERVAL=7;BYDAY=MO from a Tuesday refused: "
          f"{t_interval:.2f} s")
    print(f"refusing a calendar at the {MAX_OCCURRENCES:,}-occurrence cap: {t_dense:.1f} s")
    return 0 if max(t_cal, t_unit) < TARGET_S else 1


if __name__ == "__main__":
    raise SystemExit(main())
