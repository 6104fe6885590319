"""The demo's reduced-speed units against the generator's saved truth (truth/speeds.csv,
truth/runs.csv, truth/faults.json): AHU-6 set back to 30 % every night (a measured and an
estimated speed), AHU-7 with two speeds and weekend ventilation allowed at low speed."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from schedcheck.demo.speed_units import (
    DAY_SPEED,
    HIGH,
    HIGH_WEEKENDS,
    LOW,
    SETBACK_FROM,
    SETBACK_SPEED,
)
from schedcheck.intervals import Intervals, to_ns
from schedcheck.outputs.demo_files import read_demo_truth

TZ = "Europe/Oslo"
NEW = ("AHU-6/supply", "AHU-6/exhaust", "AHU-7/supply", "AHU-7/exhaust")


@pytest.fixture(scope="module")
def audit(demo_audit):
    summary = json.loads((demo_audit.result.outdir / "summary.json").read_text("utf-8"))
    return {"truth": read_demo_truth(demo_audit.folder), "summary": summary,
            "comps": {c["id"]: c for c in summary["components"]},
            "outdir": demo_audit.result.outdir}


def true_hours_by_speed(truth, key: str) -> dict[float, float]:
    """Running hours per true speed: each run holds the speed of the last step at or before
    its start (truth/speeds.csv)."""
    runs = truth.component_runs(key)
    runs = runs[runs["state"] == "run"]
    steps = truth.speeds[truth.speeds["component"] == key]
    k = np.searchsorted(to_ns(steps["start"]), to_ns(runs["start"]), side="right") - 1
    speed = steps["speed"].to_numpy()[k]
    hours = ((runs["end"] - runs["start"]).dt.total_seconds() / 3600).to_numpy()
    return {float(v): float(hours[speed == v].sum()) for v in np.unique(speed)}


def test_truth_files_hold_the_new_units_speeds_and_faults(audit):
    truth = audit["truth"]
    assert set(truth.speeds["component"]) >= set(NEW)
    for key in NEW:
        assert set(true_hours_by_speed(truth, key)) == (
            {SETBACK_SPEED, DAY_SPEED} if key.startswith("AHU-6") else {LOW, HIGH})
    kinds = {(f["component"], f["kind"]) for f in truth.faults if f["unit"] in ("AHU-6", "AHU-7")}
    assert kinds == {("AHU-6/supply", "setback"), ("AHU-6/exhaust", "setback"),
                     ("AHU-7/supply", "over_speed"), ("AHU-7/exhaust", "over_speed")}
    assert all(f["kwh"] > 0 for f in truth.faults if f["unit"] in ("AHU-6", "AHU-7"))


@pytest.mark.parametrize("key", NEW)
def test_hours_per_speed_level_match_the_truth_within_one_percent(audit, key):
    want = true_hours_by_speed(audit["truth"], key)
    got = {round(r["speed"], 2): r["hours"] for r in audit["comps"][key]["hours"]["by_speed"]}
    assert set(got) == set(want), (got, want)
    for v, h in want.items():
        assert got[v] == pytest.approx(h, rel=0.01), (key, v)


@pytest.mark.parametrize("key,source", [("AHU-6/supply", "measured"),
                                        ("AHU-7/supply", "configured"),
                                        ("AHU-7/exhaust", "configured")])
def test_off_schedule_energy_matches_the_truth_within_one_percent(audit, key, source):
    c = audit["comps"][key]
    (fault,) = audit["truth"].faults_of(key)
    assert c["speed_source"] == source
    assert c["energy"]["off_schedule_kwh"] == pytest.approx(fault["kwh"], rel=0.01)
    assert c["hours"]["off_schedule"] == pytest.approx(fault["hours"], rel=0.01)


def test_the_estimated_speed_is_labelled_with_a_range_that_holds_the_truth(audit):
    c = audit["comps"]["AHU-6/exhaust"]
    (fault,) = audit["truth"].faults_of("AHU-6/exhaust")
    low = c["speed_levels"][0]
    assert c["speed_source"] == "estimated" and low["source"] == "estimated"
    assert low["low"] < SETBACK_SPEED < low["high"]
    # priced at the estimate, exactly: the truth's energy scaled by the cube law (exponent 3)
    assert c["energy"]["off_schedule_kwh"] == pytest.approx(
        fault["kwh"] * (low["speed"] / SETBACK_SPEED) ** 3, rel=0.01)
    page = (audit["outdir"] / "report.html").read_text("utf-8")
    assert "estimated from the vibration level" in page


def test_setback_findings_name_the_nights_and_their_times(audit):
    truth = audit["truth"]
    found = [f for f in audit["summary"]["findings"] if f["unit"] == "AHU-6"]
    assert {f["kind"] for f in found} == {"setback"}
    (fault,) = truth.faults_of("AHU-6/supply")
    assert [f["date"] for f in found] == fault["dates"]
    assert fault["dates"][0] == str(SETBACK_FROM)
    eps = sorted(fault["episodes"])
    for f, (a, b) in zip(sorted(found, key=lambda f: f["start"]), eps, strict=True):
        start, end = pd.Timestamp(f["start"]), pd.Timestamp(f["end"])
        assert abs(start - a) <= pd.Timedelta("2min") and abs(end - b) <= pd.Timedelta("2min")
        assert set(f["components"]) == {"AHU-6/supply", "AHU-6/exhaust"}
        assert "set back to about 30% speed from 22:00 to" in f["detail"]
        assert f"{start.tz_convert(TZ):%H:%M}" == "22:00"
        # unit-hours: the whole night, also where a holiday's midnight cuts it in two
        assert f["hours"] == pytest.approx((b - a).total_seconds() / 3600, abs=0.05)


def test_allowed_weekend_ventilation_at_low_speed_is_not_off_schedule(audit):
    truth = audit["truth"]
    found = [f for f in audit["summary"]["findings"] if f["unit"] == "AHU-7"]
    assert {f["kind"] for f in found} == {"over_speed"}
    assert sorted(f["date"] for f in found) == [str(d) for d in HIGH_WEEKENDS]
    for key in ("AHU-7/supply", "AHU-7/exhaust"):
        c = audit["comps"][key]
        (fault,) = truth.faults_of(key)
        # the low-speed weekends (135 h or so) are allowed: only the high-speed days count
        low = true_hours_by_speed(truth, key)[LOW]
        assert low > 100
        assert c["hours"]["off_schedule"] == pytest.approx(fault["hours"], rel=0.01)
    # every weekend-ventilation run of the truth lies inside the allowed windows
    runs = truth.component_runs("AHU-7/supply")
    runs = runs[(runs["state"] == "run")]
    local = runs["start"].dt.tz_convert(TZ)
    wk = runs[local.dt.day_of_week >= 5]
    assert len(wk) > 20
    assert (wk["start"].dt.tz_convert(TZ).dt.hour >= 9).all()
    assert (wk["end"].dt.tz_convert(TZ).dt.hour < 15).all()


def test_the_report_shades_reduced_speed_and_lists_hours_by_speed(audit):
    page = (audit["outdir"] / "report.html").read_text("utf-8")
    for key in NEW:   # hours by speed, per component, as summary.json gives them
        low = audit["comps"][key]["hours"]["by_speed"][0]
        assert f"{low['speed']:.0%}: {low['hours']:,.1f} h" in page, key
    carpet = page[page.index('aria-label="AHU-6/supply'):]
    carpet = carpet[:carpet.index("</svg>")]
    assert 'class="st-run_low"' in carpet and "running at reduced speed" in carpet


def test_every_minute_of_the_new_units_is_counted_once(audit):
    truth = audit["truth"]
    w0, w1 = truth.window
    for key in NEW:
        h = audit["comps"][key]["hours"]
        assert h["running"] + h["off"] + h["no_data"] == pytest.approx(h["period"], abs=1e-6)
        true_run = Intervals.from_frame(truth.component_runs(key).query("state == 'run'"))
        assert h["running"] == pytest.approx(true_run.clip(to_ns(w0), to_ns(w1)).hours(),
                                             rel=0.01)
