"""Writers of the audit's files: summary.json, daily.csv, runs.csv, findings.csv, findings.ics
and schedule.csv (field by field in docs/outputs.md).

Instants in the files are local ISO 8601 with the UTC offset, rounded to the second by the one
rule of :mod:`schedcheck.outputs.instants` (``findings.ics`` too), with local date and time
columns beside them in the CSV files; hours are rounded
to :data:`HOURS_DECIMALS` decimals (the identities between them hold exactly before rounding,
and ``summary.json`` also carries the exact ``seconds``).
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd

from schedcheck import __version__ as _version
from schedcheck.audit.accounting import FIGURES
from schedcheck.audit.run import AuditResult
from schedcheck.audit.speed_limits import hours_by_speed
from schedcheck.intervals import NS_PER_H, NS_PER_S, from_ns, to_ns
from schedcheck.outputs.cells import csv_frame
from schedcheck.outputs.episode_records import episode_records
from schedcheck.outputs.findings_files import (  # noqa: F401 - re-exported
    FINDINGS_COLUMNS,
    KIND_WORDS,
    finding_records,
    finding_uid,
    findings_calendar,
    findings_frame,
    projection_record,
)
from schedcheck.outputs.instants import (
    csv_encoding,
    local_iso,
    local_iso_many,
    with_local_columns,
)
from schedcheck.outputs.levels_file import LEVELS_FILE, write_levels
from schedcheck.outputs.schema import SUMMARY_SCHEMA
from schedcheck.outputs.thermal_fields import (
    DAILY_THERMAL,
    energy_fields,
    prices_outdoor_air,
    total_fields,
)
from schedcheck.outputs.trends_files import trend_hours, trend_points, write_trends_file
from schedcheck.outputs.values import (  # noqa: F401 - re-exported
    COST_DECIMALS,
    ENERGY_DECIMALS,
    HOURS_DECIMALS,
    _plain,
    _r,
)
from schedcheck.outputs.wording import separation_figure
from schedcheck.runstate.lookback import learns_from_all
from schedcheck.runstate.onofflevel import SEPARATION_CAP
from schedcheck.runstate.speeds import SPEED_STEP, SpeedPieces
from schedcheck.runstate.states import STATES, StateSets
from schedcheck.window import local_midnight

DAILY_COLUMNS = ("component", "date", "weekday", "day_off", "period_h", "scheduled_h",
                 "running_h", "in_schedule_h", "in_allowance_h", "off_schedule_h", "missed_h",
                 "off_h", "no_data_h", "first_start", "last_stop", "starts", "off_schedule_kwh",
                 "mean_speed")
RUNS_COLUMNS = ("component", "state", "start", "end", "hours", "level", "speed", "speed_source")
SCHEDULE_COLUMNS = ("unit", "kind", "start", "end", "source")

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
    out["separation"] = separation_figure(get("separation", None), SEPARATION_CAP)
    out["concerns"] = [str(x) for x in get("concerns", ()) or ()]
    out["histogram"] = _plain(hist) if hist is not None else {"edges": [], "counts": []}
    out["groups"] = _plain(get("groups", ()) or ())
    out["reason"] = str(get("reason", "") or "")
    out["warnings"] = list(comp.state_warnings)
    return out


def _component_summary(comp, result: AuditResult) -> dict:
    acc = comp.account
    c = comp.component
    n_find = sum(comp.key in list(c) for c in result.findings["components"])
    en = comp.energy
    return {
        "id": comp.key, "unit": c.unit, "name": comp.unit.name, "component": c.id,
        "role": c.role, "sensor": c.sensor, "power_kw": c.power_kw, "speed": c.speed,
        "exponent": result.site.energy.exponent, "is_state_component":
            comp.unit.state_component is not None and comp.unit.state_component.key == c.key,
        "missed_counted": acc.counts_missed,
        "hours": _hours(comp) | trend_hours(result, comp.key), **trend_points(result, comp.key),
        "seconds": {k: _r(acc.ns[k] / NS_PER_S, 3) for k in FIGURES},
        "speed_source": comp.speeds.main_source,
        "speed_levels": [{"level": _r(lv.level, 4), "speed": _r(lv.speed, 3),
                          "low": _r(lv.low, 3), "high": _r(lv.high, 3), "source": lv.source}
                         for lv in comp.speeds.levels],
        "speed_exponent": comp.speeds.exponent,
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
            **energy_fields(en, ENERGY_DECIMALS, COST_DECIMALS, HOURS_DECIMALS),
        },
        "findings": n_find,
        "episodes": episode_records(result.episodes.get(comp.key, [])),
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


def lookback_fields(result: AuditResult) -> dict[str, object]:
    """``lookback_start`` (local, None: the window alone) and ``levels_learned_from`` (in words)
    for ``summary.json``'s period (see :mod:`schedcheck.runstate.lookback`)."""
    lb = result.lookback_start
    tz = result.site.timezone
    learned = ("all readings in the files" if learns_from_all(result.site.run_state)
               else "the look-back and the window" if lb is not None else "the window")
    return {"lookback_start": local_iso(lb, tz) if lb is not None else None,
            "levels_learned_from": learned}


