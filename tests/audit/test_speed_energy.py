"""Reduced-speed running on seeded sites: hours per speed level and off-schedule energy
against the generator's truth (within 1 %), speed limits, and the affinity law at speed."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from schedcheck.audit.energy import affinity_power
from schedcheck.audit.run import run_audit
from schedcheck.demo import synth
from schedcheck.intervals import Intervals, to_ns
from schedcheck.runstate.classify import classify_unit
from schedcheck.runstate.speeds import CONFIGURED, ESTIMATED, MEASURED
from schedcheck.schedule.intended import UnitSchedule
from schedcheck.site import (
    Component,
    EnergySettings,
    HolidaySettings,
    ReadingsSettings,
    ScheduleSettings,
    Site,
    Unit,
)

T0 = pd.Timestamp("2026-03-02", tz="UTC")     # a Monday
DAYS = 14
END = T0 + pd.Timedelta(days=DAYS)
MIN = 60 * 10**9
P_KW, EXP, RPM = 7.5, 3.0, 1450.0
PHASE = pd.Timedelta("30s")


def speed_series(day: float, night: float, weekend: float | None = None) -> pd.Series:
    """Day speed 06-18 UTC on weekdays, ``night`` otherwise, ``weekend`` on Sat/Sun days."""
    idx, val = [], []
    for d in range(DAYS):
        day0 = T0 + pd.Timedelta(days=d)
        wk = day0.day_of_week >= 5
        idx += [day0, day0 + pd.Timedelta(hours=6), day0 + pd.Timedelta(hours=18)]
        val += ([night, weekend if weekend is not None else night, night] if wk
                else [night, day, night])
    return pd.Series(val, index=pd.DatetimeIndex(idx))


def occupied() -> pd.DataFrame:
    days = [T0 + pd.Timedelta(days=d) for d in range(DAYS) if (T0 + pd.Timedelta(days=d))
            .day_of_week < 5]
    return pd.DataFrame({"start": [d + pd.Timedelta(hours=6) for d in days],
                         "end": [d + pd.Timedelta(hours=18) for d in days],
                         "kind": "occupied", "source": "office"})


def weekend_days() -> pd.DataFrame:
    days = [T0 + pd.Timedelta(days=d) for d in range(DAYS)
            if (T0 + pd.Timedelta(days=d)).day_of_week >= 5]
    return pd.DataFrame({"start": [d + pd.Timedelta(hours=8) for d in days],
                         "end": [d + pd.Timedelta(hours=16) for d in days]})


def seeded(speed: pd.Series, runs, *, seed: int, rpm: float | None = None, speeds=(),
           level: float = 2.0):
    rng = np.random.default_rng(seed)
    truth = synth.truth_from_runs(runs, T0, END)
    # readings due half a minute off the hour: a drive's schedule does not follow the sensor's
    # reading clock (on the same instants, every change would round the same way)
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0 + PHASE, end=END,
                                     speed=speed, running_level=level, design_rpm=rpm)
    comp = Component("supply", "AHU-7", "supply_fan", "S1", P_KW, max(speed), speeds=speeds,
                     design_rpm=rpm)
    return comp, truth, r


def audit(comp, readings, *, limits=None, standby=None, allowed=None):
    unit = Unit("AHU-7", "Test unit", ScheduleSettings(), (comp,))
    site = Site("Harbour Test Rooms", "UTC", Path("site.toml"), ReadingsSettings(("r.csv",)),
                HolidaySettings(), ScheduleSettings(), EnergySettings(exponent=EXP), (unit,))
    states = classify_unit(unit, {"S1": readings}, T0, END, pd.Timedelta("5min"))
    iv = occupied()
    if allowed is not None:
        iv = pd.concat([iv, allowed.assign(kind="allowed", source="weekend")], ignore_index=True)
    lim = pd.DataFrame(columns=["start", "end", "max_speed"]) if limits is None else limits
    sched = UnitSchedule("AHU-7", iv, pd.DataFrame(columns=["date", "name", "kind"]),
                         limits=lim, standby_speed=standby)
    return run_audit(site, states, {"AHU-7": sched}, T0, END).components[0]


def truth_minutes(speed: pd.Series, truth: pd.DataFrame):
    """Per minute (at its middle): the true speed (0 when stopped)."""
    t = np.arange(to_ns(T0), to_ns(END), MIN) + MIN // 2
    s = speed.reindex(pd.DatetimeIndex(t, tz="UTC"), method="ffill").to_numpy()
    return t, np.where(synth._run_set(truth).contains(t), s, 0.0)


def off_schedule_truth(t, s, limit=None):
    """Off-schedule kWh and hours of the truth: outside occupied, above ``limit`` (array)."""
    occ = Intervals.from_frame(occupied()).contains(t)
    lim = np.zeros(t.size) if limit is None else limit
    off = (s > 0) & ~occ & (s > lim + 1e-9)
    kwh = (P_KW * (s[off] ** EXP - lim[off] ** EXP)).sum() / 60
    return kwh, off.sum() / 60


RUNS = [(T0 + pd.Timedelta(days=7 * w), T0 + pd.Timedelta(days=7 * w + 5)) for w in range(2)]


@pytest.mark.parametrize("how", ["configured", "measured", "estimated"])
def test_night_setback_hours_and_energy_match_the_truth(how):
    # a variable-speed unit set back to 30 % every night instead of stopped (weekends off)
    speed = speed_series(0.85, 0.3)
    comp, truth, r = seeded(speed, RUNS, seed=21, rpm=RPM if how == "measured" else None,
                            speeds=(0.3, 0.85) if how == "configured" else ())
    c = audit(comp, r)
    t, s = truth_minutes(speed, truth)
    kwh, hours = off_schedule_truth(t, s)
    # measured and configured speeds within 1 % of the truth; an estimate (generator and
    # estimate share the exponent) within 5 %, and its range is checked below
    rel = 0.05 if how == "estimated" else 0.01
    assert c.energy["off_schedule_kwh"] == pytest.approx(kwh, rel=rel)
    assert c.account.ns["off_schedule"] / 3.6e12 == pytest.approx(hours, rel=0.01)
    run_true = (P_KW * s**EXP).sum() / 60
    assert c.energy["running_kwh"] == pytest.approx(run_true, rel=0.01)
    low = c.speeds.at_speed(0.3).hours()
    assert low == pytest.approx(np.isclose(s, 0.3).sum() / 60, rel=0.01)
    source = {"configured": CONFIGURED, "measured": MEASURED, "estimated": ESTIMATED}[how]
    assert c.speeds.main_source == source
    if how == "estimated":   # labelled an estimate, with a range that holds the truth
        lv = c.speeds.levels[0]
        assert lv.source == ESTIMATED and lv.low < 0.3 < lv.high


def test_a_setback_priced_at_the_usual_speed_was_far_too_high():
    # the figure: every setback minute priced at the usual speed is many times too high
    speed = speed_series(0.85, 0.3)
    comp, truth, r = seeded(speed, RUNS, seed=22, speeds=(0.3, 0.85))
    c = audit(comp, r)
    at_usual = P_KW * 0.85**EXP * c.account.ns["off_schedule"] / 3.6e12
    assert at_usual / c.energy["off_schedule_kwh"] == pytest.approx((0.85 / 0.3) ** 3, rel=0.02)


def test_standby_speed_allows_the_setback_and_prices_only_the_excess():
    # standby ventilation at 40 % is allowed; on the second week the night speed is 60 %
    speed = speed_series(0.85, 0.3)
    high = (speed.index >= T0 + pd.Timedelta(days=7))
    speed = speed.where(~(high & (speed == 0.3)), 0.6)
    comp, truth, r = seeded(speed, RUNS, seed=23, speeds=(0.3, 0.6, 0.85))
    c = audit(comp, r, standby=0.4)
    t, s = truth_minutes(speed, truth)
    kwh, hours = off_schedule_truth(t, s, np.full(t.size, 0.4))
    assert hours > 50
    assert c.account.ns["off_schedule"] / 3.6e12 == pytest.approx(hours, rel=0.01)
    assert c.energy["off_schedule_kwh"] == pytest.approx(kwh, rel=0.01)
    h = c.account.hours()
    assert h["in_schedule"] + h["in_allowance"] + h["off_schedule"] == pytest.approx(
        h["running"], abs=1e-9)


def test_two_speed_unit_with_allowed_weekend_ventilation_at_half_speed():
    # weekends run 08-16 at 45 % (allowed up to 50 %), but the second Saturday at full speed
    speed = speed_series(1.0, 0.0, weekend=0.45)
    sat2 = T0 + pd.Timedelta(days=12)
    speed[sat2 + pd.Timedelta(hours=6)] = 1.0
    runs = [(T0 + pd.Timedelta(days=d, hours=6), T0 + pd.Timedelta(days=d, hours=18))
            for d in range(DAYS)]
    runs = [(a + pd.Timedelta(hours=2), b - pd.Timedelta(hours=2)) if a.day_of_week >= 5
            else (a, b) for a, b in runs]
    comp, truth, r = seeded(speed, runs, seed=24, speeds=(0.45, 1.0), level=2.5)
    wk = weekend_days()
    c = audit(comp, r, allowed=wk, limits=wk.assign(max_speed=0.5))
    t, s = truth_minutes(speed, truth)
    lim = np.where(Intervals.from_frame(wk).contains(t), 0.5, 0.0)
    kwh, hours = off_schedule_truth(t, s, lim)
    assert hours == pytest.approx(8.0, abs=0.1)
    assert c.account.ns["off_schedule"] / 3.6e12 == pytest.approx(hours, rel=0.01)
    assert c.energy["off_schedule_kwh"] == pytest.approx(kwh, rel=0.01)
    assert c.speeds.at_speed(0.45).hours() == pytest.approx(3 * 8.0, rel=0.01)


@pytest.mark.validation
def test_affinity_law_at_reduced_speed_matches_the_published_example():
    # U.S. DOE Motor Systems Tip Sheet #11 "Adjustable Speed Drive Part-Load Efficiency": a fan
    # slowed by 20 % needs about 50 % less power (cube law: 0.8**3 = 0.512)
    assert affinity_power(10.0, 0.8, 3.0) / 10.0 == pytest.approx(0.5, abs=0.015)
    # the fan laws, power ~ speed cubed (the same source): half speed needs an eighth
    assert affinity_power(10.0, 0.5, 3.0) == pytest.approx(1.25)


def test_setback_and_over_speed_findings_keep_their_energy():
    speed = speed_series(0.85, 0.3)
    comp, truth, r = seeded(speed, RUNS, seed=25, speeds=(0.3, 0.85))
    unit = Unit("AHU-7", "Test unit", ScheduleSettings(), (comp,))
    site = Site("Harbour Test Rooms", "UTC", Path("site.toml"), ReadingsSettings(("r.csv",)),
                HolidaySettings(), ScheduleSettings(), EnergySettings(exponent=EXP), (unit,))
    states = classify_unit(unit, {"S1": r}, T0, END, pd.Timedelta("5min"))
    sched = UnitSchedule("AHU-7", occupied(), pd.DataFrame(columns=["date", "name", "kind"]))
    res = run_audit(site, states, {"AHU-7": sched}, T0, END)
    f = res.findings
    assert set(f["kind"]) == {"setback"}, set(f["kind"])
    assert f["detail"].str.contains("set back to about 30% speed").all()
    # each off-schedule minute belongs to one finding: their energy is the component's
    assert f["kwh"].sum() == pytest.approx(res.components[0].energy["off_schedule_kwh"],
                                           rel=0.01)
    # above a standby limit of 20 %, the same nights are over_speed with the excess energy
    sched.standby_speed = 0.2
    res = run_audit(site, states, {"AHU-7": sched}, T0, END)
    assert set(res.findings["kind"]) == {"over_speed"}
    excess = P_KW * (0.3**EXP - 0.2**EXP) * 120
    assert res.components[0].energy["off_schedule_kwh"] == pytest.approx(excess, rel=0.01)
    assert res.findings["kwh"].sum() == pytest.approx(excess, rel=0.01)
