"""outputs.instants: one rounding rule for every file, local date and time columns, --excel."""

import datetime as dt

import icalendar
import numpy as np
import pandas as pd

from schedcheck.outputs.files import write_audit_files
from schedcheck.outputs.instants import local_iso, local_iso_many, to_second, with_local_columns
from schedcheck.window import day_window
from tests.outputs.test_outputs_files import TZ, Sched, audit, frame, make_site


def test_to_second_rounds_half_up():
    base = pd.Timestamp("2026-03-02 06:00:00", tz="UTC")
    assert to_second(base + pd.Timedelta("499ms")) == base
    assert to_second(base + pd.Timedelta("500ms")) == base + pd.Timedelta("1s")
    assert to_second(base + pd.Timedelta("999ms")) == base + pd.Timedelta("1s")
    assert local_iso(base + pd.Timedelta("700ms"), TZ) == "2026-03-02T07:00:01+01:00"


def test_the_repeated_autumn_hour_has_one_reading_each_side():
    # Europe/Oslo's change back on 2026-10-25 (IANA tz database: CEST ends 01:00 UTC, clocks
    # go from 03:00 to 02:00): 00:30 UTC is 02:30+02:00 and 01:30 UTC is 02:30+01:00
    first = pd.Timestamp("2026-10-25T00:30:00.600Z")
    second = pd.Timestamp("2026-10-25T01:30:00.200Z")
    assert local_iso(first, "Europe/Oslo") == "2026-10-25T02:30:01+02:00"
    assert local_iso(second, "Europe/Oslo") == "2026-10-25T02:30:00+01:00"


def test_many_instants_read_as_each_one_alone():
    # a year of odd instants in zones with half-hour, 45-minute and 30-minute summer offsets
    rng = np.random.default_rng(14)
    ns = rng.integers(pd.Timestamp("2025-01-01").value, pd.Timestamp("2026-01-01").value, 3000)
    times = list(pd.to_datetime(ns, utc=True)) + [None, pd.NaT]
    for tz in ("Europe/Oslo", "UTC", "America/St_Johns", "Asia/Kathmandu",
               "Australia/Lord_Howe"):
        assert local_iso_many(times, tz) == [local_iso(t, tz) for t in times], tz
        assert local_iso_many(pd.Series(times[:-2]), tz) == [local_iso(t, tz)
                                                              for t in times[:-2]]
    assert local_iso_many([], TZ) == []


def test_local_columns_follow_the_iso_text_across_the_autumn_change():
    f = pd.DataFrame({"start": ["2026-10-25T02:30:00+02:00", "2026-10-25T02:30:00+01:00", ""]})
    out = with_local_columns(f, ("start",))
    assert list(out.columns) == ["start", "start_date", "start_time"]
    assert out["start_time"].tolist() == ["02:30:00", "02:30:00", ""]
    assert out["start_date"].tolist() == ["2026-10-25", "2026-10-25", ""]


def odd_second_result(tmp_path):
    """A finding whose ends fall on fractions of a second (readings are not on the second)."""
    site = make_site(tmp_path)
    start, end = day_window(dt.date(2026, 3, 7), dt.date(2026, 3, 7), TZ)
    a = pd.Timestamp("2026-03-07 08:00:00.600", tz=TZ).tz_convert("UTC")
    b = pd.Timestamp("2026-03-07 12:00:00.400", tz=TZ).tz_convert("UTC")
    supply = frame([("2026-03-07 00:00", "2026-03-08 00:00", "off")], "state")
    wheel = supply.copy()
    supply = pd.DataFrame({"start": pd.DatetimeIndex([start, a, b]),
                           "end": pd.DatetimeIndex([a, b, end]), "state": ["off", "run", "off"]})

    def find(res):
        return pd.DataFrame({"component": ["AHU-9/supply"], "kind": ["weekend"],
                             "start": [a], "end": [b], "detail": ["Ran on a Saturday."]})

    return audit(site, {"AHU-9/supply": supply, "AHU-9/wheel": wheel},
                 {"AHU-9": Sched(frame([], "kind").assign(source=[]), None)}, start, end,
                 find=find)


def test_findings_ics_csv_and_summary_carry_the_same_instants(tmp_path):
    import json

    files = write_audit_files(odd_second_result(tmp_path), tmp_path)
    csv = pd.read_csv(files["findings.csv"]).iloc[0]
    summ = json.loads(files["summary.json"].read_text())["findings"][0]
    ev = icalendar.Calendar.from_ical(files["findings.ics"].read_bytes()).walk("VEVENT")[0]
    ics_start = pd.Timestamp(ev["dtstart"].dt).tz_convert(TZ).isoformat()
    ics_end = pd.Timestamp(ev["dtend"].dt).tz_convert(TZ).isoformat()
    # 08:00:00.6 rounds up to :01, 12:00:00.4 rounds down to :00, in every file
    assert csv["start"] == summ["start"] == ics_start == "2026-03-07T08:00:01+01:00"
    assert csv["end"] == summ["end"] == ics_end == "2026-03-07T12:00:00+01:00"
    runs = pd.read_csv(files["runs.csv"])
    assert "2026-03-07T08:00:01+01:00" in set(runs["start"]) | set(runs["end"])


def test_findings_ics_names_the_site_as_location_and_calendar(tmp_path):
    files = write_audit_files(odd_second_result(tmp_path), tmp_path)
    cal = icalendar.Calendar.from_ical(files["findings.ics"].read_bytes())
    assert str(cal["x-wr-calname"]) == str(cal["name"]) == "Fjordside Test Hall: schedule findings"
    assert str(cal.walk("VEVENT")[0]["location"]) == "Fjordside Test Hall"


def test_excel_csv_has_a_byte_order_mark_and_reads_back(tmp_path):
    from schedcheck.outputs import saved
    from schedcheck.outputs.report import write_report

    res = odd_second_result(tmp_path)
    files = write_audit_files(res, tmp_path, excel=True)
    for name in ("daily.csv", "runs.csv", "findings.csv", "schedule.csv"):
        assert files[name].read_bytes().startswith(b"\xef\xbb\xbf"), name
    back = saved.read_saved_audit(tmp_path)
    assert back.findings["start"].iloc[0] == pd.Timestamp("2026-03-07 07:00:01", tz="UTC")
    assert "start_date" in back.findings.columns
    assert write_report(tmp_path).is_file()
    plain = write_audit_files(res, tmp_path / "plain")
    assert not plain["runs.csv"].read_bytes().startswith(b"\xef\xbb\xbf")
