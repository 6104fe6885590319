"""The audit with building-system trends on a small seeded site (tests/small_site.py: the fan
runs 06:30-18:30 local on weekdays of 2-6 Mar 2026): an interval-sampled command log with
duplicate rows, a change-of-value status log with a long silence, and a controller clock an
hour late. Truth: the planted command and status below, against the seeded readings."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from schedcheck.jobs.audit import audit_site
from tests.small_site import FIRST, LAST, TZ, readings_frame, write_site

TRENDS = ('[trends]\nfiles = ["bms.csv"]\nnaive_time = "local"\nmax_gap = "24h"\n'
          'columns = { timestamp = "Time", point = "Point", value = "Value" }\n')
MINUTE_H = 1 / 60


def _on(t: pd.DatetimeIndex, shift_h: float = 0.0) -> np.ndarray:
    h = t.hour + t.minute / 60 - shift_h
    return (t.day_of_week < 5) & (h >= 6.5) & (h < 18.5)


def _export(shift_h: float = 0.0) -> str:
    # command: sampled every 15 min (interval log), on as the fan runs, except Thursday 5 Mar
    # from 14:00 (the fan runs on in hand, 4.5 h) and Saturday 7 Mar 08:00-12:00 (commanded,
    # never started: 4 h)
    t = pd.date_range(f"{FIRST} 00:00", f"{LAST} 23:45", freq="15min", tz=TZ)
    cmd = _on(t, shift_h)
    cmd &= ~((t.day == 5) & (t.hour >= 14 + shift_h))
    cmd |= (t.day == 7) & (t.hour >= 8 + shift_h) & (t.hour < 12 + shift_h)
    rows = [(x.strftime("%Y-%m-%d %H:%M:%S"), "AHU1.SF.CMD", "Active" if v else "Inactive")
            for x, v in zip(t, cmd, strict=True)]
    rows += rows[::40]                               # duplicates from overlapping exports
    # status: change of value, a current switch a minute behind the fan; stuck on Sunday
    # 8 Mar 10:00-16:00 while the fan is stopped (6 h); silent from Friday evening to Sunday
    for d in range(2, 7):
        a, b = 6.5 + shift_h + 1 / 60, 18.5 + shift_h + 1 / 60
        for hour, v in ((a, "ON"), (b, "OFF")):
            when = pd.Timestamp(f"2026-03-0{d}") + pd.Timedelta(hours=hour)
            rows.append((when.strftime("%Y-%m-%d %H:%M:%S"), "AHU1.SF.STS", v))
    rows += [("2026-03-08 10:00:00", "AHU1.SF.STS", "1"), ("2026-03-08 16:00:00", "AHU1.SF.STS",
                                                         "0")]
    return "Time,Point,Value\n" + "".join(f"{a},{b},{c}\n" for a, b, c in rows)


def _audit(tmp_path, shift_h: float = 0.0):
    frame = readings_frame()
    if shift_h:
        frame["timestamp"] = (pd.to_datetime(frame["timestamp"]) + pd.Timedelta(hours=shift_h)
                              ).dt.strftime("%Y-%m-%dT%H:%M:%SZ")
    path = write_site(tmp_path / "site", frame=frame, extra=TRENDS)
    path.write_text(path.read_text() + 'command = "AHU1.SF.CMD"\nstatus = "AHU1.SF.STS"\n')
    (tmp_path / "site" / "bms.csv").write_text(_export(shift_h), encoding="utf-8")
    return audit_site(path, out=tmp_path / "out")


def test_hand_mode_failed_start_and_false_status_with_their_dates_and_hours(tmp_path):
    res = _audit(tmp_path)
    f = res.findings.set_index("kind")
    assert f.loc["hand_mode", "date"] == "2026-03-05"
    assert f.loc["hand_mode", "hours"] == pytest.approx(4.5, abs=2 * MINUTE_H)
    assert "4.5 h on Thu 5 Mar while its command was off" in f.loc["hand_mode", "detail"]
    assert f.loc["failed_start", "date"] == "2026-03-07"
    assert f.loc["failed_start", "hours"] == pytest.approx(4.0, abs=2 * MINUTE_H)
    assert f.loc["false_status", "date"] == "2026-03-08"
    assert f.loc["false_status", "hours"] == pytest.approx(6.0, abs=2 * MINUTE_H)
    h = json.loads((tmp_path / "out" / "summary.json").read_text())["components"][0]["hours"]
    assert h["ran_while_commanded_off"] == pytest.approx(4.5, abs=2 * MINUTE_H)
    assert h["off_while_commanded_on"] == pytest.approx(4.0, abs=2 * MINUTE_H)
    # the status log: unknown before its first sample (Monday 00:00-06:31) and, silent from
    # Friday 18:31 for 39.5 h, known for max_gap (24 h) after it: Saturday 18:31 to Sunday
    # 10:00 is unknown
    assert h["status_unknown"] == pytest.approx((6.5 + MINUTE_H) + (15.5 - MINUTE_H),
                                                abs=2 * MINUTE_H)
    # the status is a minute behind the fan at each of 10 weekday edges, plus the stuck 6 h:
    # within a minute per transition (12)
    assert h["status_disagrees"] == pytest.approx(6.0 + 10 * MINUTE_H, abs=12 * MINUTE_H)
    ics = (tmp_path / "out" / "findings.ics").read_text()
    assert "AHU-1-hand_mode-2026-03-05" in ics
    assert "hand_mode" in (tmp_path / "out" / "findings.csv").read_text()
    assert (tmp_path / "out" / "trends.csv").is_file()


def test_a_controller_clock_an_hour_late_moves_command_and_fan_together(tmp_path):
    res = _audit(tmp_path, shift_h=1.0)
    kinds = set(res.findings["kind"])
    # the planted hand mode and failed start are still there, an hour later; no other
    got = res.findings[res.findings["kind"] == "hand_mode"]
    assert len(got) == 1 and got.iloc[0]["hours"] == pytest.approx(4.5, abs=2 * MINUTE_H)
    assert len(res.findings[res.findings["kind"] == "failed_start"]) == 1
    assert "false_status" in kinds
    tr = res.trends["AHU-1/supply"].hours()
    assert tr["ran_while_commanded_off"] == pytest.approx(4.5, abs=2 * MINUTE_H)


def test_point_names_from_the_inputs_are_escaped_in_the_report(tmp_path):
    path = write_site(tmp_path / "site", extra=TRENDS)
    name = "AHU1<b>CMD</b>&x"
    path.write_text(path.read_text() + f'command = "{name}"\n')
    export = _export().replace("AHU1.SF.CMD", name).replace("AHU1.SF.STS", "unused")
    (tmp_path / "site" / "bms.csv").write_text(export, encoding="utf-8")
    res = audit_site(path, out=tmp_path / "out")
    html = res.files["report.html"].read_text(encoding="utf-8")
    assert "trend-strip" in html and "AHU1&lt;b&gt;CMD&lt;/b&gt;&amp;x" in html
    assert "<b>CMD</b>" not in html
