"""The report job: redraw ``report.html`` from a saved audit folder (``schedcheck report``)."""

from __future__ import annotations

from pathlib import Path

from schedcheck.outputs.report import write_report


def rerender_report(outdir: str | Path) -> Path:
    """Re-render ``outdir/report.html`` from the audit files saved in ``outdir``.

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
    return write_report(Path(outdir))
