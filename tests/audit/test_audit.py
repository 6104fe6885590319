"""End to end on the demo: the audit's figures and findings against the generator's saved truth.

The demo (``schedcheck demo``) plants faults in invented data and saves what really happened
(``truth/runs.csv``, ``truth/faults.json``). These tests audit it once per session and compare
with that truth, never with a snapshot of the tool's own output. Tolerance (the issue's
target): 1 % of the true figure plus one minute per true state change of the component.
"""

import datetime as dt
import json

import numpy as np
import pandas as pd
import pytest

from schedcheck.intervals import NS_PER_H, Intervals, to_ns

pytestmark = pytest.mark.slow

TZ = "Europe/Oslo"
MIN_H = 1 / 60


@pytest.fixture(scope="module")
def demo(demo_audit):
    """The session's demo audit (tests/conftest.py) with its output files read back."""
    from schedcheck.outputs.demo_files import read_demo_truth

    result = demo_audit.result
    out = result.outdir
    return {
        "result": result,
        "truth": read_demo_truth(demo_audit.folder),
        "summary": json.loads((out / "summary.json").read_text()),
        "daily": pd.read_csv(out / "daily.csv", keep_default_na=False),
        "schedule": pd.read_csv(out / "schedule.csv"),
        "findings": component_parts(json.loads((out / "summary.json").read_text())),
        "unit_findings": pd.read_csv(out / "findings.csv"),
        "out": out,
    }


def component_parts(summary: dict) -> pd.DataFrame:
    """One row per component of each unit finding (its ``parts``), with the finding's kind, so
    planted faults, which the generator records per component, are matched per component."""
    rows = [{"id": f["id"], "kind": f["kind"], "detail": f["detail"], **part}
            for f in summary["findings"] for part in f["parts"]]
    return pd.DataFrame(rows, columns=["id", "component", "kind", "start", "end", "hours", "kwh",
                                       "detail"])


def components(demo):
    return {c["id"]: c for c in demo["summary"]["components"]}


def true_sets(truth, key):
    t = truth.component_runs(key)
    return {s: Intervals.from_frame(t[t["state"] == s]) for s in ("run", "off", "no_data")}


def changes(truth, key) -> int:
    t = truth.component_runs(key)
    return int((t["state"].to_numpy()[1:] != t["state"].to_numpy()[:-1]).sum())


def tolerance(true_h: float, n_changes: int) -> float:
    return 0.01 * abs(true_h) + n_changes * MIN_H


def schedule_sets(demo, unit):
    s = demo["schedule"]
    s = s[s["unit"] == unit]
    frame = pd.DataFrame({"start": pd.to_datetime(s["start"], utc=True),
                          "end": pd.to_datetime(s["end"], utc=True), "kind": s["kind"]})
    occ = Intervals.from_frame(frame[frame["kind"] == "occupied"])
    allow = Intervals.from_frame(frame[frame["kind"] != "occupied"])
    return occ, allow


def over_limit_hours(demo, truth, key: str, unit: str) -> float:
    """True running above ``max_speed`` in the allowed windows that carry one (the demo's
    weekend ventilation, allowed up to 50 %): off schedule although inside an allowed window."""
    from schedcheck.demo.plan import CALENDARS, LIMITED

    s = demo["schedule"]
    out = 0.0
    for cal, limit in LIMITED.items():
        names = {r.summary for r in CALENDARS[cal][1]}
        w = s[(s["unit"] == unit) & (s["kind"] == "allowed") & s["source"].isin(names)]
        if w.empty or truth.speeds is None:
            continue
        win = Intervals.from_frame(pd.DataFrame({"start": pd.to_datetime(w["start"], utc=True),
                                                 "end": pd.to_datetime(w["end"], utc=True)}))
        steps = truth.speeds[truth.speeds["component"] == key]
        runs = truth.component_runs(key)
        runs = runs[runs["state"] == "run"]
        k = np.searchsorted(to_ns(steps["start"]), to_ns(runs["start"]), side="right") - 1
        fast = runs[(k >= 0) & (steps["speed"].to_numpy()[np.clip(k, 0, None)] > limit)]
        out += (Intervals.from_frame(fast) & win).hours()
    return out


