"""The history database: months replaced in one transaction, findings marked new, recurring or
resolved, a locked file refused with one line."""

from __future__ import annotations

import sqlite3

import pytest

from schedcheck.errors import InputError
from schedcheck.outputs.history import finding_marks, read_months, write_history


def _site(months: dict[str, list[tuple[str, str]]], cost: float = 1.0) -> dict:
    comps = [{"component": "U1/supply", "unit": "U1", "role": "supply_fan"}]
    rows, finds = [], []
    for month, kinds in months.items():
        rows.append({"component": "U1/supply", "month": month, "days": 30, "period_h": 720.0,
                     "scheduled_h": 200.0, "running_h": 210.0, "in_schedule_h": 200.0,
                     "in_allowance_h": 5.0, "off_schedule_h": 5.0, "missed_h": 0.0,
                     "no_data_h": 0.0, "off_schedule_kwh": 10.0, "off_schedule_cost": cost})
        finds += [{"component": c, "kind": k, "month": month, "start": f"{month}-03T01:00",
                   "end": f"{month}-03T02:00", "hours": 1.0, "kwh": 2.0} for c, k in kinds]
    return {"site": "s", "status": "ok", "components": comps, "months": rows, "findings": finds}


def test_marks_against_the_month_before():
    by = {"2026-03": {("A", "night")}, "2026-04": {("A", "night"), ("B", "holiday")}}
    assert finding_marks(by, "2026-04") == [
        {"component": "A", "kind": "night", "mark": "recurring"},
        {"component": "B", "kind": "holiday", "mark": "new"}]
    assert finding_marks(by, "2026-05") == [
        {"component": "A", "kind": "night", "mark": "resolved"},
        {"component": "B", "kind": "holiday", "mark": "resolved"}]
    assert finding_marks({"2025-12": {("A", "night")}, "2026-01": {("A", "night")}},
                         "2026-01")[0]["mark"] == "recurring"     # across the year end


def test_rerun_replaces_the_month_and_keeps_the_others(tmp_path):
    db = tmp_path / "h.sqlite"
    write_history(db, [_site({"2026-03": [("U1/supply", "night")],
                              "2026-04": [("U1/supply", "night")]})])
    write_history(db, [_site({"2026-04": [("U1/supply", "weekend")]}, cost=7.0)])
    con = sqlite3.connect(db)
    assert con.execute("SELECT month, kind FROM findings ORDER BY month").fetchall() == [
        ("2026-03", "night"), ("2026-04", "weekend")]
    assert con.execute("SELECT month, off_schedule_cost FROM months ORDER BY month").fetchall() \
        == [("2026-03", 1.0), ("2026-04", 7.0)]
    assert con.execute("SELECT version FROM schema_version").fetchall() == [(1,)]
    con.close()
    view = read_months(db, ["s"])["s/U1"]["months"]
    assert [m["month"] for m in view] == ["2026-04", "2026-03"]
    assert {(f["kind"], f["mark"]) for f in view[0]["marks"]} == {("weekend", "new"),
                                                                  ("night", "resolved")}


def test_a_held_lock_is_one_clear_error(tmp_path):
    db = tmp_path / "h.sqlite"
    write_history(db, [_site({"2026-03": []})])
    holder = sqlite3.connect(db, isolation_level=None)
    holder.execute("BEGIN IMMEDIATE")
    try:
        with pytest.raises(InputError, match="h.sqlite.*another run may hold it"):
            write_history(db, [_site({"2026-04": []})], busy_timeout=0.2)
    finally:
        holder.execute("ROLLBACK")
        holder.close()
    assert len(read_months(db, ["s"])["s/U1"]["months"]) == 1     # nothing half-written


def test_not_a_database_is_one_clear_error(tmp_path):
    db = tmp_path / "notes.sqlite"
    db.write_text("not a database\n" * 100, encoding="utf-8")
    with pytest.raises(InputError, match="notes.sqlite"):
        write_history(db, [_site({"2026-03": []})])


@pytest.mark.slow
def test_three_audited_months_mark_new_recurring_and_resolved(demo_audit, tmp_path):
    """Three month-long portfolio runs of the three-month demo; every mark agrees with the
    findings the month's own audit folder lists."""
    import csv
    import datetime as dt

    from schedcheck.jobs.portfolio import run_portfolio

    db = tmp_path / "history.sqlite"
    last_day = demo_audit.result.last_date
    windows = [(dt.date(2026, 3, 1), dt.date(2026, 3, 31)),
               (dt.date(2026, 4, 1), dt.date(2026, 4, 30)), (dt.date(2026, 5, 1), last_day)]
    found = {}
    for i, (d0, d1) in enumerate(windows):
        run = run_portfolio([demo_audit.site_file], tmp_path / f"run{i}", d0, d1, jobs=1,
                            history=db)
        site = run.sites[0]
        with open(run.outdir / "sites" / site["site"] / "findings.csv", encoding="utf-8") as f:
            found[d0.strftime("%Y-%m")] = {(r["component"], r["kind"])
                                          for r in csv.DictReader(f)}
    html = (run.outdir / "portfolio.html").read_text(encoding="utf-8")
    months = read_months(db, [site["site"]])
    seen = set()
    for entry in months.values():
        unit = entry["unit"]
        for m in entry["months"]:
            now = {x for x in found[m["month"]] if x[0].startswith(unit + "/")}
            prev_key = {"2026-04": "2026-03", "2026-05": "2026-04"}.get(m["month"])
            before = {x for x in found.get(prev_key, set()) if x[0].startswith(unit + "/")}
            want = {(c, k, "recurring" if (c, k) in before else "new") for c, k in now}
            want |= {(c, k, "resolved") for c, k in before - now}
            assert {(f["component"], f["kind"], f["mark"]) for f in m["marks"]} == want
            seen |= {f["mark"] for f in m["marks"]}
    assert seen == {"new", "recurring", "resolved"}
    assert "mark-recurring" in html and "mark-resolved" in html and "2026-03" in html
