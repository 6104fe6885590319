"""``levels.csv.gz``: the per-minute level trace behind the report's close-up of each finding.

Written by the audit (:func:`write_levels`), read back by the report (:func:`read_levels`), so
``schedcheck report OUTDIR`` redraws the close-ups without the readings. Columns:

``finding``
    The finding's key (its ``id`` in ``findings.csv``, or its 1-based row number there).
``component``
    ``UNIT/COMPONENT``.
``time``
    Start of the minute, local ISO 8601 with offset, to the second.
``level``
    Median vibration level of the readings in that minute [reading unit]; a minute without a
    reading has no row.

Only the spans of the costliest findings are kept (see :mod:`schedcheck.audit.evidence`), so
the file stays small. It is gzip-compressed with a zero time stamp, so the same audit writes
the same bytes.
"""

from __future__ import annotations

import gzip
import io
import zlib
from pathlib import Path

import numpy as np
import pandas as pd

from schedcheck.audit.evidence import LEVEL_COLUMNS
from schedcheck.errors import InputError
from schedcheck.outputs.instants import local_texts

LEVELS_FILE = "levels.csv.gz"
LEVEL_DECIMALS = 4   # as runs.csv's level column
GZIP_LEVEL = 6
_EARLIEST = pd.Timestamp("1900-01-01", tz="UTC")   # as the other saved files: a damaged year
_LATEST = pd.Timestamp("2200-01-01", tz="UTC")     # would overflow the nanosecond clock


def levels_text(levels: pd.DataFrame, tz: str) -> str:
    """The CSV text of the file (header and one line per row)."""
    def offset(t: pd.Timestamp) -> str:   # strftime's %z with a colon before the minutes
        z = t.tz_convert(tz).strftime("%z")
        return z[:-2] + ":" + z[-2:]

    local = local_texts(pd.DatetimeIndex(levels["time"]).tz_convert("UTC"), tz, offset)
    frame = pd.DataFrame({"finding": levels["finding"].astype(str).to_numpy(),
                          "component": levels["component"].astype(str).to_numpy(),
                          "time": local,
                          "level": np.round(levels["level"].to_numpy(float), LEVEL_DECIMALS)})
    return frame.to_csv(index=False, lineterminator="\n")


def write_levels(levels: pd.DataFrame, tz: str, path: Path) -> Path:
    """Write ``levels.csv.gz`` (UTF-8 CSV, gzip with mtime 0)."""
    data = levels_text(levels, tz).encode("utf-8")
    # level 6 (zlib's own default) instead of gzip's 9: a quarter of the time for a file a
    # tenth larger (a year audit's 8.5 MB of text: 0.38 s -> 0.09 s, 477 kB -> 522 kB)
    with open(path, "wb") as raw, gzip.GzipFile(fileobj=raw, mode="wb", mtime=0, filename="",
                                                compresslevel=GZIP_LEVEL) as gz:
        gz.write(data)
    return path


def read_levels(path: Path) -> pd.DataFrame | None:
    """Read and check ``levels.csv.gz``; None when the folder has none (an older audit).

    Returns ``finding``, ``component`` (text), ``time`` (UTC) and ``level`` (float, >= 0).
    Raises :class:`InputError` naming the file, line and column of a problem.
    """
    if not path.exists():
        return None
    try:
        with gzip.open(path, "rb") as gz:
            text = gz.read().decode("utf-8")
    except (OSError, EOFError, zlib.error):
        raise InputError("is not a gzip-compressed file", path=path) from None
    except UnicodeDecodeError:
        raise InputError("is not UTF-8 text", path=path) from None
    try:
        df = pd.read_csv(io.StringIO(text), dtype=str, keep_default_na=False)
    except pd.errors.EmptyDataError:
        raise InputError("is empty; expected a header line", path=path, line=1) from None
    except pd.errors.ParserError as e:
        raise InputError(f"is not valid CSV ({' '.join(str(e).split())})", path=path) from None
    missing = [c for c in LEVEL_COLUMNS if c not in df.columns]
    if missing:
        raise InputError(f"header lacks column(s) {', '.join(missing)}", path=path, line=1)
    text_time = df["time"].str.strip()
    times = pd.to_datetime(text_time, utc=True, format="ISO8601", errors="coerce")
    bad = (times.isna() | ~text_time.str.contains(r"(?:Z|[+-]\d\d:\d\d)$", regex=True)
           | (times < _EARLIEST) | (times > _LATEST)).to_numpy()
    if bad.any():
        i = int(bad.argmax())
        raise InputError(f"{df['time'].iloc[i]!r} is not an ISO 8601 instant with an offset",
                         path=path, line=i + 2, key="time")
    level = pd.to_numeric(df["level"].str.strip(), errors="coerce").astype("float64")
    bad = ~(np.isfinite(level.to_numpy()) & (level.to_numpy() >= 0))
    if bad.any():
        i = int(bad.argmax())
        raise InputError(f"{df['level'].iloc[i]!r} is not a reading level (0 or more)",
                         path=path, line=i + 2, key="level")
    return pd.DataFrame({"finding": df["finding"], "component": df["component"],
                         "time": times.dt.as_unit("ns"), "level": level})