def _unit_summary(unit, result: AuditResult) -> dict:
    """A unit's entry: its state is its state component's (its supply fan where it has one)."""
    sc = unit.state_component
    out = {"id": unit.id, "name": unit.name, "state_component": sc.key if sc else None,
           "off_schedule_unit_hours": _r(result.unit_hours.get(unit.id, 0.0), HOURS_DECIMALS)}
    if sc is not None:
        out["hours"] = _hours(result.component(sc.key))
    return out


def _hours(comp) -> dict:
    """Hour figures of one component, with its running hours by speed (rounded to 0.05)."""
    acc = comp.account
    return {**{k: _r(acc.ns[k] / NS_PER_H, HOURS_DECIMALS) for k in FIGURES},
            "by_speed": [{"speed": _r(v, 2), "hours": _r(h, HOURS_DECIMALS)}
                         for v, h in hours_by_speed(comp.speeds, SPEED_STEP)]}


def summary_dict(result: AuditResult, provenance: dict | None = None) -> dict:
    """Everything ``summary.json`` holds, as a plain dict (``provenance`` where given: see
    :func:`schedcheck.inputs.provenance.provenance`)."""
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
    total.update(total_fields(result.components, ENERGY_DECIMALS, COST_DECIMALS))
    total["findings"] = len(result.findings)
    total["component_findings"] = (len(result.component_findings)
                                   if result.component_findings is not None else None)
    total["unit_hours"] = _r(sum(result.unit_hours.values()), HOURS_DECIMALS)
    total["component_hours"] = _r(result.component_hours, HOURS_DECIMALS)
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
                               HOURS_DECIMALS),
                   **lookback_fields(result)},
        "units": [_unit_summary(u, result) for u in site.units],
        "components": comps,
        "totals": total,
        "findings": finding_records(result),
        "projection": projection_record(result),
        "sensors": _sensor_rows(result),
        "days_off": _days_off_rows(result),
        "bad_rows": _plain(result.bad_rows),
        "warnings": list(result.warnings),
    } | ({"provenance": _plain(provenance)} if provenance is not None else {})


def write_summary(result: AuditResult, path: Path, provenance: dict | None = None) -> Path:
    """Write ``summary.json`` (UTF-8, indented)."""
    text = json.dumps(summary_dict(result, provenance), indent=2, ensure_ascii=False)
    path.write_text(text + "\n", encoding="utf-8")
    return path


# -- CSV files ------------------------------------------------------------------------------

