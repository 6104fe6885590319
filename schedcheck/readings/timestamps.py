"""Timestamps of readings rows to UTC: ISO 8601 with an offset, epoch seconds, typed timestamps,
and local wall times read through the IANA time zone database (daylight saving handled).

Core code: pandas/Arrow in, numpy out; no file access. Used by :mod:`schedcheck.readings.cleaning`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from schedcheck.errors import excerpt

NAT = np.iinfo(np.int64).min

# Epoch seconds outside 2000-01-01 .. 2100-01-01 are refused: they are almost always
# milliseconds or a wrong column (common practice, no source).
EPOCH_RANGE = (946_684_800, 4_102_444_800)

# Row status codes from parse_timestamps.
OK, EMPTY, UNPARSEABLE, NAIVE, NONEXISTENT, AMBIGUOUS, EPOCH_RANGE_BAD, OUT_OF_RANGE = range(8)

#: readings dated outside these years [first, last) are refused as bad rows: no vibration
#: sensor logged before 1970, and instants past 2262 do not fit the nanosecond clock
#: (common practice, no source)
YEAR_RANGE = (1970, 2200)
_OUT_NS = NAT + 1      # marks a parsed instant outside YEAR_RANGE inside this module

_OFFSET_RE = (r"^\s*\d{4}-\d{2}-\d{2}[T ]\d{1,2}:\d{2}(?::\d{2}(?:[.,]\d+)?)?\s*"
              r"(?:[zZ]|UTC|[+-]\d{2}(?::?\d{2})?)\s*$")
_NUMBER_RE = r"^\s*[+-]?\d+(?:\.\d*)?\s*$"


@dataclass
class TimeParse:
    """Timestamps parsed to UTC.

    ``utc`` is int64 ns since the epoch (``NAT`` where the row is not OK); ``status`` one of the
    codes above per row; for AMBIGUOUS rows ``early`` and ``late`` are the two candidate
    instants (daylight-saving and standard reading) and ``wall`` the local wall time [ns].
    """

    utc: np.ndarray
    status: np.ndarray
    early: np.ndarray
    late: np.ndarray
    wall: np.ndarray


def parse_timestamps(values: pd.Series, *, naive_time: str | None, tz: str,
                     years: tuple[int, int] = YEAR_RANGE) -> TimeParse:
    """Parse a timestamp column to UTC.

    Parameters
    ----------
    values : pandas.Series
        Text (ISO 8601, or epoch seconds as digits), numbers (epoch seconds [s]) or datetimes.
    naive_time : {None, "local", "utc"}
        How to read timestamps without an offset; None refuses them.
    tz : str
        IANA zone used for ``naive_time = "local"``.
    years : (int, int)
        Instants outside ``[first, last)`` (years, UTC) are OUT_OF_RANGE: the site file's
        ``[readings] years``; :data:`YEAR_RANGE` by default.
    """
    n = len(values)
    utc = np.full(n, NAT, dtype=np.int64)
    status = np.full(n, OK, dtype=np.int8)
    early = np.full(n, NAT, dtype=np.int64)
    late = np.full(n, NAT, dtype=np.int64)
    wall = np.full(n, NAT, dtype=np.int64)
    s = values.reset_index(drop=True)
    if isinstance(s.dtype, pd.DatetimeTZDtype) or pd.api.types.is_datetime64_dtype(s.dtype):
        s = _clip_typed(s, status, years)
    if isinstance(s.dtype, pd.DatetimeTZDtype):
        t = s.dt.tz_convert("UTC").dt.as_unit("ns")
        utc[:] = t.array.asi8
        status[t.isna().to_numpy() & (status == OK)] = EMPTY
        return _ranged(TimeParse(utc, status, early, late, wall), years)
    if pd.api.types.is_datetime64_dtype(s.dtype):
        naive = s.dt.as_unit("ns")
        status[naive.isna().to_numpy() & (status == OK)] = EMPTY
        _naive(naive, np.ones(n, bool) & ~naive.isna().to_numpy(), naive_time, tz,
               utc, status, early, late, wall)
        return _ranged(TimeParse(utc, status, early, late, wall), years)
    if pd.api.types.is_numeric_dtype(s.dtype) and not pd.api.types.is_bool_dtype(s.dtype):
        _epoch(s.astype("float64").to_numpy(), np.ones(n, bool), utc, status)
        return _ranged(TimeParse(utc, status, early, late, wall), years)
    text = arrow_text(s)
    empty = _np(pc.or_(pc.is_null(text), pc.equal(text, "")), True)
    status[empty] = EMPTY
    number = _np(pc.match_substring_regex(text, _NUMBER_RE), False) & ~empty
    if number.any():
        x = pc.cast(pc.filter(text, pa.array(number)), pa.float64()).to_numpy(
            zero_copy_only=False)
        _epoch(x, number, utc, status)
    offset = _np(pc.match_substring_regex(text, _OFFSET_RE), False) & ~empty & ~number
    if offset.any():
        sub = pc.filter(text, pa.array(offset))
        sub = pc.replace_substring(pc.replace_substring(sub, "UTC", "Z"), ",", ".")
        v = _to_ns(sub, utc=True, years=years)
        idx = np.flatnonzero(offset)
        status[idx[v == NAT]] = UNPARSEABLE
        status[idx[v == _OUT_NS]] = OUT_OF_RANGE
        utc[offset] = np.where(v == _OUT_NS, NAT, v)
    rest = ~empty & ~number & ~offset
    if rest.any():
        v = _to_ns(pc.filter(text, pa.array(rest)), utc=False, years=years)
        idx = np.flatnonzero(rest)
        status[idx[v == _OUT_NS]] = OUT_OF_RANGE
        bad = (v == NAT) | (v == _OUT_NS)
        status[idx[v == NAT]] = UNPARSEABLE
        good = rest.copy()
        good[idx[bad]] = False
        full = np.full(n, NAT, dtype=np.int64)
        full[idx] = v
        _naive(pd.Series(full.view("datetime64[ns]")), good, naive_time, tz, utc, status,
               early, late, wall)
    return _ranged(TimeParse(utc, status, early, late, wall), years)


def _clip_typed(s: pd.Series, status: np.ndarray, years: tuple[int, int]) -> pd.Series:
    """Typed timestamps outside ``years`` -> NaT (status OUT_OF_RANGE), before any
    conversion to nanoseconds can overflow."""
    lo, hi = (pd.Timestamp(f"{y}-01-01") for y in years)
    naive = s.dt.tz_convert("UTC").dt.tz_localize(None) if isinstance(
        s.dtype, pd.DatetimeTZDtype) else s
    out = ((naive < lo) | (naive >= hi)).to_numpy()
    if out.any():
        status[out] = OUT_OF_RANGE
        s = s.where(~out)
    return s


def _ranged(tp: TimeParse, years: tuple[int, int]) -> TimeParse:
    """Instants read as OK but outside ``years`` [first, last) become OUT_OF_RANGE."""
    lo, hi = (pd.Timestamp(f"{y}-01-01", tz="UTC").value for y in years)
    ok = tp.status == OK
    far = ok & ((tp.utc < lo) | (tp.utc >= hi))
    tp.status[far] = OUT_OF_RANGE
    tp.utc[far] = NAT
    return tp


def arrow_text(s: pd.Series) -> pa.Array:
    """Trimmed text of a column as an Arrow string array (nulls kept)."""
    arr = getattr(s.array, "_pa_array", None)
    if arr is None or not pa.types.is_string(arr.type) and not pa.types.is_large_string(arr.type):
        arr = pa.array(s.astype("object").where(s.notna(), None).map(
            lambda v: v if v is None else str(v)), type=pa.large_string())
    elif isinstance(arr, pa.ChunkedArray):
        arr = arr.combine_chunks()
    return pc.utf8_trim_whitespace(arr)


def _np(mask, null_as: bool) -> np.ndarray:
    return np.asarray(pc.fill_null(mask, null_as).to_numpy(zero_copy_only=False), dtype=bool)


def _to_ns(text: pa.Array, *, utc: bool, years: tuple[int, int]) -> np.ndarray:
    """ISO 8601 text -> int64 ns (UTC when ``utc``, else wall time); NAT where unreadable."""
    try:  # fast path: Arrow's ISO 8601 parser, all or nothing
        t = pc.cast(text, pa.timestamp("ns", tz="UTC" if utc else None))
        return t.cast(pa.int64()).fill_null(NAT).to_numpy(zero_copy_only=False)
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError):
        pass
    t = pd.to_datetime(pd.Series(text.to_pylist(), dtype=object), format="ISO8601", utc=utc,
                       errors="coerce")
    lo, hi = (pd.Timestamp(f"{y}-01-01", tz="UTC" if utc else None) for y in years)
    far = ((t < lo) | (t >= hi)).to_numpy()
    v = t.where(~far).dt.as_unit("ns").array.asi8.copy()
    v[far] = _OUT_NS
    return v


def _epoch(x: np.ndarray, where: np.ndarray, utc, status) -> None:
    idx = np.flatnonzero(where)
    ok = np.isfinite(x) & (x >= EPOCH_RANGE[0]) & (x < EPOCH_RANGE[1])
    status[idx[~ok]] = EPOCH_RANGE_BAD
    good = idx[ok]
    utc[good] = np.round(x[ok] * 1e9).astype(np.int64)


def _naive(naive: pd.Series, where: np.ndarray, naive_time, tz, utc, status, early, late,
           wall) -> None:
    if not where.any():
        return
    if naive_time is None:
        status[where] = NAIVE
        return
    idx = np.flatnonzero(where)
    sub = naive.iloc[idx].reset_index(drop=True)
    if naive_time == "utc":
        utc[idx] = sub.dt.tz_localize("UTC").array.asi8
        return
    sure = sub.dt.tz_localize(tz, ambiguous="NaT", nonexistent="NaT").array.asi8
    utc[idx] = sure
    unsure = sure == NAT
    if not unsure.any():
        return
    u = sub[unsure]
    first = u.dt.tz_localize(tz, ambiguous=np.ones(len(u), bool), nonexistent="NaT").array.asi8
    second = u.dt.tz_localize(tz, ambiguous=np.zeros(len(u), bool), nonexistent="NaT").array.asi8
    uidx = idx[unsure]
    gap = first == NAT
    status[uidx[gap]] = NONEXISTENT
    status[uidx[~gap]] = AMBIGUOUS
    early[uidx[~gap]] = first[~gap]
    late[uidx[~gap]] = second[~gap]
    wall[uidx] = u.array.asi8 if hasattr(u.array, "asi8") else u.to_numpy().astype(np.int64)


def describe_time(raw_value, code: int, tz: str, years: tuple[int, int] = YEAR_RANGE) -> str:
    """Why one timestamp was refused (for the error message); ``years`` as
    :func:`parse_timestamps`."""
    text = "" if raw_value is None else str(raw_value).strip()
    if code == EMPTY:
        return "timestamp is missing"
    if code == NAIVE:
        return f"timestamp {excerpt(text)} has no UTC offset"
    if code == NONEXISTENT:
        return (f"local time {excerpt(text)} does not exist in {tz} (the clocks skip that hour in "
                "spring), so this row cannot be right")
    if code == OUT_OF_RANGE:
        return (f"timestamp {excerpt(text)} is outside the years {years[0]} to "
                f"{years[1] - 1}")
    if code == EPOCH_RANGE_BAD:
        try:
            hint = " (milliseconds? divide by 1000)" if float(text) >= EPOCH_RANGE[1] else ""
        except ValueError:
            hint = ""
        return f"timestamp {excerpt(text)} read as epoch seconds is outside 2000-2100{hint}"
    return (f"timestamp {excerpt(text)} is not a date and time (ISO 8601 with Z or an offset, or "
            "epoch seconds)")
