"""Writers of the audit's files: summary.json, daily.csv, runs.csv, findings.csv, findings.ics
and schedule.csv (field by field in docs/outputs.md).

Instants in the files are local ISO 8601 with the UTC offset, to the second; hours are rounded
to :data:`HOURS_DECIMALS` decimals (the identities between them hold exactly before rounding,
and ``summary.json`` also carries the exact ``seconds``).
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
import math
from pathlib import Path

import numpy as np
import pandas as pd

from schedcheck import __version__ as _version
from schedcheck.audit.accounting import FIGURES
from schedcheck.audit.run import AuditResult
from schedcheck.intervals import NS_PER_H, NS_PER_S, from_ns, to_ns
from schedcheck.outputs.cells import csv_frame, ics_text
from schedcheck.outputs.schema import SUMMARY_SCHEMA
from schedcheck.runstate.states import STATES, StateSets

HOURS_DECIMALS = 3      # 0.001 h = 3.6 s: finer than the one-minute readings
ENERGY_DECIMALS = 3     # kWh and kg CO2e
COST_DECIMALS = 2

DAILY_COLUMNS = ("component", "date", "weekday", "day_off", "period_h", "scheduled_h",
                 "running_h", "in_schedule_h", "in_allowance_h", "off_schedule_h", "missed_h",
                 "off_h", "no_data_h", "first_start", "last_stop", "starts", "off_schedule_kwh")
RUNS_COLUMNS = ("component", "state", "start", "end", "hours", "level")
FINDINGS_COLUMNS = ("component", "kind", "start", "end", "hours", "kwh", "cost", "co2_kg",
                    "detail")
SCHEDULE_COLUMNS = ("unit", "kind", "start", "end", "source")

#: plain words for each finding kind, used in calendar event titles
KIND_WORDS = {
    "night": "off-schedule running (working day or night)", "weekend": "weekend running",
    "holiday": "holiday running",
    "continuous": "continuous running", "clock_offset": "clock offset",
    "early_start": "early starts", "late_stop": "late stops", "missed": "missed operation",
    "short_cycling": "short cycling",
}


def local_iso(ts, tz: str) -> str:
    """A UTC instant as local ISO 8601 with offset, to the second; '' for none."""
    if ts is None or (not isinstance(ts, str) and pd.isna(ts)):
        return ""
    return pd.Timestamp(ts).tz_convert(tz).isoformat(timespec="seconds")


def _r(x: float, nd: int) -> float:
    x = float(x)
    return round(x, nd) + 0.0 if math.isfinite(x) else None


def _plain(value):
    """JSON-safe scalars and containers from numpy/pandas/dataclass values."""
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {f.name: _plain(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple, np.ndarray, pd.Index, pd.Series)):
        return [_plain(v) for v in list(value)]
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        return _r(value, 6)
    if isinstance(value, pd.Timedelta):
        return value.total_seconds()
    if isinstance(value, pd.Timestamp):
        return None if pd.isna(value) else value.isoformat()
    if value is None or (not isinstance(value, str) and pd.isna(value)):
        return None
    if hasattr(value, "isoformat"):
        return value.isoformat()
    return str(value)


# -- summary.json ---------------------------------------------------------------------------

def _threshold(comp) -> dict:
    th = comp.threshold
    get = (th.get if isinstance(th, dict) else (lambda k, d=None: getattr(th, k, d)))
    hist = get("histogram", None)
    if hist is None and get("counts", None) is not None:
        hist = {"edges": get("edges_log10", []), "counts": get("counts", [])}
    if hist is not None and not isinstance(hist, dict):
        edges = getattr(hist, "edges", None)
        counts = getattr(hist, "counts", None)
        if edges is None and isinstance(hist, (tuple, list)) and len(hist) == 2:
            counts, edges = hist[0], hist[1]
        hist = {"edges": edges, "counts": counts}
    out = {key: _plain(get(key, None)) for key in
           ("level", "source", "separation", "effectiveness", "on_level", "off_level", "floor",
            "step", "confidence", "near_share")}
    out["concerns"] = [str(x) for x in get("concerns", ()) or ()]
    out["histogram"] = _plain(hist) if hist is not None else {"edges": [], "counts": []}
    out["groups"] = _plain(get("groups", ()) or ())
    out["reason"] = str(get("reason", "") or "")
    out["warnings"] = list(comp.state_warnings)
    return out


def _component_summary(comp, result: AuditResult) -> dict:
    acc = comp.account
    c = comp.component
    n_find = int((result.findings["component"] == comp.key).sum())
    en = comp.energy
    return {
        "id": comp.key, "unit": c.unit, "name": comp.unit.name, "component": c.id,
        "role": c.role, "sensor": c.sensor, "power_kw": c.power_kw, "speed": c.speed,
        "exponent": result.site.energy.exponent, "is_state_component":
            comp.unit.state_component is not None and comp.unit.state_component.key == c.key,
        "missed_counted": acc.counts_missed,
        "hours": {k: _r(acc.ns[k] / NS_PER_H, HOURS_DECIMALS) for k in FIGURES},
        "seconds": {k: _r(acc.ns[k] / NS_PER_S, 3) for k in FIGURES},
        "starts": acc.starts,
        "threshold": _threshold(comp),
        "energy": {
            "running_kw": _r(en["running_kw"], ENERGY_DECIMALS),
            "running_kwh": _r(en["running_kwh"], ENERGY_DECIMALS),
            "running_cost": _r(en["running_cost"], COST_DECIMALS),
            "running_co2_kg": _r(en["running_co2_kg"], ENERGY_DECIMALS),
            "off_schedule_kwh": _r(en["off_schedule_kwh"], ENERGY_DECIMALS),
            "off_schedule_cost": _r(en["off_schedule_cost"], COST_DECIMALS),
            "off_schedule_co2_kg": _r(en["off_schedule_co2_kg"], ENERGY_DECIMALS),
        },
        "findings": n_find,
        "warnings": list(comp.state_warnings) + list(acc.warnings),
    }


def _sensor_rows(result: AuditResult) -> list[dict]:
    """Data health per sensor in the summary's field names."""
    tz = result.site.timezone
    by_sensor: dict[str, list[str]] = {}
    for c in result.site.components:
        by_sensor.setdefault(c.sensor, []).append(c.key)
    period_h = (result.end - result.start) / pd.Timedelta("1h")
    rows = []
    for sensor, h in sorted(result.health.items()):
        get = h.get if isinstance(h, dict) else (lambda k, d=None, h=h: getattr(h, k, d))
        mi = get("median_interval", None)
        gap_h = float(get("gap_hours", 0.0) or 0.0)
        rows.append({
            "sensor": sensor,
            "component": get("component", None) or ", ".join(by_sensor.get(sensor, [])),
            "first": local_iso(get("first", None), tz), "last": local_iso(get("last", None), tz),
            "count": int(get("count", 0) or 0),
            "median_interval_s": None if mi is None or pd.isna(mi)
            else _r(pd.Timedelta(mi).total_seconds(), 1),
            "gaps": int(get("gaps", 0) or 0), "gap_hours": _r(gap_h, HOURS_DECIMALS),
            "duplicates": int(get("duplicates_exact", get("duplicates", 0)) or 0),
            "conflicting": int(get("duplicates_conflicting", get("conflicting", 0)) or 0),
            "out_of_order": int(get("out_of_order", 0) or 0),
            "ambiguous_dropped": int(get("ambiguous_dropped", 0) or 0),
            "bad_rows": int(get("bad_rows", 0) or 0),
            "coverage": _r(max(0.0, 1.0 - gap_h / period_h), 4) if period_h > 0 else None,
        })
    return rows


