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

import numpy as np
import pandas as pd

HALF_SECOND = pd.Timedelta("500ms")
CSV_ENCODING = "utf-8"
EXCEL_ENCODING = "utf-8-sig"     # UTF-8 with a byte-order mark (Unicode standard, section 23.8)


def to_second(ts) -> pd.Timestamp:
    """``ts`` rounded half up to the nearest whole second (the files' one rounding rule)."""
    return (pd.Timestamp(ts) + HALF_SECOND).floor("s")


def local_iso(ts, tz: str) -> str:
    """A UTC instant as local ISO 8601 with offset, rounded to the second; '' for none.

    Rounded in UTC, then shown in ``tz``: the same second as rounding the local time (every
    zone offset is a whole number of seconds), and an instant in the repeated hour of a
    change back from summer time has one reading.
    """
    if ts is None or (not isinstance(ts, str) and pd.isna(ts)):
        return ""
    return to_second(pd.Timestamp(ts).tz_convert("UTC")).tz_convert(tz).isoformat(
        timespec="seconds")


def local_iso_many(values, tz: str) -> list[str]:
    """:func:`local_iso` of each of ``values`` (UTC instants; None or NaT give ''), formatted
    as one array: the local wall clock by numpy, the offset text once per distinct offset."""
    idx = _utc_index(values)
    return local_texts(idx + HALF_SECOND, tz, lambda t: local_iso(t, tz)[19:])


def _utc_index(values) -> pd.DatetimeIndex:
    if isinstance(values, pd.Series | pd.Index) and isinstance(values.dtype, pd.DatetimeTZDtype):
        return pd.DatetimeIndex(values).tz_convert("UTC")
    return pd.DatetimeIndex(pd.to_datetime(pd.Series(list(values), dtype=object), utc=True))


def local_texts(idx: pd.DatetimeIndex, tz: str, offset_text) -> list[str]:
    """Each UTC instant of ``idx``, cut down to its second, as local ``YYYY-MM-DDTHH:MM:SS``
    followed by ``offset_text(instant)``, called once per distinct UTC offset ('' for NaT)."""
    if len(idx) == 0:
        return []
    missing = np.asarray(idx.isna())
    seconds = idx.floor("s").as_unit("s")
    wall = seconds.tz_convert(tz).tz_localize(None)
    clock = np.datetime_as_string(wall.to_numpy().astype("datetime64[s]"), unit="s")
    offset = np.where(missing, 0, wall.asi8 - seconds.asi8)
    texts = {}
    for off in np.unique(offset[~missing]).tolist():
        texts[off] = offset_text(seconds[int(np.flatnonzero((offset == off) & ~missing)[0])])
    return ["" if gone else f"{c}{texts[o]}"
            for c, o, gone in zip(clock.tolist(), offset.tolist(), missing.tolist(),
                                  strict=True)]


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
