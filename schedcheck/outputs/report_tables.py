"""The report's smaller tables: the intended schedule, days off, sensors and daylight-saving
days (a part of :mod:`schedcheck.outputs.report`)."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd

SENSOR_KEYS = ("sensor", "component", "first", "last", "count", "median_interval_s", "gaps",
               "gap_hours", "duplicates", "conflicting", "out_of_order", "coverage")


def _local(ts: pd.Timestamp, tz: str, fmt: str = "%a %d %b %Y %H:%M") -> str:
    if ts is None or pd.isna(ts):
        return "–"
    return ts.tz_convert(tz).strftime(fmt)


def _intended(schedule: pd.DataFrame, units: list[dict]) -> list[dict]:
    """Per unit: hours of each kind of intended interval and what they came from."""
    out = []
    sched = schedule.assign(hours=(schedule["end"] - schedule["start"]).dt.total_seconds() / 3600)
    where = sched.groupby("unit", sort=False).indices if len(sched) else {}
    kinds = sched["kind"].to_numpy(dtype=object)
    sources = (sched["source"].to_numpy(dtype=object) if "source" in sched
               else np.full(len(sched), None, dtype=object))
    hours = sched["hours"].to_numpy(dtype=float)
    done: dict = {}      # units of one shared calendar have the same rows: counted once
    for u in units:
        pos = where.get(u["id"], np.zeros(0, dtype=np.intp))
        key = (tuple(kinds[pos].tolist()), tuple(sources[pos].tolist()), hours[pos].tobytes())
        if key not in done:
            done[key] = _intended_entry(sched.iloc[pos])
        out.append({"id": u["id"], "name": u["name"]} | done[key])
    return out


def _intended_entry(rows: pd.DataFrame) -> dict:
    entry = {}
    for kind in ("occupied", "allowance", "allowed"):
        part = rows[rows["kind"] == kind]
        entry[f"{kind}_h"] = float(part["hours"].sum())
        src = part["source"] if "source" in part else pd.Series(dtype=object)
        counts = src.fillna("").astype(str).value_counts()
        entry[f"{kind}_sources"] = [(name, int(n)) for name, n in counts.items() if name][:8]
    return entry


def _days_off_rows(days_off: pd.DataFrame, unit_ids: list[str]) -> list[dict]:
    """One row per day off (date, name, kind) with the units it applies to ("all" if every)."""
    rows = []
    if len(days_off) == 0:
        return rows
    for (date, name, kind), g in days_off.groupby(["date", "name", "kind"], sort=True):
        units = sorted({str(u) for u in g["unit"] if u})
        every = not units or set(units) >= set(unit_ids)
        rows.append({"date": date.strftime("%a %d %b %Y"), "name": name, "kind": kind,
                     "units": "all" if every else ", ".join(units)})
    return rows


def _when(text: str | None) -> str:
    """The audit's creation instant as ``01 Dec 2026 22:02 UTC`` (as written if unreadable)."""
    try:
        ts = pd.Timestamp(text)
    except (TypeError, ValueError):
        return str(text or "")
    if ts is pd.NaT or ts.tzinfo is None:
        return str(text or "")
    return ts.tz_convert("UTC").strftime("%d %b %Y %H:%M UTC")


def _sensors(rows: list[dict], tz: str) -> list[dict]:
    """Sensor health rows with every field present and first/last reading in local time."""
    out = []
    for r in rows:
        r = {k: None for k in SENSOR_KEYS} | r
        for key in ("first", "last"):
            try:
                ts = pd.Timestamp(r[key])
                r[f"{key}_local"] = _local(ts, tz) if ts.tzinfo is not None else str(r[key])
            except (TypeError, ValueError):
                r[f"{key}_local"] = "–" if r[key] in (None, "") else str(r[key])
        out.append(r)
    return out


def _dst_days(tz: str, first: dt.date, last: dt.date) -> list[str]:
    """Local dates in the window whose length is not 24 h (clock changes)."""
    days = pd.date_range(pd.Timestamp(first), pd.Timestamp(last + dt.timedelta(days=2)),
                         freq="D").as_unit("ns")
    days = days.tz_localize(tz, nonexistent="shift_forward", ambiguous=True)
    lengths = np.diff(days.asi8) / 3.6e12
    return [f"{d.strftime('%a %d %b %Y')} ({h:g} h)" for d, h in zip(days[:-1], lengths,
                                                                      strict=True)
            if abs(h - 24) > 1e-9 and d.date() <= last]
