"""`schedcheck states SITE`: the learned on/off level of every component and why."""

from __future__ import annotations

import json
import sys
from pathlib import Path
from typing import Annotated

import typer

from schedcheck.cli._app import app
from schedcheck.cli._common import (
    SiteArg,
    SkipBadRows,
    add_row,
    make_console,
    parse_date,
    terminal_text,
)
from schedcheck.errors import InputError

FORMATS = ("table", "json")


def _cell(x, fmt: str) -> str:
    return "-" if x is None else format(x, fmt)


def states_table(result) -> object:
    """A rich Table: component, level, source, separation, confidence, running share,
    starts/day, warnings."""
    from rich.table import Table

    unit = result.site.readings.unit
    title = (f"{result.site.name}: run states {result.first} to {result.last} "
             f"({result.site.timezone} local dates)")
    table = Table(title=terminal_text(title), title_justify="left", show_lines=True)
    for head, just in (("Component", "left"), (f"Level [{unit}]", "right"),
                       ("Source", "left"), ("Separation", "right"), ("Confidence", "left"),
                       ("Running", "right"),
                       ("Starts/day", "right"), ("Why this level; warnings", "left")):
        table.add_column(head, justify=just, overflow="fold")
    for r in result.records:
        sep = r["separation"]
        sep_text = "-" if sep is None else (f">{sep:.0f}" if sep >= 1000 else f"{sep:.1f}")
        share = "-" if r["running_share"] is None else f"{r['running_share']:.1%}"
        why = r["reason"] + "".join(f"\nwarning: {w}" for w in r["warnings"])
        add_row(table, r["component"], _cell(r["level"], ".3g"), r["source"], sep_text,
                      r.get("confidence") or "-", share,
                      _cell(r["starts_per_day"], ".1f"), why)
    return table


@app.command()
def states(
    site: SiteArg,
    first: Annotated[str | None, typer.Option(
        "--from", help="First local date (YYYY-MM-DD).")] = None,
    last: Annotated[str | None, typer.Option(
        "--to", help="Last local date, inclusive (YYYY-MM-DD).")] = None,
    fmt: Annotated[str, typer.Option("--format", help="table or json.")] = "table",
    plot: Annotated[Path | None, typer.Option(
        "--plot", help="Write a level histogram picture (SVG) per component into this folder.")
    ] = None,
    skip_bad_rows: SkipBadRows = False,
) -> int:
    """Show the on/off level of every component: learned from its own readings, set in the site
    file, or the floor level; how clearly stopped and running readings separate (Ashman's D,
    above 2 is clean); the share of time running; starts per day; and why each level was chosen.

    The window defaults to the whole local days covered by the readings.

    Example: schedcheck states site.toml --from 2026-03-01 --to 2026-03-31 --plot levels/
    """
    from schedcheck.jobs.states import site_states

    if fmt not in FORMATS:
        raise InputError(f"{fmt!r} is not a format; choose table or json", key="--format")
    d0, d1 = parse_date(first, "--from"), parse_date(last, "--to")
    result = site_states(site, d0, d1, skip_bad_rows=skip_bad_rows, plot_dir=plot)
    for w in result.warnings:
        print(f"warning: {terminal_text(w)}", file=sys.stderr)
    if fmt == "json":
        sys.stdout.write(json.dumps(result.records, indent=2, ensure_ascii=False) + "\n")
    else:
        console = make_console(140)
        console.print(states_table(result))
        console.print("Separation is Ashman's D between stopped and running readings (above 2: "
                      "cleanly apart). Set `threshold` on a component in the site file to "
                      "override a level.")
    for p in result.pictures:
        print(f"wrote {p}", file=sys.stderr)
    return 0
