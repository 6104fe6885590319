"""Tests of the finding rules (schedcheck.findings.find).

Each test builds true run intervals and a schedule by hand (local times, converted to UTC),
plants one fault and asserts exactly the expected finding kind, date and hours. Expected values
are the planted truth, not a snapshot of the tool's output.
"""

from __future__ import annotations

import datetime as dt
from zoneinfo import ZoneInfo

import holidays
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as hs

from schedcheck.daylight import changes
from schedcheck.errors import InputError
from schedcheck.findings.find import (
    DEFAULT_MAX_STARTS_PER_DAY,
    DEFAULT_MIN_OFF_SCHEDULE,
    find_issues,
)
from schedcheck.intervals import Intervals
from schedcheck.site import Component, FindingSettings

TZ = "Europe/Oslo"
KW = 5.0
PRICE = 1.2
FAN = Component("supply", "AHU-9", "supply_fan", "S-1", 7.5, 0.85)
WHEEL = Component("wheel", "AHU-9", "heat_wheel", "S-2", 0.4, 1.0)


def loc(text: str) -> pd.Timestamp:
    """A local wall-clock time in TZ as a UTC instant."""
    return pd.Timestamp(text).tz_localize(TZ).tz_convert("UTC").as_unit("ns")


def days(first: str, last: str) -> list[dt.date]:
    return [d.date() for d in pd.date_range(first, last, freq="D")]


def states_frame(runs, first: str, last: str, no_data=()) -> pd.DataFrame:
    """Run/off/no_data intervals covering local dates first..last from run and gap spans."""
    a, b = loc(first), loc(str(pd.Timestamp(last) + pd.Timedelta(days=1)))
    marks = sorted([(loc(s), loc(e), "run") for s, e in runs]
                   + [(loc(s), loc(e), "no_data") for s, e in no_data])
    rows, t = [], a
    for s, e, state in marks:
        assert s >= t, "test spans must not overlap"
        if s > t:
            rows.append((t, s, "off"))
        rows.append((s, e, state))
        t = e
    if b > t:
        rows.append((t, b, "off"))
    f = pd.DataFrame(rows, columns=["start", "end", "state"])
    for c in ("start", "end"):
        f[c] = pd.DatetimeIndex(f[c]).as_unit("ns")
    f["level"] = [1.0 if s == "run" else (float("nan") if s == "no_data" else 0.01)
                  for s in f["state"]]
    return f


def office_schedule(first: str, last: str, off=(), occ=("07:00", "17:00"), early="2h",
                    late="30min", weekdays=(0, 1, 2, 3, 4)) -> pd.DataFrame:
    """Occupied period on weekdays with early-start and late-stop allowances (local times)."""
    rows = []
    for d in days(first, last):
        if d.weekday() not in weekdays or d in off:
            continue
        s, e = loc(f"{d} {occ[0]}"), loc(f"{d} {occ[1]}")
        rows.append((s, e, "occupied", "offices.ics"))
        if early:
            rows.append((s - pd.Timedelta(early), s, "allowance", "early_start"))
        if late:
            rows.append((e, e + pd.Timedelta(late), "allowance", "late_stop"))
    f = pd.DataFrame(rows, columns=["start", "end", "kind", "source"])
    for c in ("start", "end"):
        f[c] = pd.DatetimeIndex(f[c], tz="UTC").as_unit("ns")
    return f


def daily_runs(first: str, last: str, start="06:00", stop="17:10", skip=(), weekdays=range(5)):
    return [(f"{d} {start}", f"{d} {stop}") for d in days(first, last)
            if d.weekday() in weekdays and d not in skip]


def run(states, schedule, first: str, last: str, days_off=None, component=FAN, **kw):
    return find_issues(
        component, states, schedule, days_off,
        start=loc(first), end=loc(str(pd.Timestamp(last) + pd.Timedelta(days=1))), tz=TZ,
        running_kw=KW, price=PRICE, co2_per_kwh=0.02, currency="NOK", **kw)


def assert_one(found: pd.DataFrame, kind: str, date: str, hours: float | None = None):
    """Exactly one finding, of ``kind``, beginning on local ``date``, with ``hours`` [h]."""
    assert list(found["kind"]) == [kind], found[["kind", "date", "detail"]].to_string()
    row = found.iloc[0]
    assert row["date"] == date
    if hours is not None:
        assert row["hours"] == pytest.approx(hours, abs=1e-9)
        if kind not in ("missed", "short_cycling"):
            assert row["kwh"] == pytest.approx(KW * hours)
            assert row["cost"] == pytest.approx(KW * hours * PRICE)
    assert "\n" not in row["detail"] and row["detail"].endswith(".")
    return row


