"""TEST FIXTURE: writes a fictional audit output folder for the report tests and benchmark.

Invented data for tests only (no real site). It computes the files the way an audit would, on a
one-minute grid, so the figures are consistent with each other: runs.csv covers the window
exactly, daily hours add up, findings are the off-schedule stretches. It does not run the real
classifier or schedule expansion; the real audit's own tests cover those.

Rules of the invented building: occupied Monday-Friday 07:00-17:00 local except days off;
allowance 2 h before and 30 min after. Fans run about 05:40-17:20 on working days. Planted
faults: the first unit runs until 23:00 on Wednesdays (night), the second unit runs through
weekends (weekend), every unit runs on the holiday (holiday); one sensor is silent for 3 h on
the second day (no data), and every 29th day the first component is off all day (missed).
"""

from __future__ import annotations

import datetime as dt
import json
from pathlib import Path

import numpy as np
import pandas as pd

from schedcheck.changes.capa import daily_episodes
from schedcheck.outputs.episode_records import episode_records

DEFAULT_UNITS = [
    ("AHU-1", "North wing offices", [("supply", "supply_fan", "S-101", 7.5),
                                     ("exhaust", "exhaust_fan", "S-102", 5.5)]),
    ("AHU-2", "Library hall", [("supply", "supply_fan", "S-201", 11.0),
                               ("wheel", "heat_wheel", "S-202", 0.37)]),
]


def _iso(ts: pd.Series | pd.DatetimeIndex, tz: str) -> list[str]:
    return [t.isoformat() for t in pd.DatetimeIndex(ts).tz_convert(tz)]


