"""Local time in the findings' sentences: dates, clock times and spans in the site's zone.

Instants are int64 ns UTC; the words are the site's local time.
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd

from schedcheck.intervals import NS_PER_H, from_ns
from schedcheck.window import local_midnight

NS_PER_MIN = 60 * 1_000_000_000


def local_dates(ns, tz: str) -> list[dt.date]:
    """Local dates of int64 ns instants."""
    return list(from_ns(np.atleast_1d(np.asarray(ns, dtype=np.int64))).tz_convert(tz).date)


def local(ns: int, tz: str) -> pd.Timestamp:
    return pd.Timestamp(int(ns), tz="UTC").tz_convert(tz)


def midnight_ns(day: dt.date, tz: str) -> int:
    return int(local_midnight(day, tz).value)


def day_text(day: dt.date, year: bool = True) -> str:
    return f"{day:%a} {day.day} {day:%b}" + (f" {day.year}" if year else "")


def hhmm(ns: int, tz: str) -> str:
    return f"{local(ns, tz):%H:%M}"


def span_text(s: int, e: int, tz: str) -> str:
    """'from 05:58 to 17:04', with weekdays when the span crosses midnight."""
    a, b = local(s, tz), local(e, tz)
    if a.date() == b.date() or (b - a <= pd.Timedelta("24h") and b.hour == 0 and b.minute == 0
                                and (b - pd.Timedelta("1ns")).date() == a.date()):
        # a span that ends at the midnight after its date ends at "midnight", not "00:00"
        end = "midnight" if b.date() != a.date() else f"{b:%H:%M}"
        return f"from {a:%H:%M} to {end}"
    return f"from {a:%a} {a:%H:%M} to {b:%a} {b:%H:%M}"


def minutes_text(ns: int) -> str:
    m = int(round(ns / NS_PER_MIN))
    return f"{m} min" if m < 90 else f"{m / 60:.1f} h"


def _list_dates(days: list[dt.date]) -> str:
    parts = [f"{d:%a} {d.day}" for d in days]
    text = ", ".join(parts[:-1]) + f" and {parts[-1]}" if len(parts) > 1 else parts[0]
    return f"{text} {days[-1]:%b %Y}"


def _long(ns: int) -> str:
    """A long duration: hours up to three days, then days."""
    h = ns / NS_PER_H
    return f"{h:.1f} h" if h < 72 else f"{h / 24:.1f} days"