def _days_off_rows(result: AuditResult) -> list[dict]:
    rows = []
    for unit_id, sched in result.schedules.items():
        days = getattr(sched, "days_off", None)
        if days is None or len(days) == 0:
            continue
        for d, name, kind in zip(days["date"], days["name"], days["kind"], strict=True):
            rows.append({"unit": unit_id, "date": pd.Timestamp(d).date().isoformat(),
                         "name": str(name), "kind": str(kind)})
    return rows


def finding_records(result: AuditResult) -> list[dict]:
    """The findings as JSON-ready records (local instants, rounded figures)."""
    tz = result.site.timezone
    out = []
    for row in result.findings.itertuples(index=False):
        out.append({
            "component": row.component, "kind": row.kind,
            "start": local_iso(row.start, tz), "end": local_iso(row.end, tz),
            "hours": _r(row.hours, HOURS_DECIMALS), "kwh": _r(row.kwh, ENERGY_DECIMALS),
            "cost": _r(row.cost, COST_DECIMALS), "co2_kg": _r(row.co2_kg, ENERGY_DECIMALS),
            "detail": str(row.detail),
        })
    return out


def _unit_summary(unit, result: AuditResult) -> dict:
    """A unit's entry: its state is its state component's (its supply fan where it has one)."""
    sc = unit.state_component
    out = {"id": unit.id, "name": unit.name, "state_component": sc.key if sc else None}
    if sc is not None:
        acc = result.component(sc.key).account
        out["hours"] = {k: _r(acc.ns[k] / NS_PER_H, HOURS_DECIMALS) for k in FIGURES}
    return out