# -- a clean unit ---------------------------------------------------------------------------
def test_clean_weeks_with_optimal_start_variation_give_nothing():
    # optimal start anywhere inside the 2 h early-start allowance, stops inside the late one
    starts = ["05:02", "06:40", "05:31", "06:55", "05:47", "06:12", "05:15", "06:30", "05:59",
              "06:05"]
    stops = ["17:00", "17:29", "17:12", "17:05", "17:20", "17:01", "17:28", "17:15", "17:09",
             "17:00"]
    work = [d for d in days("2026-03-02", "2026-03-13") if d.weekday() < 5]
    runs = [(f"{d} {a}", f"{d} {b}") for d, a, b in zip(work, starts, stops, strict=True)]
    found = run(states_frame(runs, "2026-03-02", "2026-03-15"),
                office_schedule("2026-03-02", "2026-03-15"), "2026-03-02", "2026-03-15")
    assert len(found) == 0
    assert list(found.columns[:4]) == ["component", "kind", "start", "end"]


# -- night / weekend / holiday -----------------------------------------------------------------
def test_night_override_is_one_finding_per_night():
    runs = daily_runs("2026-03-02", "2026-03-06") + [("2026-03-03 21:58", "2026-03-04 05:03")]
    runs.sort()
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08")
    # 21:58 to 05:00 (the allowance begins at 05:00) is 7 h 2 min off schedule; the run goes
    # on from 05:00 to 05:03 inside the allowance and stops before the usual 06:00 start
    row = assert_one(found, "night", "2026-03-03", hours=7 + 2 / 60)
    assert row["start"] == loc("2026-03-03 21:58") and row["end"] == loc("2026-03-04 05:00")
    assert row["component"] == "AHU-9/supply"
    assert "Tue 3 Mar to Wed 4 Mar 2026" in row["detail"] and "21:58" in row["detail"]


def test_overrun_shorter_than_persistence_alone_is_no_finding():
    runs = daily_runs("2026-03-02", "2026-03-06") + [("2026-03-04 22:00", "2026-03-04 22:50")]
    found = run(states_frame(sorted(runs), "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08")
    assert len(found) == 0


def test_cycling_through_the_night_is_one_episode():
    # 40 min on, 10 min off from 20:00 to 04:10: each run is shorter than the persistence, but
    # the stops are shorter than the pause, so it is one night of running (8 runs x 40 min)
    night = [(str(pd.Timestamp("2026-03-04 20:00") + i * pd.Timedelta("50min")),
              str(pd.Timestamp("2026-03-04 20:40") + i * pd.Timedelta("50min"))) for i in range(8)]
    runs = sorted(daily_runs("2026-03-02", "2026-03-06") + night)
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08",
                settings=FindingSettings(max_starts_per_day=20))
    row = assert_one(found, "night", "2026-03-04", hours=8 * 40 / 60)
    assert "in 8 runs" in row["detail"]


def test_weekend_running_is_one_weekend_finding():
    runs = sorted(daily_runs("2026-03-02", "2026-03-06")
                  + [("2026-03-07 08:00", "2026-03-08 02:00")])
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08")
    row = assert_one(found, "weekend", "2026-03-07", hours=18.0)
    assert "weekend of Sat 7 Mar to Sun 8 Mar 2026" in row["detail"]


def test_evening_run_spilling_into_saturday_stays_one_night_finding():
    # Friday 20:00 to Saturday 00:30: the 30 min on Saturday is below the persistence, so it
    # joins the Friday night finding rather than making a weekend finding of its own
    runs = sorted(daily_runs("2026-03-02", "2026-03-06")
                  + [("2026-03-06 20:00", "2026-03-07 00:30")])
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08")
    assert_one(found, "night", "2026-03-06", hours=4.5)


def norway_days_off(year: int = 2026) -> pd.DataFrame:
    # Norway's public holidays from the holidays package (reference library from the package
    # index); Maundy Thursday 2026 is 2 April, Easter Sunday being 5 April 2026.
    h = holidays.country_holidays("NO", years=year, language="en_US")
    return pd.DataFrame({"date": list(h.keys()), "name": list(h.values()), "kind": "holiday"})


def test_holiday_running_is_named_after_the_holiday():
    off = norway_days_off()
    assert dt.date(2026, 4, 2) in set(off["date"])   # outside source: the package's list
    free = set(off["date"])
    runs = daily_runs("2026-03-30", "2026-04-10", skip=free - {dt.date(2026, 4, 2)})
    runs = [r if not r[0].startswith("2026-04-02") else ("2026-04-02 05:58", "2026-04-02 17:04")
            for r in runs]
    found = run(states_frame(runs, "2026-03-30", "2026-04-12"),
                office_schedule("2026-03-30", "2026-04-12", off=free),
                "2026-03-30", "2026-04-12", days_off=off)
    row = assert_one(found, "holiday", "2026-04-02", hours=11 + 6 / 60)
    assert row["detail"].startswith(
        "Ran 11.1 h on Maundy Thursday (2 Apr 2026, a public holiday) from 05:58 to 17:04 (")
    assert "holiday calendar is loaded in the controller" in row["detail"]


