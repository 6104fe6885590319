"""The roll-up figures of one audited site, as plain data (``schedcheck portfolio``).

A portfolio worker audits one site, writes its audit folder, and hands back only what this
module builds: small dicts and lists that pickle cheaply across processes or a cluster, so the
parent never holds a site's readings. Every figure is taken from the site's own
``summary.json`` record (:func:`schedcheck.outputs.files.summary_dict`) and ``daily.csv`` rows
(:func:`schedcheck.outputs.files.daily_frame`), so the roll-up equals the single audit figure for
figure.
"""

from __future__ import annotations

import re

from schedcheck.audit.run import AuditResult
from schedcheck.outputs.files import daily_frame, summary_dict

#: the hour figures carried into the roll-up (the names of summary.json's ``hours``)
ROLLUP_HOURS = ("period", "scheduled", "running", "in_schedule", "in_allowance",
                "off_schedule", "missed", "no_data")

#: the columns of portfolio.csv, in order
PORTFOLIO_COLUMNS = (
    ("site", "unit", "component", "role")
    + tuple(f"{k}_h" for k in ROLLUP_HOURS)
    + ("running_kwh", "off_schedule_kwh", "off_schedule_cost", "currency", "findings",
       "status", "error")
)


def site_slug(name: str) -> str:
    """A folder name from a site name: lower case, runs of other characters as one ``-``."""
    return re.sub(r"[^a-z0-9]+", "-", name.lower()).strip("-") or "site"


def component_rows(summary: dict, site_slug_: str) -> list[dict]:
    """One portfolio.csv row per component of a site's summary.json record."""
    counts: dict[str, int] = {}
    for f in summary["findings"]:
        counts[f["component"]] = counts.get(f["component"], 0) + 1
    currency = summary["site"].get("currency", "")
    rows = []
    for c in summary["components"]:
        row = {"site": site_slug_, "unit": c["unit"], "component": c["id"], "role": c["role"]}
        row.update({f"{k}_h": c["hours"][k] for k in ROLLUP_HOURS})
        en = c["energy"]
        row.update({"running_kwh": en["running_kwh"],
                    "off_schedule_kwh": en["off_schedule_kwh"],
                    "off_schedule_cost": en["off_schedule_cost"], "currency": currency,
                    "findings": counts.get(c["id"], 0), "status": "ok", "error": ""})
        rows.append(row)
    return rows


def month_rows(result: AuditResult) -> list[dict]:
    """Per component and local month (``YYYY-MM``): days, hour figures and off-schedule kWh,
    summed from the rows of daily.csv; the cost is the month's share of the window's
    off-schedule cost by kWh."""
    daily = daily_frame(result)
    if daily.empty:
        return []
    daily = daily.assign(month=daily["date"].str[:7])
    cost = {c.key: (c.energy["off_schedule_cost"], c.energy["off_schedule_kwh"])
            for c in result.components}
    sums = daily.groupby(["component", "month"], sort=True).agg(
        days=("date", "size"), **{f"{k}_h": (f"{k}_h", "sum") for k in ROLLUP_HOURS},
        off_schedule_kwh=("off_schedule_kwh", "sum"))
    out = []
    for (comp, month), r in sums.iterrows():
        total_cost, total_kwh = cost[comp]
        share = r["off_schedule_kwh"] / total_kwh if total_kwh > 0 else 0.0
        rec = {"component": comp, "month": month, "days": int(r["days"])}
        rec.update({f"{k}_h": round(float(r[f"{k}_h"]), 3) for k in ROLLUP_HOURS})
        rec["off_schedule_kwh"] = round(float(r["off_schedule_kwh"]), 3)
        rec["off_schedule_cost"] = round(float(total_cost * share), 2)
        out.append(rec)
    return out


def headline(summary: dict) -> str:
    """A site's one-line headline: off-schedule hours, energy and cost, and the findings."""
    comps = summary["components"]
    hours = sum(c["hours"]["off_schedule"] for c in comps)
    kwh = sum(c["energy"]["off_schedule_kwh"] for c in comps)
    cost = sum(c["energy"]["off_schedule_cost"] for c in comps)
    cur = summary["site"].get("currency", "")
    money = f", {cost:,.0f} {cur}".rstrip() if cost else ""
    return (f"{hours:,.1f} component-hours off schedule, {kwh:,.0f} kWh{money}; "
            f"{len(summary['findings'])} finding(s) across {len(comps)} component(s)")


def site_rollup(result: AuditResult, slug: str, report: str) -> dict:
    """Everything the roll-up needs from one audited site (plain data, picklable).

    ``report`` is the site's report as a path relative to the portfolio folder.
    """
    summary = summary_dict(result)
    findings = [{k: f[k] for k in ("component", "kind", "start", "end", "hours", "kwh")}
                | {"month": f["start"][:7]} for f in summary["findings"]]
    return {
        "site": slug, "name": result.site.name, "status": "ok", "error": "",
        "timezone": result.site.timezone, "period": summary["period"],
        "first_date": result.first_date.isoformat(), "last_date": result.last_date.isoformat(),
        "headline": headline(summary), "report": report,
        "components": component_rows(summary, slug), "findings": findings,
        "months": month_rows(result),
    }


def failed_rollup(slug: str, site_file: str, error: str) -> dict:
    """The roll-up of a site whose audit failed: its one-line error and no figures."""
    return {"site": slug, "name": site_file, "status": "failed", "error": error,
            "components": [], "findings": [], "months": [], "headline": "", "report": ""}