def summary_dict(result: AuditResult) -> dict:
    """Everything ``summary.json`` holds, as a plain dict."""
    site, tz = result.site, result.site.timezone
    comps = [_component_summary(c, result) for c in result.components]
    total = {k: _r(sum(c.account.ns[k] for c in result.components) / NS_PER_H, HOURS_DECIMALS)
             for k in ("running", "off_schedule", "missed", "no_data")}
    total["off_schedule_kwh"] = _r(sum(c.energy["off_schedule_kwh"] for c in result.components),
                                   ENERGY_DECIMALS)
    total["off_schedule_cost"] = _r(sum(c.energy["off_schedule_cost"]
                                        for c in result.components), COST_DECIMALS)
    total["off_schedule_co2_kg"] = _r(sum(c.energy["off_schedule_co2_kg"]
                                          for c in result.components), ENERGY_DECIMALS)
    total["findings"] = len(result.findings)
    return {
        "schema": SUMMARY_SCHEMA,
        "generated": result.generated.tz_convert("UTC").isoformat().replace("+00:00", "Z"),
        "tool_version": _version,
        "site": {"name": site.name, "timezone": tz, "currency": site.energy.currency,
                 "price": site.energy.price, "co2_per_kwh": site.energy.co2_per_kwh,
                 "reading_unit": site.readings.unit, "file": str(site.path)},
        "period": {"start": local_iso(result.start, tz), "end": local_iso(result.end, tz),
                   "first_date": result.first_date.isoformat(),
                   "last_date": result.last_date.isoformat(),
                   "hours": _r((result.end - result.start) / pd.Timedelta("1h"),
                               HOURS_DECIMALS)},
        "units": [_unit_summary(u, result) for u in site.units],
        "components": comps,
        "totals": total,
        "findings": finding_records(result),
        "sensors": _sensor_rows(result),
        "days_off": _days_off_rows(result),
        "bad_rows": _plain(result.bad_rows),
        "warnings": list(result.warnings),
    }


def write_summary(result: AuditResult, path: Path) -> Path:
    """Write ``summary.json`` (UTF-8, indented)."""
    path.write_text(json.dumps(summary_dict(result), indent=2, ensure_ascii=False) + "\n",
                    encoding="utf-8")
    return path


# -- CSV files ------------------------------------------------------------------------------

def daily_frame(result: AuditResult) -> pd.DataFrame:
    """The rows of ``daily.csv``."""
    tz = result.site.timezone
    parts = []
    for comp in result.components:
        d = comp.daily
        f = pd.DataFrame({"component": comp.key,
                          "date": [x.isoformat() for x in d["date"]],
                          "weekday": d["weekday"], "day_off": d["day_off"]})
        for k in ("period", "scheduled", "running", "in_schedule", "in_allowance",
                  "off_schedule", "missed", "off", "no_data"):
            f[f"{k}_h"] = (d[f"{k}_ns"] / NS_PER_H).round(HOURS_DECIMALS)
        f["first_start"] = [local_iso(x, tz) for x in d["first_start"]]
        f["last_stop"] = [local_iso(x, tz) for x in d["last_stop"]]
        f["starts"] = d["starts"].astype(int)
        f["off_schedule_kwh"] = d["off_schedule_kwh"].astype(float).round(ENERGY_DECIMALS)
        parts.append(f)
    if not parts:
        return pd.DataFrame(columns=list(DAILY_COLUMNS))
    return pd.concat(parts, ignore_index=True)[list(DAILY_COLUMNS)]


def runs_frame(result: AuditResult) -> pd.DataFrame:
    """The rows of ``runs.csv``: every state interval of every component, in time order.

    The intervals are those the accounting counted (each state's set, touching pieces merged);
    each carries the classifier's level of the piece it starts in.
    """
    tz = result.site.timezone
    parts = []
    for comp in result.components:
        f = _state_frame(comp.account.states)
        level = comp.states.level_at(to_ns(f["start"])) if len(f) else np.zeros(0)
        parts.append(pd.DataFrame({
            "component": comp.key, "state": f["state"].to_numpy(),
            "start": [local_iso(x, tz) for x in f["start"]],
            "end": [local_iso(x, tz) for x in f["end"]],
            "hours": ((f["end"] - f["start"]) / pd.Timedelta("1h")).round(HOURS_DECIMALS)
            .to_numpy(),
            "level": np.round(level, 4),
        }))
    if not parts:
        return pd.DataFrame(columns=list(RUNS_COLUMNS))
    return pd.concat(parts, ignore_index=True)[list(RUNS_COLUMNS)]


def _state_frame(states: StateSets) -> pd.DataFrame:
    """A run-state table (``start``, ``end``, ``state``; UTC) from the three sets, by start."""
    parts = []
    for name in STATES:
        s = states.of(name)
        if len(s):
            f = s.to_frame()
            f["state"] = name
            parts.append(f)
    if not parts:
        return pd.DataFrame({"start": from_ns([]), "end": from_ns([]), "state": []})
    out = pd.concat(parts, ignore_index=True).sort_values("start", kind="stable")
    return out.reset_index(drop=True)


