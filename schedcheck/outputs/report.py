"""The evidence pack: one self-contained HTML page drawn from an audit output folder.

``render_report(data)`` turns a :class:`~schedcheck.outputs.saved.SavedAudit` into HTML text;
``write_report(outdir)`` reads the folder and writes ``outdir/report.html``. The page needs no
network: CSS is inline, pictures are inline SVG, there are no scripts or web fonts. Every text
that comes from the inputs goes through Jinja2 with autoescaping on.
"""

from __future__ import annotations

import datetime as dt
import math
from pathlib import Path

import jinja2
import numpy as np
import pandas as pd
from markupsafe import Markup

from schedcheck.audit.evidence import finding_keys
from schedcheck.errors import InputError
from schedcheck.findings.projection import pattern_words
from schedcheck.outputs import svg
from schedcheck.outputs.evidence_report import (
    css_string,
    evidence_strips,
    provenance_rows,
    strip_settings,
)
from schedcheck.outputs.histogram import histogram_svg
from schedcheck.outputs.report_episodes import add_episode_chart
from schedcheck.outputs.report_speeds import by_speed_text, speed_sensitivity
from schedcheck.outputs.report_tables import (  # noqa: F401 - the report's smaller tables
    _days_off_rows,
    _dst_days,
    _intended,
    _local,
    _sensors,
    _when,
)
from schedcheck.outputs.report_thermal import thermal_context
from schedcheck.outputs.report_trends import trend_sections
from schedcheck.outputs.saved import SavedAudit, read_saved_audit
from schedcheck.outputs.wording import monitored_words, separation_text
from schedcheck.runstate.onofflevel import SEPARATION_CAP

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
    "hand_mode": "Ran while its command was off (hand mode)",
    "failed_start": "Commanded on but not running",
    "false_status": "Status point disagrees with the vibration",
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
    "hand_mode": "Check the hand-off-auto switch and the starter of {what}: no controls change "
                 "stops a fan in hand. Ask first whether it was put in hand on purpose "
                 "(commissioning, smoke control, a fire-service override); never defeat a "
                 "life-safety sequence.",
    "failed_start": "Check {what} for a tripped overload, a broken belt or a lost drive: the "
                    "controls asked for air that did not come (mind freeze protection and "
                    "minimum ventilation).",
    "false_status": "Check the current switch or drive feedback behind the status point of "
                    "{what}: while it lies the controls raise no fan-failure alarm.",
}

HOUR_KEYS = ("period", "scheduled", "running", "in_schedule", "in_allowance", "off_schedule",
             "missed", "no_data")
ENERGY_KEYS = ("running_kwh", "running_kw", "running_cost", "running_co2_kg", "off_schedule_kwh",
               "off_schedule_cost", "off_schedule_co2_kg")
THRESHOLD_KEYS = ("level", "source", "separation", "effectiveness", "on_level", "off_level",
                  "histogram", "warnings", "confidence", "concerns")

_ENV = jinja2.Environment(
    loader=jinja2.PackageLoader("schedcheck.outputs", "templates"),
    autoescape=True,  # every file here is HTML; inputs are never trusted
    undefined=jinja2.StrictUndefined,
    trim_blocks=True,
    lstrip_blocks=True,
)


def _fmt(value, digits: int = 1) -> str:
    """A figure with thousands separators, or an en dash when it is missing."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "–"
    return f"{value:,.{digits}f}"


_ENV.filters["num"] = _fmt
_ENV.filters["separation"] = lambda x: separation_text(x, SEPARATION_CAP)


def _span(start: pd.Timestamp, end: pd.Timestamp, tz: str) -> tuple[str, str]:
    """(``Wed 25 Mar 2026 17:20``, ``23:00``); the end's date is written when it is another day."""
    a, b = start.tz_convert(tz), end.tz_convert(tz)
    if b.date() == a.date():
        tail = b.strftime("%H:%M")
    elif b.date() == a.date() + dt.timedelta(days=1) and (b.hour, b.minute) == (0, 0):
        tail = "24:00"
    else:
        tail = b.strftime("%a %d %b %Y %H:%M")
    return a.strftime("%a %d %b %Y %H:%M"), tail


def _sum(rows: list[dict], path: tuple[str, str]) -> float:
    return float(sum((r.get(path[0]) or {}).get(path[1]) or 0.0 for r in rows))