def test_window_is_the_whole_days_of_the_data(demo):
    p = demo["summary"]["period"]
    assert (p["first_date"], p["last_date"]) == ("2026-02-16", "2026-05-17")
    start, end = demo["truth"].window
    assert pd.Timestamp(p["start"]) == start and pd.Timestamp(p["end"]) == end


def test_identities_hold_to_the_second(demo):
    for c in demo["summary"]["components"]:
        s = c["seconds"]
        assert s["running"] + s["off"] + s["no_data"] == pytest.approx(s["period"], abs=1e-6)
        assert s["in_schedule"] + s["in_allowance"] + s["off_schedule"] == pytest.approx(
            s["running"], abs=1e-6)
        assert s["in_schedule"] + s["occupied_off"] + s["occupied_no_data"] == pytest.approx(
            s["scheduled"], abs=1e-6)


def test_running_and_no_data_hours_match_the_truth(demo):
    truth = demo["truth"]
    for key, c in components(demo).items():
        sets = true_sets(truth, key)
        n = changes(truth, key)
        for state, figure in (("run", "running"), ("no_data", "no_data"), ("off", "off")):
            want = sets[state].hours()
            assert abs(c["hours"][figure] - want) <= tolerance(want, n), (key, figure, want)


def test_off_schedule_and_missed_hours_match_the_truth(demo):
    # The true run states (generator) against the intended schedule the tool expanded from the
    # calendars (schedule.csv); the expansion itself is checked against RFC 5545's own examples
    # in tests/test_rfc5545_examples.py.
    truth = demo["truth"]
    for key, c in components(demo).items():
        occ, allow = schedule_sets(demo, c["unit"])
        sets = true_sets(truth, key)
        n = changes(truth, key)
        want_off_schedule = ((sets["run"] - occ - allow).hours()
                             + over_limit_hours(demo, truth, key, c["unit"]))
        got = c["hours"]["off_schedule"]
        assert abs(got - want_off_schedule) <= tolerance(want_off_schedule, n), key
        want_missed = (sets["off"] & occ).hours() if c["missed_counted"] else 0.0
        assert abs(c["hours"]["missed"] - want_missed) <= tolerance(want_missed, n), key


def test_off_schedule_equals_the_planted_holiday_and_night_hours(demo):
    # Independent of the schedule expansion: on AHU-1 and AHU-2 the only running outside
    # schedule is the planted fault (clean days start and stop inside the allowances), so the
    # off-schedule hours must equal the hours faults.json gives for the planted episodes.
    truth = demo["truth"]
    comps = components(demo)
    for f in truth.faults:
        if f["kind"] not in ("holiday", "night"):
            continue
        got = comps[f["component"]]["hours"]["off_schedule"]
        assert abs(got - f["hours"]) <= tolerance(f["hours"], 2 * len(f["episodes"])), f


def test_every_planted_fault_is_found_with_its_kind_and_date(demo):
    found = demo["findings"]
    found_dates = pd.to_datetime(found["start"], utc=True).dt.tz_convert(TZ).dt.date
    for f in demo["truth"].faults:
        mine = found_dates[(found["component"] == f["component"]) & (found["kind"] == f["kind"])]
        assert len(mine), f"no {f['kind']} finding for {f['component']}"
        dates = [dt.date.fromisoformat(d) for d in f["dates"]]
        if f["kind"] in ("clock_offset", "continuous"):
            # "from one date on": the first finding starts on the date, or on the day of the
            # clock change just before it (a Sunday without operation)
            assert abs((min(mine) - dates[0]).days) <= 1, (f["component"], f["kind"], mine)
        else:
            assert set(dates) <= set(mine), (f["component"], f["kind"], sorted(set(mine)))


def test_no_finding_without_a_planted_cause(demo):
    # one cause, one finding: every finding on the classified data is a planted fault of that
    # component (kind and date), never a side effect such as the missed hour of a shifted clock
    planted = {(f["component"], f["kind"]) for f in demo["truth"].faults}
    planted |= {(c["component"], c["kind"]) for c in demo["truth"].trend_cases}
    found = demo["findings"]
    extra = found[[(c, k) not in planted for c, k in zip(found["component"], found["kind"],
                                                          strict=True)]]
    assert extra.empty, extra[["component", "kind", "start", "detail"]].to_string()


