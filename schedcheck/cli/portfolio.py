"""`schedcheck portfolio SITE...`: audit many sites and roll them up."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import Annotated

import typer

from schedcheck.cli._app import app
from schedcheck.cli._common import interactive, parse_date


@app.command()
def portfolio(
    sites: Annotated[list[Path], typer.Argument(metavar="SITE...", help="The site files (TOML).")],
    out: Annotated[Path, typer.Option(
        "--out", help="Folder for the roll-up; each site's audit goes to DIR/sites/<site>/.")
    ] = Path("portfolio"),
    first: Annotated[str | None, typer.Option(
        "--from", help="First local date to audit at every site (YYYY-MM-DD).")] = None,
    last: Annotated[str | None, typer.Option(
        "--to", help="Last local date to audit, inclusive (YYYY-MM-DD).")] = None,
    jobs: Annotated[int | None, typer.Option(
        "--jobs", help="Local worker processes [default: the number of cores].")] = None,
    scheduler: Annotated[str | None, typer.Option(
        "--scheduler", help="Run the sites on the Dask distributed scheduler at this address "
        "(needs schedcheck[cluster]).")] = None,
    history: Annotated[Path | None, typer.Option(
        "--history", help="SQLite file to keep each month's figures and findings in; the "
        "roll-up then shows the last 12 months and marks findings new, recurring or resolved."
    )] = None,
) -> int:
    """Audit every site into DIR/sites/<site>/ and write portfolio.csv, portfolio.json and
    portfolio.html (units ranked by off-schedule cost, linking to each site's report).

    A site with bad input is listed as failed with its one-line error and the others go on;
    the exit status is then 2.

    Example: schedcheck portfolio sites/*/site.toml --from 2026-03-01 --to 2026-03-31
    --out portfolio-march --history history.sqlite
    """
    from schedcheck.jobs.portfolio import run_portfolio

    d0, d1 = parse_date(first, "--from"), parse_date(last, "--to")

    def report_failure(rec: dict) -> None:
        if rec["status"] != "ok":
            print(f"{rec['site']}: {rec['error']}", file=sys.stderr, flush=True)

    if interactive():
        from rich.console import Console
        from rich.progress import Progress

        with Progress(console=Console(stderr=True), transient=True) as bar:
            task = bar.add_task("auditing sites", total=len(sites))

            def step(rec: dict) -> None:
                if rec["status"] != "ok":   # above the live bar, not through it
                    bar.console.print(f"{rec['site']}: {rec['error']}", markup=False,
                                      highlight=False, soft_wrap=True)
                bar.advance(task)

            result = run_portfolio(sites, out, d0, d1, jobs=jobs, scheduler=scheduler,
                                   history=history, on_done=step)
    else:
        result = run_portfolio(sites, out, d0, d1, jobs=jobs, scheduler=scheduler,
                               history=history, on_done=report_failure)
    ok = len(result.sites) - len(result.failed)
    print(f"{ok} of {len(result.sites)} site(s) audited. Files written to {result.outdir}:")
    for path in result.files.values():
        print(f"  {path}")
    print("Energy figures are affinity-law estimates, not meter readings. Before changing "
          "schedules: keep ventilation minimums, freeze protection and smoke control as "
          "designed; defer to local codes.")
    return 2 if result.failed else 0
