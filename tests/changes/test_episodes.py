"""Behaviour episodes of an audit (changes/episodes.py): the demo's planted faults against the
generator's truth, the allowed windows that must not date a change (issue 11), and the false
alarm rate on stationary series."""

from __future__ import annotations

import datetime as dt
from zoneinfo import ZoneInfo

import numpy as np
import pytest

from schedcheck.changes.capa import daily_episodes
from schedcheck.changes.compare import compare_audit, compare_daily, dating_episode
from schedcheck.changes.episodes import dating_hours, window_edges

TZ = "Europe/Oslo"


def _fault(demo_site, kind):
    return next(f for f in demo_site.faults if f.kind == kind)


def _collective(result, key):
    return [e for e in result.episodes[key] if e.kind == "collective"]


def test_the_24_7_unit_has_one_episode_from_its_controls_change(demo_audit, demo_site):
    fault = _fault(demo_site, "continuous")          # the generator's truth
    began = fault.start.tz_convert(TZ).date()
    assert began == dt.date(2026, 4, 20)
    for key in ("AHU-4/supply", "AHU-4/exhaust"):
        eps = _collective(demo_audit.result, key)
        assert [(e.start, e.end) for e in eps] == [(began, demo_audit.result.last_date)]
        assert eps[0].mean_h_per_day > 12 and eps[0].usual_h_per_day == 0.0
    # its finding says since when, in the files as in the sentence
    f = demo_audit.result.findings
    row = f[(f["unit"] == "AHU-4") & (f["kind"] == "continuous")].iloc[0]
    assert row["episode_start"] == "2026-04-20" and row["episode_end"] == "2026-05-17"
    assert "around the clock since 2026-04-20" in row["detail"]


def test_the_clock_fault_unit_has_one_episode_from_the_day_after_summer_time(demo_audit):
    # the EU rule (Directive 2000/84/EC): summer time begins on the last Sunday of March;
    # found here from the zone's own offsets, independently of schedcheck.daylight
    zone = ZoneInfo(TZ)
    noon = [dt.datetime(2026, 3, d, 12, tzinfo=zone) for d in range(1, 32)]
    change = next(t.date() for a, t in zip(noon, noon[1:], strict=False)
                  if t.utcoffset() != a.utcoffset())
    assert change == dt.date(2026, 3, 29)
    for key in ("AHU-3/supply", "AHU-3/exhaust"):
        eps = _collective(demo_audit.result, key)
        assert [e.start for e in eps] == [change + dt.timedelta(days=1)]
    f = demo_audit.result.findings
    row = f[(f["unit"] == "AHU-3") & (f["kind"] == "clock_offset")].iloc[0]
    assert row["episode_start"] == "2026-03-30"


def test_the_healthy_unit_has_no_episode(demo_audit):
    for key in ("AHU-5/supply", "AHU-5/exhaust"):
        assert demo_audit.result.episodes[key] == []


def test_allowed_windows_starting_do_not_date_a_change(demo_audit, demo_site):
    # Issue 11: night cooling is allowed from 2026-05-05 (calendars/night-purge.ics); the
    # 24/7 unit's off-schedule hours fall by the windows' 4 h a night although it never changed.
    result = demo_audit.result
    site = result.site
    first_purge = min(s for s in result.schedules["AHU-4"].intervals.query("kind == 'allowed'")
                      ["start"]).tz_convert(TZ).date()
    assert first_purge == dt.date(2026, 5, 5)
    comp = result.component("AHU-4/supply")
    dates = [d for d in comp.daily["date"]]
    near = range(-3, 4)
    # the cause: on the plain off-schedule hours, PELT dates a change where the windows begin
    _, plain, _, _ = compare_daily(comp.daily, dt.date(2026, 4, 20), 28, 27)
    assert any(abs((p.date - first_purge).days) <= 3 for p in plain)
    # the fix: dated on the share of the possible time with the windows filled in, it does not
    dating = dating_hours(comp, window_edges(dates, result))
    _, points, _, _ = compare_daily(comp.daily, dt.date(2026, 4, 20), 28, 27, dating=dating)
    assert [p.date for p in points if abs((p.date - first_purge).days) in near] == []
    assert [p.date for p in points] == [dt.date(2026, 4, 20)]
    # and compare dates the change from the episode
    cmp = compare_audit(result, site, dt.date(2026, 4, 22), 28, 25)
    got = {c.id: c.dated for c in cmp.components}
    assert got["AHU-4/supply"].date == dt.date(2026, 4, 20)
    assert got["AHU-4/supply"].how == "began"
    assert got["AHU-5/supply"] is None