def test_closure_days_give_one_holiday_finding_per_date():
    closed = days("2026-07-13", "2026-07-17")
    off = pd.DataFrame({"date": closed, "name": "Summer closure", "kind": "closure"})
    runs = daily_runs("2026-07-13", "2026-07-17", start="06:00", stop="17:00")
    found = run(states_frame(runs, "2026-07-13", "2026-07-19"),
                office_schedule("2026-07-13", "2026-07-19", off=set(closed)),
                "2026-07-13", "2026-07-19", days_off=off)
    assert list(found["kind"]) == ["holiday"] * 5
    assert list(found["date"]) == [d.isoformat() for d in closed]
    assert found["hours"].tolist() == pytest.approx([11.0] * 5)
    assert "a closure day of the site" in found["detail"].iloc[0]


# -- continuous ---------------------------------------------------------------------------------
def test_override_left_on_over_a_weekend_is_one_continuous_finding():
    runs = sorted(daily_runs("2026-03-02", "2026-03-05")
                  + [("2026-03-06 06:00", "2026-03-09 17:10")]
                  + daily_runs("2026-03-10", "2026-03-13"))
    found = run(states_frame(runs, "2026-03-02", "2026-03-15"),
                office_schedule("2026-03-02", "2026-03-15"), "2026-03-02", "2026-03-15")
    # off schedule: Fri 17:30 to Mon 05:00 = 59.5 h; the run began on Friday 6 March
    row = assert_one(found, "continuous", "2026-03-06", hours=59.5)
    assert row["start"] == loc("2026-03-06 06:00") and row["end"] == loc("2026-03-09 17:10")
    assert "without a stop seen for 3.5 days from Fri 6 Mar 2026 06:00 to Mon 9 Mar 2026 17:10" in (
        row["detail"])


def test_short_no_data_gap_does_not_break_a_continuous_run():
    runs = [("2026-03-02 06:00", "2026-03-03 10:00"), ("2026-03-03 10:20", "2026-03-04 12:00")]
    found = run(states_frame(runs, "2026-03-02", "2026-03-06",
                             no_data=[("2026-03-03 10:00", "2026-03-03 10:20")]),
                office_schedule("2026-03-02", "2026-03-06"), "2026-03-02", "2026-03-06",
                settings=FindingSettings(min_missed=pd.Timedelta("24h")))
    assert_one(found, "continuous", "2026-03-02", hours=2 * 11.5)


# -- early_start / late_stop ------------------------------------------------------------------
def test_repeated_early_starts_in_one_week():
    # 04:30 starts are 30 min before the 2 h allowance (05:00) on Mon-Thu
    runs = sorted(daily_runs("2026-03-02", "2026-03-05", start="04:30")
                  + daily_runs("2026-03-06", "2026-03-06"))
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08")
    row = assert_one(found, "early_start", "2026-03-02", hours=2.0)
    assert "on 4 days of ISO week 10 of 2026 (Mon 2, Tue 3, Wed 4 and Thu 5 Mar 2026)" in (
        row["detail"])
    assert "by 30 min" in row["detail"]


def test_two_early_starts_in_a_week_are_not_a_habit():
    runs = sorted(daily_runs("2026-03-02", "2026-03-03", start="04:30")
                  + daily_runs("2026-03-04", "2026-03-06"))
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08")
    assert len(found) == 0


def test_repeat_days_setting_makes_two_early_starts_a_finding():
    runs = sorted(daily_runs("2026-03-02", "2026-03-03", start="04:30")
                  + daily_runs("2026-03-04", "2026-03-06"))
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08",
                settings=FindingSettings(repeat_days=2, min_overrun=pd.Timedelta("5min")))
    assert_one(found, "early_start", "2026-03-02", hours=1.0)


def test_early_starts_a_few_minutes_over_are_edge_jitter():
    # 04:55 starts are 5 min before the allowance: below the 10 min minimum overrun
    runs = daily_runs("2026-03-02", "2026-03-06", start="04:55")
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08")
    assert len(found) == 0


def test_repeated_late_stops_in_one_week():
    runs = sorted(daily_runs("2026-03-02", "2026-03-04", stop="18:10")
                  + daily_runs("2026-03-05", "2026-03-06"))
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08")
    row = assert_one(found, "late_stop", "2026-03-02", hours=3 * 40 / 60)
    assert "late-stop allowance" in row["detail"] and "by 40 min" in row["detail"]


# -- missed -------------------------------------------------------------------------------------
def test_trip_in_occupied_hours_is_missed_without_energy():
    runs = sorted(daily_runs("2026-03-02", "2026-03-06", skip={dt.date(2026, 3, 4)})
                  + [("2026-03-04 06:00", "2026-03-04 10:42"),
                     ("2026-03-04 14:57", "2026-03-04 17:10")])
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08")
    row = assert_one(found, "missed", "2026-03-04", hours=4 + 15 / 60)
    assert row["kwh"] == 0 and row["cost"] == 0
    assert "from 10:42 to 14:57" in row["detail"]


