"""The demo site: its truth is whole and consistent, its files are complete, readable and
reproducible, and its planted faults are where the generator says they are."""

from __future__ import annotations

import datetime as dt
import json

import icalendar
import numpy as np
import pandas as pd
import pytest
import recurring_ical_events
from dateutil.easter import easter

from schedcheck.cli import main
from schedcheck.demo import build as demo_mod
from schedcheck.demo.plan import CALENDARS, MACHINES, UNITS
from schedcheck.durations import parse_duration
from schedcheck.errors import InputError
from schedcheck.intervals import Intervals, to_ns
from schedcheck.jobs.demo import make_demo
from schedcheck.outputs.demo_files import read_demo_truth, write_demo
from schedcheck.window import day_window
from tests.helpers import assert_tiles_window

TZ = "Europe/Oslo"
KINDS = {"holiday", "night", "clock_offset", "missed", "continuous", "setback", "over_speed"}


@pytest.fixture(scope="module")
def site(demo_site):
    return demo_site   # built once per session (tests/conftest.py)


@pytest.fixture(scope="module")
def written(demo_month):
    """A one-month demo written to disk (small and quick; the truth logic is the same)."""
    return demo_month   # written once per session (tests/conftest.py)


def _runs(site, key) -> Intervals:
    t = site.truth[key]
    return Intervals.from_frame(t[t["state"] == "run"])


def _expand(text: str, first: dt.date, last: dt.date, marked: bool | None = None) -> Intervals:
    """Expand calendar text with the reference library recurring-ical-events (PyPI), not ours;
    ``marked``: only the events with (True) or without (False) the holiday marker."""
    cal = icalendar.Calendar.from_ical(text)
    events = recurring_ical_events.of(cal).between(first, last + dt.timedelta(days=1))
    if marked is not None:
        def has(e) -> bool:
            cats = e.get("CATEGORIES")
            return cats is not None and b"OPEN-ON-HOLIDAYS" in cats.to_ical()
        events = [e for e in events if has(e) == marked]
    s = [to_ns(pd.Timestamp(e["DTSTART"].dt)) for e in events]
    e = [to_ns(pd.Timestamp(e["DTEND"].dt)) for e in events]
    return Intervals.from_arrays(np.array(s, np.int64), np.array(e, np.int64))


# -- the truth held in memory ---------------------------------------------------------------------
def test_window_spans_dst_change_and_easter(site):
    assert (site.first, site.last) == (dt.date(2026, 2, 16), dt.date(2026, 5, 17))
    # EU summer time 2026 starts on the last Sunday of March at 01:00 UTC (Directive 2000/84/EC)
    assert site.start == pd.Timestamp("2026-02-15T23:00Z")
    assert site.end == pd.Timestamp("2026-05-17T22:00Z")
    assert site.first < easter(2026) < site.last   # dateutil's Easter: 2026-04-05


def test_every_component_truth_tiles_the_window(site):
    assert set(site.truth) == {m.key for m in MACHINES}
    for key, t in site.truth.items():
        assert_tiles_window(t, site.start, site.end)
        assert set(t["state"]) == {"run", "off"}, key
        assert (t["state"].to_numpy()[1:] != t["state"].to_numpy()[:-1]).all(), key


def test_observed_truth_has_no_data_exactly_over_the_gaps(site):
    obs = demo_mod.observed_truth(site)
    for m in MACHINES:
        t = obs[obs["component"] == m.key]
        assert_tiles_window(t, site.start, site.end)
        gaps = site.gaps[site.gaps["sensor"] == m.sensor]
        nd = t[t["state"] == "no_data"]
        assert Intervals.from_frame(nd) == Intervals.from_frame(gaps), m.key
    # gateway GW-N down 09:07:30-14:41:10 for its five sensors; one flat battery for 50.7 h
    hours = (site.gaps["end"] - site.gaps["start"]).dt.total_seconds() / 3600
    assert sorted(hours.round(4).tolist()) == [5.5611] * 5 + [50.7217]


def test_planted_faults_cover_every_kind_and_a_clean_unit(site):
    assert {f.kind for f in site.faults} == KINDS
    assert site.clean_components == ["AHU-5/supply", "AHU-5/exhaust"]
    for f in site.faults:
        eps = Intervals.from_arrays([to_ns(a) for a, _ in f.episodes],
                                    [to_ns(b) for _, b in f.episodes])
        assert len(eps) == len(f.episodes), f"{f.component} {f.kind}: episodes overlap"
        assert site.start <= f.start < f.end <= site.end
        run = _runs(site, f.component)
        if f.kind == "missed":
            assert len(eps & run) == 0, f"{f.component} runs during its trip"
        else:
            assert eps - run == Intervals.empty(), f"{f.component} {f.kind}: not running"


