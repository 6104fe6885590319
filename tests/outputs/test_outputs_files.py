"""The audit's files, written from a hand-built audit and read back."""

import datetime as dt
import json
from pathlib import Path

import icalendar
import pandas as pd
import pytest

from schedcheck.audit.run import run_audit
from schedcheck.outputs.files import finding_uid, write_audit_files
from schedcheck.outputs.report import write_report
from schedcheck.runstate.classify import ComponentStates
from schedcheck.site import (
    Component,
    EnergySettings,
    HolidaySettings,
    ReadingsSettings,
    ScheduleSettings,
    Site,
    Unit,
)
from schedcheck.window import day_window

TZ = "Europe/Oslo"


def t(text):
    return pd.Timestamp(text).tz_localize(TZ).tz_convert("UTC").as_unit("ns")


def frame(rows, label):
    return pd.DataFrame({"start": pd.DatetimeIndex([t(a) for a, _, _ in rows]),
                         "end": pd.DatetimeIndex([t(b) for _, b, _ in rows]),
                         label: [x for _, _, x in rows]})


def make_site(tmp_path: Path) -> Site:
    comps = (
        Component("supply", "AHU-9", "supply_fan", "S-1", power_kw=5.0, speed=0.8),
        Component("wheel", "AHU-9", "heat_wheel", "S-2", power_kw=0.5, speed=1.0),
    )
    unit = Unit("AHU-9", "Pier <b>House</b> & annex", ScheduleSettings(), comps)
    return Site(name="Fjordside Test Hall", timezone=TZ, path=tmp_path / "site.toml",
                readings=ReadingsSettings(files=("r.csv",)), holidays=HolidaySettings(),
                schedule=ScheduleSettings(),
                energy=EnergySettings(price=2.0, currency="NOK", co2_per_kwh=0.02),
                units=(unit,))


def audit(site, tables, schedules, start, end, **options):
    """run_audit on hand-written run-state tables (read once into ComponentStates)."""
    comps = {c.key: c for u in site.units for c in u.components}
    states = {k: ComponentStates.from_table(comps[k], f, start, end) for k, f in tables.items()}
    return run_audit(site, states, schedules, start, end, **options)


class Sched:
    def __init__(self, intervals, days_off):
        self.intervals, self.days_off = intervals, days_off


@pytest.fixture
def result(tmp_path):
    site = make_site(tmp_path)
    # autumn change in Oslo: 2026-10-25 has 25 hours (EU rule, Directive 2000/84/EC)
    start, end = day_window(dt.date(2026, 10, 24), dt.date(2026, 10, 26), TZ)
    supply = frame([("2026-10-24 00:00", "2026-10-24 08:00", "off"),
                    ("2026-10-24 08:00", "2026-10-25 12:00", "run"),
                    ("2026-10-25 12:00", "2026-10-26 07:00", "off"),
                    ("2026-10-26 07:00", "2026-10-26 17:00", "run"),
                    ("2026-10-26 17:00", "2026-10-27 00:00", "no_data")], "state")
    supply["level"] = [0.1, 2.0, 0.1, 2.0, float("nan")]
    wheel = frame([("2026-10-24 00:00", "2026-10-27 00:00", "off")], "state")
    wheel["level"] = 0.05
    sched = frame([("2026-10-26 07:00", "2026-10-26 17:00", "occupied")], "kind")
    sched["source"] = "office.ics"
    days_off = pd.DataFrame({"date": [dt.date(2026, 10, 24)], "name": ["Closed for works"],
                             "kind": ["closure"]})

    def find(res):
        return pd.DataFrame({"component": ["AHU-9/supply"], "kind": ["weekend"],
                             "start": [t("2026-10-24 08:00")], "end": [t("2026-10-25 12:00")],
                             "detail": ["Ran 28 h over the weekend <check the time program>."]})

    return audit(site, {"AHU-9/supply": supply, "AHU-9/wheel": wheel},
                     {"AHU-9": Sched(sched, days_off)}, start, end, find=find)


