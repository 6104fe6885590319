"""Tests of the report's SVG pictures (carpet plot, daily bars): geometry, DST days, escaping."""

from __future__ import annotations

import datetime as dt
import re

import numpy as np
import pandas as pd
import pytest

from schedcheck.outputs import svg

TZ = "Europe/Oslo"


def _utc(*texts: str) -> pd.Series:
    return pd.Series(pd.to_datetime(list(texts), utc=True, format="ISO8601")).dt.as_unit("ns")


def _rect_heights(svg_text: str, css_class: str) -> np.ndarray:
    """Heights of the rectangles of one path (``M x y h w v H h -w z`` sub-paths)."""
    m = re.search(rf'<path class="{css_class}"[^>]*\sd="([^"]*)"', svg_text)
    if m is None:
        return np.zeros(0)
    return np.array([float(v) for v in re.findall(r"v(-?[\d.]+)", m.group(1))])


def _luminance(hex_colour: str) -> float:
    """Relative luminance, WCAG 2.1 definition (W3C, "relative luminance")."""
    rgb = [int(hex_colour[i:i + 2], 16) / 255 for i in (1, 3, 5)]
    lin = [c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4 for c in rgb]
    return 0.2126 * lin[0] + 0.7152 * lin[1] + 0.0722 * lin[2]


def test_day_pieces_cuts_at_local_midnight():
    s = _utc("2026-03-02T22:00:00+01:00")
    e = _utc("2026-03-03T06:30:00+01:00")
    rows, day, y0, y1 = svg.day_pieces(s, e, TZ, dt.date(2026, 3, 2), 5)
    assert rows.tolist() == [0, 0]
    assert day.tolist() == [0, 1]
    assert y0.tolist() == [22 * 60, 0]
    assert y1.tolist() == [24 * 60, 6.5 * 60]


def test_day_pieces_clips_to_the_window():
    s = _utc("2026-02-27T12:00:00+01:00")
    e = _utc("2026-03-09T12:00:00+01:00")
    _, day, y0, y1 = svg.day_pieces(s, e, TZ, dt.date(2026, 3, 2), 3)
    assert day.tolist() == [0, 1, 2]
    assert (y1 - y0).sum() == 3 * 1440


def test_day_pieces_follow_the_wall_clock_on_dst_days():
    # EU summer time starts on the last Sunday of March at 01:00 UTC and ends on the last
    # Sunday of October at 01:00 UTC (Directive 2000/84/EC, art. 2 and 3): 29 Mar and
    # 25 Oct 2026 in Europe/Oslo.
    spring = svg.day_pieces(_utc("2026-03-29T01:00:00+01:00"), _utc("2026-03-29T04:00:00+02:00"),
                            TZ, dt.date(2026, 3, 29), 1)
    assert (spring[2].tolist(), spring[3].tolist()) == ([60.0], [240.0])  # 2 h bridged 01-04
    autumn = svg.day_pieces(
        _utc("2026-10-25T01:00:00+02:00", "2026-10-25T02:30:00+02:00"),
        _utc("2026-10-25T04:00:00+01:00", "2026-10-25T02:30:00+01:00"),
        TZ, dt.date(2026, 10, 25), 1)
    # the 4 h interval is drawn 01-04 on the clock; the hour wholly inside the repeated hour
    # ends "before" it starts on the wall clock and is not drawn (it is drawn over anyway)
    assert autumn[0].tolist() == [0]
    assert (autumn[2].tolist(), autumn[3].tolist()) == ([60.0], [240.0])


def test_carpet_area_equals_hours_of_each_state():
    runs = pd.DataFrame({
        "start": _utc("2026-03-02T00:00:00+01:00", "2026-03-02T06:15:00+01:00",
                      "2026-03-02T17:45:00+01:00", "2026-03-03T10:00:00+01:00",
                      "2026-03-03T13:00:00+01:00"),
        "end": _utc("2026-03-02T06:15:00+01:00", "2026-03-02T17:45:00+01:00",
                    "2026-03-03T10:00:00+01:00", "2026-03-03T13:00:00+01:00",
                    "2026-03-05T00:00:00+01:00"),
        "state": ["off", "run", "off", "no_data", "run"],
    })
    text = svg.carpet_svg(runs, None, None, tz=TZ, first=dt.date(2026, 3, 2),
                          last=dt.date(2026, 3, 4), title="t", pid="p")
    hours = {st: _rect_heights(text, f"st-{st}").sum() / svg.HOUR_PX
             for st in ("run", "off", "no_data")}
    assert hours == pytest.approx({"run": 11.5 + 35, "off": 6.25 + 16.25, "no_data": 3})
    # one rectangle per interval and day column, not per minute
    assert len(_rect_heights(text, "st-run")) == 3