def test_holiday_fault_is_on_norwegian_public_holidays_and_the_closure(site):
    # Norwegian public holidays 2026 inside the window, from Easter (dateutil) and the fixed
    # days of the public holidays act: Maundy Thursday (E-3), Good Friday (E-2), Easter Monday
    # (E+1), 1 May, Ascension Day (E+39); 17 May 2026 is a Sunday. 2026-05-15 is the demo's
    # own closure day.
    e = easter(2026)
    expected = sorted([e - dt.timedelta(days=3), e - dt.timedelta(days=2), e + dt.timedelta(days=1),
                       dt.date(2026, 5, 1), e + dt.timedelta(days=39), dt.date(2026, 5, 15)])
    f = next(f for f in site.faults if f.component == "AHU-1/supply" and f.kind == "holiday")
    assert list(f.dates) == [str(d) for d in expected]
    assert [a.tz_convert(TZ).date() for a, _ in f.episodes] == expected
    # an event marked OPEN-ON-HOLIDAYS (graduation on Ascension Day) is run through
    grad = Intervals.window(pd.Timestamp("2026-05-14T11:00", tz=TZ),
                            pd.Timestamp("2026-05-14T15:00", tz=TZ))
    assert grad - _runs(site, "AHU-2/supply") == Intervals.empty()
    # the other units' controllers know the holidays: AHU-5 (clean) runs on none of them
    for d in expected:
        day = Intervals.window(*day_window(d, d, TZ))
        assert len(_runs(site, "AHU-5/supply") & day) == 0, d


def test_clock_offset_moves_starts_one_hour_after_the_dst_change(site):
    run = _runs(site, "AHU-3/supply")
    starts = pd.DatetimeIndex(pd.to_datetime(run.starts, utc=True)).tz_convert(TZ)
    minutes = starts.hour * 60 + starts.minute
    before = minutes[starts.date < dt.date(2026, 3, 29)]
    after = minutes[starts.date > dt.date(2026, 3, 29)]
    # occupied from 06:30 with a 1h30 early-start allowance: a right clock starts 05:00-06:30
    assert before.min() >= 5 * 60 and before.max() <= 6 * 60 + 30
    assert after.min() >= 6 * 60 and after.max() <= 7 * 60 + 30
    f = next(f for f in site.faults if f.component == "AHU-3/supply")
    assert (f.kind, f.dates) == ("clock_offset", ("2026-03-29",))


def test_continuous_running_from_the_controls_change_to_the_end(site):
    f = next(f for f in site.faults if f.component == "AHU-4/supply" and f.kind == "continuous")
    assert f.dates == ("2026-04-20",)
    assert f.end == site.end and f.start.tz_convert(TZ).date() == dt.date(2026, 4, 20)
    assert f.hours > 24 * 27


def test_clean_and_faulty_running_against_calendars_expanded_by_a_reference_library(site):
    """Independent check: expand the written calendars with recurring-ical-events; running off
    the occupied periods +- allowances and the allowed windows is exactly the planted faults."""
    off_days = Intervals.empty()
    for d in site.days_off:
        off_days = off_days | Intervals.window(*day_window(d, d, TZ))
    for plan in UNITS:
        allowed = Intervals.empty()
        for name in plan.allowed or ("night-purge.ics",):   # the unit's own, else the site's
            allowed = allowed | _expand(site.calendars[name], site.first, site.last)
        text = site.calendars[plan.calendar]
        occ = (_expand(text, site.first, site.last, marked=False) - off_days
               | _expand(text, site.first, site.last, marked=True))
        early = parse_duration(plan.early_start or "2h").value
        late = parse_duration("30min").value
        ok = occ.shift_ends(early, late) | allowed
        for m in (m for m in MACHINES if m.unit == plan.id):
            run = _runs(site, m.key)
            faults = [f for f in site.faults if f.component == m.key]
            planted = Intervals.from_arrays(
                [to_ns(a) for f in faults if f.kind != "missed" for a, _ in f.episodes],
                [to_ns(b) for f in faults if f.kind != "missed" for _, b in f.episodes])
            off_schedule = run - ok
            # interlocked followers start/stop up to a minute after the supply fan
            assert (off_schedule - planted.shift_ends(0, 2 * 60 * 10**9)).hours() < 0.2, m.key
            if not faults:
                assert off_schedule.hours() == 0.0, m.key
                if m.role != "heat_wheel":
                    assert (occ - run).hours() == 0.0, f"{m.key} misses occupied time"


def test_months_changes_the_window_and_bad_months_are_refused():
    assert demo_mod.window_dates(1) == (dt.date(2026, 2, 16), dt.date(2026, 3, 15))
    assert demo_mod.window_dates(6)[1] == dt.date(2026, 8, 16)
    with pytest.raises(InputError, match="--months"):
        demo_mod.window_dates(0)
    with pytest.raises(InputError, match="--seed"):
        demo_mod.build_demo(seed=-1)


