"""`schedcheck check SITE`: validate every input and report every problem found."""

from __future__ import annotations

import sys
from typing import Annotated

import typer

from schedcheck.cli._app import app
from schedcheck.cli._common import SiteArg, add_row, make_console, terminal_text

UNMAPPED_SHOWN = 20   # unmapped sensors named on screen; the rest are counted
PROBLEMS_SHOWN = 50   # problems listed on screen; the rest are counted (common practice, no source)


def _local(ts, tz: str) -> str:
    return "-" if ts is None else ts.tz_convert(tz).strftime("%Y-%m-%d %H:%M")


def health_table(report) -> object:
    """The per-sensor data-health table (a rich Table)."""
    from rich import box
    from rich.table import Table

    from schedcheck.durations import format_duration

    site = report.site
    tz = site.timezone
    table = Table(title=terminal_text(f"{site.name}: readings per sensor (times in {tz}, silences "
                                      f"longer than {format_duration(site.readings.max_gap)} "
                                      "are gaps)"),
                  title_justify="left", box=box.SIMPLE_HEAD,
                  caption="Step: median time between readings. Dupl.: identical rows dropped. "
                  "Conflicts: rows at an instant already seen with other levels (averaged). "
                  "Late: rows earlier than one read before them (sorted). Fold lost: rows in "
                  "the repeated autumn hour that could not be placed (no data). Bad: malformed "
                  "rows skipped.", caption_justify="left")
    for name, just in (("Sensor", "left"), ("Component", "left"), ("First", "left"),
                       ("Last", "left"), ("Readings", "right"), ("Step", "right"),
                       ("Gaps", "right"), ("Gap h", "right"), ("Dupl.", "right"),
                       ("Conflicts", "right"), ("Late", "right"), ("Fold lost", "right"),
                       ("Bad", "right")):
        table.add_column(name, justify=just, no_wrap=True)
    for h in report.health:
        step = "-" if h.median_interval is None else format_duration(h.median_interval)
        add_row(table, h.sensor, h.component or "-", _local(h.first, tz), _local(h.last, tz),
                      f"{h.count:,}", step, str(h.gaps), f"{h.gap_hours:.1f}",
                      str(h.duplicates_exact), str(h.duplicates_conflicting),
                      str(h.out_of_order), str(h.ambiguous_dropped), str(h.bad_rows))
    return table


def trends_table(report) -> object:
    """Coverage per trend point (a rich Table), like the readings' health table."""
    from rich import box
    from rich.table import Table

    from schedcheck.durations import format_duration

    site = report.site
    tz = site.timezone
    gap = format_duration(site.trends.max_gap)
    table = Table(title=terminal_text(f"{site.name}: building-system trend points (times in "
                                      f"{tz}; a point silent longer than {gap} is unknown "
                                      "after that)"),
                  title_justify="left", box=box.SIMPLE_HEAD,
                  caption=f"Silences: gaps between samples longer than {gap}; Unknown h: the "
                  "hours they leave unknown. Dupl.: samples repeated at one instant.",
                  caption_justify="left")
    for name, just in (("Point", "left"), ("Used by", "left"), ("First", "left"),
                       ("Last", "left"), ("Samples", "right"), ("Longest silence h", "right"),
                       ("Silences", "right"), ("Unknown h", "right"), ("Dupl.", "right")):
        table.add_column(name, justify=just, no_wrap=True)
    for r in report.trends:
        add_row(table, r["point"], r["used_by"] or "(unused)", _local(r["first"], tz),
                _local(r["last"], tz), f"{r['samples']:,}", f"{r['longest_silence_h']:.1f}",
                str(r["silences"]), f"{r['unknown_h']:.1f}", str(r["duplicates"]))
    return table


@app.command()
def check(
    site: SiteArg,
    skip_bad_rows: Annotated[bool, typer.Option(
        "--skip-bad-rows", help="Count and list malformed readings rows instead of treating "
        "them as problems.")] = False,
) -> int:
    """Validate the site file, calendars and readings; report every problem found, not just the
    first, with per-sensor data health. Exit status 2 if there is any problem.

    Example: schedcheck check site.toml
    """
    from schedcheck.cli._common import interactive
    from schedcheck.jobs.check import check_site

    def say(message: str) -> None:
        print(f"... {message}", file=sys.stderr, flush=True)

    report = check_site(site, skip_bad_rows=skip_bad_rows,
                        progress=say if interactive() else None)
    out = make_console(200)
    if report.site is not None:
        s = report.site
        comps = len(s.components)
        out.print(f"Site {s.name!r} ({s.timezone}): {len(s.units)} unit(s), {comps} "
                  f"component(s), {len(report.calendars)} calendar file(s), "
                  f"{len(report.files)} readings file(s)", markup=False)
        if report.health:
            out.print(health_table(report))
        if report.trends:
            out.print(trends_table(report))
        if report.unused_points:
            items = report.unused_points
            listed = ", ".join(items[:UNMAPPED_SHOWN])
            if len(items) > UNMAPPED_SHOWN:
                listed += f" and {len(items) - UNMAPPED_SHOWN} more"
            out.print(f"Trend points that no component names: {listed}", markup=False)
        if report.unconfigured:
            items = list(report.unconfigured.items())
            listed = ", ".join(f"{k} ({v:,} rows)" for k, v in items[:UNMAPPED_SHOWN])
            if len(items) > UNMAPPED_SHOWN:
                listed += f" and {len(items) - UNMAPPED_SHOWN} more"
            out.print(f"Sensors in the readings that the site file does not map: {listed}",
                      markup=False)
        if report.bad_rows_count and (skip_bad_rows or s.readings.skip_bad_rows):
            out.print(f"Skipped {report.bad_rows_count} bad row(s); first: "
                      + "; ".join(report.bad_rows_examples), markup=False)
    for note in report.notes:
        out.print(f"note: {note}", markup=False)
    for w in report.warnings:
        print(f"warning: {terminal_text(' '.join(w.split()))}", file=sys.stderr)
    for p in report.problems[:PROBLEMS_SHOWN]:
        print(f"error: {terminal_text(' '.join(str(p).split()))}", file=sys.stderr)
    n = len(report.problems)
    if n > PROBLEMS_SHOWN:
        print(f"... and {n - PROBLEMS_SHOWN:,} more problems (the first {PROBLEMS_SHOWN} are "
              "listed; fix those and check again)", file=sys.stderr)
    if n:
        print(f"{n:,} problem{'s' if n > 1 else ''} found in the inputs of "
              f"{terminal_text(site)}", file=sys.stderr)
        return 2
    w = len(report.warnings)
    plural = w > 1
    out.print("All inputs look fine." if not w else
              f"No errors, but {w} warning{'s' if plural else ''} above "
              f"deserve{'' if plural else 's'} a look before the audit.", markup=False)
    return 0
