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
    """A rich Table that fits an 80-column terminal: component, level, source, separation,
    confidence, running share, starts/day, and a mark ``*n`` pointing to the component's
    reason and warnings, listed under the table by :func:`reason_lines`."""
    from rich import box
    from rich.table import Table

    from schedcheck.outputs.wording import separation_text
    from schedcheck.runstate.onofflevel import SEPARATION_CAP

    unit = result.site.readings.unit
    title = (f"{result.site.name}: run states {result.first} to {result.last} "
             f"({result.site.timezone} local dates)")
    table = Table(title=terminal_text(title), title_justify="left", box=box.SIMPLE_HEAD,
                  pad_edge=False, show_edge=False)
    from rich.text import Text

    for head, just in (("Component", "left"), (Text(f"Level\n[{unit}]"), "right"),
                       ("Source", "left"), ("Separ-\nation", "right"), ("Confi-\ndence", "left"),
                       ("Running", "right"), ("Starts\n/day", "right"), ("Why", "right")):
        table.add_column(head, justify=just, overflow="fold", no_wrap=head == "Component")
    # a Text header: "[mm/s]" would otherwise be read as console markup and vanish
    for i, r in enumerate(result.records, 1):
        share = "-" if r["running_share"] is None else f"{r['running_share']:.1%}"
        add_row(table, r["component"], _cell(r["level"], ".3g"), r["source"],
                      separation_text(r["separation"], SEPARATION_CAP),
                      r.get("confidence") or "-", share,
                      _cell(r["starts_per_day"], ".1f"), f"*{i}")
    return table


def reason_lines(result) -> list[str]:
    """Why each level was chosen, and its warnings: one paragraph per component, numbered as
    the table's ``*n`` marks (paragraphs wrap at the terminal's width, not in a column)."""
    out = []
    for i, r in enumerate(result.records, 1):
        out.append(f"*{i} {r['component']}: {r['reason']}")
        out += [f"   warning: {w}" for w in r["warnings"]]
        speeds = _speed_line(r.get("speed_levels") or [])
        if speeds:
            out.append("   " + speeds.strip())
    return out


def _speed_line(levels: list[dict]) -> str:
    """The running level groups with their speeds, e.g. ``speeds: 0.18 -> 30 % (estimated
    20-43 %), 1.45 -> 85 %``."""
    if not levels:
        return ""
    parts = []
    for lv in levels:
        text = f"{lv['level']:.3g} -> {lv['speed']:.0%}"
        if lv["source"] == "estimated":
            text += f" (estimated, {lv['low']:.0%}-{lv['high']:.0%})"
        parts.append(text)
    return "\nspeeds: " + ", ".join(parts)


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
        for line in reason_lines(result):
            console.print(line, markup=False)
        console.print("Separation is Ashman's D between stopped and running readings (above 2: "
                      "cleanly apart). Set `threshold` on a component in the site file to "
                      "override a level.")
    for p in result.pictures:
        print(f"wrote {p}", file=sys.stderr)
    return 0
