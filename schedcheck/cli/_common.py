"""Option parsing shared by the commands (no library logic here)."""

from __future__ import annotations

import datetime as dt
import sys

from schedcheck.errors import InputError


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
