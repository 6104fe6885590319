"""`schedcheck compare SITE --change DATE`: the check after a controls change."""

from __future__ import annotations

import sys
from typing import Annotated

import typer

from schedcheck.cli._app import app
from schedcheck.cli._common import (
    SiteArg,
    SkipBadRows,
    add_row,
    interactive,
    make_console,
    parse_date,
    terminal_text,
)
from schedcheck.errors import InputError

FORMATS = ("table", "json")
#: = schedcheck.changes.compare.DEFAULT_DAYS (four whole weeks); written out so that starting the
#: CLI does not load the job's numerical modules (a test keeps the two equal).
DEFAULT_DAYS = 28


def _progress(message: str) -> None:
    print(f"... {message}", file=sys.stderr, flush=True)


def _signed(x: float) -> str:
    """A change with its sign, one decimal; what rounds to zero is "0.0", never "-0.0"."""
    text = f"{x:+.1f}"
    return "0.0" if text in ("+0.0", "-0.0") else text


def _interval(lo: float, hi: float) -> str:
    return f"[{_signed(lo)}, {_signed(hi)}]"


def _span(p) -> str:
    """``2026-04-20``, or ``2026-03-28..03-30`` when the data cannot tell the day."""
    if p.latest == p.date:
        return str(p.date)
    fmt = "%m-%d" if p.latest.year == p.date.year else "%Y-%m-%d"
    return f"{p.date}..{p.latest.strftime(fmt)}"


def _verdict(diff: float, lo: float, hi: float) -> str:
    """Plain words for a difference of off-schedule hours and its 95% interval."""
    if lo > 0:
        return "more off-schedule running"
    if hi < 0:
        return "less off-schedule running"
    if lo == hi == diff == 0:
        return "no change"
    return "no clear change"


def compare_table(result) -> object:
    """The per-component table (a rich Table)."""
    from rich.table import Table

    table = Table(
        title=(f"{result.site_name}: {result.before_days} days before and {result.after_days} "
               f"days from {result.change}"),
        title_justify="left",
    )
    table.add_column("Component")
    for head in ("Off-schedule h/day", "Change (95% interval)", "Off-schedule kWh/day",
                 "Missed h/day"):
        table.add_column(head, justify="right")
    table.add_column("Verdict")
    table.add_column("Pattern changed on")
    for c in result.components:
        if not c.figures:
            add_row(table, c.id, "-", "-", "-", "-", "not enough data", "-")
            continue
        off = c.figures["off_schedule_h_per_day"]
        kwh = c.figures["kwh_per_day"]
        missed = c.figures.get("missed_h_per_day")
        add_row(table,
            c.id, f"{off.before_mean:.1f} to {off.after_mean:.1f}",
            f"{_signed(off.difference)} {_interval(*off.ci95)}",
            f"{kwh.before_mean:.1f} to {kwh.after_mean:.1f}",
            "-" if missed is None else f"{missed.before_mean:.1f} to {missed.after_mean:.1f}",
            _verdict(off.difference, *off.ci95),
            " ".join(_span(p) for p in c.change_points) or "-",
        )
    return table


def _advice(result) -> list[str]:
    """One plain line per component worth a second look after the change."""
    from schedcheck.changes.compare import LEFT_OUT

    lines = []
    for c in result.components:
        if not c.figures:
            lines += [f"{c.id}: {n}" for n in c.notes]
            continue
        kwh = c.figures["kwh_per_day"]
        off = c.figures["off_schedule_h_per_day"]
        if off.ci95[0] > 0:
            lines.append(
                f"{c.id}: off-schedule running rose by {off.difference:.1f} h/day "
                f"(about {kwh.difference * 365:,.0f} kWh a year at this rate).")
        elif off.ci95[1] < 0:
            lines.append(
                f"{c.id}: off-schedule running fell by {-off.difference:.1f} h/day "
                f"(about {-kwh.difference * 365:,.0f} kWh a year at this rate).")
        missed = c.figures.get("missed_h_per_day")
        if missed is not None and missed.ci95[0] > 0:
            lines.append(
                f"{c.id}: the unit was off for {missed.difference:.1f} h/day more of its "
                "occupied hours after the change; check that it still gives the occupants "
                "their minimum ventilation.")
        for p in c.change_points:
            when = f"from {p.date}" if p.latest == p.date else \
                f"from a day between {p.date} and {p.latest}"
            lines.append(f"{c.id}: {when} off-schedule running settles at "
                         f"{p.after_mean:.1f} h/day (was {p.before_mean:.1f}).")
        for note in c.notes:
            if note.kind == LEFT_OUT:
                lines.append(f"{c.id}: {note}")
    return lines


@app.command()
def compare(
    site: SiteArg,
    change: Annotated[str, typer.Option(
        "--change", help="Local date of the controls change (YYYY-MM-DD); the 'after' period "
        "starts at its local midnight.")],
    before: Annotated[int, typer.Option(
        "--before", help="Whole days before the change to compare (at least 7).")] = DEFAULT_DAYS,
    after: Annotated[int, typer.Option(
        "--after", help="Whole days from the change on to compare (at least 7).")] = DEFAULT_DAYS,
    fmt: Annotated[str, typer.Option("--format", help="table or json.")] = "table",
    skip_bad_rows: SkipBadRows = False,
) -> int:
    """Check a controls change: off-schedule hours, kWh and missed hours per day before and
    after it, the difference with a 95% interval, and the dates where each component's daily
    off-schedule hours changed level (found from the data, whatever date you give).

    Occupied days are compared with occupied days and unoccupied days with unoccupied days.
    The default 28 days each way are four whole weeks. Days with more than 2 h of no data are
    left out and counted.

    Example: schedcheck compare site.toml --change 2026-04-20 --before 28 --after 28
    """
    from schedcheck.jobs.compare import compare_site
    from schedcheck.outputs.compare_json import compare_json_text

    if fmt not in FORMATS:
        raise InputError(f"{fmt!r} is not a format; choose table or json", key="--format")
    day = parse_date(change, "--change")
    result = compare_site(site, day, before, after, skip_bad_rows=skip_bad_rows,
                          progress=_progress if interactive() else None)
    if fmt == "json":
        sys.stdout.write(compare_json_text(result))
        return 0
    console = make_console(160)
    console.print(compare_table(result))
    for line in _advice(result):
        console.print(line, markup=False, soft_wrap=True)
    for w in result.warnings[:10]:
        console.print(f"warning: {terminal_text(w)}", soft_wrap=True)
    if len(result.warnings) > 10:
        console.print(f"... and {len(result.warnings) - 10} more warnings (--format json)",
                      markup=False)
    console.print("Energy figures are affinity-law estimates, not meter readings. A controls "
                  "change must keep ventilation minimums, freeze protection and smoke control "
                  "as designed; defer to local codes.", markup=False, soft_wrap=True)
    return 0
