"""`schedcheck schedule SITE`: the intended schedule as concrete local intervals."""

from __future__ import annotations

import csv
import io
import json
import sys
from typing import Annotated

import typer

from schedcheck.cli._app import app
from schedcheck.cli._common import Excel, SiteArg, add_row, make_console, parse_date, terminal_text
from schedcheck.errors import InputError

FORMATS = ("table", "json", "csv")
CSV_FIELDS = ["unit", "kind", "start", "start_date", "start_time", "end", "end_date",
              "end_time", "source", "date", "name"]


def schedule_records(result) -> list[dict]:
    """The JSON records: intervals ``{unit, kind, start, end, source}`` (local ISO 8601 with
    offset) and one ``{unit, kind: "holiday", date, name}`` per holiday or closure date;
    per unit, in time order, a date's days off before its intervals."""
    from schedcheck.outputs.instants import local_iso

    tz = result.site.timezone
    out = []
    for unit_id, sched in result.units:
        rows = []
        for r in sched.days_off.itertuples(index=False):
            rows.append(((r.date.isoformat(), -1), {
                "unit": unit_id, "kind": "holiday", "date": r.date.isoformat(),
                "name": str(r.name)}))
        for r in sched.intervals.itertuples(index=False):
            s = r.start.tz_convert(tz)
            rows.append(((s.date().isoformat(), r.start.value), {
                "unit": unit_id, "kind": r.kind, "start": local_iso(r.start, tz),
                "end": local_iso(r.end, tz), "source": str(r.source)}))
        rows.sort(key=lambda x: x[0])
        out.extend(rec for _, rec in rows)
    return out


def schedule_table(result, records: list[dict]) -> object:
    """A rich Table: unit, local date, weekday, kind, start, end, source."""
    import datetime as dt

    from rich.table import Table

    title = (f"{result.site.name}: intended schedule {result.first} to {result.last} "
             f"({result.site.timezone} local time)")
    table = Table(title=terminal_text(title), title_justify="left")
    for head in ("Unit", "Date", "Day", "Kind", "Start", "End", "Source"):
        table.add_column(head)
    styles = {"occupied": "bold", "allowance": "", "allowed": "dim", "holiday": "italic"}
    for rec in records:
        if rec["kind"] == "holiday":
            day = dt.date.fromisoformat(rec["date"])
            add_row(table, rec["unit"], rec["date"], day.strftime("%a"), "day off", "", "",
                          rec["name"], style=styles["holiday"])
            continue
        s, e = dt.datetime.fromisoformat(rec["start"]), dt.datetime.fromisoformat(rec["end"])
        end = e.strftime("%H:%M") if e.date() == s.date() else e.strftime("%Y-%m-%d %H:%M")
        add_row(table, rec["unit"], s.date().isoformat(), s.strftime("%a"), rec["kind"],
                      s.strftime("%H:%M"), end, rec["source"], style=styles[rec["kind"]])
    return table


def schedule_csv(records: list[dict]) -> str:
    """CSV text with the JSON fields, one row per record (empty cells where a field is absent),
    and the local date and time of each start and end beside it."""
    from schedcheck.outputs.cells import csv_cell
    from schedcheck.outputs.instants import local_parts

    buf = io.StringIO()
    writer = csv.DictWriter(buf, fieldnames=CSV_FIELDS, lineterminator="\n")
    writer.writeheader()
    for rec in records:
        row = {k: rec.get(k, "") for k in CSV_FIELDS}
        for end in ("start", "end"):
            row[f"{end}_date"], row[f"{end}_time"] = local_parts(row[end])
        writer.writerow({k: csv_cell(v) for k, v in row.items()})
    return buf.getvalue()


@app.command()
def schedule(
    site: SiteArg,
    unit: Annotated[str | None, typer.Option(
        "--unit", help="Only this unit (its id in the site file).")] = None,
    first: Annotated[str | None, typer.Option(
        "--from", help="First local date (YYYY-MM-DD).")] = None,
    last: Annotated[str | None, typer.Option(
        "--to", help="Last local date, inclusive (YYYY-MM-DD).")] = None,
    fmt: Annotated[str, typer.Option(
        "--format", help="table, json or csv.")] = "table",
    excel: Excel = False,
) -> int:
    """Show what each unit was meant to do: occupied periods, allowances (early start, late
    stop), allowed windows, public holidays and closures, as local times.

    The window defaults to the whole local days covered by the readings, or this month when
    there are none; with only --from, it runs to the end of that month.

    Example: schedcheck schedule site.toml --unit AHU-1 --from 2026-03-30 --to 2026-04-05
    """
    from schedcheck.jobs.schedule import site_schedule
    from schedcheck.outputs.instants import csv_encoding

    if fmt not in FORMATS:
        raise InputError(f"{fmt!r} is not a format; choose table, json or csv", key="--format")
    d0, d1 = parse_date(first, "--from"), parse_date(last, "--to")
    result = site_schedule(site, unit=unit, first=d0, last=d1)
    for w in result.warnings:
        print(f"warning: {terminal_text(w)}", file=sys.stderr)
    records = schedule_records(result)
    if fmt == "json":
        sys.stdout.write(json.dumps(records, indent=2, ensure_ascii=False) + "\n")
    elif fmt == "csv":
        text = schedule_csv(records)
        raw = getattr(sys.stdout, "buffer", None)
        if raw is None:    # a text-only stream: the mark as a character
            sys.stdout.write(("\ufeff" if excel else "") + text)
        else:
            sys.stdout.flush()
            raw.write(text.encode(csv_encoding(excel=excel)))
            raw.flush()
    else:
        console = make_console(120)
        if result.window_note != "given":
            print(f"window: {result.first} to {result.last} ({result.window_note})",
                  file=sys.stderr)
        console.print(schedule_table(result, records))
        if not records:
            console.print("Nothing is scheduled in this window.")
    return 0
