"""The INTERVAL-aware "never occurs" probe: decided in bounded time, agreeing with the rule
library (python-dateutil) wherever the library can answer quickly."""

from __future__ import annotations

import datetime as dt

import icalendar
import pytest
from dateutil.rrule import rrulestr

from schedcheck.schedule.interval_probe import ever_occurs

TUESDAY = dt.datetime(2026, 3, 3, 8, 0)


def _probe(text: str, start: dt.datetime = TUESDAY):
    rule = icalendar.vRecur.from_ical(text)
    freq = str(rule["FREQ"][0]).upper()
    return ever_occurs(rule, freq, int(rule.get("INTERVAL", [1])[0]), start)


# never: worked out by hand (the visited positions cannot meet the BY parts)
NEVER = [
    "FREQ=DAILY;INTERVAL=7;BYDAY=MO",                # every 7 days from a Tuesday: Tuesdays
    "FREQ=DAILY;INTERVAL=14;BYDAY=WE,TH",
    "FREQ=DAILY;INTERVAL=7;BYDAY=MO;BYMONTH=3",
    "FREQ=MONTHLY;INTERVAL=2;BYMONTH=2",             # March, May, ...: odd months only
    "FREQ=MONTHLY;INTERVAL=12;BYMONTH=4",
    "FREQ=YEARLY;INTERVAL=4;BYMONTH=2;BYMONTHDAY=29",  # 2026, 2030, ...: never a leap year
]
# occurs: the rule library finds a date after DTSTART quickly (checked below)
OCCURS = [
    "FREQ=DAILY;INTERVAL=7;BYDAY=TU",
    "FREQ=DAILY;INTERVAL=2;BYDAY=MO",
    "FREQ=DAILY;INTERVAL=7;BYDAY=TU;BYMONTHDAY=1,2",
    "FREQ=DAILY;INTERVAL=3;BYMONTH=3;BYMONTHDAY=-1",
    "FREQ=DAILY;INTERVAL=5;BYYEARDAY=-1",
    "FREQ=WEEKLY;INTERVAL=2;BYDAY=MO",
    "FREQ=MONTHLY;INTERVAL=2;BYMONTHDAY=31",
    "FREQ=MONTHLY;INTERVAL=3;BYMONTH=6;BYDAY=1MO",
    "FREQ=YEARLY;INTERVAL=4;BYMONTH=2;BYMONTHDAY=28",
    "FREQ=YEARLY;INTERVAL=2;BYMONTH=3;BYDAY=1TU",
]


@pytest.mark.parametrize("text", NEVER)
def test_never(text):
    assert _probe(text) is False


@pytest.mark.parametrize("text", OCCURS)
def test_occurs_as_the_rule_library_says(text):
    assert _probe(text) is True
    nxt = rrulestr(text, dtstart=TUESDAY, ignoretz=True).after(TUESDAY, inc=False)
    assert nxt is not None and nxt.year < 2100


def test_the_library_agrees_on_the_reported_case():
    """python-dateutil itself, searching to the year 9999, finds no date either (about a
    second: the cost the probe saves)."""
    rule = rrulestr("FREQ=DAILY;INTERVAL=7;BYDAY=MO", dtstart=TUESDAY, ignoretz=True)
    assert rule.after(TUESDAY, inc=False) is None


def test_interval_one_and_hourly_are_left_to_the_other_rails():
    assert _probe("FREQ=DAILY;BYDAY=MO") is None
    assert _probe("FREQ=HOURLY;INTERVAL=2") is None


def test_a_hundred_starts_each_decided_by_its_residue():
    """From 100 weekly-spaced starts: every 7 days from a Tuesday never reaches a Monday; every
    2 months reaches February only from an even month."""
    for i in range(100):
        start = TUESDAY + dt.timedelta(days=7 * i)
        assert _probe("FREQ=DAILY;INTERVAL=7;BYDAY=MO", start) is False
        day3 = start.replace(day=3)        # (from a 29th to 31st, February never has it)
        assert _probe("FREQ=MONTHLY;INTERVAL=2;BYMONTH=2", day3) is (start.month % 2 == 0)
    assert _probe("FREQ=MONTHLY;INTERVAL=2;BYMONTH=2", dt.datetime(2026, 6, 30)) is False