def test_an_episode_that_ends_dates_a_fix_and_none_near_is_none():
    dates = [dt.date(2026, 1, 5) + dt.timedelta(days=i) for i in range(70)]
    hours = np.where((np.arange(70) >= 10) & (np.arange(70) < 40), 9.0, 0.0)
    eps = daily_episodes(dates, hours)
    fixed = dating_episode(eps, dt.date(2026, 2, 16))     # the day after the last bad day
    assert (fixed.date, fixed.how) == (dates[40], "ended")
    assert dating_episode(eps, dt.date(2026, 3, 10)) is None


def _healthy_series(rng, n: int) -> np.ndarray:
    """A healthy unit's daily off-schedule hours: mostly none, now and then a short overrun
    (a late stop of minutes, a morning start a little early), quantised to the minute."""
    h = np.where(rng.random(n) < 0.25, rng.exponential(0.2, n), 0.0)
    return np.round(h * 60) / 60


@pytest.mark.validation   # the target of issue 18: no false collective episode in 95 % of trials
def test_no_collective_episode_on_stationary_daily_hours_in_95_percent_of_trials():
    rng = np.random.default_rng(18)
    dates = [dt.date(2026, 1, 1) + dt.timedelta(days=i) for i in range(91)]
    healthy = sum(not any(e.kind == "collective" for e in daily_episodes(
        dates, _healthy_series(rng, 91))) for _ in range(200))
    # a unit that overruns by a varying amount every day (0.6 h a day, sd 0.5 h), stationary
    # too and below the level at which the usual itself is a fault (capa.CONFORMING_MEDIAN_H;
    # a steady 2 h a day is one episode over the whole window by that choice)
    steady = sum(not any(e.kind == "collective" for e in daily_episodes(
        dates, np.clip(rng.normal(0.6, 0.5, 91), 0, None))) for _ in range(200))
    assert healthy >= 190 and steady >= 190


def test_the_site_settings_reach_capa(demo_audit):
    import dataclasses

    from schedcheck.changes.episodes import component_episodes, episode_settings

    result = demo_audit.result
    site = dataclasses.replace(result.site, findings=dataclasses.replace(
        result.site.findings, episode_floor=2.0, episode_min_days=50))
    copy = dataclasses.replace(result, site=site)      # the session's result stays as it is
    assert episode_settings(copy) == {"floor": 2.0, "min_length": 50}
    comp = result.component("AHU-3/supply")
    # the clock fault's 45 days of about half an hour are no episode of 50 days or more
    assert _collective(result, "AHU-3/supply")
    assert not [e for e in component_episodes(comp, copy, **episode_settings(copy))
                if e.kind == "collective"]


@pytest.mark.slow   # one more demo audit (April alone)
def test_a_month_audited_alone_keeps_the_episode_start_from_its_look_back(demo_audit):
    from schedcheck.jobs.audit import audit_result
    from schedcheck.jobs.common import open_site

    april = audit_result(open_site(demo_audit.site_file), dt.date(2026, 4, 1),
                         dt.date(2026, 4, 30))
    full = _collective(demo_audit.result, "AHU-3/supply")[0]
    alone = _collective(april, "AHU-3/supply")
    # the clock fault began before April: the month says since when, as the full audit does
    assert [e.start for e in alone] == [full.start] == [dt.date(2026, 3, 30)]
    assert [e.start for e in _collective(april, "AHU-4/supply")] == [dt.date(2026, 4, 20)]
    assert april.episodes["AHU-5/supply"] == []
    f = april.findings
    row = f[(f["unit"] == "AHU-3") & (f["kind"] == "clock_offset")].iloc[0]
    assert "every working day since 2026-03-30" in row["detail"]