def test_summary_identities_and_fields(result, tmp_path):
    out = tmp_path / "out"
    files = write_audit_files(result, out)
    s = json.loads(files["summary.json"].read_text())
    assert s["schema"] == 2 and s["site"]["currency"] == "NOK"
    assert s["period"]["first_date"] == "2026-10-24" and s["period"]["last_date"] == "2026-10-26"
    assert s["period"]["hours"] == 73
    sup = next(c for c in s["components"] if c["id"] == "AHU-9/supply")
    h, sec = sup["hours"], sup["seconds"]
    # 24 + 25 + 24 hours; run 08:00 Sat -> 12:00 Sun across the 25-hour day is 29 h
    assert h["period"] == 73 and h["running"] == 39 and h["off_schedule"] == 29
    assert sec["running"] + sec["off"] + sec["no_data"] == sec["period"]
    assert sec["in_schedule"] + sec["in_allowance"] + sec["off_schedule"] == sec["running"]
    # affinity law: 5 kW * 0.8^3 = 2.56 kW; 29 h off-schedule -> 74.24 kWh, 148.48 NOK
    assert sup["energy"]["running_kw"] == pytest.approx(2.56)
    assert sup["energy"]["off_schedule_kwh"] == pytest.approx(74.24)
    assert sup["energy"]["off_schedule_cost"] == pytest.approx(148.48)
    unit = s["units"][0]
    assert (unit["id"], unit["name"], unit["state_component"]) == (
        "AHU-9", "Pier <b>House</b> & annex", "AHU-9/supply")
    assert unit["hours"] == h  # the unit's state is its supply fan's
    f = s["findings"][0]
    assert f["start"] == "2026-10-24T08:00:00+02:00" and f["end"] == "2026-10-25T12:00:00+01:00"
    assert f["hours"] == 29 and f["kwh"] == pytest.approx(74.24)
    assert s["days_off"] == [{"unit": "AHU-9", "date": "2026-10-24", "name": "Closed for works",
                              "kind": "closure"}]
    wheel = next(c for c in s["components"] if c["id"] == "AHU-9/wheel")
    assert wheel["missed_counted"] is False and wheel["hours"]["missed"] == 0


def test_daily_rows_have_the_25_hour_day(result, tmp_path):
    files = write_audit_files(result, tmp_path)
    d = pd.read_csv(files["daily.csv"], keep_default_na=False)
    sup = d[d["component"] == "AHU-9/supply"]
    assert sup["period_h"].tolist() == [24, 25, 24]
    # 00:00-12:00 on the day the clocks go back is 13 real hours (02:00-03:00 comes twice)
    assert sup["running_h"].tolist() == [16, 13, 10]
    assert sup["day_off"].tolist() == ["Closed for works", "", ""]
    assert sup["first_start"].tolist() == ["2026-10-24T08:00:00+02:00", "",
                                           "2026-10-26T07:00:00+01:00"]
    assert sup["last_stop"].tolist() == ["", "2026-10-25T12:00:00+01:00", ""]
    assert sup["off_schedule_kwh"].sum() == pytest.approx(74.24)
    for col in ("running_h", "off_h", "no_data_h"):
        assert col in d
    assert (sup["running_h"] + sup["off_h"] + sup["no_data_h"] == sup["period_h"]).all()


def test_runs_csv_covers_the_window(result, tmp_path):
    files = write_audit_files(result, tmp_path)
    r = pd.read_csv(files["runs.csv"])
    sup = r[r["component"] == "AHU-9/supply"]
    assert sup["state"].tolist() == ["off", "run", "off", "run", "no_data"]
    assert sup["hours"].sum() == 73
    assert sup["start"].iloc[0] == "2026-10-24T00:00:00+02:00"
    assert sup["end"].iloc[-1] == "2026-10-27T00:00:00+01:00"
    assert sup["level"].iloc[1] == 2.0


def test_findings_ics_reads_back_with_icalendar(result, tmp_path):
    files = write_audit_files(result, tmp_path)
    cal = icalendar.Calendar.from_ical(files["findings.ics"].read_bytes())
    events = list(cal.walk("VEVENT"))
    assert len(events) == 1
    ev = events[0]
    assert str(ev["summary"]) == "AHU-9/supply: weekend running, 29.0 h"
    assert "check the time program" in str(ev["description"])
    assert ev.decoded("dtstart") == t("2026-10-24 08:00").to_pydatetime()
    assert ev.decoded("dtend") == t("2026-10-25 12:00").to_pydatetime()
    # the UID is the finding's id (unit, kind, local date) plus the site's hash
    assert str(ev["uid"]) == finding_uid(result.site.name, "AHU-9-weekend-2026-10-24")
    assert "DTSTAMP" in ev
    assert "schedule findings" in str(cal["name"])  # RFC 7986 NAME
    # RFC 5545 3.1: content lines are folded at 75 octets and end in CRLF
    raw = files["findings.ics"].read_bytes()
    assert all(len(line) <= 75 for line in raw.split(b"\r\n"))