def _component_rows(data: SavedAudit) -> list[dict]:
    units = {u.get("id"): u for u in data.summary.get("units", [])}
    rows = []
    for i, c in enumerate(data.summary["components"]):
        unit = c.get("unit") or c["id"].split("/")[0]
        hours = {k: None for k in HOUR_KEYS} | (c.get("hours") or {})
        energy = {k: None for k in ENERGY_KEYS} | (c.get("energy") or {})
        threshold = {k: None for k in THRESHOLD_KEYS} | (c.get("threshold") or {})
        rows.append({
            "id": c["id"], "pid": f"c{i}", "unit": unit,
            "unit_name": (units.get(unit) or {}).get("name", ""),
            "name": c.get("name") or c["id"].split("/")[-1],
            "role": ROLE_LABELS.get(c.get("role", ""), c.get("role", "")),
            "counts_missed": bool(c.get("missed_counted", c.get("role") != "heat_wheel")),
            "is_wheel": c.get("role") == "heat_wheel", "sensor": c.get("sensor", ""),
            "warnings": [str(w) for w in c.get("warnings") or []],
            "hours": hours, "energy": energy, "starts": c.get("starts"),
            "power_kw": c.get("power_kw"), "speed": c.get("speed"),
            "exponent": c.get("exponent"), "threshold": threshold,
            "n_findings": c.get("findings"),
            "by_speed": by_speed_text(c),
        })
    return rows


def rows_by(frame: pd.DataFrame, column: str) -> dict:
    """Value of ``column`` -> the rows of ``frame`` with it (in the frame's order), found in one
    pass; a value with no rows is not a key."""
    if len(frame) == 0:
        return {}
    out = {}
    for k, pos in frame.groupby(column, sort=False).indices.items():
        # the files hold each component's (each unit's) rows together: a slice, no copy
        whole = pos[-1] - pos[0] + 1 == len(pos)
        out[k] = frame.iloc[int(pos[0]):int(pos[-1]) + 1] if whole else frame.iloc[pos]
    return out


def _charts(data: SavedAudit, comp: dict, days_off: pd.DataFrame,
            parts: dict | None = None) -> None:
    """The carpet, daily bars and histogram of one component row ``comp``; ``parts`` (from
    :func:`chart_parts`) holds the saved tables split by component and unit once for all."""
    tz, first, last = data.timezone, data.first_date, data.last_date
    parts = parts if parts is not None else chart_parts(data, days_off)
    runs = parts["runs"].get(comp["id"], data.runs.iloc[:0])
    sched = parts["schedule"].get(comp["unit"], data.schedule.iloc[:0])
    if len(days_off):
        doff = parts["days_off"].get(comp["unit"])
        if doff is None:
            doff = days_off[days_off["unit"].isin([comp["unit"], ""])]
            parts["days_off"][comp["unit"]] = doff
    else:
        doff = days_off
    title = f"{comp['id']}: run state by local date and hour"
    comp["carpet"] = Markup(svg.carpet_svg(runs, sched, doff, tz=tz, first=first, last=last,
                                           title=title, pid=comp["pid"] + "c"))
    daily = parts["daily"].get(comp["id"], data.daily.iloc[:0])
    comp["bars"] = Markup(svg.daily_bars_svg(
        daily, first=first, last=last, title=f"{comp['id']}: hours per day", pid=comp["pid"] + "b"))
    add_episode_chart(comp, data.summary, daily, first, last)
    th = comp["threshold"]
    hist = th.get("histogram") or {}
    comp["histogram"] = None
    if hist.get("counts") and hist.get("edges"):
        comp["histogram"] = Markup(histogram_svg(
            np.asarray(hist["counts"], dtype=float), np.asarray(hist["edges"], dtype=float),
            th.get("level"), th.get("on_level"), th.get("off_level"),
            f"{comp['id']}: vibration levels seen", source=th.get("source"),
            unit=data.summary["site"].get("reading_unit") or "", floor=th.get("floor")))


def chart_parts(data: SavedAudit, days_off: pd.DataFrame) -> dict:
    """The saved runs and daily rows by component, the schedule by unit (and a place for the
    days off by unit), for :func:`_charts`."""
    return {"runs": rows_by(data.runs, "component"), "daily": rows_by(data.daily, "component"),
            "schedule": rows_by(data.schedule, "unit"), "days_off": {}}


