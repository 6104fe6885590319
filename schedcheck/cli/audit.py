"""`schedcheck audit SITE`: classify, compare, price, report."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import Annotated

import typer

from schedcheck.cli._app import app
from schedcheck.cli._common import (
    Excel,
    SiteArg,
    SkipBadRows,
    add_row,
    interactive,
    make_console,
    parse_date,
    terminal_text,
)


def _progress(message: str) -> None:
    print(f"... {message}", file=sys.stderr, flush=True)


def summary_table(result) -> object:
    """The per-component table (a rich Table) with a total row."""
    from rich import box
    from rich.table import Table

    from schedcheck.intervals import NS_PER_H

    cur = result.site.energy.currency
    table = Table(title=terminal_text(f"{result.site.name}: {result.first_date} to "
                                      f"{result.last_date}"),
                  title_justify="left", box=box.SIMPLE_HEAD, pad_edge=False,
                  collapse_padding=True)
    keys = [c.key for c in result.components] + ["Total"]
    table.add_column("Component", no_wrap=True, min_width=max(len(k) for k in keys))
    thermal = any(c.thermal is not None for c in result.components)
    heads = ("Sched.\nh", "Running\nh", "Off-\nsched.\nh", "Missed\nh", "No data\nh",
             "Off-\nsched.\nkWh", f"Cost\n{cur}".strip(), "Find-\nings")
    if thermal:   # heating and cooling the outdoor air off schedule, beside the fan's cost
        heads += ("Heat +\ncool\nkWh", f"Outdoor\nair\n{cur}".strip())
    for h in heads:
        table.add_column(h, justify="right", overflow="fold")
    counts: dict[str, int] = {}
    for comps in result.findings["components"]:
        for key in comps:
            counts[key] = counts.get(key, 0) + 1
    tot = [0.0] * len(heads)
    for comp in result.components:
        ns = comp.account.ns
        vals = [ns["scheduled"] / NS_PER_H, ns["running"] / NS_PER_H,
                ns["off_schedule"] / NS_PER_H, ns["missed"] / NS_PER_H,
                ns["no_data"] / NS_PER_H, comp.energy["off_schedule_kwh"],
                comp.energy["off_schedule_cost"], counts.get(comp.key, 0)]
        if thermal:
            en = comp.energy
            vals += [en.get("off_schedule_heating_kwh", 0.0) + en.get(
                "off_schedule_cooling_kwh", 0.0), en.get("off_schedule_thermal_cost", 0.0)]
        tot = [a + b for a, b in zip(tot, vals, strict=True)]
        missed = f"{vals[3]:.1f}" if comp.account.counts_missed else "-"
        extra = ([f"{vals[8]:.0f}", f"{vals[9]:.0f}"] if comp.thermal is not None else
                 ["-", "-"]) if thermal else []
        add_row(table, comp.key, f"{vals[0]:.1f}", f"{vals[1]:.1f}", f"{vals[2]:.1f}", missed,
                      f"{vals[4]:.1f}", f"{vals[5]:.0f}", f"{vals[6]:.0f}", str(vals[7]), *extra)
    table.add_section()
    add_row(table, "Total", *[f"{v:.1f}" for v in tot[:5]], f"{tot[5]:.0f}", f"{tot[6]:.0f}",
                  str(int(tot[7])), *[f"{v:.0f}" for v in tot[8:]], style="bold")
    return table


def headline_lines(result) -> list[str]:
    """Unit-hours (component-hours beside them where they differ) and the yearly projection."""
    unit_h = sum(result.unit_hours.values())
    comp_h = result.component_hours
    cur = result.site.energy.currency
    line = f"Off-schedule running: {unit_h:,.1f} unit-hours"
    if abs(comp_h - unit_h) >= 0.05:
        line += f" ({comp_h:,.1f} component-hours: fans and wheels of one unit counted apart)"
    n_comp = len(result.component_findings) if result.component_findings is not None else 0
    lines = [line + ".", f"{len(result.findings)} finding(s), one per unit and problem"
             + (f" ({n_comp} per component)." if n_comp != len(result.findings) else ".")]
    p = result.projection or {}
    if p.get("yearly_cost") is not None:
        from schedcheck.findings.projection import pattern_words

        lines.append(f"Recurring patterns ({pattern_words(p['recurring'])}): about "
                     f"{p['yearly_cost']:,.0f} {cur} a year; one-off events in this window: "
                     f"{p['one_off_cost']:,.0f} {cur} (not scaled to a year).")
    elif p.get("basis"):
        lines.append(str(p["basis"]))
    return lines


@app.command()
def audit(
    site: SiteArg,
    first: Annotated[str | None, typer.Option(
        "--from", help="First local date to audit (YYYY-MM-DD).")] = None,
    last: Annotated[str | None, typer.Option(
        "--to", help="Last local date to audit, inclusive (YYYY-MM-DD).")] = None,
    out: Annotated[Path | None, typer.Option(
        "--out", help="Folder for the audit files [default: ./audit-<site name>].")] = None,
    skip_bad_rows: SkipBadRows = False,
    excel: Excel = False,
) -> int:
    """Compare when each unit ran with when it was meant to, price the difference, and write
    summary.json, daily.csv, runs.csv, findings.csv, findings.ics, schedule.csv and report.html.

    The window defaults to the whole local days covered by the readings. Findings are not
    errors: the exit status is 0 whenever the audit ran.

    Example: schedcheck audit site.toml --from 2026-03-01 --to 2026-05-31 --out audit-march
    """
    from schedcheck.jobs.audit import audit_site

    d0, d1 = parse_date(first, "--from"), parse_date(last, "--to")
    result = audit_site(site, d0, d1, out=out, skip_bad_rows=skip_bad_rows,
                        progress=_progress if interactive() else None, excel=excel)
    console = make_console(120)
    console.print(summary_table(result))
    # the site's warnings, then each component's run-state warnings (a level that does not
    # split its readings changes every figure of that component)
    warnings = list(result.warnings) + [f"{c.key}: {w}" for c in result.components
                                        for w in c.state_warnings]
    for w in warnings[:10]:
        console.print(f"warning: {terminal_text(w)}", soft_wrap=True)
    if len(warnings) > 10:
        console.print(f"... and {len(warnings) - 10} more warnings in summary.json")
    for line in headline_lines(result):
        console.print(line, markup=False, soft_wrap=True)
    console.print(f"Files written to {result.outdir}:", markup=False, soft_wrap=True)
    for name in ("report.html", "summary.json", "daily.csv", "runs.csv", "findings.csv",
                 "findings.ics", "schedule.csv", "trends.csv"):
        if name in result.files:
            console.print(f"  {result.files[name]}", markup=False, soft_wrap=True)
    console.print("Energy figures are affinity-law estimates, not meter readings.",
                  markup=False, soft_wrap=True)
    if any(c.thermal is not None for c in result.components):
        console.print("Outdoor-air figures are sensible heat only (no latent heat, duct losses or "
                      "the building's own heat balance); frost protection and minimum "
                      "ventilation can be reasons to run in the cold.", markup=False,
                      soft_wrap=True)
    console.print("Before changing schedules: keep ventilation minimums, freeze protection and "
                  "smoke control as designed; defer to local codes.", markup=False,
                  soft_wrap=True)
    return 0