def test_missed_whole_day_reads_to_midnight_not_00_00():
    # an all-day occupied event (a calendar day 00:00-24:00) with the unit off all day: the
    # sentence said "from 00:00 to 00:00"
    sched = pd.concat([office_schedule("2026-03-02", "2026-03-08", off={dt.date(2026, 3, 4)}),
                       pd.DataFrame({"start": [loc("2026-03-04 00:00")],
                                     "end": [loc("2026-03-05 00:00")],
                                     "kind": ["occupied"], "source": ["all-day.ics"]})])
    sched = sched.sort_values("start").reset_index(drop=True)
    runs = daily_runs("2026-03-02", "2026-03-06", skip={dt.date(2026, 3, 4)})
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"), sched, "2026-03-02",
                "2026-03-08")
    row = assert_one(found, "missed", "2026-03-04", hours=24)
    assert "on Wed 4 Mar 2026 from 00:00 to midnight," in row["detail"]


def test_no_data_is_not_counted_as_missed():
    runs = sorted(daily_runs("2026-03-02", "2026-03-06", skip={dt.date(2026, 3, 4)})
                  + [("2026-03-04 06:00", "2026-03-04 10:00"),
                     ("2026-03-04 15:00", "2026-03-04 17:10")])
    found = run(states_frame(runs, "2026-03-02", "2026-03-08",
                             no_data=[("2026-03-04 10:00", "2026-03-04 14:40")]),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08")
    assert len(found) == 0   # 20 min known off is below the 30 min minimum


def test_heat_wheel_gives_no_missed():
    runs = daily_runs("2026-03-02", "2026-03-06", start="09:00", stop="12:00")
    st = states_frame(runs, "2026-03-02", "2026-03-08")
    sched = office_schedule("2026-03-02", "2026-03-08")
    assert len(run(st, sched, "2026-03-02", "2026-03-08", component=WHEEL)) == 0
    other = Component("pump", "AHU-9", "other", "S-3", 1.0, 1.0)
    assert len(run(st, sched, "2026-03-02", "2026-03-08", component=other)) == 0
    assert set(run(st, sched, "2026-03-02", "2026-03-08")["kind"]) == {"missed"}


# -- short cycling ------------------------------------------------------------------------------
def test_many_starts_in_a_day_is_short_cycling():
    # Wednesday: 8 runs of 50 min with 10 min stops inside the occupied period
    cyc = [(str(pd.Timestamp("2026-03-04 07:00") + i * pd.Timedelta("1h")),
            str(pd.Timestamp("2026-03-04 07:50") + i * pd.Timedelta("1h"))) for i in range(8)]
    cyc.append(("2026-03-04 15:00", "2026-03-04 17:10"))
    runs = sorted(daily_runs("2026-03-02", "2026-03-06", skip={dt.date(2026, 3, 4)}) + cyc)
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08")
    assert 9 > DEFAULT_MAX_STARTS_PER_DAY
    row = assert_one(found, "short_cycling", "2026-03-04", hours=8 * 50 / 60 + 130 / 60)
    assert row["detail"].startswith("Started 9 times on Wed 4 Mar 2026")


# -- clock offset -------------------------------------------------------------------------------
def test_dst_change_dates_match_the_eu_rule():
    # EU summer time (Directive 2000/84/EC): last Sunday of March and of October, so 29 March
    # and 25 October 2026; the zone database is the reference (zoneinfo).
    assert changes(dt.date(2026, 1, 1), dt.date(2026, 12, 31), TZ) == [
        (dt.date(2026, 3, 29), 60.0), (dt.date(2026, 10, 25), -60.0)]
    assert ZoneInfo(TZ).utcoffset(dt.datetime(2026, 3, 29, 12)) == dt.timedelta(hours=2)


def _clock_runs(first, last, *, stuck_from=None, clock="Etc/GMT-1"):
    """Weekday runs 06:00-17:05 by a controller clock. From ``stuck_from`` on the controller
    keeps the fixed zone ``clock`` (POSIX sign: Etc/GMT-1 is UTC+1 all year) instead of
    following local time, so its programme runs at shifted local times."""
    out = []
    for d in days(first, last):
        if d.weekday() >= 5:
            continue
        shift = pd.Timedelta(0)
        if stuck_from is not None and d >= stuck_from:
            ctrl = pd.Timestamp(f"{d} 12:00", tz=clock)
            shift = ctrl.tz_convert(TZ).tz_localize(None) - ctrl.tz_localize(None)
        a = pd.Timestamp(f"{d} 06:00") + shift
        b = pd.Timestamp(f"{d} 17:05") + shift
        out.append((str(a), str(b)))
    return out


def test_clock_that_ignores_daylight_saving_is_one_finding_on_the_change_date():
    runs = _clock_runs("2026-03-02", "2026-04-24", stuck_from=dt.date(2026, 3, 29))
    found = run(states_frame(runs, "2026-03-02", "2026-04-26"),
                office_schedule("2026-03-02", "2026-04-26"), "2026-03-02", "2026-04-26")
    # only the cause: the hour late each evening (17:30-18:05 off schedule) and the late start
    # (07:00 to 07:00 is no missed here) raise no late_stop or night findings of their own
    row = assert_one(found, "clock_offset", "2026-03-29")
    assert row["start"] == loc("2026-03-29 00:00")
    # 20 working days from 30 Mar to 24 Apr, 35 min off schedule each evening
    assert row["hours"] == pytest.approx(20 * 35 / 60)
    assert "about 1 h later" in row["detail"] and "Sun 29 Mar 2026" in row["detail"]


def test_clock_offset_suppresses_the_missed_hour_it_causes():
    # occupied from 06:30 with a 1 h allowance: a run starting at 06:00 controller time starts
    # at 07:00 local after the change, 30 min into the occupied period every day
    runs = _clock_runs("2026-03-02", "2026-04-24", stuck_from=dt.date(2026, 3, 29))
    sched = office_schedule("2026-03-02", "2026-04-26", occ=("06:30", "17:00"), early="1h")
    found = run(states_frame(runs, "2026-03-02", "2026-04-26"), sched, "2026-03-02",
                "2026-04-26", settings=FindingSettings(min_missed=pd.Timedelta("20min")))
    assert_one(found, "clock_offset", "2026-03-29")


def test_correct_clock_across_the_change_gives_nothing():
    runs = _clock_runs("2026-03-02", "2026-04-24")
    found = run(states_frame(runs, "2026-03-02", "2026-04-26"),
                office_schedule("2026-03-02", "2026-04-26"), "2026-03-02", "2026-04-26")
    assert len(found) == 0


def test_one_late_week_after_the_change_is_not_a_clock_offset():
    # shifted only for the first week after the change (someone fixed the clock): 3 of the
    # first 10 working days is below the 70 % share, so the late stops show as a late_stop
    # finding for that week instead
    runs = (_clock_runs("2026-03-02", "2026-04-03", stuck_from=dt.date(2026, 3, 29))
            + _clock_runs("2026-04-06", "2026-04-24"))
    found = run(states_frame(runs, "2026-03-02", "2026-04-26"),
                office_schedule("2026-03-02", "2026-04-26"), "2026-03-02", "2026-04-26")
    assert "clock_offset" not in set(found["kind"])
    assert_one(found, "late_stop", "2026-03-30", hours=5 * 35 / 60)


# -- bad input ----------------------------------------------------------------------------------
def _small():
    st = states_frame(daily_runs("2026-03-02", "2026-03-06"), "2026-03-02", "2026-03-08")
    return st, office_schedule("2026-03-02", "2026-03-08")


def test_missing_column_is_named():
    st, sc = _small()
    with pytest.raises(InputError, match="^states: missing column"):
        run(st.drop(columns="state"), sc, "2026-03-02", "2026-03-08")


def test_unknown_state_and_kind_are_named():
    st, sc = _small()
    st.loc[0, "state"] = "running"
    with pytest.raises(InputError, match="states.state: unknown state 'running'"):
        run(st, sc, "2026-03-02", "2026-03-08")
    st, sc = _small()
    sc.loc[0, "kind"] = "busy"
    with pytest.raises(InputError, match="schedule.kind: unknown kind 'busy'"):
        run(st, sc, "2026-03-02", "2026-03-08")


def test_naive_instants_and_bad_zone_and_settings_are_refused():
    st, sc = _small()
    st["start"] = st["start"].dt.tz_localize(None)
    with pytest.raises(InputError, match="states: column 'start' must hold zone-aware"):
        run(st, sc, "2026-03-02", "2026-03-08")
    st, sc = _small()
    with pytest.raises(InputError, match="site.timezone: unknown time zone"):
        find_issues(FAN, st, sc, None, start=loc("2026-03-02"), end=loc("2026-03-09"),
                    tz="Mars/Olympus", running_kw=1.0)
    with pytest.raises(InputError, match="findings.min_off_schedule: must be a positive"):
        run(st, sc, "2026-03-02", "2026-03-08",
            settings=FindingSettings(min_off_schedule=pd.Timedelta(0)))
    with pytest.raises(InputError, match="running_kw"):
        find_issues(FAN, st, sc, None, start=loc("2026-03-02"), end=loc("2026-03-09"),
                    tz=TZ, running_kw=float("nan"))


def test_setting_overrides_the_persistence():
    runs = daily_runs("2026-03-02", "2026-03-06") + [("2026-03-04 22:00", "2026-03-04 22:50")]
    found = run(states_frame(sorted(runs), "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08",
                settings=FindingSettings(min_off_schedule=pd.Timedelta("45min")))
    assert DEFAULT_MIN_OFF_SCHEDULE == pd.Timedelta("1h")
    assert_one(found, "night", "2026-03-04", hours=50 / 60)


def test_sunday_night_before_a_working_day_is_a_night_finding():
    # Sunday 22:00 to Monday 04:30: one overnight override before a working day, not a
    # weekend finding plus a night finding
    runs = sorted(daily_runs("2026-03-02", "2026-03-13")
                  + [("2026-03-08 22:00", "2026-03-09 04:30")])
    found = run(states_frame(runs, "2026-03-02", "2026-03-15"),
                office_schedule("2026-03-02", "2026-03-15"), "2026-03-02", "2026-03-15")
    row = assert_one(found, "night", "2026-03-08", hours=6.5)
    assert "night of Sun 8 Mar to Mon 9 Mar 2026" in row["detail"]


def test_friday_evening_into_saturday_midday_splits_into_night_and_weekend():
    runs = sorted(daily_runs("2026-03-02", "2026-03-06")
                  + [("2026-03-06 20:00", "2026-03-07 13:00")])
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08")
    assert list(found["kind"]) == ["night", "weekend"]
    assert list(found["date"]) == ["2026-03-06", "2026-03-07"]
    assert found["hours"].tolist() == pytest.approx([4.0, 13.0])
    assert found["kwh"].sum() == pytest.approx(KW * 17.0)   # nothing counted twice


def test_flat_battery_inside_a_continuous_run_keeps_one_finding():
    # running from Monday, sensor silent Wednesday 10:00 to Friday 13:00 (51 h), running seen
    # again until Sunday: one continuous finding that says how long the data was missing
    runs = [("2026-03-02 06:00", "2026-03-04 10:00"), ("2026-03-06 13:00", "2026-03-08 20:00")]
    found = run(states_frame(runs, "2026-03-02", "2026-03-08",
                             no_data=[("2026-03-04 10:00", "2026-03-06 13:00")]),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08")
    # off schedule seen: Mon 17:30-Tue 05:00, Tue 17:30-Wed 05:00 (23 h), Fri 17:30 to Sun
    # 20:00 (50.5 h)
    row = assert_one(found, "continuous", "2026-03-02", hours=23 + 50.5)
    assert "with 51.0 h of no data in between" in row["detail"]


def test_clock_kept_on_summer_time_after_the_autumn_change():
    # controller stays on UTC+2 after 25 Oct 2026: from then on it runs an hour early
    runs = _clock_runs("2026-10-01", "2026-11-20", stuck_from=dt.date(2026, 10, 25),
                       clock="Etc/GMT-2")
    found = run(states_frame(runs, "2026-10-01", "2026-11-22"),
                office_schedule("2026-10-01", "2026-11-22"), "2026-10-01", "2026-11-22")
    row = assert_one(found, "clock_offset", "2026-10-25")
    assert "about 1 h earlier" in row["detail"] and "daylight saving time ended" in row["detail"]


def test_clock_on_standard_time_all_year_is_one_finding_from_spring_to_autumn():
    # a controller on UTC+1 all year is right in winter, an hour late all summer; the autumn
    # change brings it back into line, which ends the spring finding and raises no new one
    runs = _clock_runs("2026-03-02", "2026-11-20", stuck_from=dt.date(2026, 1, 1))
    found = run(states_frame(runs, "2026-03-02", "2026-11-22"),
                office_schedule("2026-03-02", "2026-11-22"), "2026-03-02", "2026-11-22")
    row = assert_one(found, "clock_offset", "2026-03-29")
    assert row["end"] < loc("2026-10-25 00:00")
    assert row["end"] == loc("2026-10-23 18:05")   # the last Friday before the change


# -- the demo's planted faults ---------------------------------------------------------------
# find_issues runs on the demo's TRUE run intervals (observed_truth: what truth/runs.csv holds,
# no_data over the data gaps), not on classified states, so this checks the rules alone; the
# end-to-end audit test lives with the audit. Expected kinds, components and dates come from
# the generator's fault records (faults_document: what truth/faults.json holds), not from a
# snapshot of this tool's output.
@pytest.fixture(scope="module")
def demo_findings(demo_site, tmp_path_factory):
    from schedcheck.demo import build as demo_mod  # the demo generator's module
    from schedcheck.inputs.site_file import load_site
    from schedcheck.jobs.schedule import unit_schedules
    from schedcheck.outputs import demo_files

    demo = demo_site   # built once per session (tests/conftest.py)
    folder = tmp_path_factory.mktemp("demo")
    (folder / "site.toml").write_text(demo.site_toml, encoding="utf-8")
    (folder / "calendars").mkdir()
    for name, text in demo.calendars.items():
        (folder / "calendars" / name).write_text(text, encoding="utf-8", newline="")
    # the site file's readings patterns must match a file; readings are not read here
    (folder / "readings").mkdir()
    (folder / "readings" / "unused.csv.gz").write_bytes(b"")
    (folder / "readings" / "unused.parquet").write_bytes(b"")
    (folder / "bms").mkdir()                      # and its trends pattern (not read here)
    (folder / "bms" / "trends.csv").write_bytes(b"")
    weather = folder / "weather" / "vellesund-outdoor.csv"   # the site file names it
    weather.parent.mkdir()
    weather.write_text(demo.weather.to_csv(index=False), encoding="utf-8")
    site = load_site(folder / "site.toml")
    schedules = unit_schedules(site, demo.first, demo.last)
    truth = demo_mod.observed_truth(demo)
    frames = []
    for comp in site.components:
        states = truth[truth["component"] == comp.key][["start", "end", "state"]]
        sched = schedules[comp.unit]
        frames.append(find_issues(
            comp, states.reset_index(drop=True), sched.intervals, sched.days_off,
            start=demo.start, end=demo.end, tz=site.timezone,
            running_kw=comp.power_kw * comp.speed ** site.energy.exponent,
            price=site.energy.price, co2_per_kwh=site.energy.co2_per_kwh,
            currency=site.energy.currency, settings=site.findings))
    found = pd.concat(frames, ignore_index=True)
    return demo, demo_files.faults_document(demo), found, site


def _utc(text: str) -> pd.Timestamp:
    return pd.Timestamp(text).tz_convert("UTC")


SPEED_KINDS = ("setback", "over_speed")   # kinds the audit gives from speeds, not time rules


def test_every_planted_fault_is_found_with_its_kind_and_dates(demo_findings):
    demo, doc, found, _ = demo_findings
    dst = [d for d, _ in changes(demo.first, demo.last, doc["timezone"])]
    assert doc["faults"], "the demo plants faults"
    for fault in doc["faults"]:
        if fault["kind"] in SPEED_KINDS:
            continue   # decided by the audit from the speeds: tests/demo/test_demo_speeds.py
        mine = found[(found["component"] == fault["component"]) & (found["kind"] == fault["kind"])]
        what = f"{fault['component']} {fault['kind']} {fault['dates']}"
        if fault["kind"] == "clock_offset":
            # one finding from the daylight-saving change; the truth records the first shifted
            # working day, which must fall inside the finding
            assert len(mine) == 1, what
            row = mine.iloc[0]
            assert dt.date.fromisoformat(row["date"]) in dst, what
            assert row["date"] <= fault["dates"][0], what
            assert row["start"] <= _utc(fault["episodes"][0][0]) < row["end"], what
            continue
        # one finding per planted date, on that date
        assert sorted(mine["date"]) == sorted(fault["dates"]), what
        if fault["kind"] in ("holiday", "night", "missed"):
            # each planted episode's length, to within a few minutes of follower delay
            planted = sorted((_utc(a), (_utc(b) - _utc(a)).total_seconds() / 3600)
                             for a, b in fault["episodes"])
            got = mine.sort_values("start")["hours"].tolist()
            assert got == pytest.approx([h for _, h in planted], abs=0.1), what
        if fault["kind"] == "continuous":
            assert abs(mine.iloc[0]["start"] - _utc(fault["start"])) < pd.Timedelta("5min"), what


def test_no_finding_without_a_planted_fault(demo_findings):
    _, doc, found, _ = demo_findings
    planted = {(f["component"], f["kind"]) for f in doc["faults"]}
    # the time rules alone see a setback as night, weekend and holiday running (the audit
    # retypes it from the speeds) and an over-speed weekend inside its allowed window as nothing
    planted |= {(f["component"], k) for f in doc["faults"] if f["kind"] == "setback"
                for k in ("night", "weekend", "holiday")}
    extra = found[[(c, k) not in planted for c, k in zip(found["component"], found["kind"],
                                                            strict=True)]]
    assert len(extra) == 0, extra[["component", "kind", "date", "detail"]].to_string()
    assert doc["clean_components"]
    assert not set(found["component"]) & set(doc["clean_components"])


def test_demo_findings_are_priced_from_their_hours(demo_findings):
    _, _, found, site = demo_findings
    priced = found[~found["kind"].isin(["missed", "short_cycling"])]
    assert (priced["kwh"] > 0).all()
    assert (found.loc[found["kind"] == "missed", "kwh"] == 0).all()
    assert priced["cost"].to_numpy() == pytest.approx(site.energy.price * priced["kwh"].to_numpy())


def test_clock_offset_is_found_through_short_data_gaps_in_the_day():
    # packet loss in the middle of every working day does not hide the start and stop
    runs = _clock_runs("2026-03-02", "2026-04-24", stuck_from=dt.date(2026, 3, 29))
    cut = []
    for a, b in runs:
        mid = pd.Timestamp(a) + pd.Timedelta("5h")
        cut += [(a, str(mid)), (str(mid + pd.Timedelta("10min")), b)]
    gaps = [(b1, a2) for (_, b1), (a2, _) in zip(cut[::2], cut[1::2], strict=True)]
    found = run(states_frame(cut, "2026-03-02", "2026-04-26", no_data=gaps),
                office_schedule("2026-03-02", "2026-04-26"), "2026-03-02", "2026-04-26")
    assert_one(found, "clock_offset", "2026-03-29", hours=20 * 35 / 60)


def test_unnamed_day_off_gets_a_plain_name():
    off = pd.DataFrame({"date": ["2026-03-04"], "name": [float("nan")], "kind": ["holiday"]})
    runs = daily_runs("2026-03-02", "2026-03-06")
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08", off={dt.date(2026, 3, 4)}),
                "2026-03-02", "2026-03-08", days_off=off)
    row = assert_one(found, "holiday", "2026-03-04", hours=11 + 10 / 60)
    assert row["detail"].startswith(
        "Ran 11.2 h on an unnamed holiday (4 Mar 2026, a public holiday)")


# -- nothing counted twice ----------------------------------------------------------------------
@settings(max_examples=40, deadline=None)
@given(hs.lists(hs.tuples(hs.integers(0, 20), hs.integers(0, 24 * 60 - 1),
                          hs.integers(1, 40 * 60)), max_size=25))
def test_priced_hours_never_exceed_the_off_schedule_running(spans):
    # random runs over three weeks around the spring change: whatever the rules make of them,
    # the priced hours of all findings together never exceed the off-schedule running, and
    # every finding lies inside the window
    base = loc("2026-03-16")
    runs = Intervals.from_arrays(
        [(base + pd.Timedelta(days=d, minutes=m)).value for d, m, _ in spans],
        [(base + pd.Timedelta(days=d, minutes=m + n)).value for d, m, n in spans],
    ).clip(loc("2026-03-16"), loc("2026-04-06"))
    frame = runs.to_frame().assign(state="run")
    offs = runs.complement(loc("2026-03-16"), loc("2026-04-06")).to_frame().assign(state="off")
    states = pd.concat([frame, offs]).sort_values("start").reset_index(drop=True)
    sched = office_schedule("2026-03-16", "2026-04-05")
    found = run(states, sched, "2026-03-16", "2026-04-05")
    off_sched = runs - Intervals.from_frame(sched)
    priced = found[~found["kind"].isin(["missed", "short_cycling"])]
    assert priced["hours"].sum() <= off_sched.hours() + 1e-9
    assert found["kwh"].sum() == pytest.approx(KW * priced["hours"].sum())
    assert (found["start"] >= loc("2026-03-16")).all() and (found["end"] <= loc("2026-04-06")).all()
    assert (found["start"] < found["end"]).all()


def test_long_early_start_is_a_night_finding_that_says_so():
    # started at 03:00 on Wednesday, 2 h before the early-start allowance: longer than the
    # persistence, so a night finding of its own whose sentence names the early start
    runs = sorted(daily_runs("2026-03-02", "2026-03-06", skip={dt.date(2026, 3, 4)})
                  + [("2026-03-04 03:00", "2026-03-04 17:10")])
    found = run(states_frame(runs, "2026-03-02", "2026-03-08"),
                office_schedule("2026-03-02", "2026-03-08"), "2026-03-02", "2026-03-08")
    row = assert_one(found, "night", "2026-03-04", hours=2.0)
    assert "from 03:00 to 05:00, starting early before the early-start allowance" in row["detail"]


def test_cycling_from_a_working_evening_through_an_unoccupied_day():
    # occupied periods on Monday and Wednesday only; the unit cycles 50 min on, 10 min off
    # from Monday 20:00 to Wednesday 00:50 (no stop long enough to end the episode): Monday
    # evening is a night finding, Tuesday a day with no occupied period, and the last 50 min
    # after midnight, below the persistence, join Tuesday
    cyc = [(str(pd.Timestamp("2026-03-02 20:00") + i * pd.Timedelta("1h")),
            str(pd.Timestamp("2026-03-02 20:50") + i * pd.Timedelta("1h"))) for i in range(29)]
    found = run(states_frame(cyc, "2026-03-02", "2026-03-04"),
                office_schedule("2026-03-02", "2026-03-04", weekdays=(0, 2), early=None,
                                late=None), "2026-03-02", "2026-03-04",
                settings=FindingSettings(max_starts_per_day=50, min_missed=pd.Timedelta("24h")))
    assert list(found["kind"]) == ["night", "weekend"]
    assert list(found["date"]) == ["2026-03-02", "2026-03-03"]
    assert found["hours"].tolist() == pytest.approx([4 * 50 / 60, 25 * 50 / 60])
    assert found["detail"].iloc[1].startswith(
        "Ran 20.8 h in 25 runs between Tue 3 Mar 00:00 and Wed 4 Mar 2026 00:50, days with no "
        "occupied period in the schedule (")


def test_unit_without_an_occupied_calendar_reads_plainly():
    runs = daily_runs("2026-03-02", "2026-03-03")
    empty = office_schedule("2026-03-02", "2026-03-03").iloc[0:0]
    found = run(states_frame(runs, "2026-03-02", "2026-03-03"), empty, "2026-03-02", "2026-03-03")
    assert list(found["kind"]) == ["weekend", "weekend"]
    assert found["detail"].iloc[0].startswith(
        "Ran 11.2 h on Mon 2 Mar 2026 from 06:00 to 17:10, a day with no occupied period in the "
        "schedule (")


def test_new_opening_hours_from_the_change_date_are_not_a_clock_offset():
    # the calendar itself moves to 08:00-18:00 from 30 March and the unit follows it: starts
    # and stops are measured from the occupied period, so this is no clock fault
    before = office_schedule("2026-03-02", "2026-03-29")
    after = office_schedule("2026-03-30", "2026-04-26", occ=("08:00", "18:00"))
    sched = pd.concat([before, after], ignore_index=True)
    runs = (daily_runs("2026-03-02", "2026-03-27")
            + daily_runs("2026-03-30", "2026-04-24", start="07:00", stop="18:05"))
    found = run(states_frame(runs, "2026-03-02", "2026-04-26"), sched, "2026-03-02",
                "2026-04-26")
    assert len(found) == 0
