"""findings.rules: a working day taken out of the calendar (EXDATE) is ``unscheduled_day``."""

from __future__ import annotations

import datetime as dt

from tests.findings.test_findings import (
    assert_one,
    daily_runs,
    office_schedule,
    run,
    states_frame,
)

WED = dt.date(2026, 3, 11)   # a Wednesday removed from the weekly series


def test_running_on_a_weekday_removed_from_the_calendar_is_its_own_kind():
    runs = daily_runs("2026-03-02", "2026-03-13")      # the unit runs every weekday anyway
    found = run(states_frame(runs, "2026-03-02", "2026-03-15"),
                office_schedule("2026-03-02", "2026-03-15", off=(WED,)),
                "2026-03-02", "2026-03-15")
    # 06:00 to 17:10 on the removed Wednesday: 11 h 10 min, all off-schedule
    row = assert_one(found, "unscheduled_day", "2026-03-11", hours=11 + 10 / 60)
    assert "Wed 11 Mar 2026" in row["detail"]
    assert "a working day with no occupied period in the calendar" in row["detail"]
    assert "weekend" not in row["detail"]


def test_a_weekday_never_occupied_in_the_window_stays_weekend():
    # a Monday to Thursday schedule: Fridays are never occupied, so a Friday is an ordinary
    # unoccupied day, not a day taken out of the calendar
    runs = daily_runs("2026-03-02", "2026-03-06")
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08", weekdays=(0, 1, 2, 3)),
                "2026-03-02", "2026-03-08")
    assert_one(found, "weekend", "2026-03-06")