def _findings(data: SavedAudit, comps: dict[str, dict]) -> list[dict]:
    f = data.findings.copy()
    if len(f) == 0:
        return []
    f["sort_cost"] = f["cost"].fillna(0.0) if "cost" in f else 0.0
    f = f.sort_values(["sort_cost", "kwh", "hours"], ascending=False, kind="stable")
    records = {str(r.get("id")): r for r in data.summary.get("findings") or [] if r.get("id")}
    keys = finding_keys(data.findings)
    out = []
    for pos, row in zip(f.index, f.itertuples(index=False), strict=True):
        comp = comps.get(row.component, {})
        rec = records.get(str(getattr(row, "id", "")), {})
        members = [str(c) for c in rec.get("components") or [row.component]]
        out.append({
            "id": str(getattr(row, "id", "") or ""), "components": members,
            "unit": rec.get("unit") or comp.get("unit") or row.component.split("/")[0],
            "parts": rec.get("parts") or [],
            "component_hours": rec.get("component_hours", row.hours),
            "key": keys[data.findings.index.get_loc(pos)],
            "component": row.component, "unit_name": comp.get("unit_name", ""),
            "kind": KIND_LABELS.get(row.kind, row.kind), "kind_code": row.kind,
            "when": _span(row.start, row.end, data.timezone), "hours": row.hours, "kwh": row.kwh,
            "cost": getattr(row, "cost", None), "co2_kg": getattr(row, "co2_kg", None),
            "detail": getattr(row, "detail", ""),
        })
    return out


def _asks(findings: list[dict], comps: dict[str, dict]) -> list[dict]:
    """One question for the contractor per unit and finding kind, costliest first.

    A unit's time program is usually one setting for all its fans, so the supply and exhaust
    fans of one unit with the same kind of finding make one question.
    """
    groups: dict[tuple[str, str], dict] = {}
    for f in findings:
        comp = comps.get(f["component"], {})
        unit = f["unit"]
        g = groups.setdefault((unit, f["kind_code"]), {
            "unit": unit, "unit_name": comp.get("unit_name", ""), "components": [],
            "kind": f["kind"], "count": 0, "hours": 0.0, "cost": 0.0, "kwh": 0.0,
            "priced": f["kind_code"] != "missed"})
        for member in f["components"]:
            if member not in g["components"]:
                g["components"].append(member)
        g["count"] += 1
        g["hours"] += f["hours"] or 0.0
        g["kwh"] += f["kwh"] or 0.0
        g["cost"] += f["cost"] if f["cost"] is not None and math.isfinite(f["cost"]) else 0.0
    out = []
    for (unit, kind), g in groups.items():
        parts = [c.split("/", 1)[-1] for c in g["components"]]
        g["who"] = f"{unit} " + (" and ".join(parts) if len(parts) < 3
                                  else ", ".join(parts[:-1]) + " and " + parts[-1])
        what = unit + (f" ({g['unit_name']})" if g["unit_name"] else "")
        g["ask"] = KIND_ASKS.get(kind, "Review the findings of {what}.").format(what=what)
        out.append(g)
    return sorted(out, key=lambda g: (not g["priced"], -g["cost"], -g["kwh"], g["unit"]))


