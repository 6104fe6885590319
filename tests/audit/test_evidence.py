"""Which findings get a close-up, over what span, and the per-minute level trace behind it."""

from __future__ import annotations

import numpy as np
import pandas as pd

from schedcheck.audit.evidence import (
    STRIP_CONTEXT,
    STRIP_LONGEST,
    costliest_first,
    evidence_levels,
    finding_components,
    finding_keys,
    minute_levels,
    strip_focus,
    strip_window,
)
from schedcheck.intervals import to_ns
from tests.helpers import utc

W0, W1 = utc("2026-03-01T00:00Z"), utc("2026-04-01T00:00Z")


def _findings(rows) -> pd.DataFrame:
    f = pd.DataFrame(rows, columns=["component", "kind", "start", "end", "hours", "kwh", "cost"])
    f["start"] = pd.to_datetime(f["start"], utc=True)
    f["end"] = pd.to_datetime(f["end"], utc=True)
    return f


def test_window_is_the_finding_with_context_inside_the_audit_window():
    a, b = strip_window(utc("2026-03-10T18:00Z"), utc("2026-03-10T23:00Z"), W0, W1)
    assert (a, b) == (utc("2026-03-10T18:00Z") - STRIP_CONTEXT,
                      utc("2026-03-10T23:00Z") + STRIP_CONTEXT)
    # at the window's edges the context is cut, never beyond the audit window
    a, b = strip_window(utc("2026-03-01T00:30Z"), utc("2026-03-01T02:00Z"), W0, W1)
    assert a == W0
    a, b = strip_window(utc("2026-03-31T23:00Z"), W1, W0, W1)
    assert b == W1


def test_a_long_finding_is_drawn_for_at_most_the_longest_span():
    start = utc("2026-03-05T06:00Z")
    a, b = strip_window(start, utc("2026-03-25T00:00Z"), W0, W1)
    assert b - a == STRIP_LONGEST + 2 * STRIP_CONTEXT


def test_a_repeated_pattern_starts_at_its_first_run():
    runs = np.array([to_ns(utc("2026-03-02T05:10:30Z")), to_ns(utc("2026-03-03T05:12Z"))])
    start, end = utc("2026-03-01T00:00Z"), utc("2026-03-20T00:00Z")
    assert strip_focus("clock_offset", start, end, runs) == utc("2026-03-02T05:10Z")
    # other kinds start where the finding starts; no run inside: the finding's start
    assert strip_focus("night", start, end, runs) == start
    assert strip_focus("clock_offset", utc("2026-03-04T00:00Z"), end, runs) == utc(
        "2026-03-04T00:00Z")


def test_keys_order_and_components():
    f = _findings([
        ["A/supply", "night", "2026-03-02T18:00Z", "2026-03-02T20:00Z", 2.0, 10.0, 12.0],
        ["A/exhaust", "night", "2026-03-02T18:00Z", "2026-03-02T20:00Z", 2.0, 10.0, 30.0],
        ["A/supply", "weekend", "2026-03-07T08:00Z", "2026-03-07T12:00Z", 4.0, 5.0, 12.0],
    ])
    assert finding_keys(f) == ["1", "2", "3"]
    assert costliest_first(f).tolist() == [1, 0, 2]      # cost, then kWh, then hours
    assert finding_keys(f.assign(id=["x", "y", "z"])) == ["x", "y", "z"]
    row = f.assign(components=["A/supply;A/exhaust"] * 3).iloc[0]
    assert finding_components(row) == ["A/supply", "A/exhaust"]
    assert finding_components(f.iloc[0]) == ["A/supply"]


def test_minute_levels_take_the_median_of_each_minute_and_leave_gaps():
    t0 = to_ns(utc("2026-03-02T10:00Z"))
    s = 1_000_000_000
    t = np.array([t0 + 5 * s, t0 + 20 * s, t0 + 50 * s, t0 + 65 * s, t0 + 300 * s])
    lv = np.array([1.0, 3.0, 2.0, np.nan, 0.5])
    m, v = minute_levels(t, lv, t0, t0 + 600 * s)
    assert m.tolist() == [t0, t0 + 300 * s]      # minute 1 had only a NaN: no row
    assert v.tolist() == [2.0, 0.5]


def test_evidence_levels_on_seeded_readings_cover_each_strip_once_a_minute():
    rng = np.random.default_rng(3)
    times = pd.date_range("2026-03-02T00:00:17Z", "2026-03-04T00:00Z", freq="60s")
    times = times + pd.to_timedelta(rng.integers(-8, 8, len(times)), "s")
    running = (times >= utc("2026-03-02T19:00Z")) & (times < utc("2026-03-02T23:00Z"))
    level = np.where(running, 2.0, 0.05) * rng.lognormal(0, 0.05, len(times))
    readings = {"S1": pd.DataFrame({"timestamp": times, "x_rms": level})}
    f = _findings([["A/supply", "night", "2026-03-02T19:00Z", "2026-03-02T23:00Z", 4.0, 8.0,
                    9.6]])
    lv = evidence_levels(f, {"A/supply": "S1"}, readings, W0, W1)
    assert set(lv["finding"]) == {"1"} and set(lv["component"]) == {"A/supply"}
    assert lv["time"].min() == utc("2026-03-02T17:00Z")
    assert lv["time"].max() == utc("2026-03-03T00:59Z")
    assert lv["time"].is_unique and len(lv) == 8 * 60
    inside = lv[(lv["time"] >= utc("2026-03-02T19:01Z")) & (lv["time"] < utc("2026-03-02T23:00Z"))]
    assert inside["level"].between(1.5, 2.5).all()
    assert evidence_levels(f, {"A/supply": "S1"}, readings, W0, W1, shown=0).empty
