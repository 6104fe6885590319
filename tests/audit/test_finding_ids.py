"""A finding keeps its id when the audit window changes, so calendars do not duplicate it.

The session's demo audit (91 days, tests/conftest.py) is the quarter; April audited alone is
the month. Findings that lie inside April in the quarter must come back from the month with
the same id, and findings.ics must use it in the UID (RFC 5545 section 3.8.4.7: a calendar
program updates an event with a known UID instead of adding a second one).
"""

from __future__ import annotations

import datetime as dt
import json

import icalendar
import pandas as pd
import pytest

pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def april(demo_audit, tmp_path_factory):
    from schedcheck.jobs.audit import audit_site

    out = tmp_path_factory.mktemp("april")
    audit_site(demo_audit.site_file, dt.date(2026, 4, 1), dt.date(2026, 4, 30), out=out)
    return out


def _uids(folder) -> set[str]:
    cal = icalendar.Calendar.from_ical((folder / "findings.ics").read_bytes())
    return {str(ev["uid"]) for ev in cal.walk("VEVENT")}


def test_findings_inside_the_month_keep_their_ids_and_uids(demo_audit, april):
    quarter = demo_audit.result.outdir
    q = pd.read_csv(quarter / "findings.csv")
    m = pd.read_csv(april / "findings.csv")
    inside = q[(q["start"] >= "2026-04-01") & (q["end"] < "2026-05-01")]
    assert len(inside) >= 3          # the holidays of Easter 2026 on AHU-1 (planted)
    assert set(inside["id"]) <= set(m["id"])
    # the unit's state component stays the finding's component in both windows
    both = inside.merge(m, on="id", suffixes=("_q", "_m"))
    assert (both["component_q"] == both["component_m"]).all()
    assert (both["kind_q"] == both["kind_m"]).all()
    # a finding that starts in April and runs past it keeps its id too
    assert "AHU-4-continuous-2026-04-20" in set(q["id"]) & set(m["id"])
    # importing both calendars updates these events instead of adding new ones
    q_uids, m_uids = _uids(quarter), _uids(april)
    shared = {u for u in m_uids if u.split(".")[0] in set(inside["id"])}
    assert len(shared) == len(inside) and shared <= q_uids


def test_ids_are_unique_and_name_unit_kind_and_local_date(demo_audit):
    s = json.loads((demo_audit.result.outdir / "summary.json").read_text())
    ids = [f["id"] for f in s["findings"]]
    assert len(ids) == len(set(ids))
    for f in s["findings"]:
        assert f["id"].startswith(f"{f['unit']}-{f['kind']}-{f['date']}")
        assert f["start"][:10] == f["date"]


def test_headline_counts_unit_hours_and_projects_only_the_recurring_pattern(demo_audit):
    from schedcheck.cli.audit import headline_lines

    out = demo_audit.result.outdir
    s = json.loads((out / "summary.json").read_text())
    t = s["totals"]
    # fans of one unit counted once: fewer unit-hours than component-hours, never fewer than
    # the largest component's
    assert max(c["hours"]["off_schedule"] for c in s["components"]) <= t["unit_hours"]
    assert t["unit_hours"] < t["component_hours"] == pytest.approx(t["off_schedule"])
    assert t["findings"] < t["component_findings"]
    p = s["projection"]
    # the demo's holiday running on AHU-1 (planted on 6 days off in 4 weeks) and AHU-6's
    # nightly setback (35 nights) recur; the 27-day continuous run of AHU-4, the clock offset
    # of AHU-3 and AHU-7's three high-speed weekend days are one-off events
    assert [(r["unit"], r["kind"]) for r in p["recurring"]] == [("AHU-1", "holiday"),
                                                                 ("AHU-6", "setback")]
    assert "AHU-7-over_speed-2026-03-21" in p["one_off"]
    assert "AHU-4-continuous-2026-04-20" in p["one_off"]
    assert p["one_off_cost"] + sum(r["cost"] for r in p["recurring"]) == pytest.approx(
        sum(f["cost"] for f in s["findings"]), abs=0.05)
    page = (out / "report.html").read_text(encoding="utf-8")
    assert f"{t['unit_hours']:,.1f} unit-hours" in page
    assert f"{p['yearly_cost']:,.0f} NOK a year" in page
    assert all(f["id"] in page for f in s["findings"])
    lines = "\n".join(headline_lines(demo_audit.result))
    assert f"{t['unit_hours']:,.1f} unit-hours" in lines and "a year" in lines
