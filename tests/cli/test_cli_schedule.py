"""`schedcheck schedule`: formats, options and errors, on a small fictional site in tmp_path."""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import pytest

from schedcheck.cli import main

OFFICES = """BEGIN:VCALENDAR
VERSION:2.0
PRODID:-//Tindevik Library//occupancy//EN
BEGIN:VEVENT
UID:weekdays@tindevik.example
SUMMARY:Opening hours
DTSTART;TZID=Europe/Oslo:20260105T080000
DTEND;TZID=Europe/Oslo:20260105T160000
RRULE:FREQ=WEEKLY;BYDAY=MO,TU,WE,TH,FR
END:VEVENT
BEGIN:VEVENT
UID:easter-reading@tindevik.example
SUMMARY:Easter reading room
CATEGORIES:OPEN-ON-HOLIDAYS
DTSTART;TZID=Europe/Oslo:20260402T100000
DTEND;TZID=Europe/Oslo:20260402T140000
END:VEVENT
END:VCALENDAR
"""

PURGE = """BEGIN:VCALENDAR
VERSION:2.0
PRODID:-//Tindevik Library//purge//EN
BEGIN:VEVENT
UID:purge@tindevik.example
SUMMARY:Night purge
DTSTART:20260101T030000
DTEND:20260101T050000
RRULE:FREQ=DAILY
END:VEVENT
END:VCALENDAR
"""

SITE = """[site]
name = "Tindevik Library"
timezone = "Europe/Oslo"

[readings]
files = ["readings/*.csv"]

[holidays]
country = "NO"
closed = ["2026-04-01"]

[schedule]
occupied = "offices.ics"
allowed = ["purge.ics"]
early_start = "1h"
late_stop = "30min"

[[unit]]
id = "AHU-1"
name = "Reading hall"

[[unit.component]]
id = "supply"
role = "supply_fan"
sensor = "VS-1"
power_kw = 4.0
speed = 0.9

[[unit]]
id = "AHU-2"
name = "Stacks"
schedule = { allowed = [], early_start = "2h" }

[[unit.component]]
id = "supply"
role = "supply_fan"
sensor = "VS-2"
power_kw = 3.0
speed = 0.8
"""


@pytest.fixture
def site(tmp_path: Path) -> Path:
    (tmp_path / "offices.ics").write_text(OFFICES.replace("\n", "\r\n"), encoding="utf-8")
    (tmp_path / "purge.ics").write_text(PURGE, encoding="utf-8")
    (tmp_path / "readings").mkdir()
    (tmp_path / "readings" / "r.csv").write_text(
        "timestamp,sensor,x_rms\n2026-03-02T06:00:00Z,VS-1,0.01\n", encoding="utf-8")
    path = tmp_path / "site.toml"
    path.write_text(SITE, encoding="utf-8")
    return path


def run(capsys, *args) -> tuple[int, str, str]:
    rc = main(["schedule", *map(str, args)])
    out = capsys.readouterr()
    return rc, out.out, out.err


def test_json_has_exactly_the_agreed_shape(site, capsys):
    rc, out, err = run(capsys, site, "--unit", "AHU-1", "--from", "2026-03-31", "--to",
                       "2026-04-02", "--format", "json")
    assert rc == 0, err
    records = json.loads(out)
    for r in records:
        if r["kind"] == "holiday":
            assert set(r) == {"unit", "kind", "date", "name"}
        else:
            assert set(r) == {"unit", "kind", "start", "end", "source"}
            assert r["kind"] in ("occupied", "allowance", "allowed")
    simple = [(r["kind"], r.get("start", r.get("date")), r.get("end", ""),
               r.get("source", r.get("name"))) for r in records]
    assert simple == [
        ("allowed", "2026-03-31T03:00:00+02:00", "2026-03-31T05:00:00+02:00", "Night purge"),
        ("allowance", "2026-03-31T07:00:00+02:00", "2026-03-31T08:00:00+02:00", "early start 1h"),
        ("occupied", "2026-03-31T08:00:00+02:00", "2026-03-31T16:00:00+02:00", "Opening hours"),
        ("allowance", "2026-03-31T16:00:00+02:00", "2026-03-31T16:30:00+02:00",
         "late stop 30min"),
        ("holiday", "2026-04-01", "", "site closure"),
        ("allowed", "2026-04-01T03:00:00+02:00", "2026-04-01T05:00:00+02:00", "Night purge"),
        ("holiday", "2026-04-02", "", "Maundy Thursday"),
        ("allowed", "2026-04-02T03:00:00+02:00", "2026-04-02T05:00:00+02:00", "Night purge"),
        ("allowance", "2026-04-02T09:00:00+02:00", "2026-04-02T10:00:00+02:00", "early start 1h"),
        ("occupied", "2026-04-02T10:00:00+02:00", "2026-04-02T14:00:00+02:00",
         "Easter reading room"),
        ("allowance", "2026-04-02T14:00:00+02:00", "2026-04-02T14:30:00+02:00",
         "late stop 30min"),
    ]


