"""Domain assertion helpers shared by the tests (keep tests short and their failures readable)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from schedcheck.intervals import NS_PER_H, Intervals


def utc(text: str) -> pd.Timestamp:
    """A UTC instant from ISO text (offset or Z required)."""
    ts = pd.Timestamp(text)
    assert ts.tzinfo is not None, f"test instant {text!r} needs an offset"
    return ts.tz_convert("UTC").as_unit("ns")


def frame(rows, tz: str | None = None) -> pd.DataFrame:
    """DataFrame of (start, end, *labels) rows from ISO strings, converted to UTC."""
    rows = list(rows)
    width = len(rows[0]) if rows else 2
    cols = ["start", "end", "state", "level"][:width] if width <= 4 else None
    df = pd.DataFrame(rows, columns=cols)
    for c in ("start", "end"):
        df[c] = pd.to_datetime(df[c], utc=True).dt.as_unit("ns") if len(df) else df[c]
    return df


def assert_intervals_equal(actual: Intervals, expected, msg: str = "") -> None:
    """Two interval sets are the same set (``expected``: Intervals or (start, end) ISO pairs)."""
    if not isinstance(expected, Intervals):
        expected = Intervals.from_arrays(
            np.array([utc(s).value for s, _ in expected], dtype=np.int64),
            np.array([utc(e).value for _, e in expected], dtype=np.int64),
        )
    if actual != expected:
        a = actual.to_frame().astype(str).values.tolist()
        e = expected.to_frame().astype(str).values.tolist()
        raise AssertionError(f"{msg}\nintervals differ:\n actual   {a}\n expected {e}")


def assert_hours(actual: float, expected: float, tol: float = 1e-9, msg: str = "") -> None:
    """An hour figure equals the expected one within ``tol`` hours."""
    assert abs(actual - expected) <= tol, f"{msg} hours {actual!r} != {expected!r} (tol {tol})"


def assert_tiles_window(df: pd.DataFrame, start, end) -> None:
    """A labelled interval table covers ``[start, end)`` exactly: sorted, contiguous, no overlap."""
    assert len(df) > 0, "empty interval table"
    s = pd.DatetimeIndex(df["start"])
    e = pd.DatetimeIndex(df["end"])
    assert s[0] == pd.Timestamp(start), f"starts at {s[0]}, window at {start}"
    assert e[-1] == pd.Timestamp(end), f"ends at {e[-1]}, window at {end}"
    assert (e > s).all(), "empty or reversed interval"
    assert (s[1:] == e[:-1]).all(), "gap or overlap between rows"


def hours_of(df: pd.DataFrame) -> float:
    """Total length of a DataFrame's rows [h]."""
    return (
        float(
            (pd.DatetimeIndex(df["end"]) - pd.DatetimeIndex(df["start"])).total_seconds().sum()
            / 3600.0
        )
        if len(df)
        else 0.0
    )


__all__ = [
    "utc",
    "frame",
    "assert_intervals_equal",
    "assert_hours",
    "assert_tiles_window",
    "hours_of",
    "NS_PER_H",
]


def weekday_calendar(tz: str, uid: str, summary: str = "Office hours") -> str:
    """An iCalendar text (CRLF lines): one event Mon-Fri 07:00-18:00 in zone ``tz``, from
    5 Jan 2026, with UID ``uid@test.invalid`` so each test site's file is its own."""
    return (
        "BEGIN:VCALENDAR\r\nVERSION:2.0\r\n"
        "PRODID:-//test//schedcheck//EN\r\n"
        "BEGIN:VEVENT\r\n"
        f"UID:{uid}@test.invalid\r\n"
        "DTSTAMP:20260101T000000Z\r\n"
        f"DTSTART;TZID={tz}:20260105T070000\r\n"
        f"DTEND;TZID={tz}:20260105T180000\r\n"
        "RRULE:FREQ=WEEKLY;BYDAY=MO,TU,WE,TH,FR\r\n"
        f"SUMMARY:{summary}\r\n"
        "END:VEVENT\r\nEND:VCALENDAR\r\n"
    )


def local_to_utc(text: str, tz: str) -> pd.Timestamp:
    """A naive local time in zone ``tz`` as a UTC instant."""
    return pd.Timestamp(text).tz_localize(tz).tz_convert("UTC")


def run_cli(args, capsys) -> tuple[int, str, str]:
    """Run ``schedcheck ARGS``; return exit status, stdout and stderr."""
    from schedcheck.cli import main

    code = main([str(a) for a in args])
    out = capsys.readouterr()
    return code, out.out, out.err
