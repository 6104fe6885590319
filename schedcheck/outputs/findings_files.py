"""Writers of the findings: their records in summary.json, findings.csv and findings.ics.

One row or event per unit and problem (:mod:`schedcheck.findings.grouping`), with its stable
``id``; the figures and instants come from the same records, so the three files agree.
"""

from __future__ import annotations

import hashlib

import pandas as pd

from schedcheck import __version__ as _version
from schedcheck.audit.run import AuditResult
from schedcheck.outputs.cells import ics_text
from schedcheck.outputs.instants import local_iso_many, to_second
from schedcheck.outputs.thermal_fields import FINDINGS_THERMAL, finding_fields, prices_outdoor_air
from schedcheck.outputs.values import (
    COST_DECIMALS,
    ENERGY_DECIMALS,
    HOURS_DECIMALS,
    _plain,
    _r,
    local_iso,
)

FINDINGS_COLUMNS = ("id", "unit", "component", "components", "kind", "start", "end", "hours",
                    "component_hours", "kwh", "cost", "co2_kg", "kwh_by_component",
                    "episode_start", "episode_end", "detail")

#: plain words for each finding kind, used in calendar event titles
KIND_WORDS = {
    "night": "off-schedule running (working day or night)", "weekend": "weekend running",
    "holiday": "holiday running", "unscheduled_day": "running on a working day off the calendar",
    "continuous": "continuous running", "clock_offset": "clock offset",
    "early_start": "early starts", "late_stop": "late stops", "missed": "missed operation",
    "short_cycling": "short cycling", "setback": "set back instead of stopped",
    "over_speed": "above the allowed speed", "hand_mode": "ran while commanded off",
    "failed_start": "off while commanded on", "false_status": "status point disagrees",
}


def _part_record(part: dict, tz: str, texts: dict | None = None) -> dict:
    def iso(ts) -> str:
        return texts[ts] if texts is not None and ts in texts else local_iso(ts, tz)

    return {"component": part["component"], "start": iso(part["start"]),
            "end": iso(part["end"]), "hours": _r(part["hours"], HOURS_DECIMALS),
            "kwh": _r(part["kwh"], ENERGY_DECIMALS), "cost": _r(part["cost"], COST_DECIMALS),
            "co2_kg": _r(part["co2_kg"], ENERGY_DECIMALS)}


def finding_records(result: AuditResult) -> list[dict]:
    """The findings as JSON-ready records (local instants, rounded figures): one per unit and
    problem, with each component's part (``components``, ``parts``)."""
    tz = result.site.timezone
    f = result.findings
    # every instant of the findings and their parts formatted as one array
    instants = [*f["start"], *f["end"]] if len(f) else []
    instants += [p[k] for parts in (f["parts"] if len(f) else []) for p in parts
                 for k in ("start", "end")]
    texts = dict(zip(instants, local_iso_many(instants, tz), strict=True))

    def iso(ts) -> str:
        return texts[ts] if ts in texts else local_iso(ts, tz)

    out = []
    for row in f.itertuples(index=False):
        out.append({
            "id": row.id, "unit": row.unit, "component": row.component,
            "components": list(row.components), "kind": row.kind,
            "start": iso(row.start), "end": iso(row.end),
            "date": str(row.date), "hours": _r(row.hours, HOURS_DECIMALS),
            "component_hours": _r(row.component_hours, HOURS_DECIMALS),
            "kwh": _r(row.kwh, ENERGY_DECIMALS),
            "cost": _r(row.cost, COST_DECIMALS), "co2_kg": _r(row.co2_kg, ENERGY_DECIMALS),
            **finding_fields(row, ENERGY_DECIMALS, COST_DECIMALS),
            # the behaviour episode the finding lies in (changes.episodes), local dates
            "episode_start": getattr(row, "episode_start", "") or None,
            "episode_end": getattr(row, "episode_end", "") or None,
            "detail": str(row.detail),
            "parts": [_part_record(p, tz, texts) for p in row.parts],
        })
    return out