def test_clean_units_have_no_findings_and_no_off_schedule_running(demo):
    truth = demo["truth"]
    comps = components(demo)
    assert truth.clean, "the demo should have a clean unit"
    for key in truth.clean:
        assert comps[key]["findings"] == 0, key
        assert comps[key]["hours"]["off_schedule"] <= changes(truth, key) * MIN_H, key
        assert not (demo["findings"]["component"] == key).any()


def test_energy_follows_the_affinity_law(demo):
    site = demo["result"].site
    comps = components(demo)
    for comp in site.components:
        c = comps[comp.key]
        if len(c["speed_levels"]) != 1:
            continue   # more than one speed (AHU-6, AHU-7): against the truth in test_demo_speeds
        kw = comp.power_kw * comp.speed ** site.energy.exponent
        assert c["energy"]["running_kw"] == pytest.approx(kw, abs=1e-3)
        assert c["energy"]["off_schedule_kwh"] == pytest.approx(
            kw * c["seconds"]["off_schedule"] / 3600, abs=2e-3)
        assert c["energy"]["off_schedule_cost"] == pytest.approx(
            c["energy"]["off_schedule_kwh"] * site.energy.price, abs=0.01)


def test_daily_rows_sum_to_totals_and_know_the_short_day(demo):
    d = demo["daily"]
    comps = components(demo)
    for key, rows in d.groupby("component"):
        assert len(rows) == 91
        for fig in ("running", "off_schedule", "missed", "no_data", "scheduled"):
            assert rows[f"{fig}_h"].sum() == pytest.approx(comps[key]["hours"][fig], abs=0.05)
        # Oslo moves its clocks forward on 2026-03-29 (EU rule, Directive 2000/84/EC)
        period = dict(zip(rows["date"], rows["period_h"], strict=True))
        assert period["2026-03-29"] == 23 and period["2026-03-30"] == 24
    holidays = d[(d["component"] == "AHU-1/supply") & (d["day_off"] != "")]["date"].tolist()
    # Norwegian public holidays in the window (Lovdata, lov om 1. og 17. mai som hoytidsdager,
    # and the Church's holy days: Maundy Thursday 2 Apr, Good Friday 3 Apr, Easter Monday 6 Apr,
    # Ascension 14 May 2026) plus the demo's closure on 15 May; Easter Sunday falls on a Sunday.
    for day in ("2026-04-02", "2026-04-03", "2026-04-06", "2026-05-01", "2026-05-14",
                "2026-05-15"):
        assert day in holidays


def test_sensor_health_covers_the_battery_gap(demo):
    sensors = {s["component"]: s for s in demo["summary"]["sensors"]}
    gaps = demo["truth"].gaps
    for key, rows in gaps.groupby("component"):
        want = float(((rows["end"] - rows["start"]) / pd.Timedelta("1h")).sum())
        assert sensors[key]["gap_hours"] >= want - 0.2, key


def test_finding_energy_is_its_off_schedule_running(demo):
    res = demo["result"]
    # a unit finding's energy is the sum of its components' parts
    for rec in demo["summary"]["findings"]:
        assert rec["kwh"] == pytest.approx(sum(p["kwh"] for p in rec["parts"]), abs=0.01)
    for row in res.component_findings.itertuples(index=False):
        if row.kind == "missed":
            assert row.kwh == 0
            continue
        comp = res.component(row.component)
        inside = comp.account.off_schedule & Intervals.window(row.start, row.end)
        # at most the power of the fastest speed it ran at (affinity law) for every hour
        top = float(comp.speeds.speed.max()) if comp.speeds.speed.size else comp.component.speed
        top_kw = max(comp.running_kw, comp.component.power_kw * top ** res.site.energy.exponent)
        assert row.kwh <= inside.duration_ns() / NS_PER_H * top_kw * 1.0001 + 1e-6
        assert np.isfinite(row.cost)
