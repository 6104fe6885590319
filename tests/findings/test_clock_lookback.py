"""The clock rule with reference days from the look-back (a window after the change)."""

from __future__ import annotations

import datetime as dt

import pytest

from schedcheck.audit.accounting import ScheduleSets
from schedcheck.daylight import CLOCK_REACH, reference_first
from schedcheck.findings.find import find_in_sets
from schedcheck.findings.rules import Reference
from schedcheck.runstate.states import StateSets
from tests.findings.test_findings import FAN, TZ, _clock_runs, loc, office_schedule, states_frame


def _window_and_reference(first: str, last: str, ref_first: str):
    runs = _clock_runs(ref_first, last, stuck_from=dt.date(2026, 3, 29))
    states = states_frame(runs, ref_first, last)
    sched = office_schedule(ref_first, last)
    ws, we = loc(first), loc(f"{dt.date.fromisoformat(last) + dt.timedelta(days=1)}")
    rs = loc(ref_first)
    window = (StateSets.from_table(states, ws, we), ScheduleSets.from_table(sched, ws, we))
    ref = Reference(StateSets.from_table(states, rs, we), ScheduleSets.from_table(sched, rs, we),
                    rs, we)
    return window, ref, ws, we


def test_a_window_after_the_change_finds_the_clock_offset_in_its_reference_days():
    (st, sc), ref, ws, we = _window_and_reference("2026-04-13", "2026-04-24", "2026-03-02")
    alone = find_in_sets(FAN, st, sc, None, start=ws, end=we, tz=TZ)
    # the window alone cannot see the change: every evening's hour late is a late stop
    assert "clock_offset" not in set(alone["kind"]) and "late_stop" in set(alone["kind"])
    found = find_in_sets(FAN, st, sc, None, start=ws, end=we, tz=TZ, reference=ref)
    assert list(found["kind"]) == ["clock_offset"]
    row = found.iloc[0]
    assert row["start"] == ws and row["end"] <= we     # inside the window
    assert row["date"] == "2026-03-29"                  # the day the finding began
    # 10 working days in the window, 17:30-18:05 off schedule each evening (planted truth)
    assert row["hours"] == pytest.approx(10 * 35 / 60)


def test_reference_days_reach_before_the_latest_change():
    # the spring change of 2026 in Norway is on 29 March (EU rule: last Sunday of March)
    assert reference_first(dt.date(2026, 4, 1), TZ) == dt.date(2026, 3, 29) - CLOCK_REACH
    assert reference_first(dt.date(2026, 10, 1), TZ) == dt.date(2026, 3, 29) - CLOCK_REACH
    assert reference_first(dt.date(2026, 11, 2), TZ) == dt.date(2026, 10, 25) - CLOCK_REACH
    assert reference_first(dt.date(2026, 4, 1), "Asia/Tokyo") is None
