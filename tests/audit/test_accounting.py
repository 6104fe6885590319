"""Minute accounting on hand-built run states and schedules (exact figures worked by hand)."""

import datetime as dt

import pandas as pd
import pytest

from schedcheck.audit.accounting import account_component, state_sets, transitions
from schedcheck.window import day_window

TZ = "Europe/Oslo"


def t(text: str) -> pd.Timestamp:
    """A local Oslo wall-clock time as a UTC instant."""
    return pd.Timestamp(text).tz_localize(TZ).tz_convert("UTC").as_unit("ns")


def states(*rows):
    return pd.DataFrame(
        {"start": [t(a) for a, _, _ in rows], "end": [t(b) for _, b, _ in rows],
         "state": [s for _, _, s in rows], "level": [1.0] * len(rows)}
    )


def sched(*rows):
    return pd.DataFrame(
        {"start": pd.DatetimeIndex([t(a) for a, _, _ in rows]),
         "end": pd.DatetimeIndex([t(b) for _, b, _ in rows]),
         "kind": [k for _, _, k in rows], "source": ["test"] * len(rows)}
    )


def assert_hours(account, **expected):
    got = account.hours()
    for k, v in expected.items():
        assert got[k] == pytest.approx(v, abs=1e-9), k


@pytest.fixture
def one_day():
    # Monday 2026-03-02: occupied 07-17, allowance 05-07 and 17-17:30.
    # Off until 04:00, running 04:00-18:00, off 18:00-20:00, no data 20:00-21:00,
    # running 21:00-22:00, off to midnight.
    st = states(
        ("2026-03-02 00:00", "2026-03-02 04:00", "off"),
        ("2026-03-02 04:00", "2026-03-02 18:00", "run"),
        ("2026-03-02 18:00", "2026-03-02 20:00", "off"),
        ("2026-03-02 20:00", "2026-03-02 21:00", "no_data"),
        ("2026-03-02 21:00", "2026-03-02 22:00", "run"),
        ("2026-03-02 22:00", "2026-03-03 00:00", "off"),
    )
    sc = sched(
        ("2026-03-02 05:00", "2026-03-02 07:00", "allowance"),
        ("2026-03-02 07:00", "2026-03-02 17:00", "occupied"),
        ("2026-03-02 17:00", "2026-03-02 17:30", "allowance"),
    )
    start, end = day_window(dt.date(2026, 3, 2), dt.date(2026, 3, 2), TZ)
    return st, sc, start, end


def test_one_day_by_hand(one_day):
    st, sc, start, end = one_day
    acc = account_component(st, sc, start, end, TZ)
    # off-schedule: 04-05 (1 h), 17:30-18:00 (0.5 h), 21-22 (1 h)
    assert_hours(acc, period=24, scheduled=10, running=15, in_schedule=10, in_allowance=2.5,
                 off_schedule=2.5, missed=0, off=8, no_data=1)
    assert acc.starts == 1  # 04:00 follows off; 21:00 follows no data (not seen starting)
    row = acc.daily.iloc[0]
    assert row["first_start"] == pd.Timestamp("2026-03-02 04:00", tz=TZ)
    assert row["last_stop"] == pd.Timestamp("2026-03-02 22:00", tz=TZ)
    assert row["weekday"] == "Mon"


def test_missed_counts_for_fans_not_heat_wheels():
    st = states(
        ("2026-03-02 00:00", "2026-03-02 09:00", "off"),
        ("2026-03-02 09:00", "2026-03-02 12:00", "run"),
        ("2026-03-02 12:00", "2026-03-03 00:00", "off"),
    )
    sc = sched(("2026-03-02 07:00", "2026-03-02 17:00", "occupied"))
    start, end = day_window(dt.date(2026, 3, 2), dt.date(2026, 3, 2), TZ)
    fan = account_component(st, sc, start, end, TZ)
    wheel = account_component(st, sc, start, end, TZ, counts_missed=False)
    assert_hours(fan, missed=7, occupied_off=7, in_schedule=3)
    assert_hours(wheel, missed=0, occupied_off=7, in_schedule=3)