def test_csv_has_the_json_fields(site, capsys):
    rc, out, _ = run(capsys, site, "--from", "2026-04-01", "--to", "2026-04-01",
                     "--format", "csv")
    assert rc == 0
    rows = list(csv.DictReader(io.StringIO(out)))
    assert list(rows[0]) == ["unit", "kind", "start", "start_date", "start_time", "end",
                             "end_date", "end_time", "source", "date", "name"]
    timed = next(r for r in rows if r["start"])
    assert (timed["start_date"], timed["start_time"]) == (timed["start"][:10],
                                                          timed["start"][11:19])
    assert {(r["unit"], r["kind"]) for r in rows} == {
        ("AHU-1", "holiday"), ("AHU-1", "allowed"), ("AHU-2", "holiday")}


def test_per_unit_override_applies(site, capsys):
    rc, out, _ = run(capsys, site, "--unit", "AHU-2", "--from", "2026-03-31", "--to",
                     "2026-03-31", "--format", "json")
    kinds = [(r["kind"], r["source"]) for r in json.loads(out)]
    assert rc == 0 and kinds == [("allowance", "early start 2h"), ("occupied", "Opening hours"),
                                 ("allowance", "late stop 30min")]


def test_table_lists_rows_with_weekday_and_days_off(site, capsys):
    rc, out, _ = run(capsys, site, "--from", "2026-04-01", "--to", "2026-04-02")
    assert rc == 0
    assert "Tindevik Library" in out and "Maundy Thursday" in out and "day off" in out
    assert "Thu" in out and "Easter reading room" in out


def test_only_from_runs_to_end_of_month(site, capsys):
    rc, out, _ = run(capsys, site, "--unit", "AHU-1", "--from", "2026-02-27", "--format", "json")
    assert rc == 0   # the daily night purge shows the last date covered
    starts = sorted(r["start"][:10] for r in json.loads(out))
    assert (starts[0], starts[-1]) == ("2026-02-27", "2026-02-28")


@pytest.mark.parametrize("args,needle", [
    (["--format", "xml"], "--format"),
    (["--from", "2026-13-01"], "--from"),
    (["--unit", "AHU-9"], "AHU-9"),
    (["--from", "2026-03-10", "--to", "2026-03-01"], "before"),
    (["--from", "2026-01-01", "--to", "2029-12-31"], "days long"),
    # far dates overflowed the nanosecond clock: internal errors with exit status 1
    (["--from", "9999-12-30", "--to", "9999-12-31"], "--from: 9999-12-30 is out of range"),
    (["--from", "2026-01-01", "--to", "0001-01-01"], "--to: 0001-01-01 is out of range"),
])
def test_bad_options_are_one_line_errors(site, capsys, args, needle):
    rc, out, err = run(capsys, site, *args)
    assert rc == 2 and out == ""
    assert err.startswith("error: ") and err.count("\n") == 1 and needle in err


def test_hostile_calendar_names_file_line_and_event(site, capsys):
    bad = OFFICES.replace("RRULE:FREQ=WEEKLY;BYDAY=MO,TU,WE,TH,FR", "RRULE:FREQ=DAILY;INTERVAL=0")
    (site.parent / "offices.ics").write_text(bad, encoding="utf-8")
    rc, _, err = run(capsys, site, "--from", "2026-03-02", "--to", "2026-03-06")
    assert rc == 2 and err.count("\n") == 1 and "Traceback" not in err
    assert "offices.ics:4: event 'Opening hours' (weekdays@tindevik.example)" in err
    assert "INTERVAL=0" in err


def test_missing_calendar_file(site, capsys):
    (site.parent / "purge.ics").unlink()
    rc, _, err = run(capsys, site, "--from", "2026-03-02", "--to", "2026-03-06")
    assert rc == 2 and "purge.ics" in err and err.count("\n") == 1


def test_purge_starting_in_the_spring_gap_is_kept_not_warned_away(site, capsys):
    # 02:30-03:00 on 2026-03-29 in Oslo: the start is read with the offset before the gap
    # (RFC 5545 section 3.3.5) and the window keeps its written half hour
    gap = PURGE.replace("T030000", "T023000").replace("T050000", "T030000")
    (site.parent / "purge.ics").write_text(gap, encoding="utf-8")
    rc, out, err = run(capsys, site, "--unit", "AHU-1", "--from", "2026-03-29", "--to",
                       "2026-03-29", "--format", "json")
    assert rc == 0 and err == ""
    rows = [r for r in json.loads(out) if r["kind"] == "allowed"]
    assert [(r["start"], r["end"]) for r in rows] == [
        ("2026-03-29T03:30:00+02:00", "2026-03-29T04:00:00+02:00")]


def test_schedule_works_before_any_readings_exist_but_check_does_not(site, capsys):
    # a site being set up: calendars written, no readings exported yet
    (site.parent / "readings" / "r.csv").unlink()
    rc, out, err = run(capsys, site, "--unit", "AHU-1", "--from", "2026-03-31", "--to",
                       "2026-03-31", "--format", "json")
    assert rc == 0, err
    rows = json.loads(out)
    assert {r["kind"] for r in rows} >= {"occupied", "allowance"}
    assert main(["check", str(site)]) == 2
    assert "matches no file" in capsys.readouterr().err