def report_context(data: SavedAudit) -> dict:
    """Everything the template shows, computed from the saved files (no HTML here)."""
    s = data.summary
    site = s["site"]
    comps = _component_rows(data)
    by_id = {c["id"]: c for c in comps}
    days_off = pd.DataFrame(s.get("days_off") or [], columns=["unit", "date", "name", "kind"])
    if len(days_off):
        days_off["date"] = [dt.date.fromisoformat(str(d)) for d in days_off["date"]]
        days_off["unit"] = days_off["unit"].fillna("")
    parts = chart_parts(data, days_off)
    for c in comps:
        _charts(data, c, days_off, parts)
    trend_sections(data, comps, KIND_LABELS, _span)
    findings = _findings(data, by_id)
    strips = evidence_strips(data, by_id, KIND_LABELS, _span)
    shown = {st["key"]: st["anchor"] for st in strips}
    for f in findings:
        f["anchor"] = shown.get(f["key"])
    units = []
    for u in s.get("units") or [{"id": uid, "name": ""} for uid in dict.fromkeys(
            c["unit"] for c in comps)]:
        members = [c for c in comps if c["unit"] == u.get("id")]
        units.append({"id": u.get("id"), "name": u.get("name", ""), "components": members,
                      "state_component": u.get("state_component"),
                      "kwh": _sum(members, ("energy", "off_schedule_kwh")),
                      "cost": _sum(members, ("energy", "off_schedule_cost")),
                      "co2_kg": _sum(members, ("energy", "off_schedule_co2_kg"))})
    first, last = data.first_date, data.last_date
    ndays = (last - first).days + 1
    fans = [c for c in comps if c["counts_missed"]]
    totals = {
        "off_schedule_h": _sum(comps, ("hours", "off_schedule")),
        "off_schedule_kwh": _sum(comps, ("energy", "off_schedule_kwh")),
        "off_schedule_cost": _sum(comps, ("energy", "off_schedule_cost")),
        "off_schedule_co2_kg": _sum(comps, ("energy", "off_schedule_co2_kg")),
        "missed_h": _sum(fans, ("hours", "missed")),
        "no_data_h": _sum(comps, ("hours", "no_data")),
        "period_h": _sum(comps, ("hours", "period")),
        "running_kwh": _sum(comps, ("energy", "running_kwh")),
    }
    totals["no_data_share"] = (totals["no_data_h"] / totals["period_h"]
                               if totals["period_h"] else 0.0)
    saved_totals = s.get("totals") or {}
    totals["unit_h"] = saved_totals.get("unit_hours", totals["off_schedule_h"])
    totals["hours_differ"] = abs(totals["off_schedule_h"] - (totals["unit_h"] or 0.0)) >= 0.05
    totals.update(speed_sensitivity(comps))
    thermal = thermal_context(s, comps, units)
    return {
        "site": site, "currency": site.get("currency") or "", "price": site.get("price"),
        "co2_per_kwh": site.get("co2_per_kwh"), "reading_unit": site.get("reading_unit", ""),
        "first": first.strftime("%a %d %b %Y"), "last": last.strftime("%a %d %b %Y"),
        "ndays": ndays, "period": s["period"], "units": units, "components": comps,
        "monitored": monitored_words(c.get("role") for c in s.get("components") or []),
        "totals": totals, "findings": findings[:FINDINGS_SHOWN],
        "findings_hidden": findings[FINDINGS_SHOWN:], "n_findings": len(findings),
        "asks": _asks(findings, by_id),
        "projection": _projection(s.get("projection")),
        "n_component_findings": (s.get("totals") or {}).get("component_findings"),
        "sensors": _sensors(s.get("sensors") or [], data.timezone),
        "days_off": _days_off_rows(days_off, [u["id"] for u in units]),
        "bad_rows": s.get("bad_rows") or {}, "warnings": s.get("warnings") or [],
        "generated": _when(s.get("generated")), "tool_version": s.get("tool_version", ""),
        "legend": Markup(svg.legend_svg("lg")),
        "dst_days": _dst_days(data.timezone, first, last),
        "intended": _intended(data.schedule, units),
        "uncertain": [c["id"] for c in comps if c["threshold"].get("confidence") == "low"],
        "strips": strips, "strip": strip_settings(), "provenance": provenance_rows(s),
        "page_footer": css_string(f"{site['name']} · {first:%d %b %Y} to {last:%d %b %Y}"
                                  f" · audit made {_when(s.get('generated'))}"),
        "thermal": thermal,
    }


def _projection(p: dict | None) -> dict:
    """summary.json's projection for the headline; an audit saved before it had none."""
    p = p if isinstance(p, dict) else {}
    return {"yearly_cost": p.get("yearly_cost"), "basis": str(p.get("basis") or ""),
            "one_off_cost": p.get("one_off_cost"), "recurring": list(p.get("recurring") or []),
            "patterns": pattern_words(p.get("recurring") or []), "known": bool(p)}



def render_report(data: SavedAudit) -> str:
    """The report page as HTML text.

    Parameters
    ----------
    data : SavedAudit
        An audit output folder read back with :func:`read_saved_audit`.

    Returns
    -------
    str
        A complete, self-contained HTML document.
    """
    return _ENV.get_template("report.html.j2").render(**report_context(data))


def write_report(outdir: Path) -> Path:
    """Render ``outdir/report.html`` from the saved audit files in ``outdir`` alone.

    Parameters
    ----------
    outdir : Path
        An audit output folder (``summary.json``, ``daily.csv``, ``runs.csv``,
        ``findings.csv``, ``schedule.csv``).

    Returns
    -------
    Path
        The written report.

    Raises
    ------
    InputError
        A file of the folder is missing or malformed (the message names it).
    """
    outdir = Path(outdir)
    html = render_report(read_saved_audit(outdir))
    path = outdir / "report.html"
    tmp = path.with_suffix(".html.part")
    try:
        tmp.write_text(html, encoding="utf-8")
        tmp.replace(path)
    except OSError as e:
        raise InputError(f"cannot write the report ({e.strerror or e})", path=path) from None
    return path