def test_allowed_window_counts_as_allowance_and_occupied_wins_overlaps():
    st = states(("2026-03-02 00:00", "2026-03-03 00:00", "run"))
    sc = sched(
        ("2026-03-02 02:00", "2026-03-02 04:00", "allowed"),
        ("2026-03-02 07:00", "2026-03-02 17:00", "occupied"),
        ("2026-03-02 16:00", "2026-03-02 18:00", "allowed"),  # overlaps occupied by 1 h
    )
    start, end = day_window(dt.date(2026, 3, 2), dt.date(2026, 3, 2), TZ)
    acc = account_component(st, sc, start, end, TZ)
    assert_hours(acc, running=24, in_schedule=10, in_allowance=3, off_schedule=11)


def test_uncovered_window_is_no_data_with_a_warning():
    st = states(("2026-03-02 06:00", "2026-03-02 18:00", "run"))
    start, end = day_window(dt.date(2026, 3, 2), dt.date(2026, 3, 2), TZ)
    acc = account_component(st, sched(), start, end, TZ)
    assert_hours(acc, running=12, no_data=12, off=0, off_schedule=12)
    assert any("uncovered" in w for w in acc.warnings)


def test_overlapping_states_count_once_as_running():
    st = states(
        ("2026-03-02 00:00", "2026-03-02 12:00", "off"),
        ("2026-03-02 10:00", "2026-03-03 00:00", "run"),
    )
    ss = state_sets(st, *day_window(dt.date(2026, 3, 2), dt.date(2026, 3, 2), TZ))
    assert ss.run.hours() == 14 and ss.off.hours() == 10 and ss.no_data.hours() == 0
    assert any("overlap" in w for w in ss.warnings)


def test_unknown_state_is_refused():
    st = states(("2026-03-02 00:00", "2026-03-03 00:00", "spinning"))
    with pytest.raises(ValueError, match="unknown run states"):
        account_component(st, sched(), *day_window(dt.date(2026, 3, 2), dt.date(2026, 3, 2), TZ),
                          TZ)


def test_spring_forward_day_is_23_hours_and_autumn_day_25():
    # Oslo clocks go forward on 2026-03-29 and back on 2026-10-25 (EU rule: last Sunday of
    # March and of October, Directive 2000/84/EC).
    for day, length in ((dt.date(2026, 3, 29), 23), (dt.date(2026, 10, 25), 25)):
        start, end = day_window(day - dt.timedelta(days=1), day + dt.timedelta(days=1), TZ)
        st = pd.DataFrame({"start": [start], "end": [end], "state": ["run"], "level": [1.0]})
        acc = account_component(st, sched(), start, end, TZ)
        periods = (acc.daily["period_ns"] / 3.6e12).tolist()
        assert periods == [24, length, 24]
        assert acc.hours()["off_schedule"] == 48 + length


def test_run_across_midnight_splits_by_local_day():
    st = states(
        ("2026-03-02 00:00", "2026-03-02 20:00", "off"),
        ("2026-03-02 20:00", "2026-03-03 06:00", "run"),
        ("2026-03-03 06:00", "2026-03-04 00:00", "off"),
    )
    start, end = day_window(dt.date(2026, 3, 2), dt.date(2026, 3, 3), TZ)
    acc = account_component(st, sched(), start, end, TZ)
    d = acc.daily
    assert (d["running_ns"] / 3.6e12).tolist() == [4, 6]
    assert d["starts"].tolist() == [1, 0]
    assert pd.isna(d["last_stop"].iloc[0]) and d["last_stop"].iloc[1].hour == 6
    assert transitions(acc.states)[0].size == 1


def test_days_off_names_in_daily_rows():
    st = states(("2026-04-02 00:00", "2026-04-04 00:00", "off"))
    days_off = pd.DataFrame({"date": [dt.date(2026, 4, 2)], "name": ["Maundy Thursday"],
                             "kind": ["holiday"]})
    start, end = day_window(dt.date(2026, 4, 2), dt.date(2026, 4, 3), TZ)
    acc = account_component(st, sched(), start, end, TZ, days_off=days_off)
    assert acc.daily["day_off"].tolist() == ["Maundy Thursday", ""]
