"""Instants as every written file shows them: one rounding rule, local date and time columns.

Every writer (``summary.json``, the CSV files, ``findings.ics``, ``schedule --format csv``)
rounds an instant with :func:`to_second`, so the files agree to the second. The rule is round
half up to the nearest whole second (common practice, no source); interval ends and starts
that touch still touch after rounding, because the same instant rounds the same way.

For spreadsheets, each ISO instant column ``X`` gets the columns ``X_date`` (local date,
``YYYY-MM-DD``) and ``X_time`` (local clock time, ``HH:MM:SS``) beside it, taken from the
ISO text itself so they can never disagree with it. :data:`EXCEL_ENCODING` is the encoding of
the ``--excel`` option: UTF-8 with a byte-order mark, which spreadsheet programs need to read
accented letters in a CSV file.
"""

from __future__ import annotations

import pandas as pd

HALF_SECOND = pd.Timedelta("500ms")
CSV_ENCODING = "utf-8"
EXCEL_ENCODING = "utf-8-sig"     # UTF-8 with a byte-order mark (Unicode standard, section 23.8)


def to_second(ts) -> pd.Timestamp:
    """``ts`` rounded half up to the nearest whole second (the files' one rounding rule)."""
    return (pd.Timestamp(ts) + HALF_SECOND).floor("s")


def local_iso(ts, tz: str) -> str:
    """A UTC instant as local ISO 8601 with offset, rounded to the second; '' for none."""
    if ts is None or (not isinstance(ts, str) and pd.isna(ts)):
        return ""
    return to_second(pd.Timestamp(ts).tz_convert(tz)).isoformat(timespec="seconds")


def local_parts(iso: str) -> tuple[str, str]:
    """``(date, time)`` of a local ISO 8601 text ``2026-04-02T05:58:00+02:00``; blanks for ''."""
    if not iso:
        return "", ""
    return iso[:10], iso[11:19]


def with_local_columns(frame: pd.DataFrame, columns: tuple[str, ...]) -> pd.DataFrame:
    """``frame`` with ``X_date`` and ``X_time`` right after each ISO instant column ``X``."""
    out = frame.copy()
    for col in columns:
        parts = [local_parts(str(v)) for v in out[col]]
        at = out.columns.get_loc(col) + 1
        out.insert(at, f"{col}_date", [p[0] for p in parts])
        out.insert(at + 1, f"{col}_time", [p[1] for p in parts])
    return out


def csv_encoding(*, excel: bool = False) -> str:
    """The text encoding of a written CSV file."""
    return EXCEL_ENCODING if excel else CSV_ENCODING