def daily_frame(result: AuditResult) -> pd.DataFrame:
    """The rows of ``daily.csv``."""
    tz = result.site.timezone
    cols: dict[str, list] = {}      # column -> one array per component, joined at the end
    midnights: dict = {}            # local date -> its midnight [ns]: the components share them
    w0, w1 = to_ns(result.start), to_ns(result.end)

    def put(name: str, values) -> None:
        cols.setdefault(name, []).append(np.asarray(values))

    for comp in result.components:
        d = comp.daily
        n = len(d)
        put("component", np.full(n, comp.key, dtype=object))
        put("date", np.array([x.isoformat() for x in d["date"]], dtype=object))
        put("weekday", d["weekday"].to_numpy())
        put("day_off", d["day_off"].to_numpy())
        for k in ("period", "scheduled", "running", "in_schedule", "in_allowance",
                  "off_schedule", "missed", "off", "no_data"):
            put(f"{k}_h", np.round(d[f"{k}_ns"].to_numpy() / NS_PER_H, HOURS_DECIMALS))
        put("first_start", np.array(list(d["first_start"]), dtype=object))
        put("last_stop", np.array(list(d["last_stop"]), dtype=object))
        put("starts", d["starts"].to_numpy().astype(int))
        put("off_schedule_kwh", np.round(d["off_schedule_kwh"].to_numpy(dtype=float),
                                         ENERGY_DECIMALS))
        for x in d["date"]:
            if x not in midnights:
                midnights[x] = to_ns(local_midnight(x, tz))
        edges = np.array([midnights[x] for x in d["date"]] + [w1], dtype=np.int64)
        run_ns = d["running_ns"].to_numpy(dtype=float)
        with np.errstate(invalid="ignore", divide="ignore"):
            mean = comp.speeds.speed_ns_per_bin(np.clip(edges, w0, w1)) / run_ns
        put("mean_speed", np.where(run_ns > 0, np.round(mean, 3), np.nan))
        for k in DAILY_THERMAL:
            put(k, np.round(d[k].to_numpy(dtype=float), ENERGY_DECIMALS) if k in d
                else np.full(n, np.nan))
    if not result.components:
        return pd.DataFrame(columns=list(DAILY_COLUMNS))
    extra = list(DAILY_THERMAL) if prices_outdoor_air(result) else []
    out = {k: np.concatenate(v) for k, v in cols.items()}
    # every component's first starts and last stops formatted as one array
    out["first_start"] = local_iso_many(out["first_start"], tz)
    out["last_stop"] = local_iso_many(out["last_stop"], tz)
    return pd.DataFrame(out)[list(DAILY_COLUMNS) + extra]


def runs_frame(result: AuditResult) -> pd.DataFrame:
    """The rows of ``runs.csv``: every state interval of every component, in time order.

    The intervals are those the accounting counted (each state's set, touching pieces merged);
    a run interval split at speed changes carries the median level of its own readings, any
    other the classifier's level of the piece it starts in.
    """
    tz = result.site.timezone
    cols: dict[str, list] = {k: [] for k in RUNS_COLUMNS}
    for comp in result.components:
        t = _state_arrays(comp.account.states, comp.speeds)
        s_ns, e_ns = t["start"], t["end"]
        cols["component"].append(np.full(len(s_ns), comp.key, dtype=object))
        cols["state"].append(t["state"])
        cols["start"].append(s_ns)
        cols["end"].append(e_ns)
        cols["hours"].append(np.round((e_ns - s_ns) / NS_PER_H, HOURS_DECIMALS))
        level = comp.states.level_at(s_ns) if len(s_ns) else np.zeros(0)
        own = t["level"]   # a speed piece's own median level, else NaN
        cols["level"].append(np.round(np.where(np.isfinite(own), own, level), 4))
        cols["speed"].append(np.round(t["speed"], 3))
        cols["speed_source"].append(t["speed_source"])
    if not result.components:
        return pd.DataFrame(columns=list(RUNS_COLUMNS))
    out = {k: np.concatenate(v) for k, v in cols.items()}
    # every component's instants formatted as one array
    out["start"] = local_iso_many(from_ns(out["start"]), tz)
    out["end"] = local_iso_many(from_ns(out["end"]), tz)
    return pd.DataFrame(out)[list(RUNS_COLUMNS)]


def _state_arrays(states: StateSets, speeds: SpeedPieces | None = None) -> dict[str, np.ndarray]:
    """A run-state table's columns (``start``, ``end`` [int64 ns UTC], ``state``, ``speed``,
    ``speed_source``, ``level`` (a run piece's own median level, else NaN)) from the three
    sets, by start; run intervals split where the speed changes (``speeds``)."""
    parts = []
    for name in STATES:
        s = states.of(name)
        if name == "run" and speeds is not None and len(s):
            n = len(speeds.starts)
            level = (np.asarray(speeds.level, float) if speeds.level is not None
                     else np.full(n, np.nan))
            parts.append((np.asarray(speeds.starts, np.int64), np.asarray(speeds.ends, np.int64),
                          np.full(n, name, dtype=object), np.asarray(speeds.speed, float),
                          np.asarray(speeds.source, dtype=object), level))
        elif len(s):
            n = len(s)
            parts.append((np.asarray(s.starts, np.int64), np.asarray(s.ends, np.int64),
                          np.full(n, name, dtype=object), np.full(n, np.nan),
                          np.full(n, "", dtype=object), np.full(n, np.nan)))
    if not parts:
        return {"start": np.zeros(0, np.int64), "end": np.zeros(0, np.int64),
                "state": np.zeros(0, dtype=object), "speed": np.zeros(0),
                "speed_source": np.zeros(0, dtype=object), "level": np.zeros(0)}
    cols = [np.concatenate(c) for c in zip(*parts, strict=True)]
    order = np.argsort(cols[0], kind="stable")
    return dict(zip(("start", "end", "state", "speed", "speed_source", "level"),
                    (c[order] for c in cols), strict=True))