# -- the written files ---------------------------------------------------------------------------
def test_demo_writes_every_file(written):
    names = {p.relative_to(written.folder).as_posix() for p in written.files}
    assert names == {"site.toml", "README.txt", "truth/runs.csv", "truth/machine_runs.csv",
                     "truth/faults.json", "truth/speeds.csv", "readings/gw-north.csv.gz",
                     "readings/gw-south.csv.gz", "readings/gw-west.csv.gz",
                     "readings/gw-library.parquet", "weather/vellesund-outdoor.csv",
                     "bms/trends.csv", "truth/trends.json"} | {
                        f"calendars/{n}" for n in CALENDARS}
    assert (written.folder / "README.txt").read_text().startswith("INVENTED DEMO DATA")
    # one month (seven units and the trends export); three months are about 13.5 MB
    assert written.size_bytes < 6_000_000


def test_site_file_loads_and_calendars_are_valid(written):
    from schedcheck.inputs.site_file import load_site

    s = load_site(written.site_file)
    assert s.timezone == TZ and len(s.units) == len(UNITS) == 7
    assert len(s.components) == len(MACHINES)
    assert {c.sensor for c in s.components} == {m.sensor for m in MACHINES}
    roles = [r.role for r in s.unit("AHU-2").components]
    assert roles == ["supply_fan", "exhaust_fan", "heat_wheel"]
    # the reduced-speed units: a measured drive speed, two-speed fans, weekend ventilation
    # allowed up to half speed
    assert s.unit("AHU-6").components[0].design_rpm == 1450
    assert [c.speeds for c in s.unit("AHU-7").components] == [(0.5, 1.0)] * 2
    assert s.unit("AHU-7").schedule.allowed_limits == (None, 0.5)
    for u in s.units:
        for p in u.schedule.occupied + u.schedule.allowed:
            assert p.is_file(), p
            icalendar.Calendar.from_ical(p.read_bytes())   # parses with the reference library


