"""A month or a week audited alone agrees with the whole-data audit (the monthly audit).

Every calendar month of the demo and every ISO week are audited through the job
(:func:`schedcheck.jobs.audit.audit_result`) and compared with the session's whole-data audit
(``demo_audit``): hours per component within one minute per state change in the window, and the
same finding kinds per component. The demo's plan (demo/plan.py) holds a controller clock that
ignores daylight saving time (AHU-3) and a unit that runs 24/7 from a controls change (AHU-4).
"""

from __future__ import annotations

import datetime as dt

import pandas as pd
import pytest

HOURS = ("period", "scheduled", "running", "in_schedule", "in_allowance", "off_schedule",
         "missed", "no_data")


def _windows(first: dt.date, last: dt.date) -> list[tuple[dt.date, dt.date]]:
    """Calendar months and ISO weeks (Monday to Sunday) within first..last, cut to it."""
    out = []
    d = first.replace(day=1)
    while d <= last:
        nxt = (d + dt.timedelta(days=32)).replace(day=1)
        out.append((max(d, first), min(nxt - dt.timedelta(days=1), last)))
        d = nxt
    d = first - dt.timedelta(days=first.weekday())
    while d <= last:
        out.append((max(d, first), min(d + dt.timedelta(days=6), last)))
        d += dt.timedelta(days=7)
    return out


@pytest.fixture(scope="module")
def alone(demo_audit):
    """Each month and week of the demo audited alone, sharing one read of the files."""
    from schedcheck.jobs.audit import audit_result
    from schedcheck.jobs.common import open_readings, open_site

    site = open_site(demo_audit.site_file)
    source = open_readings(site)
    source.read(keep=True)
    full = demo_audit.result
    return {(a, b): audit_result(site, a, b, source=source)
            for a, b in _windows(full.first_date, full.last_date)}


def _transitions(comp, start, end) -> int:
    p = comp.states.intervals
    return int(((p["start"] > start) & (p["start"] < end)).sum())


def _kinds(findings: pd.DataFrame, key: str, start, end) -> set[str]:
    f = findings[(findings["component"] == key) & (findings["start"] < end)
                 & (findings["end"] > start)]
    return set(f["kind"])


@pytest.mark.slow
def test_every_month_and_week_audited_alone_agrees_with_the_whole_audit(demo_audit, alone):
    full = demo_audit.result
    assert len(alone) == 4 + 13      # Feb (from the 16th) to May (to the 17th); 13 ISO weeks
    for (a, b), res in alone.items():
        assert res.first_date == a and res.last_date == b
        for comp in full.components:
            mine = res.component(comp.key)
            day = comp.daily[(comp.daily["date"] >= a) & (comp.daily["date"] <= b)]
            # one minute per state change: an edge reading may fall either side of a change
            tol = max(1, _transitions(comp, res.start, res.end)) / 60
            for k in HOURS:
                want = day[f"{k}_ns"].sum() / 3.6e12
                got = mine.account.ns[k] / 3.6e12
                assert got == pytest.approx(want, abs=tol), (a, b, comp.key, k)
            # per component, before the components of a unit are joined into one finding
            assert _kinds(res.component_findings, comp.key, res.start, res.end) == \
                _kinds(full.component_findings, comp.key, res.start, res.end), (a, b, comp.key)
        # every finding stays inside the window
        assert (res.findings["start"] >= res.start).all()
        assert (res.findings["end"] <= res.end).all()


@pytest.mark.slow
def test_april_alone_finds_the_clock_that_ignores_daylight_saving(alone):
    res = alone[(dt.date(2026, 4, 1), dt.date(2026, 4, 30))]
    for key in ("AHU-3/supply", "AHU-3/exhaust"):
        per = res.component_findings
        kinds = list(per.loc[per["component"] == key, "kind"])
        assert kinds == ["clock_offset"], (key, kinds)     # not missed or late_stop
        row = per[per["component"] == key].iloc[0]
        assert row["start"] == res.start                    # it began in the look-back
    assert res.lookback_start is not None and res.lookback_start < res.start


@pytest.mark.slow
def test_the_24_7_unit_runs_throughout_the_first_half_of_may(alone):
    from schedcheck.jobs.audit import audit_result

    site = next(iter(alone.values())).site
    may = audit_result(site, dt.date(2026, 5, 1), dt.date(2026, 5, 17))
    for key in ("AHU-4/supply", "AHU-4/exhaust"):
        acc = may.component(key).account.ns
        # running every known minute (the exhaust sensor is silent for 50.7 h of it)
        assert acc["running"] + acc["no_data"] == acc["period"], key
        per = may.component_findings
        kinds = set(per.loc[per["component"] == key, "kind"])
        assert kinds == {"continuous"}, (key, kinds)        # no missed, no short_cycling