def test_occupied_periods_outlined_and_days_off_named():
    sched = pd.DataFrame({"start": _utc("2026-03-02T07:00:00+01:00"),
                          "end": _utc("2026-03-02T17:00:00+01:00"), "kind": ["occupied"]})
    days_off = pd.DataFrame({"date": [dt.date(2026, 3, 3)], "name": ["Founders' Day"],
                             "kind": ["holiday"]})
    text = svg.carpet_svg(pd.DataFrame(columns=["start", "end", "state"]), sched, days_off,
                          tz=TZ, first=dt.date(2026, 3, 2), last=dt.date(2026, 3, 4),
                          title="t", pid="p")
    assert _rect_heights(text, "occupied").sum() / svg.HOUR_PX == pytest.approx(10)
    assert "2026-03-03: Founders&#39; Day (holiday)" in text


def test_daily_bars_heights_match_the_hours():
    daily = pd.DataFrame({"date": [dt.date(2026, 3, 2), dt.date(2026, 3, 3)],
                          "in_schedule_h": [10.0, 0.0], "in_allowance_h": [1.5, 0.0],
                          "off_schedule_h": [4.0, 24.0], "missed_h": [0.0, 0.0]})
    text = svg.daily_bars_svg(daily, first=dt.date(2026, 3, 2), last=dt.date(2026, 3, 3),
                              title="t", pid="b")
    k = 24 * svg.HOUR_PX * 0.6 / 24.0  # pixels per hour when no day exceeds 24 h
    assert _rect_heights(text, "bar-off_schedule").sum() / k == pytest.approx(28.0, abs=0.02)
    assert _rect_heights(text, "bar-in_schedule").sum() / k == pytest.approx(10.0, abs=0.02)
    assert "bar-missed" not in text


def test_a_whole_missed_day_fits_above_the_date_labels():
    # a 24 h missed day (an all-day occupied event, unit off) was drawn 24 h deep into room
    # sized for 12 h, through the date labels
    daily = pd.DataFrame({"date": [dt.date(2026, 8, 13), dt.date(2026, 8, 14)],
                          "in_schedule_h": [11.0, 0.0], "in_allowance_h": [0.5, 0.0],
                          "off_schedule_h": [0.0, 0.0], "missed_h": [0.0, 24.0]})
    text = svg.daily_bars_svg(daily, first=dt.date(2026, 8, 13), last=dt.date(2026, 8, 14),
                              title="t", pid="b")
    k = 24 * svg.HOUR_PX * 0.6 / 24.0
    (h,) = _rect_heights(text, "bar-missed")
    assert h / k == pytest.approx(24.0, abs=0.02)
    m = re.search(r'<path class="bar-missed"[^>]*\sd="M[\d.]+ ([\d.]+)', text)
    bottom = float(m.group(1)) + h
    labels = [float(y) for y in re.findall(r'<text[^>]*\sy="([\d.]+)"[^>]*>[^<]*(?:Aug|13|14)',
                                           text)]
    assert labels and min(labels) - 10 > bottom   # 10 px font: the label's top below the bar


def test_titles_are_escaped():
    text = svg.daily_bars_svg(pd.DataFrame(columns=["date", "in_schedule_h", "in_allowance_h",
                                                    "off_schedule_h", "missed_h"]),
                              first=dt.date(2026, 3, 2), last=dt.date(2026, 3, 2),
                              title='<script>alert("x")</script> & co', pid="b")
    assert "<script>" not in text
    assert "&lt;script&gt;alert(&#34;x&#34;)&lt;/script&gt; &amp; co" in text


def test_states_differ_in_lightness_not_only_hue():
    # grey-scale print keeps only luminance: running and off must be far apart, and the
    # occupied outline must stand out from both (contrast ratio per WCAG 2.1).
    run, off = _luminance(svg.INK_RUN), _luminance(svg.TINT_OFF)
    occ = _luminance(svg.LINE_OCCUPIED)
    assert (off + 0.05) / (run + 0.05) > 7
    assert (occ + 0.05) / (run + 0.05) > 3
    # in-schedule and off-schedule bars: off-schedule is also striped (pattern, not hue)
    assert 'id="p-os"' in svg._defs("p") and "stroke=\"#fff\"" in svg._defs("p")


def test_a_year_of_intervals_stays_small():
    days = 365
    first = dt.date(2026, 1, 1)
    local = pd.date_range("2026-01-01", periods=days, freq="D").tz_localize(TZ).as_unit("ns")
    on = local + pd.Timedelta("6h")
    off = local + pd.Timedelta("18h")
    edges = np.sort(np.concatenate([local.asi8, on.asi8, off.asi8]))
    edges = np.append(edges, pd.Timestamp("2027-01-01", tz=TZ).value)
    runs = pd.DataFrame({"start": pd.to_datetime(edges[:-1], utc=True),
                         "end": pd.to_datetime(edges[1:], utc=True),
                         "state": ["off", "run", "off"] * days})
    text = svg.carpet_svg(runs, None, None, tz=TZ, first=first, last=dt.date(2026, 12, 31),
                          title="t", pid="p")
    assert len(_rect_heights(text, "st-run")) == days
    assert len(text) < 60_000
