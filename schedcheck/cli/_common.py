"""Option parsing shared by the commands (no library logic here)."""

from __future__ import annotations

import datetime as dt
import sys
from pathlib import Path
from typing import Annotated

import typer

from schedcheck.errors import InputError, terminal_text

#: the SITE argument every command but ``report`` and ``demo`` takes
SiteArg = Annotated[Path, typer.Argument(help="The site file (TOML).")]

#: ``--skip-bad-rows`` of the commands that read readings to compute (check words it its own way)
SkipBadRows = Annotated[bool, typer.Option(
    "--skip-bad-rows", help="Skip unreadable readings rows (counted) instead of stopping at the "
    "first.")]

#: ``--excel`` of the commands that write CSV
Excel = Annotated[bool, typer.Option(
    "--excel", help="Write CSV as UTF-8 with a byte-order mark, so spreadsheet programs read "
    "accented letters.")]


def parse_date(text: str | None, option: str) -> dt.date | None:
    """A local date option (``2026-03-01``) or None."""
    if text is None:
        return None
    try:
        day = dt.date.fromisoformat(text.strip())
    except ValueError:
        raise InputError(f"{text!r} is not a date; write YYYY-MM-DD", key=option) from None
    if not FIRST_DATE <= day <= LAST_DATE:
        # far dates overflow the nanosecond clock inside (and no readings come from them)
        raise InputError(f"{day} is out of range; give a date from {FIRST_DATE} to {LAST_DATE}",
                         key=option)
    return day


FIRST_DATE, LAST_DATE = dt.date(1900, 1, 1), dt.date(2199, 12, 31)


def interactive() -> bool:
    """True when stderr is a terminal (progress is shown only then)."""
    return sys.stderr.isatty()


def make_console(width: int) -> object:
    """A rich Console that never reads markup from text (ids and names may hold ``[/]``);
    ``width`` columns when output is not a terminal."""
    from rich.console import Console

    return Console(width=None if sys.stdout.isatty() else width, highlight=False, markup=False)


def add_row(table, *cells, **options) -> None:
    """``table.add_row`` with control characters in text cells shown as visible escapes, line
    feeds included (an id or name holding one would split its row); a cell of our own that
    needs several lines is passed as a ``rich.text.Text``, which is left as it is."""
    table.add_row(*(terminal_text(c) if isinstance(c, str) else c
                    for c in cells), **options)