def schedule_frame(result: AuditResult) -> pd.DataFrame:
    """The rows of ``schedule.csv``: each unit's intended intervals inside the window."""
    tz = result.site.timezone
    cols: dict[str, list] = {k: [] for k in SCHEDULE_COLUMNS}
    w0, w1 = to_ns(result.start), to_ns(result.end)
    for unit_id, sched in result.schedules.items():
        f = sched.intervals
        if f is None or len(f) == 0:
            continue
        f = f[(f["end"] > result.start) & (f["start"] < result.end)].sort_values("start")
        cols["unit"].append(np.full(len(f), unit_id, dtype=object))
        cols["kind"].append(f["kind"].to_numpy(dtype=object))
        cols["start"].append(np.maximum(to_ns(f["start"]), w0))
        cols["end"].append(np.minimum(to_ns(f["end"]), w1))
        cols["source"].append(np.array([str(x) for x in f["source"]] if "source" in f
                                       else [""] * len(f), dtype=object))
    if not cols["unit"]:
        return pd.DataFrame([], columns=list(SCHEDULE_COLUMNS))
    out = {k: np.concatenate(v) for k, v in cols.items()}
    # every unit's instants formatted as one array
    out["start"] = local_iso_many(from_ns(out["start"]), tz)
    out["end"] = local_iso_many(from_ns(out["end"]), tz)
    return pd.DataFrame(out, columns=list(SCHEDULE_COLUMNS))


def _write_csv(frame: pd.DataFrame, path: Path, *, excel: bool = False,
               instants: tuple[str, ...] = ("start", "end")) -> Path:
    """Write ``frame`` with local date and time columns beside its ISO ``instants``, cells
    from input text neutralised for spreadsheets (:func:`schedcheck.outputs.cells.csv_frame`)."""
    csv_frame(with_local_columns(frame, instants)).to_csv(
        path, index=False, lineterminator="\n", encoding=csv_encoding(excel=excel))
    return path


# -- all of them ----------------------------------------------------------------------------

def write_audit_files(result: AuditResult, outdir: Path, *, provenance: dict | None = None,
                      levels: pd.DataFrame | None = None, excel: bool = False) -> dict[str, Path]:
    """Write every data file of the audit into ``outdir`` (created if needed); ``excel``
    writes the CSV files as UTF-8 with a byte-order mark for spreadsheet programs.

    ``provenance`` goes into ``summary.json``; ``levels`` (from
    :func:`schedcheck.audit.evidence.evidence_levels`) into ``levels.csv.gz``.
    Returns file name -> path; ``report.html`` is written separately (see ``outputs.report``).
    """
    outdir = Path(outdir)
    outdir.mkdir(parents=True, exist_ok=True)
    files = {}
    if levels is not None:
        files[LEVELS_FILE] = write_levels(levels, result.site.timezone, outdir / LEVELS_FILE)
    files |= {
        "summary.json": write_summary(result, outdir / "summary.json", provenance),
        "daily.csv": _write_csv(daily_frame(result), outdir / "daily.csv", excel=excel,
                                instants=()),
        "runs.csv": _write_csv(runs_frame(result), outdir / "runs.csv", excel=excel),
        "findings.csv": _write_csv(findings_frame(result), outdir / "findings.csv",
                                   excel=excel),
        "schedule.csv": _write_csv(schedule_frame(result), outdir / "schedule.csv",
                                   excel=excel),
    }
    files |= write_trends_file(result, outdir, lambda f, p: _write_csv(f, p, excel=excel))
    ics = outdir / "findings.ics"
    ics.write_bytes(findings_calendar(result))
    files["findings.ics"] = ics
    return files
