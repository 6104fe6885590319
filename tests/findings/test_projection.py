"""The yearly projection: only recurring patterns are scaled, one-off events are shown apart."""

from __future__ import annotations

import datetime as dt

import pandas as pd
import pytest

from schedcheck.findings.projection import project_year


def frame(*spec) -> pd.DataFrame:
    """(unit, kind, local date, cost) -> unit findings."""
    return pd.DataFrame([{"id": f"{u}-{k}-{d}", "unit": u, "kind": k, "date": d,
                          "kwh": c / 1.2, "cost": c} for u, k, d, c in spec])


D0, D1 = dt.date(2026, 3, 2), dt.date(2026, 4, 26)   # 8 weeks, 56 days


def test_a_month_long_one_off_fault_is_not_scaled_to_a_year():
    p = project_year(frame(("AHU-4", "continuous", "2026-03-20", 2400.0)), D0, D1)
    assert p["yearly_cost"] is None
    assert p["one_off_cost"] == pytest.approx(2400.0)
    assert p["one_off"] == ["AHU-4-continuous-2026-03-20"]
    assert p["basis"].startswith("No yearly figure: no finding recurs")


def test_every_saturday_is_a_recurring_pattern_scaled_by_the_window():
    sats = [(D0 + dt.timedelta(days=5 + 7 * i)).isoformat() for i in range(8)]
    p = project_year(frame(*[("AHU-1", "weekend", d, 50.0) for d in sats],
                           ("AHU-4", "continuous", "2026-03-20", 2400.0)), D0, D1)
    assert len(p["recurring"]) == 1
    r = p["recurring"][0]
    assert (r["unit"], r["kind"], r["dates"], r["weeks"]) == ("AHU-1", "weekend", 8, 8)
    assert p["yearly_cost"] == pytest.approx(400.0 * 365 / 56)
    assert p["one_off_cost"] == pytest.approx(2400.0)       # the one-off event, apart
    assert p["basis"].startswith("Only 1 recurring pattern is scaled to a year")


def test_four_nights_in_one_week_are_an_event_not_a_habit():
    nights = [f"2026-03-{d:02d}" for d in (9, 10, 11, 12)]
    p = project_year(frame(*[("AHU-2", "night", d, 80.0) for d in nights]), D0, D1)
    assert p["yearly_cost"] is None and p["one_off_cost"] == pytest.approx(320.0)
    # the rule is a setting: two weeks would do for a site that asks for it
    p = project_year(frame(*[("AHU-2", "night", d, 80.0) for d in nights]), D0, D1,
                     recurring_weeks=1)
    assert p["yearly_cost"] == pytest.approx(320.0 * 365 / 56)


def test_holiday_running_is_scaled_by_the_days_off_of_a_year():
    days = ["2026-04-02", "2026-04-03", "2026-04-06", "2026-05-01", "2026-05-14"]
    p = project_year(frame(*[("AHU-1", "holiday", d, 100.0) for d in days]),
                     dt.date(2026, 3, 1), dt.date(2026, 5, 31), days_off_in_year=12)
    assert p["yearly_cost"] == pytest.approx(100.0 * 12)
    assert "12 in a year" in p["recurring"][0]["scaling"]


def test_a_short_window_says_plainly_it_cannot_project():
    p = project_year(frame(("AHU-1", "night", "2026-03-03", 10.0),
                           ("AHU-1", "night", "2026-03-04", 10.0),
                           ("AHU-1", "night", "2026-03-05", 10.0)),
                     dt.date(2026, 3, 2), dt.date(2026, 3, 8))
    assert p["yearly_cost"] is None
    assert "7 days are too few" in p["basis"]


def test_no_findings_no_projection():
    p = project_year(frame(), D0, D1)
    assert p["yearly_cost"] is None and p["one_off_cost"] == 0 and p["recurring"] == []


def test_the_trends_diagnoses_are_never_a_yearly_pattern():
    # a fan that fails to start every Monday: a habit, but its running (none) is priced by
    # no one, so there is nothing to scale; the projection says no yearly figure
    mondays = [(D0 + dt.timedelta(days=7 * i)).isoformat() for i in range(8)]
    p = project_year(frame(*[("AHU-1", "failed_start", d, 0.0) for d in mondays]), D0, D1)
    assert p["yearly_cost"] is None and p["recurring"] == []
    assert p["basis"].startswith("No yearly figure")
