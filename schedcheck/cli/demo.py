"""`schedcheck demo [DIR]`: write the fictional demo site, then audit it."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from schedcheck.cli._app import app
from schedcheck.cli._common import add_row, make_console
from schedcheck.demo.defaults import DEFAULT_MONTHS, DEFAULT_SEED, MAX_MONTHS


def _faults_table(result) -> object:
    """The planted faults, one row per fault and unit (a rich Table)."""
    from rich import box
    from rich.table import Table

    demo = result.demo
    table = Table(title="Planted faults (the generator's truth, in truth/faults.json)",
                  title_justify="left", box=box.SIMPLE_HEAD,
                  caption="Hours as the audit counts them: off-schedule running (for missed: "
                          "occupied hours off), one figure per component.",
                  caption_justify="left")
    for name in ("Components", "Kind", "Local dates", "Hours"):
        table.add_column(name, justify="right" if name == "Hours" else "left")
    hours = result.audited_hours
    groups: dict[tuple[str, str], list] = {}
    for f in demo.faults:
        groups.setdefault((f.unit, f.kind), []).append(f)
    for (_unit, kind), fs in groups.items():
        dates = fs[0].dates
        shown = ", ".join(dates) if len(dates) <= 4 else f"{dates[0]} .. {dates[-1]} ({len(dates)})"
        add_row(table, ", ".join(f.component for f in fs), kind, shown,
                      " / ".join(f"{hours.get((f.component, f.kind), f.hours):.1f}" for f in fs))
    return table


@app.command()
def demo(
    folder: Annotated[Path, typer.Argument(
        metavar="DIR",
        help="Folder to write the demo site into (created; must be empty or an earlier demo).")
    ] = Path("schedcheck-demo"),
    seed: Annotated[int, typer.Option(
        "--seed", help="Seed of the generator; the same seed gives identical files.")
    ] = DEFAULT_SEED,
    months: Annotated[int, typer.Option(
        "--months", help=f"Length of the data in months, 1 to {MAX_MONTHS} (whole weeks from "
        "2026-02-16); 3 or more holds every planted fault.")] = DEFAULT_MONTHS,
    no_audit: Annotated[bool, typer.Option(
        "--no-audit", help="Only write the files; do not audit them.")] = False,
) -> int:
    """Write an invented site (five air handling units in a fictional office and teaching
    building, calendars, about three months of one-a-minute vibration readings, and the
    generator's true run intervals and planted faults), then audit it into DIR/audit.

    Everything written is invented data for learning and testing the tool.

    Example: schedcheck demo my-demo --seed 7
    """
    from schedcheck.jobs.demo import make_demo

    out = make_console(120)
    result = make_demo(folder, seed=seed, months=months)
    d = result.demo
    out.print(f"Wrote an invented demo site to {result.folder} ({len(result.files)} files, "
              f"{result.size_bytes / 1e6:.1f} MB, {result.readings_rows:,} readings rows, "
              f"{d.first} to {d.last}, seed {d.seed}):", markup=False, soft_wrap=True)
    for rel, what in (("site.toml", "the site file"), ("calendars/", "occupied hours (iCalendar)"),
                      ("readings/", "vibration readings (CSV.gz and Parquet)"),
                      ("truth/", "true run intervals and planted faults"),
                      ("README.txt", "what this folder is")):
        out.print(f"  {result.folder}/{rel}  {what}", markup=False, soft_wrap=True)
    out.print(_faults_table(result))
    if no_audit:
        out.print(f"Next: schedcheck audit {result.site_file}", markup=False, soft_wrap=True)
        return 0
    from schedcheck.cli.audit import audit

    out.print(f"Auditing it: schedcheck audit {result.site_file} --out {result.folder / 'audit'}",
              markup=False, soft_wrap=True)
    return audit(site=result.site_file, first=None, last=None, out=result.folder / "audit",
                 skip_bad_rows=False)