def projection_record(result: AuditResult) -> dict:
    """``summary.json`` ``projection``: the yearly figure from recurring patterns only."""
    p = result.projection or {}
    rec = [{k: (_r(v, COST_DECIMALS) if k.endswith("cost") else
                _r(v, ENERGY_DECIMALS) if k.endswith("kwh") else _plain(v))
            for k, v in r.items()} for r in p.get("recurring", [])]
    yc, yk = p.get("yearly_cost"), p.get("yearly_kwh")
    return {"yearly_cost": None if yc is None else _r(yc, COST_DECIMALS),
            "yearly_kwh": None if yk is None else _r(yk, ENERGY_DECIMALS),
            "basis": str(p.get("basis", "")), "recurring": rec,
            "one_off_cost": _r(p.get("one_off_cost", 0.0), COST_DECIMALS),
            "one_off_kwh": _r(p.get("one_off_kwh", 0.0), ENERGY_DECIMALS),
            "one_off": list(p.get("one_off", [])), "rule": _plain(p.get("rule", {}))}


def findings_frame(result: AuditResult) -> pd.DataFrame:
    """The rows of ``findings.csv``."""
    recs = finding_records(result)
    for r in recs:
        r["components"] = "; ".join(r["components"])
        r["kwh_by_component"] = "; ".join(f"{p['component']}={p['kwh']}" for p in r["parts"])
    cols = list(FINDINGS_COLUMNS)
    if prices_outdoor_air(result):
        cols[-1:-1] = FINDINGS_THERMAL
    return pd.DataFrame(recs, columns=cols)


# -- findings.ics ---------------------------------------------------------------------------

def finding_uid(site_name: str, finding_id: str) -> str:
    """The iCalendar UID of a finding (RFC 5545 section 3.8.4.7): its id, which holds when the
    audit window changes, and a short hash of the site name so two sites' ``AHU-1`` findings
    stay apart in one calendar; importing a monthly and a quarterly findings.ics updates the
    same events instead of adding new ones."""
    site = hashlib.sha1(str(site_name).encode("utf-8")).hexdigest()[:10]
    return f"{finding_id}.{site}@schedcheck.invalid"


def findings_calendar(result: AuditResult) -> bytes:
    """The findings as an iCalendar (RFC 5545) file, one VEVENT per finding, times in UTC."""
    import icalendar

    cal = icalendar.Calendar()
    cal.add("prodid", f"-//schedcheck//audit findings {_version}//EN")
    cal.add("version", "2.0")
    cal.add("calscale", "GREGORIAN")
    title = ics_text(f"{result.site.name}: schedule findings")
    # RFC 7986 section 5.1; given as TEXT so it is escaped (the library types NAME as unknown)
    cal.add("name", icalendar.vText(title))
    cal.add("x-wr-calname", icalendar.vText(title))   # for calendar programs without RFC 7986
    stamp = result.generated.tz_convert("UTC").to_pydatetime()
    for row in result.findings.itertuples(index=False):
        ev = icalendar.Event()
        ev.add("uid", finding_uid(result.site.name, row.id))
        ev.add("dtstamp", stamp)
        ev.add("dtstart", to_second(pd.Timestamp(row.start).tz_convert("UTC")).to_pydatetime())
        ev.add("dtend", to_second(pd.Timestamp(row.end).tz_convert("UTC")).to_pydatetime())
        ev.add("location", ics_text(result.site.name))
        words = KIND_WORDS.get(row.kind, str(row.kind).replace("_", " "))
        who = row.unit if len(row.components) > 1 else row.component
        ev.add("summary", ics_text(f"{who}: {words}, {row.hours:.1f} h"))
        ev.add("description", ics_text(row.detail))
        ev.add("categories", [ics_text(row.kind)])
        ev.add("transp", "TRANSPARENT")
        cal.add_component(ev)
    if len(result.findings) == 0:
        # RFC 5545 section 3.6 needs at least one component in a calendar; a journal entry
        # records the clean audit without putting anything in anyone's diary.
        note = icalendar.Journal()
        note.add("uid", finding_uid(result.site.name, f"no-findings-{result.first_date}"))
        note.add("dtstamp", stamp)
        note.add("dtstart", result.first_date)
        note.add("summary", ics_text(f"{result.site.name}: no findings from "
                                     f"{result.first_date} to {result.last_date}"))
        cal.add_component(note)
    return cal.to_ical()


