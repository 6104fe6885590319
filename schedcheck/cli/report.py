"""`schedcheck report OUTDIR`: redraw report.html from a saved audit folder."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from schedcheck.cli._app import app


@app.command()
def report(
    outdir: Annotated[Path, typer.Argument(
        help="An audit output folder (holds summary.json, daily.csv, runs.csv, findings.csv, "
             "schedule.csv).")],
) -> int:
    """Re-render OUTDIR/report.html from the audit files saved in OUTDIR, without the readings.

    The page is self-contained: it opens in any browser without a network and prints on A4 or
    Letter. Prints the path of the report.

    Example: schedcheck report audit-fjordside-hall
    """
    from schedcheck.jobs.report import rerender_report

    path = rerender_report(outdir)
    print(path)
    return 0
