"""Trend points (hold until the next sample, silence past max_gap unknown) and the comparison
with run states, on seeded cases with known truth."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from schedcheck.intervals import Intervals, to_ns
from schedcheck.runstate.states import StateSets
from schedcheck.trends.against import compare_trends, trend_findings
from schedcheck.trends.points import parse_values, point_states

T0 = pd.Timestamp("2026-04-13T00:00Z")   # a Monday
H = 3_600_000_000_000
TZ = "Europe/Oslo"


def ns(hours: float) -> int:
    return int(to_ns(T0)) + int(hours * H)


def states(run_spans, start_h=0, end_h=7 * 24, gaps=()) -> StateSets:
    w0, w1 = ns(start_h), ns(end_h)
    gap = Intervals.from_arrays([ns(a) for a, _ in gaps], [ns(b) for _, b in gaps])
    run = Intervals.from_arrays([ns(a) for a, _ in run_spans],
                                [ns(b) for _, b in run_spans]).difference(gap)
    off = Intervals.window(w0, w1).difference(run).difference(gap)
    return StateSets(run=run, off=off, no_data=gap)


def test_words_and_percent_commands_are_read_and_junk_is_flagged():
    values, bad = parse_values(pd.Series(["ON", "off", "True", "inactive", "Active", "1", "0",
                                          "35.5", "0%", "100 %", "maybe", "-3", ""]))
    assert values[:10].tolist() == [1, 0, 1, 0, 1, 1, 0, 1, 0, 1]
    assert bad.tolist() == [False] * 10 + [True, True, True]


def test_a_value_holds_until_the_next_sample_and_silence_past_max_gap_is_unknown():
    # change-of-value log: on at 06:00, off at 18:00, then silent for two days
    t = np.array([ns(6), ns(18)])
    p = point_states(t, np.array([1.0, 0.0]), ns(0), ns(72), max_gap=24 * H)
    assert p.on == Intervals.from_arrays([ns(6)], [ns(18)])
    assert p.off == Intervals.from_arrays([ns(18)], [ns(42)])
    assert p.unknown == Intervals.from_arrays([ns(0), ns(42)], [ns(6), ns(72)])
    assert p.on.duration_ns() + p.off.duration_ns() + p.unknown.duration_ns() == 72 * H


def test_duplicate_samples_at_one_instant_keep_the_last_and_order_does_not_matter():
    t = np.array([ns(8), ns(2), ns(8)])
    p = point_states(t, np.array([0.0, 1.0, 1.0]), ns(0), ns(10), max_gap=24 * H)
    assert p.on == Intervals.from_arrays([ns(2)], [ns(10)])


def test_hand_mode_failed_start_and_false_status_are_counted_where_both_sides_are_known():
    # truth: command on 06-18 every weekday; on Saturday (day 5) the fan ran 10:00-16:30
    # while commanded off (hand mode, 6.5 h); on Wednesday (day 2) it never started (failed
    # start, 12 h); the status point claims running all of Thursday (day 3) 00:00-24:00
    cmd_t, cmd_v, run = [], [], []
    for d in range(7):
        if d < 5:
            cmd_t += [ns(24 * d + 6), ns(24 * d + 18)]
            cmd_v += [1.0, 0.0]
            if d != 2:
                run.append((24 * d + 6, 24 * d + 18))
    run.append((24 * 5 + 10, 24 * 5 + 16.5))
    st = states(run, gaps=[(24 * 6 + 2, 24 * 6 + 4)])          # 2 h of no data on Sunday
    command = point_states(np.array(cmd_t), np.array(cmd_v), ns(0), ns(168), max_gap=7 * 24 * H)
    status_t = np.array([ns(24 * d + h) for d in range(7) for h in (6, 18)])
    status_v = np.array([1.0 if h == 6 else 0.0 for d in range(7) for h in (6, 18)])
    status_v = np.where((status_t >= ns(72)) & (status_t < ns(96)), 1.0, status_v)
    status_v[np.flatnonzero(status_t == ns(24 * 5 + 6))] = 0.0  # Saturday: status follows cmd
    status_v[np.flatnonzero(status_t == ns(24 * 6 + 6))] = 0.0
    status = point_states(status_t, status_v, ns(0), ns(168), max_gap=7 * 24 * H)
    cmp = compare_trends(st, command, status)
    h = cmp.hours()
    assert h["ran_while_commanded_off"] == pytest.approx(6.5)
    assert h["off_while_commanded_on"] == pytest.approx(12.0)
    # Wednesday: status on 06-18 while off (12 h); Thursday 06:00-Friday 06:00 the status says
    # on; the fan ran 06-18, so 18:00-06:00 disagrees (12 h); Saturday 10-16:30 status off
    assert h["status_disagrees"] == pytest.approx(12.0 + 12.0 + 6.5)
    found = trend_findings("AHU-1/supply", cmp, T0, T0 + pd.Timedelta("7D"), TZ)
    kinds = sorted(zip(found["kind"], found["date"], strict=True))
    assert ("hand_mode", "2026-04-18") in kinds and ("failed_start", "2026-04-15") in kinds
    hand = found[found["kind"] == "hand_mode"].iloc[0]
    assert "6.5 h on Sat 18 Apr while its command was off" in hand["detail"]
    assert "hand-off-auto" in hand["detail"]


def test_a_wrong_controller_clock_moves_command_and_running_together_no_hand_mode():
    # the controller runs an hour early every day: command and fan both 05:00-17:00
    cmd_t = np.array([ns(24 * d + h) for d in range(5) for h in (5, 17)])
    cmd_v = np.array([1.0, 0.0] * 5)
    st = states([(24 * d + 5, 24 * d + 17) for d in range(5)])
    cmp = compare_trends(st, point_states(cmd_t, cmd_v, ns(0), ns(168), max_gap=7 * 24 * H))
    assert cmp.hours()["ran_while_commanded_off"] == 0.0
    assert trend_findings("AHU-1/supply", cmp, T0, T0 + pd.Timedelta("7D"), TZ).empty


def test_no_data_on_either_side_is_kept_apart():
    st = states([(0, 10)], end_h=10, gaps=[(2, 4)])
    cmd = point_states(np.array([ns(0), ns(6)]), np.array([0.0, 0.0]), ns(0), ns(10),
                       max_gap=2 * H)   # known 0-2 and 6-8 only
    cmp = compare_trends(st, cmd)
    assert cmp.ran_while_commanded_off.hours() == pytest.approx(4.0)   # 0-2 and 6-8
    assert cmp.command_unknown.hours() == pytest.approx(4.0)           # 4-6 and 8-10