def test_schedule_csv_and_findings_csv(result, tmp_path):
    files = write_audit_files(result, tmp_path)
    sc = pd.read_csv(files["schedule.csv"])
    assert sc.to_dict("records") == [{"unit": "AHU-9", "kind": "occupied",
                                      "start": "2026-10-26T07:00:00+01:00",
                                      "start_date": "2026-10-26", "start_time": "07:00:00",
                                      "end": "2026-10-26T17:00:00+01:00",
                                      "end_date": "2026-10-26", "end_time": "17:00:00",
                                      "source": "office.ics"}]
    f = pd.read_csv(files["findings.csv"])
    assert list(f.columns) == ["id", "unit", "component", "components", "kind", "start",
                               "start_date", "start_time", "end", "end_date", "end_time",
                               "hours", "component_hours", "kwh", "cost", "co2_kg",
                               "kwh_by_component", "episode_start", "episode_end", "detail"]
    assert f["cost"].iloc[0] == pytest.approx(148.48)
    # run_audit alone finds no episodes (jobs.audit adds them): the cells are blank
    assert f["episode_start"].isna().all() and f["episode_end"].isna().all()


def test_report_escapes_names(result, tmp_path):
    write_audit_files(result, tmp_path)
    html = write_report(tmp_path).read_text()
    assert "Pier &lt;b&gt;House&lt;/b&gt; &amp; annex" in html
    assert "<b>House" not in html
    assert "&lt;check the time program&gt;" in html
    assert "life-safety" in html


def test_files_read_back_by_the_report_reader(result, tmp_path):
    from schedcheck.outputs import saved
    write_audit_files(result, tmp_path)
    back = saved.read_saved_audit(tmp_path)
    assert back.first_date == dt.date(2026, 10, 24) and back.last_date == dt.date(2026, 10, 26)
    assert len(back.findings) == 1


def test_findings_ics_without_findings_is_still_a_valid_calendar(tmp_path):
    # RFC 5545 section 3.6: a calendar holds at least one component
    site = make_site(tmp_path)
    start, end = day_window(dt.date(2026, 3, 2), dt.date(2026, 3, 2), TZ)
    off = frame([("2026-03-02 00:00", "2026-03-03 00:00", "off")], "state")
    empty = frame([], "kind")
    res = audit(site, {"AHU-9/supply": off, "AHU-9/wheel": off},
                    {"AHU-9": Sched(empty, None)}, start, end, find=lambda r: None)
    files = write_audit_files(res, tmp_path)
    cal = icalendar.Calendar.from_ical(files["findings.ics"].read_bytes())
    assert list(cal.walk("VEVENT")) == []
    assert len(cal.walk("VJOURNAL")) == 1
    assert pd.read_csv(files["findings.csv"]).empty


def test_unit_without_a_fan_is_told_that_missed_operation_is_not_checked(tmp_path):
    # a heat wheel need not run through occupied periods, so a unit monitored only by its wheel
    # has no missed operation at all: the audit says so instead of a silent 0.0
    import dataclasses

    site = make_site(tmp_path)
    unit = site.units[0]
    wheel_only = dataclasses.replace(unit, components=unit.components[1:])
    site = dataclasses.replace(site, units=(wheel_only,))
    start, end = day_window(dt.date(2026, 3, 2), dt.date(2026, 3, 2), TZ)
    off = frame([("2026-03-02 00:00", "2026-03-03 00:00", "off")], "state")
    occ = frame([("2026-03-02 07:00", "2026-03-02 17:00", "occupied")], "kind")
    occ["source"] = "office.ics"
    res = audit(site, {"AHU-9/wheel": off}, {"AHU-9": Sched(occ, None)}, start, end,
                    find=lambda r: None)
    acc = res.components[0].account
    assert acc.ns["missed"] == 0 and acc.ns["occupied_off"] == 10 * 3600 * 10**9
    assert any(w.startswith("AHU-9: no fan is monitored") for w in res.warnings)
    # a unit with a fan gets no such line
    res = audit(make_site(tmp_path), {"AHU-9/supply": off, "AHU-9/wheel": off},
                    {"AHU-9": Sched(occ, None)}, start, end, find=lambda r: None)
    assert not any("no fan is monitored" in w for w in res.warnings)