def test_readings_parse_with_the_expected_sensors_and_faults_of_transport(written):
    north = pd.read_csv(written.folder / "readings/gw-north.csv.gz")
    lib = pd.read_parquet(written.folder / "readings/gw-library.parquet")
    assert list(north.columns) == ["timestamp", "sensor", "x_rms", "y_rms", "z_rms", "z_peak"]
    assert list(lib.columns) == ["timestamp", "sensor", "z_rms", "z_peak"]
    assert set(north["sensor"]) == {"VB-1011", "VB-1012", "VB-1021", "VB-1022", "VB-1023"}
    assert set(lib["sensor"]) == {"VB-1051", "VB-1052"}
    west = pd.read_csv(written.folder / "readings/gw-west.csv.gz")
    assert list(west.columns) == ["timestamp", "sensor", "x_rms", "y_rms", "z_rms", "z_peak",
                                  "rotation_hz"]
    # only the sensor of AHU-6's supply fan estimates the shaft frequency (1450 rpm x 85 %)
    hz = west.dropna(subset=["rotation_hz"])
    assert set(hz["sensor"]) == {"VB-1061"}
    assert hz["rotation_hz"].median() == pytest.approx(1450 / 60 * 0.85, rel=0.01)
    assert north["timestamp"].str.fullmatch(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ").all()
    ts = pd.to_datetime(north["timestamp"], utc=True)
    one = north[north["sensor"] == "VB-1011"].assign(t=ts)
    assert one.duplicated().sum() > 10                      # duplicates
    assert (one["t"].diff().dt.total_seconds() < 0).sum() > 10   # rows out of order
    minutes = (written.demo.end - written.demo.start).total_seconds() / 60
    assert 0.97 * minutes < one["t"].nunique() < minutes    # about 1 % lost packets
    assert (north[["x_rms", "y_rms", "z_rms", "z_peak"]] >= 0).all().all()


def test_start_transients_show_in_peaks(written):
    site = written.demo
    north = pd.read_csv(written.folder / "readings/gw-north.csv.gz")
    r = north[north["sensor"] == "VB-1011"].drop_duplicates()
    t = to_ns(pd.to_datetime(r["timestamp"], utc=True))
    run = _runs(site, "AHU-1/supply")
    starts = run.starts[run.starts > to_ns(site.start)]
    k = np.searchsorted(starts, t, side="right") - 1
    since = t - starts[np.clip(k, 0, None)]
    early = (k >= 0) & (since >= 0) & (since < 90 * 10**9) & run.contains(t)
    later = run.contains(t) & ~((k >= 0) & (since < 5 * 60 * 10**9))
    crest = (r["z_peak"] / r["z_rms"]).to_numpy()
    assert early.sum() > 10
    assert np.median(crest[early]) > 1.8 * np.median(crest[later])


def test_truth_files_read_back(written):
    truth = read_demo_truth(written.folder)
    obs = demo_mod.observed_truth(written.demo)
    pd.testing.assert_frame_equal(truth.runs, obs, check_dtype=False)
    assert truth.window == (written.demo.start, written.demo.end)
    assert truth.clean == written.demo.clean_components
    f = truth.faults_of("AHU-2/supply", "night")[0]
    assert f["dates"] == ["2026-03-09", "2026-03-10", "2026-03-11", "2026-03-12"]
    assert f["episodes"][0][0] == pd.Timestamp("2026-03-09T20:58:20Z")
    doc = json.loads((written.folder / "truth/faults.json").read_text())
    assert doc["window"]["first"] == "2026-02-16" and doc["seed"] == written.demo.seed
    assert all(f["may_also_show"] == [] for f in doc["faults"] if f["kind"] == "night")
    t = truth.component_runs("AHU-1/supply")
    assert_tiles_window(t, written.demo.start, written.demo.end)


def test_same_seed_gives_identical_files_and_another_seed_differs(written, tmp_path):
    again = make_demo(tmp_path / "again", months=1)
    for p in written.files:
        q = again.folder / p.relative_to(written.folder)
        assert p.read_bytes() == q.read_bytes(), p.name
    other = demo_mod.build_demo(seed=7, months=1)
    assert not other.truth["AHU-1/supply"].equals(written.demo.truth["AHU-1/supply"])


def test_refuses_a_folder_with_other_files(tmp_path):
    (tmp_path / "notes.txt").write_text("mine")
    with pytest.raises(InputError, match="not empty"):
        write_demo(demo_mod.build_demo(months=1), {}, tmp_path)
    assert main(["demo", str(tmp_path), "--months", "1", "--no-audit"]) == 2


def test_cli_writes_the_demo_and_rejects_bad_months(tmp_path, capsys):
    assert main(["demo", str(tmp_path / "d"), "--months", "1", "--no-audit", "--seed", "3"]) == 0
    out = capsys.readouterr().out
    assert "invented demo site" in out and "night" in out
    assert json.loads((tmp_path / "d/truth/faults.json").read_text())["seed"] == 3
    assert main(["demo", str(tmp_path / "e"), "--months", "13"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error:") and "--months" in err[0]


def test_unwritable_place_is_a_clean_error(tmp_path):
    blocker = tmp_path / "file"
    blocker.write_text("x")
    with pytest.raises(InputError, match="not a folder"):
        write_demo(demo_mod.build_demo(months=1), {}, blocker)
    with pytest.raises(InputError, match="cannot write"):
        write_demo(demo_mod.build_demo(months=1), {}, blocker / "sub")


def test_the_check_job_accepts_the_written_demo(written):
    from schedcheck.jobs.check import check_site

    report = check_site(written.site_file)
    assert report.ok, [str(p) for p in report.problems]
    assert {h.sensor for h in report.health} == {m.sensor for m in MACHINES}
    for h in report.health:   # 28 days of minutes less about 1.2 % lost; no outage before March 24
        assert 0.97 * 28 * 1440 < h.count < 28 * 1440 and h.gap_hours == 0.0, h.sensor
        assert h.duplicates_exact > 0 and h.out_of_order > 0, h.sensor


@pytest.mark.slow
def test_cli_demo_audits_what_it_wrote(tmp_path, capsys):
    """End to end on one month: the only planted fault then is AHU-2's night override."""
    assert main(["demo", str(tmp_path / "d"), "--months", "1"]) == 0
    summary = json.loads((tmp_path / "d/audit/summary.json").read_text())
    # one finding per unit and problem: each night names all three components of AHU-2
    kinds = {(c, f["kind"]) for f in summary["findings"] for c in f["components"]}
    truth = read_demo_truth(tmp_path / "d")
    # ... and the trend case of that window: one of those nights was a fan in hand
    assert [c["kind"] for c in truth.trend_cases if c["date"] <= "2026-03-15"] == ["hand_mode"]
    assert kinds == {(c, "night") for c in ("AHU-2/supply", "AHU-2/exhaust", "AHU-2/wheel")} | {
        ("AHU-2/supply", "hand_mode")}
    assert {f["unit"] for f in summary["findings"]} == {"AHU-2"}
    for comp in summary["components"]:
        planted = sum(f["hours"] for f in truth.faults_of(comp["id"]))
        # off-schedule hours within 1 % plus a minute per episode of the generator's truth
        n = sum(len(f["episodes"]) for f in truth.faults_of(comp["id"]))
        assert abs(comp["hours"]["off_schedule"] - planted) <= 0.01 * planted + n / 60, comp["id"]
