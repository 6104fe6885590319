"""Readings: raw reading rows -> clean per-sensor level series (UTC) and data-health figures.

This is core code: it takes pandas objects and returns pandas objects, never opens a file and
never prints. File reading lives in :mod:`schedcheck.inputs.readings_files`.

Rules (documented for users in ``docs/readings.md``):

- Timestamps carry ``Z`` or a UTC offset, are epoch seconds, or are typed timestamps (Parquet).
  A timestamp without an offset is refused unless ``naive_time`` says how to read it
  (``"utc"`` or ``"local"``, the site's time zone).
- With ``naive_time = "local"``, a local time in the spring gap cannot occur in valid data and
  is a bad row. A local time in the repeated autumn hour is resolved by the order of the
  sensor's rows (first pass = daylight-saving time, second pass = standard time) where those
  rows are in time order; otherwise the rows are dropped, counted and reported (no data).
- Exact duplicate rows (same sensor, instant and levels) are dropped and counted. Conflicting
  duplicates (same sensor and instant, different levels) are merged into one row holding the
  mean of the levels, and counted. Rows out of order are counted and sorted.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from schedcheck.durations import format_duration
from schedcheck.errors import EXCERPT_CHARS, excerpt
from schedcheck.readings.timestamps import (  # noqa: F401 - re-exported: the readings rules in one place
    AMBIGUOUS,
    EMPTY,
    EPOCH_RANGE,
    EPOCH_RANGE_BAD,
    NAIVE,
    NAT,
    NONEXISTENT,
    OK,
    OUT_OF_RANGE,
    UNPARSEABLE,
    YEAR_RANGE,
    TimeParse,
    arrow_text,
    describe_time,
    parse_timestamps,
)

RMS_COLUMNS = ("x_rms", "y_rms", "z_rms")

# A suggested max_gap is this many reporting intervals: one or two lost packets in a row do
# not make a silence (common practice, no source).
STEPS_PER_GAP = 3

# Autumn fold: the wall clock going back more often than this among one sensor's rows of the
# repeated hour means they are not in time order (a late packet or two is tolerated; common
# practice, no source).
MAX_FOLD_DESCENTS = 3
# Autumn fold: a placing is taken when it is clearly the most regular: its readings stray from
# the usual step by at least this much less in total [s] than any other placing. A missing or
# doubled hour strays by about an hour (common practice, no source).
FOLD_MARGIN_S = 1800.0
# ... judged only with at least this many of the sensor's other readings within three hours
# of the fold (common practice, no source).
FOLD_MIN_NEAR = 6

#: the largest level accepted [reading unit]: far above any machine's vibration in any usual
#: unit (mm/s, in/s, g, m/s2, um), and small enough that sums of squares stay finite
#: (common practice, no source)
MAX_LEVEL = 1e6


def bad_levels(v: np.ndarray) -> np.ndarray:
    """True where a level is not a finite number from 0 to :data:`MAX_LEVEL`."""
    with np.errstate(invalid="ignore"):
        return ~np.isfinite(v) | (v < 0) | (v > MAX_LEVEL)


def level_values(raw: pd.DataFrame, columns: tuple[str, ...]) -> tuple[pd.DataFrame, np.ndarray]:
    """Levels as float64 and a per-row flag: True where any level is not a finite number from 0
    to :data:`MAX_LEVEL`. A column of true/false values or of timestamps (a Parquet file's
    types) holds no levels: every row of it is bad."""
    out = {}
    bad = np.zeros(len(raw), bool)
    for c in columns:
        col = raw[c]
        if (pd.api.types.is_bool_dtype(col) or pd.api.types.is_datetime64_any_dtype(col)
                or isinstance(col.dtype, pd.PeriodDtype)
                or pd.api.types.is_timedelta64_dtype(col)):
            v = np.full(len(col), np.nan)
        elif pd.api.types.is_numeric_dtype(col):
            v = col.to_numpy(dtype=float, na_value=np.nan)
        else:
            try:  # fast path: Arrow's number parser, all or nothing; empty cells are null
                text = arrow_text(col)
                text = pc.if_else(pc.equal(text, ""), pa.scalar(None, text.type), text)
                v = pc.cast(text, pa.float64()).fill_null(np.nan).to_numpy(
                    zero_copy_only=False)
            except (pa.ArrowInvalid, pa.ArrowNotImplementedError):
                v = pd.to_numeric(col, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
        bad |= bad_levels(v)
        out[c] = v
    return pd.DataFrame(out, index=raw.index), bad


def describe_level(raw_value, column: str) -> str | None:
    """Why one raw level is not acceptable (None if it is)."""
    if isinstance(raw_value, (bool, np.bool_)):
        return f"level {column} is a true/false value, not a number"
    if isinstance(raw_value, (pd.Timestamp, np.datetime64)) or hasattr(raw_value, "isoformat"):
        return f"level {column} is a date or time, not a number"
    if raw_value is None or (not isinstance(raw_value, str) and pd.isna(raw_value)):
        return f"level {column} is missing or NaN"
    text = str(raw_value).strip()
    if text == "":
        return f"level {column} is missing"
    try:
        v = float(text)
    except ValueError:
        return f"level {column} is {excerpt(text)}, not a number"
    if np.isnan(v):
        return f"level {column} is NaN, not a number"
    if not np.isfinite(v):
        return f"level {column} is {excerpt(text)}, not a finite number"
    if v < 0:
        return f"level {column} is negative ({text[:EXCERPT_CHARS]})"
    if v > MAX_LEVEL:
        return (f"level {column} is {v:g}, above the plausible most of {MAX_LEVEL:g} in any "
                "reading unit")
    return None


@dataclass
class SensorHealth:
    """Data-health figures of one sensor over the window read."""

    sensor: str
    component: str | None = None            # "UNIT/COMPONENT" it is mapped to
    first: pd.Timestamp | None = None       # first reading (UTC)
    last: pd.Timestamp | None = None        # last reading (UTC)
    count: int = 0                          # clean readings kept
    median_interval: pd.Timedelta | None = None   # median time between readings
    gaps: int = 0                           # silences longer than max_gap (incl. window edges)
    gap_hours: float = 0.0                  # their total length [h]
    longest_gap_hours: float = 0.0          # the longest of them [h]
    duplicates_exact: int = 0               # identical rows dropped
    duplicates_conflicting: int = 0         # rows merged into another at the same instant
    out_of_order: int = 0                   # rows earlier than a row read before them
    ambiguous_dropped: int = 0              # autumn repeated-hour rows that could not be placed
    bad_rows: int = 0                       # malformed rows skipped (with skip_bad_rows)
    columns: tuple[str, ...] = ()           # level columns present


@dataclass
class Readings:
    """Clean readings of the configured sensors over a window."""

    by_sensor: dict[str, pd.DataFrame]      # sensor -> timestamp (UTC, sorted, unique) + levels
    health: dict[str, SensorHealth]
    unconfigured: dict[str, int] = field(default_factory=dict)   # sensor -> rows, not mapped
    bad_rows_count: int = 0
    bad_rows_examples: list[str] = field(default_factory=list)   # "FILE:LINE: reason"
    bad_rows_problems: list = field(default_factory=list)   # InputError per file (if skipped)
    warnings: list[str] = field(default_factory=list)
    bad_rows_warning: str | None = None     # the one of ``warnings`` on skipped bad rows
    start: pd.Timestamp | None = None
    end: pd.Timestamp | None = None
    files: tuple[str, ...] = ()


def resolve_folds(early: np.ndarray, late: np.ndarray, wall: np.ndarray,
                  utc: np.ndarray) -> np.ndarray:
    """Place one sensor's repeated-hour rows (autumn fold) by the order they were read in.

    Where the rows are in time order, the wall clock goes back once: rows before that are the
    first pass (daylight-saving time), rows after it the second (standard time). A late packet
    or two make more places where it goes back; each is tried. The placing
    is accepted only when it is clearly the most regular one: together with the sensor's other
    readings around the fold, its times between readings stray from the sensor's usual step
    by at least ``FOLD_MARGIN_S`` less in total than when every row is read as the first pass,
    or every row as the second (rows seen in one pass only can rarely be told apart, and a
    late packet inside one pass is not a change of pass). Otherwise the rows are not placed.

    Parameters
    ----------
    early, late, wall : numpy.ndarray
        For the sensor's ambiguous rows in read order: the daylight-saving reading, the
        standard-time reading [ns UTC] and the local wall time [ns].
    utc : numpy.ndarray
        The sensor's unambiguous instants [ns UTC].

    Returns
    -------
    numpy.ndarray
        Chosen instant per ambiguous row [ns UTC], ``NAT`` where it cannot be told.
    """
    out = np.full(len(early), NAT, dtype=np.int64)
    hour = 3600 * 10**9
    # one fold a year: rows whose early reading lies within a day of each other share it
    fold_id = early // (86_400 * 10**9)
    for f in np.unique(fold_id):
        sel = np.flatnonzero(fold_id == f)
        e, lt = early[sel], late[sel]
        downs = np.flatnonzero(np.diff(wall[sel]) < 0)
        if len(downs) > MAX_FOLD_DESCENTS:
            continue   # not in time order: no data
        near = utc[(utc >= e.min() - 3 * hour) & (utc <= lt.max() + 3 * hour)]
        if len(near) < FOLD_MIN_NEAR:
            continue   # too few other readings to judge which placing is regular
        options = [e, lt] + [np.concatenate([e[:d + 1], lt[d + 1:]]) for d in downs]
        steps = np.diff(np.sort(near))
        step = float(np.median(steps)) if len(steps) else 0.0
        # irregularity: how far the times between readings stray from the sensor's usual step
        # (a missing hour and a doubled hour both stray far)
        scores = [float(np.abs(np.diff(np.sort(np.concatenate([near, c]))) - step).sum()) / 1e9
                  for c in options]
        best = int(np.argmin(scores))
        if all(x - scores[best] >= FOLD_MARGIN_S for i, x in enumerate(scores) if i != best):
            out[sel] = options[best]
            if best >= 2:
                # after the clock went back, a row out of order may be a late packet of either
                # pass, and so may a row much closer to the one before it than the usual step:
                # both rows at each such place are left unplaced (no data)
                cut = downs[best - 2] + 1
                for d in downs[downs >= cut]:
                    out[sel[d:d + 2]] = NAT
                w2 = wall[sel][cut:]
                by_time = np.argsort(w2, kind="stable")
                for d in np.flatnonzero(np.diff(w2[by_time]) < step / 2):
                    out[sel[cut + by_time[d:d + 2]]] = NAT
    return out


def clean_sensor(parts: pd.DataFrame, *, sensor: str, columns: tuple[str, ...],
                 start: pd.Timestamp | None, end: pd.Timestamp | None,
                 max_gap: pd.Timedelta) -> tuple[pd.DataFrame, SensorHealth, list[str]]:
    """One sensor's good rows (any order, possibly from several files) -> clean frame + health.

    Parameters
    ----------
    parts : pandas.DataFrame
        Columns ``order`` (read order), ``utc`` (int64 ns, ``NAT`` for autumn-fold rows),
        the level columns and, where there are autumn-fold rows, ``early``, ``late`` and
        ``wall`` (see :func:`resolve_folds`).
    columns : tuple of str
        Level columns to keep.
    start, end : pandas.Timestamp or None
        The UTC window ``[start, end)``; None for no limit.
    max_gap : pandas.Timedelta
        Longer silences are counted as gaps.
    """
    warnings: list[str] = []
    health = SensorHealth(sensor=sensor, columns=columns)
    order = parts["order"].to_numpy()
    if len(order) > 1 and not (order[1:] >= order[:-1]).all():
        parts = parts.sort_values("order", kind="stable")
    p = parts.reset_index(drop=True)
    utc = p["utc"].to_numpy(np.int64).copy()
    amb = utc == NAT
    fold_dupes = 0
    if amb.any() and "early" in p.columns:
        # an exact duplicate row of the repeated hour right after itself in read order is one
        # reading sent twice, not a late packet of the other pass: only its first copy is placed
        rows = p.loc[amb, ["wall", *columns]]
        twice = rows.eq(rows.shift()).all(axis=1).to_numpy()
        if twice.any():
            fold_dupes = int(twice.sum())
            p = p.drop(index=p.index[amb][twice]).reset_index(drop=True)
            utc = p["utc"].to_numpy(np.int64).copy()
            amb = utc == NAT
    if amb.any() and "early" in p.columns:
        chosen = resolve_folds(p["early"].to_numpy()[amb], p["late"].to_numpy()[amb],
                               p["wall"].to_numpy()[amb], utc[~amb])
        utc[amb] = chosen
        lost = int((chosen == NAT).sum())
        if lost:
            health.ambiguous_dropped = lost
            day = pd.Timestamp(int(p["early"].to_numpy()[amb][chosen == NAT][0]), tz="UTC")
            where = ("both passes of that hour are counted as no data"
                     if lost == int(amb.sum()) else
                     "they are left out, and a silence they leave longer than max_gap is "
                     "counted as no data")
            warnings.append(f"sensor {sensor}: {lost} readings in the repeated autumn hour "
                            f"({day:%Y-%m-%d}) are not in time order and cannot be placed; "
                            + where)
    keep = utc != NAT
    if start is not None:
        keep &= utc >= start.value
    if end is not None:
        keep &= utc < end.value
    utc = utc[keep]
    levels = p.loc[keep, list(columns)].reset_index(drop=True)
    if len(utc):
        prior = np.maximum.accumulate(utc)
        health.out_of_order = int((utc[1:] < prior[:-1]).sum())
    frame = pd.DataFrame({"timestamp": utc, **{c: levels[c] for c in levels.columns}})
    if len(utc) > 1 and not (utc[1:] > utc[:-1]).all():
        # only then can rows be out of order or share an instant (the usual file is neither:
        # the sort and the two duplicate passes are skipped)
        frame = frame.sort_values("timestamp", kind="stable")
        exact = frame.duplicated(keep="first")
        health.duplicates_exact = int(exact.sum())
        frame = frame[~exact.to_numpy()]
        same = frame["timestamp"].duplicated(keep=False).to_numpy()
    else:
        same = np.zeros(len(frame), dtype=bool)
    health.duplicates_exact += fold_dupes
    if same.any():
        health.duplicates_conflicting = int(same.sum() - frame["timestamp"][same].nunique())
        frame = frame.groupby("timestamp", sort=True, as_index=False).mean()
    ts = frame["timestamp"].to_numpy(np.int64)
    # one new frame (setting its columns one by one would copy it each time)
    frame = pd.DataFrame({"timestamp": pd.Series(ts.view("M8[ns]")).dt.tz_localize("UTC"),
                          **{c: frame[c].astype("float64").to_numpy() for c in frame.columns
                             if c != "timestamp"}})
    health.count = len(frame)
    measure_gaps(health, ts, start, end, max_gap)
    if health.duplicates_conflicting:
        warnings.append(f"sensor {sensor}: {health.duplicates_conflicting} readings fall on an "
                        "instant already read with other levels and were averaged; two devices "
                        "may report under one sensor id")
    step = health.median_interval
    if step is not None and step >= max_gap:
        # a max_gap of a few reporting intervals tolerates a lost packet or two (common
        # practice, no source)
        suggest = format_duration(pd.Timedelta(minutes=int(np.ceil(
            STEPS_PER_GAP * step.total_seconds() / 60))))
        warnings.append(f"sensor {sensor} reports every {format_duration(step)} (median) but "
                        f"max_gap is {format_duration(max_gap)}, so most of its time counts as "
                        f"no data; set [readings] max_gap to about {suggest}")
    return frame[["timestamp", *columns]], health, warnings


def measure_gaps(health: SensorHealth, ts: np.ndarray, start: pd.Timestamp | None,
                 end: pd.Timestamp | None, max_gap: pd.Timedelta) -> None:
    """Fill ``first``, ``last``, ``median_interval``, ``gaps`` and ``gap_hours`` of ``health``.

    ``ts`` are the sorted unique instants [ns UTC]; silences longer than ``max_gap`` count,
    including from ``start`` to the first reading and from the last to ``end`` where given.
    """
    if len(ts):
        health.first = pd.Timestamp(int(ts[0]), tz="UTC")
        health.last = pd.Timestamp(int(ts[-1]), tz="UTC")
    if len(ts) > 1:
        health.median_interval = pd.Timedelta(int(np.median(np.diff(ts))), unit="ns")
    edges = [ts]
    if start is not None:
        edges.insert(0, np.array([start.value], np.int64))
    if end is not None:
        edges.append(np.array([end.value], np.int64))
    allpts = np.concatenate(edges)
    d = np.diff(allpts)
    long = d > max_gap.value
    health.gaps = int(long.sum())
    health.gap_hours = float(d[long].sum() / 3.6e12)
    health.longest_gap_hours = float(d[long].max() / 3.6e12) if long.any() else 0.0
