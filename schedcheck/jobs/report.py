"""The report job: redraw ``report.html`` from a saved audit folder (``schedcheck report``)."""

from __future__ import annotations

from pathlib import Path

from schedcheck.outputs.folder import output_folder
from schedcheck.outputs.report import render_report
from schedcheck.outputs.saved import read_saved_audit


def rerender_report(outdir: str | Path) -> Path:
    """Re-render ``outdir/report.html`` from the audit files saved in ``outdir``.

    The page is staged and moved into place (:func:`schedcheck.outputs.folder.output_folder`),
    so a link planted as ``report.html`` is replaced, never written through.

    Parameters
    ----------
    outdir : str or Path
        An audit output folder written by ``schedcheck audit``.

    Returns
    -------
    Path
        The report file.

    Raises
    ------
    InputError
        The folder or one of its files is missing or malformed (the message names the file).
    """
    outdir = Path(outdir)
    html = render_report(read_saved_audit(outdir))
    with output_folder(outdir, complete=()) as stage:
        path = stage.write_text("report.html", html)
    return path
