"""Audit windows across daylight-saving changes.

Validation values: EU summer time starts and ends at 01:00 UTC on the last Sunday of March and
of October (Directive 2000/84/EC): 2026-03-29 and 2026-10-25. US daylight saving time starts at
02:00 local on the second Sunday of March and ends at 02:00 local on the first Sunday of
November (Energy Policy Act of 2005, section 110): 2026-03-08 and 2026-11-01.
"""

import datetime as dt

import pandas as pd
import pytest

from schedcheck.window import day_edges, day_window, local_midnight, whole_days_covered

D = dt.date


@pytest.mark.parametrize(
    "tz, day, hours",
    [
        ("Europe/Oslo", D(2026, 3, 29), 23),
        ("Europe/Oslo", D(2026, 10, 25), 25),
        ("Europe/Oslo", D(2026, 3, 28), 24),
        ("America/New_York", D(2026, 3, 8), 23),
        ("America/New_York", D(2026, 11, 1), 25),
        ("America/New_York", D(2026, 3, 9), 24),
    ],
)
def test_day_lengths_at_dst_changes(tz, day, hours):
    start, end = day_window(day, day, tz)
    assert (end - start) == pd.Timedelta(hours=hours)


def test_edges_and_utc_instants():
    dates, edges = day_edges(D(2026, 10, 24), D(2026, 10, 26), "Europe/Oslo")
    assert dates == [D(2026, 10, 24), D(2026, 10, 25), D(2026, 10, 26)]
    assert [str(e) for e in edges] == [
        "2026-10-23 22:00:00+00:00",
        "2026-10-24 22:00:00+00:00",
        "2026-10-25 23:00:00+00:00",
        "2026-10-26 23:00:00+00:00",
    ]


def test_midnight_that_does_not_exist_starts_at_first_valid_instant():
    # America/Santiago moves clocks from 00:00 to 01:00 on 2026-09-06 (IANA tz database)
    assert str(local_midnight(D(2026, 9, 6), "America/Santiago")) == "2026-09-06 04:00:00+00:00"


def test_reversed_window_is_refused():
    with pytest.raises(ValueError):
        day_window(D(2026, 3, 2), D(2026, 3, 1), "UTC")


def test_whole_days_covered():
    a = pd.Timestamp("2026-03-01T23:00:30Z")  # 00:00:30 local on 2 March (within a minute)
    b = pd.Timestamp("2026-03-05T10:00:00Z")  # mid-day 5 March: 5 March is not whole
    assert whole_days_covered(a, b, "Europe/Oslo") == (D(2026, 3, 2), D(2026, 3, 4))
    # less than a day of data: the partial day is still a window
    assert whole_days_covered(
        pd.Timestamp("2026-03-02T08:00Z"), pd.Timestamp("2026-03-02T12:00Z"), "Europe/Oslo"
    ) == (D(2026, 3, 2), D(2026, 3, 2))
