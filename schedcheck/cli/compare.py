"""`schedcheck compare SITE --change DATE`: the check after a controls change."""

from __future__ import annotations

import sys
from typing import Annotated

import typer
from rich.text import Text

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
    """A 95% interval in the table's short form: ``-0.1..+2.6``."""
    return f"{_signed(lo)}..{_signed(hi)}"


def _verdict(diff: float, lo: float, hi: float) -> str:
    """Plain words for a difference of off-schedule hours and its 95% interval."""
    if lo > 0:
        return "more off-schedule running"
    if hi < 0:
        return "less off-schedule running"
    if lo == hi == diff == 0:
        return "no change"
    return "no clear change"


def _verdict_for(c) -> str:
    """The verdict, held back where the notes say the interval rests on too few days."""
    from schedcheck.changes.compare import FEW_DAYS

    off = c.figures["off_schedule_h_per_day"]
    if any(getattr(n, "kind", None) == FEW_DAYS for n in c.notes):
        return "too few days to judge"
    return _verdict(off.difference, *off.ci95)


def compare_table(result) -> object:
    """The per-component table (a rich Table) that fits an 80-column terminal: values wrap
    at their spaces, ids and dates are never cut; a component with notes is marked ``*n``
    and its notes are listed under the table (see :func:`note_lines`)."""
    from rich import box
    from rich.table import Table

    table = Table(
        title=(f"{result.site_name}: {result.before_days} days before and {result.after_days} "
               f"days from {result.change}"),
        title_justify="left", box=box.SIMPLE_HEAD, pad_edge=False, padding=(0, 1),
        collapse_padding=True, show_edge=False,
    )
    table.add_column("Component", no_wrap=True)
    for head in ("Off\nh", "Change\nh", "Off\nkWh", "Missed\nh"):
        table.add_column(head, justify="right", overflow="fold")
    table.add_column("Verdict", min_width=12, overflow="fold")
    table.add_column("Pattern\nchanged", no_wrap=True)
    marks = _note_marks(result)
    year = result.change.year
    for c in result.components:
        cid = c.id + (f"*{marks[c.id]}" if c.id in marks else "")
        if not c.figures:
            add_row(table, cid, "-", "-", "-", "-", "not enough data", "-")
            continue
        off = c.figures["off_schedule_h_per_day"]
        kwh = c.figures["kwh_per_day"]
        missed = c.figures.get("missed_h_per_day")
        lo, hi = off.ci95
        # cells of our own figures keep their line breaks (rich Text); text from the inputs
        # (the id) is escaped by add_row
        add_row(table,
            cid, Text(f"{off.before_mean:.1f} to\n{off.after_mean:.1f}"),
            Text(f"{_signed(off.difference)}\n{_interval(lo, hi)}"),
            Text(f"{kwh.before_mean:.1f} to\n{kwh.after_mean:.1f}"),
            "-" if missed is None else Text(f"{missed.before_mean:.1f} to\n"
                                            f"{missed.after_mean:.1f}"),
            _verdict_for(c),
            Text("\n".join(_short_span(p, year) for p in c.change_points) or "-"),
        )
    table.caption = (f"Figures per day, before to after. Off: off-schedule running. Change: "
                     f"after minus before, with its 95% interval. Pattern changed: dates in "
                     f"{year} unless a year is shown.")
    table.caption_justify = "left"
    return table


def _short_span(p, year: int) -> str:
    """A change-point date for the 80-column table: ``04-20`` (``2025-12-30`` in another
    year), ``04-20..22`` or ``04-28..05-02`` where the data cannot tell the day."""
    def one(d):
        return d.strftime("%m-%d") if d.year == year else d.isoformat()
    if p.latest == p.date:
        return one(p.date)
    same_month = (p.latest.year, p.latest.month) == (p.date.year, p.date.month) == (
        year, p.date.month)
    return f"{one(p.date)}..{p.latest:%d}" if same_month else f"{one(p.date)}..{one(p.latest)}"


def _note_marks(result) -> dict[str, int]:
    """Component id -> the number of its group of notes (components with the same notes share
    one number, so one note is listed once)."""
    groups: dict[tuple[str, ...], int] = {}
    marks = {}
    for c in result.components:
        if c.notes:
            key = tuple(str(n) for n in c.notes)
            marks[c.id] = groups.setdefault(key, len(groups) + 1)
    return marks


def note_lines(result) -> list[str]:
    """The notes behind the table's ``*n`` marks, one line per note."""
    marks = _note_marks(result)
    lines, done = [], set()
    for c in result.components:
        if c.id not in marks or marks[c.id] in done:
            continue
        done.add(marks[c.id])
        who = ", ".join(k for k, v in marks.items() if v == marks[c.id])
        lines += [f"*{marks[c.id]} {who}: {n}" for n in c.notes]
    return lines


def _advice(result) -> list[str]:
    """One plain line per component worth a second look after the change."""
    lines = []
    for c in result.components:
        if not c.figures:
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
        if c.dated is not None:
            ep = c.dated.episode
            what = (f"an episode of {ep.mean_h_per_day:.1f} h/day off schedule began (usual "
                    f"{ep.usual_h_per_day:.1f})" if c.dated.how == "began" else
                    f"an episode of {ep.mean_h_per_day:.1f} h/day off schedule ended the day "
                    "before")
            lines.append(f"{c.id}: behaviour changed on {c.dated.date}: {what}.")
        for p in c.change_points:
            when = f"from {p.date}" if p.latest == p.date else \
                f"from a day between {p.date} and {p.latest}"
            lines.append(f"{c.id}: {when} off-schedule running settles at "
                         f"{p.after_mean:.1f} h/day (was {p.before_mean:.1f}).")
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
    for line in note_lines(result) + _advice(result):
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