def _segments(values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Start and end index of each run of equal values."""
    change = np.flatnonzero(np.diff(values)) + 1
    starts = np.concatenate([[0], change])
    ends = np.concatenate([change, [len(values)]])
    return starts, ends


def write_fixture(outdir: Path, *, first: dt.date = dt.date(2026, 3, 23), days: int = 14,
                  tz: str = "Europe/Oslo", units=None, site_name: str = "Harbour Street Offices",
                  holiday: tuple[int, str] | None = (3, "Founders' Day"), seed: int = 7,
                  gaps_per_day: int = 0, event_name: str = "Offices open") -> Path:
    """Write summary.json, daily.csv, runs.csv, findings.csv and schedule.csv into ``outdir``.

    ``gaps_per_day`` adds that many random 2-10 minute no-data gaps per component and day
    (lost radio packets), which fragments runs.csv the way real data does.
    """
    units = DEFAULT_UNITS if units is None else units
    rng = np.random.default_rng(seed)
    outdir.mkdir(parents=True, exist_ok=True)
    last = first + dt.timedelta(days=days - 1)
    start = pd.Timestamp(first).tz_localize(tz).tz_convert("UTC")
    end = pd.Timestamp(last + dt.timedelta(days=1)).tz_localize(tz).tz_convert("UTC")
    grid = pd.date_range(start, end, freq="1min", inclusive="left")
    local = grid.tz_convert(tz)
    dates = np.array(local.date)
    day_idx = np.array([(d - first).days for d in dates])
    mod = local.hour.to_numpy() * 60 + local.minute.to_numpy()
    wd = local.day_of_week.to_numpy()
    hol_dates = {}
    if holiday is not None:
        hol_dates[first + dt.timedelta(days=holiday[0])] = holiday[1]
    is_hol = np.isin(dates, list(hol_dates))
    work = (wd < 5) & ~is_hol
    occ = work & (mod >= 420) & (mod < 1020)
    allow = work & (((mod >= 300) & (mod < 420)) | ((mod >= 1020) & (mod < 1050)))
    sched_kind = np.where(occ, 1, np.where(allow, 2, 0))

    runs_rows, daily_rows, findings, comps, sensors, schedule_rows = [], [], [], [], [], []
    for ui, (uid, _name, components) in enumerate(units):
        for kind_code, kind in ((1, "occupied"), (2, "allowance")):
            m = (sched_kind == kind_code).astype(np.int8)
            s_idx, e_idx = _segments(m)
            for a, b in zip(s_idx, e_idx, strict=True):
                if m[a]:
                    end_ts = grid[b] if b < len(grid) else end
                    source = event_name if kind == "occupied" else "early start 2h"
                    schedule_rows.append((uid, kind, grid[a], end_ts, source))
        for ci, (cid, role, sensor, power) in enumerate(components):
            key = f"{uid}/{cid}"
            on = (wd < 5) & (mod >= 340 + ci * 3) & (mod < 1040 - ci * 2)
            if ui == 0:
                on |= (wd == 2) & (mod >= 340) & (mod < 1380)
            if ui == 1:
                on |= wd >= 5
            if ci == 0 and ui == 0:
                on &= ~((day_idx % 29) == 10)
            state = np.where(on, 1, 0)
            if ui == 0 and ci == 0:
                state[(day_idx == 1) & (mod >= 600) & (mod < 780)] = 2
            if gaps_per_day:
                at = rng.integers(0, len(state), gaps_per_day * days)
                for a, n in zip(at, rng.integers(2, 11, len(at)), strict=True):
                    state[a:a + n] = 2
            speed = 0.85
            kw = power * speed**3.0
            s_idx, e_idx = _segments(state)
            names = {0: "off", 1: "run", 2: "no_data"}
            for a, b in zip(s_idx, e_idx, strict=True):
                end_ts = grid[b] if b < len(grid) else end
                st = names[int(state[a])]
                level = np.nan if st == "no_data" else (2.1 if st == "run" else 0.08)
                runs_rows.append((key, st, grid[a], end_ts, (b - a) / 60, level))
            off_sched = (state == 1) & (sched_kind == 0)
            fs, fe = _segments(off_sched.astype(np.int8))
            for a, b in zip(fs, fe, strict=True):
                if not off_sched[a] or b - a < 15:
                    continue
                d = dates[a]
                fkind = ("holiday" if d in hol_dates else "weekend" if wd[a] >= 5 else "night")
                hours = (b - a) / 60
                why = {"holiday": f"on {hol_dates.get(d, '')}", "weekend": "on a weekend",
                       "night": "outside the occupied period and its allowances"}[fkind]
                findings.append({
                    "component": key, "kind": fkind, "start": grid[a],
                    "end": grid[b] if b < len(grid) else end, "hours": round(hours, 2),
                    "kwh": round(hours * kw, 2), "cost": round(hours * kw * 1.2, 2),
                    "co2_kg": round(hours * kw * 0.017, 3),
                    "detail": f"{key} ran {hours:.1f} h {why}; check the time program.",
                })
            frame = pd.DataFrame({"day": day_idx, "run": state == 1, "off": state == 0,
                                  "nd": state == 2, "ins": (state == 1) & occ,
                                  "alw": (state == 1) & allow, "os": off_sched,
                                  "occ": occ, "missed": occ & (state == 0)})
            per = frame.groupby("day").sum() / 60.0
            run_min = np.flatnonzero(state == 1)
            run_day = day_idx[run_min]
            rise = np.flatnonzero(np.diff(np.concatenate([[0], (state == 1).astype(int)])) == 1)
            n_starts = np.bincount(day_idx[rise], minlength=days)
            firsts = pd.Series(run_min).groupby(run_day).min()
            lasts = pd.Series(run_min).groupby(run_day).max()
            for d_i, row in per.iterrows():
                d = first + dt.timedelta(days=int(d_i))
                on_min = ([firsts[d_i], lasts[d_i]] if d_i in firsts.index else [])
                starts = int(n_starts[d_i])
                daily_rows.append({
                    "component": key, "date": d.isoformat(), "weekday": d.strftime("%a"),
                    "day_off": hol_dates.get(d, ""), "period_h": float((day_idx == d_i).sum() / 60),
                    "scheduled_h": row.occ, "running_h": row.run, "in_schedule_h": row.ins,
                    "in_allowance_h": row.alw, "off_schedule_h": row.os, "missed_h": row.missed,
                    "off_h": row.off, "no_data_h": row.nd,
                    "first_start": local[on_min[0]].isoformat() if len(on_min) else "",
                    "last_stop": (local[on_min[-1]] + pd.Timedelta("1min")).isoformat()
                    if len(on_min) else "",
                    "starts": starts, "off_schedule_kwh": round(row.os * kw, 3),
                })
            tot = frame.drop(columns="day").sum() / 60.0
            levels = np.concatenate([rng.normal(np.log10(2.1), 0.08, 700),
                                     rng.normal(np.log10(0.08), 0.1, 900)])
            counts, edges = np.histogram(levels, bins=40)
            comps.append({
                "id": key, "unit": uid, "name": cid.replace("_", " "), "role": role,
                "sensor": sensor, "power_kw": power, "speed": speed, "exponent": 3.0,
                "hours": {"period": float(len(grid) / 60), "scheduled": tot.occ,
                          "running": tot.run, "in_schedule": tot.ins, "in_allowance": tot.alw,
                          "off_schedule": tot.os, "missed": tot.missed if role != "heat_wheel"
                          else 0.0, "no_data": tot.nd},
                "starts": int(sum(r["starts"] for r in daily_rows if r["component"] == key)),
                "threshold": {"level": 0.41, "source": "learned", "separation": 8.4,
                              "effectiveness": 0.97, "on_level": 0.48, "off_level": 0.35,
                              "histogram": {"edges": [round(e, 4) for e in edges],
                                            "counts": counts.tolist()}, "warnings": []},
                "energy": {"running_kwh": tot.run * kw, "running_kw": kw,
                           "running_cost": tot.run * kw * 1.2,
                           "running_co2_kg": tot.run * kw * 0.017,
                           "off_schedule_kwh": tot.os * kw, "off_schedule_cost": tot.os * kw * 1.2,
                           "off_schedule_co2_kg": tot.os * kw * 0.017},
                "findings": sum(1 for f in findings if f["component"] == key),
                # the real CAPA on the fixture's own daily off-schedule hours
                "episodes": episode_records(daily_episodes(
                    [first + dt.timedelta(days=int(i)) for i in per.index],
                    per["os"].to_numpy(dtype=float))),
            })
            sensors.append({"sensor": sensor, "component": key, "first": start.isoformat(),
                            "last": end.isoformat(), "count": int((state != 2).sum()),
                            "median_interval_s": 60.0, "gaps": int(ui == 0 and ci == 0),
                            "gap_hours": 3.0 if ui == 0 and ci == 0 else 0.0, "duplicates": 0,
                            "conflicting": 0, "out_of_order": 0,
                            "coverage": float((state != 2).mean())})
    summary = {
        "schema": 2,
        "site": {"name": site_name, "timezone": tz, "currency": "NOK", "price": 1.2,
                 "co2_per_kwh": 0.017, "reading_unit": "mm/s"},
        "period": {"start": start.tz_convert(tz).isoformat(), "end": end.tz_convert(tz).isoformat(),
                   "first_date": first.isoformat(), "last_date": last.isoformat()},
        "units": [{"id": u[0], "name": u[1], "state_component": f"{u[0]}/{u[2][0][0]}"}
                  for u in units],
        "components": comps,
        "findings": [{**f, "start": f["start"].tz_convert(tz).isoformat(),
                      "end": f["end"].tz_convert(tz).isoformat()} for f in findings],
        "sensors": sensors,
        "days_off": [{"unit": u[0], "date": d.isoformat(), "name": n, "kind": "holiday"}
                     for u in units for d, n in hol_dates.items()],
        "bad_rows": {"count": 0, "examples": []}, "warnings": [],
        "generated": "2026-04-06T08:00:00+00:00", "tool_version": "test-fixture",
    }
    (outdir / "summary.json").write_text(json.dumps(summary, indent=1), encoding="utf-8")
    pd.DataFrame(daily_rows).to_csv(outdir / "daily.csv", index=False)
    runs = pd.DataFrame(runs_rows, columns=["component", "state", "start", "end", "hours", "level"])
    runs["start"], runs["end"] = _iso(runs["start"], tz), _iso(runs["end"], tz)
    runs.to_csv(outdir / "runs.csv", index=False)
    fdf = pd.DataFrame(summary["findings"], columns=["component", "kind", "start", "end", "hours",
                                                     "kwh", "cost", "co2_kg", "detail"])
    fdf.to_csv(outdir / "findings.csv", index=False)
    sched = pd.DataFrame(schedule_rows, columns=["unit", "kind", "start", "end", "source"])
    sched["start"], sched["end"] = _iso(sched["start"], tz), _iso(sched["end"], tz)
    sched.to_csv(outdir / "schedule.csv", index=False)
    return outdir
