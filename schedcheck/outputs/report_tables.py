"""The report's smaller tables: the intended schedule, days off, sensors and daylight-saving
days (a part of :mod:`schedcheck.outputs.report`)."""

from __future__ import annotations

import datetime as dt

import jinja2
import numpy as np
import pandas as pd

FINDINGS_SHOWN = 300  # rows of the findings table on the page (common practice, no source)

ROLE_LABELS = {"supply_fan": "supply fan", "exhaust_fan": "exhaust fan",
               "return_fan": "return fan", "heat_wheel": "heat wheel", "other": "other"}

KIND_LABELS = {
    "night": "Off-schedule running on a working day or night",
    "weekend": "Weekend running",
    "holiday": "Running on a holiday or closure day",
    "unscheduled_day": "Running on a working day taken out of the calendar",
    "continuous": "Ran 24 h or more without stopping",
    "clock_offset": "Start and stop shifted by about an hour",
    "early_start": "Repeated early start",
    "late_stop": "Repeated late stop",
    "missed": "Off during occupied hours",
    "short_cycling": "Many starts per day",
    "setback": "Set back to low speed instead of stopped",
    "over_speed": "Ran above the allowed speed",
}

# What to ask the controls contractor, per finding kind (plain wording of our own).
KIND_ASKS = {
    "night": "Check the time program and any overrides, optimum-start or night settings that "
             "run {what} outside the occupied period and its allowances.",
    "weekend": "Check the weekend entries of the time program of {what}.",
    "unscheduled_day": "Check whether the days taken out of the calendar were really unoccupied, "
                       "and that the time program of {what} follows them.",
    "holiday": "Load the public holidays and closure dates into the controller's holiday "
               "calendar for {what}.",
    "continuous": "Look for a manual override, a switch left in hand, or a stuck occupancy "
                  "signal that keeps {what} running day and night.",
    "clock_offset": "Check the controller clock and its daylight-saving setting for {what}.",
    "early_start": "Review the optimum-start or early-start setting of {what}.",
    "late_stop": "Review the run-on or late-stop setting of {what}.",
    "missed": "Find out why {what} was off in occupied hours (trip, fault, schedule error): "
              "occupants may have had too little outdoor air.",
    "short_cycling": "Check the control loop and minimum run and off times of {what}.",
    "setback": "Check whether {what} may stop instead of running at low speed outside the "
               "occupied period; keep any standby ventilation a code requires (then state it "
               "as standby_speed).",
    "over_speed": "Check the speed limit of the allowed or standby running of {what} in the "
                  "drive or the time program.",
}

HOUR_KEYS = ("period", "scheduled", "running", "in_schedule", "in_allowance", "off_schedule",
             "missed", "no_data")
ENERGY_KEYS = ("running_kwh", "running_kw", "running_cost", "running_co2_kg", "off_schedule_kwh",
               "off_schedule_cost", "off_schedule_co2_kg")
THRESHOLD_KEYS = ("level", "source", "separation", "effectiveness", "on_level", "off_level",
                  "histogram", "warnings", "confidence", "concerns")
SENSOR_KEYS = ("sensor", "component", "first", "last", "count", "median_interval_s", "gaps",
               "gap_hours", "duplicates", "conflicting", "out_of_order", "coverage")

_ENV = jinja2.Environment(
    loader=jinja2.PackageLoader("schedcheck.outputs", "templates"),
    autoescape=True,  # every file here is HTML; inputs are never trusted
    undefined=jinja2.StrictUndefined,
    trim_blocks=True,
    lstrip_blocks=True,
)


def _local(ts: pd.Timestamp, tz: str, fmt: str = "%a %d %b %Y %H:%M") -> str:
    if ts is None or pd.isna(ts):
        return "–"
    return ts.tz_convert(tz).strftime(fmt)


def _intended(schedule: pd.DataFrame, units: list[dict]) -> list[dict]:
    """Per unit: hours of each kind of intended interval and what they came from."""
    out = []
    sched = schedule.assign(hours=(schedule["end"] - schedule["start"]).dt.total_seconds() / 3600)
    for u in units:
        rows = sched[sched["unit"] == u["id"]]
        entry = {"id": u["id"], "name": u["name"]}
        for kind in ("occupied", "allowance", "allowed"):
            part = rows[rows["kind"] == kind]
            entry[f"{kind}_h"] = float(part["hours"].sum())
            src = part["source"] if "source" in part else pd.Series(dtype=object)
            counts = src.fillna("").astype(str).value_counts()
            entry[f"{kind}_sources"] = [(name, int(n)) for name, n in counts.items() if name][:8]
        out.append(entry)
    return out


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