def findings_frame(result: AuditResult) -> pd.DataFrame:
    """The rows of ``findings.csv``."""
    recs = finding_records(result)
    return pd.DataFrame(recs, columns=list(FINDINGS_COLUMNS))


def schedule_frame(result: AuditResult) -> pd.DataFrame:
    """The rows of ``schedule.csv``: each unit's intended intervals inside the window."""
    tz = result.site.timezone
    rows = []
    for unit_id, sched in result.schedules.items():
        f = sched.intervals
        if f is None or len(f) == 0:
            continue
        f = f[(f["end"] > result.start) & (f["start"] < result.end)].sort_values("start")
        for r in f.itertuples(index=False):
            rows.append({"unit": unit_id, "kind": r.kind,
                         "start": local_iso(max(r.start, result.start), tz),
                         "end": local_iso(min(r.end, result.end), tz),
                         "source": str(getattr(r, "source", ""))})
    return pd.DataFrame(rows, columns=list(SCHEDULE_COLUMNS))


def _write_csv(frame: pd.DataFrame, path: Path) -> Path:
    csv_frame(frame).to_csv(path, index=False, encoding="utf-8", lineterminator="\n")
    return path


# -- findings.ics ---------------------------------------------------------------------------

def finding_uid(component: str, kind: str, start: pd.Timestamp) -> str:
    """A UID that stays the same for the same finding in a later audit (RFC 5545 3.8.4.7)."""
    key = f"{component}|{kind}|{pd.Timestamp(start).tz_convert('UTC').isoformat()}"
    return hashlib.sha1(key.encode("utf-8")).hexdigest()[:24] + "@schedcheck.invalid"


def findings_calendar(result: AuditResult) -> bytes:
    """The findings as an iCalendar (RFC 5545) file, one VEVENT per finding, times in UTC."""
    import icalendar

    cal = icalendar.Calendar()
    cal.add("prodid", f"-//schedcheck//audit findings {_version}//EN")
    cal.add("version", "2.0")
    cal.add("calscale", "GREGORIAN")
    # RFC 7986 section 5.1; given as TEXT so it is escaped (the library types NAME as unknown)
    cal.add("name", icalendar.vText(ics_text(f"{result.site.name}: schedule findings")))
    stamp = result.generated.tz_convert("UTC").to_pydatetime()
    for row in result.findings.itertuples(index=False):
        ev = icalendar.Event()
        ev.add("uid", finding_uid(row.component, row.kind, row.start))
        ev.add("dtstamp", stamp)
        ev.add("dtstart", pd.Timestamp(row.start).tz_convert("UTC").floor("s").to_pydatetime())
        ev.add("dtend", pd.Timestamp(row.end).tz_convert("UTC").ceil("s").to_pydatetime())
        words = KIND_WORDS.get(row.kind, str(row.kind).replace("_", " "))
        ev.add("summary", ics_text(f"{row.component}: {words}, {row.hours:.1f} h"))
        ev.add("description", ics_text(row.detail))
        ev.add("categories", [ics_text(row.kind)])
        ev.add("transp", "TRANSPARENT")
        cal.add_component(ev)
    if len(result.findings) == 0:
        # RFC 5545 section 3.6 needs at least one component in a calendar; a journal entry
        # records the clean audit without putting anything in anyone's diary.
        note = icalendar.Journal()
        note.add("uid", finding_uid(result.site.name, "no_findings", result.start))
        note.add("dtstamp", stamp)
        note.add("dtstart", result.first_date)
        note.add("summary", ics_text(f"{result.site.name}: no findings from "
                                     f"{result.first_date} to {result.last_date}"))
        cal.add_component(note)
    return cal.to_ical()


# -- all of them ----------------------------------------------------------------------------

def write_audit_files(result: AuditResult, outdir: Path) -> dict[str, Path]:
    """Write every data file of the audit into ``outdir`` (created if needed).

    Returns file name -> path; ``report.html`` is written separately (see ``outputs.report``).
    """
    outdir = Path(outdir)
    outdir.mkdir(parents=True, exist_ok=True)
    files = {
        "summary.json": write_summary(result, outdir / "summary.json"),
        "daily.csv": _write_csv(daily_frame(result), outdir / "daily.csv"),
        "runs.csv": _write_csv(runs_frame(result), outdir / "runs.csv"),
        "findings.csv": _write_csv(findings_frame(result), outdir / "findings.csv"),
        "schedule.csv": _write_csv(schedule_frame(result), outdir / "schedule.csv"),
    }
    ics = outdir / "findings.ics"
    ics.write_bytes(findings_calendar(result))
    files["findings.ics"] = ics
    return files
