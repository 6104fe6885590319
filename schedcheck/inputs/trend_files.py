"""Reading building-system trend exports: long-format CSV (timestamp, point, value).

One row per sample or change of value; the columns may be mapped (``[trends] columns``) as for
readings, and timestamps without an offset follow ``naive_time`` as for readings
(:func:`schedcheck.readings.timestamps.parse_timestamps`). Values are read by
:func:`schedcheck.trends.points.parse_values`. A row that cannot be read is an error naming the
file and line, unless ``skip_bad_rows``; then it is counted and the first few are named.
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from schedcheck.errors import InputError, InputProblems
from schedcheck.inputs.file_patterns import resolve_patterns
from schedcheck.inputs.site_trends import wanted_points
from schedcheck.readings.timestamps import OK, parse_timestamps
from schedcheck.site import TREND_COLUMNS, Site
from schedcheck.trends.points import parse_values

#: Bad rows named in a warning when they are skipped.
NAMED_BAD_ROWS = 5


@dataclass
class Trends:
    """Samples per point: ``point -> (instants [int64 ns UTC], values 1.0 on / 0.0 off)``."""

    samples: dict[str, tuple[np.ndarray, np.ndarray]] = field(default_factory=dict)
    bad_rows: int = 0
    warnings: list[str] = field(default_factory=list)

    def coverage(self, max_gap: pd.Timedelta | None = None) -> list[dict]:
        """Per point: first and last sample [UTC], count, duplicates (same instant and value),
        the longest silence [h] and, given ``max_gap``, the silences longer than it and the
        hours they leave unknown (each silence less ``max_gap``) [h]."""
        out = []
        gap = None if max_gap is None else int(pd.Timedelta(max_gap).value)
        for name, (t, v) in sorted(self.samples.items()):
            order = np.lexsort((v, t))
            ts, vs = t[order], v[order]
            same = (np.diff(ts) == 0) & (np.diff(vs) == 0) if t.size > 1 else np.zeros(0, bool)
            gaps = np.diff(np.unique(ts)) if t.size > 1 else np.zeros(0, np.int64)
            row = {"point": name, "first": pd.Timestamp(int(t.min()), tz="UTC"),
                   "last": pd.Timestamp(int(t.max()), tz="UTC"), "samples": int(t.size),
                   "duplicates": int(same.sum()),
                   "longest_silence_h": float(gaps.max() / 3.6e12) if gaps.size else 0.0}
            if gap is not None:
                long = gaps[gaps > gap]
                row["silences"] = int(long.size)
                row["unknown_h"] = float((long - gap).sum() / 3.6e12)
            out.append(row)
        return out


def _column(frame: pd.DataFrame, ours: str, theirs: str | tuple[str, ...], path: Path) -> str:
    names = (theirs,) if isinstance(theirs, str) else tuple(theirs)
    for name in names:
        if name in frame.columns:
            return name
    near = difflib.get_close_matches(names[0], [str(c) for c in frame.columns], n=1)
    hint = f" (did you mean {near[0]!r}?)" if near else ""
    raise InputError(f"no column {names[0]!r} for the trend {ours}{hint}", path=path, line=1)


def read_trend_file(path: Path, *, columns: dict, naive_time: str | None, tz: str,
                    skip_bad_rows: bool, trends: Trends) -> None:
    """Add one CSV export's samples to ``trends``."""
    try:
        frame = pd.read_csv(path, dtype=str, keep_default_na=False, encoding="utf-8-sig")
    except UnicodeDecodeError:
        raise InputError("not UTF-8 text; save the export as UTF-8 CSV", path=path) from None
    except (pd.errors.ParserError, pd.errors.EmptyDataError) as exc:
        raise InputError(f"not a CSV file the tool can read: {' '.join(str(exc).split())}",
                         path=path) from None
    names = {c: _column(frame, c, columns.get(c, c), path) for c in TREND_COLUMNS}
    times = parse_timestamps(frame[names["timestamp"]], naive_time=naive_time, tz=tz)
    values, bad_value = parse_values(frame[names["value"]])
    point = frame[names["point"]].str.strip()
    bad = (times.status != OK) | bad_value | (point == "").to_numpy()
    if bad.any():
        lines = np.flatnonzero(bad) + 2          # header is line 1
        first = int(lines[0])
        raw = frame.iloc[first - 2]
        what = (f"value {str(raw[names['value']])[:40]!r} is not on/off, 1/0, true/false, "
                "active/inactive or a percent" if bad_value[first - 2]
                else f"timestamp {str(raw[names['timestamp']])[:40]!r} cannot be read"
                if times.status[first - 2] != OK else "no point name")
        if not skip_bad_rows:
            raise InputError(f"{what} (pass --skip-bad-rows to skip such rows)", path=path,
                             line=first)
        trends.bad_rows += int(bad.sum())
        trends.warnings.append(f"{path}: skipped {int(bad.sum()):,} bad rows, the first on line "
                               f"{first}: {what}")
    keep = ~bad
    for name, idx in pd.Series(np.flatnonzero(keep)).groupby(point[keep].to_numpy()):
        t, v = times.utc[idx.to_numpy()], values[idx.to_numpy()]
        if name in trends.samples:
            t0, v0 = trends.samples[name]
            t, v = np.concatenate([t0, t]), np.concatenate([v0, v])
        trends.samples[str(name)] = (t, v)


def read_trends(base_dir: Path, patterns: tuple[str, ...], *, columns: dict,
                naive_time: str | None, tz: str, skip_bad_rows: bool = False) -> Trends:
    """Every trend file the patterns match, read into one :class:`Trends`."""
    trends = Trends()
    problems = []
    for pattern, files in resolve_patterns(base_dir, patterns):
        if not files:
            problems.append(InputError(f"matches no file: {pattern!r}", key="trends.files"))
        for path in files:
            try:
                read_trend_file(path, columns=columns, naive_time=naive_time, tz=tz,
                                skip_bad_rows=skip_bad_rows, trends=trends)
            except InputError as exc:
                problems.append(exc)
    if problems:
        raise problems[0] if len(problems) == 1 else InputProblems(problems)
    return trends


def load_site_trends(site: Site, *, skip_bad_rows: bool = False) -> Trends | None:
    """The site's ``[trends]`` exports read and checked: every point a component names must be
    in them (an error naming the site file's line and the nearest names found). None without
    a ``[trends]`` table."""
    if site.trends is None:
        return None
    t = site.trends
    trends = read_trends(site.base_dir, t.files, columns=t.columns, naive_time=t.naive_time,
                         tz=site.timezone, skip_bad_rows=skip_bad_rows)
    problems = check_points(trends, wanted_points(site.components), path=site.path)
    if problems:
        raise problems[0] if len(problems) == 1 else InputProblems(problems)
    return trends


def _line_of(path: Path | None, name: str) -> int | None:
    """The first line of the site file that gives ``name`` as a quoted value."""
    if path is None:
        return None
    try:
        lines = path.read_text(encoding="utf-8-sig").splitlines()
    except (OSError, UnicodeDecodeError):
        return None
    for i, line in enumerate(lines, 1):
        if f'"{name}"' in line or f"'{name}'" in line:
            return i
    return None


def check_points(trends: Trends, wanted: dict[str, str], *,
                 path: Path | None = None) -> list[InputError]:
    """An error per configured point (``key -> point name``) missing from the trends, naming
    the nearest names found (and the site file's line, given its ``path``)."""
    out = []
    names = sorted(trends.samples)
    for key, name in wanted.items():
        if name not in trends.samples:
            near = difflib.get_close_matches(name, names, n=3)
            hint = f"; nearest found: {', '.join(near)}" if near else ""
            out.append(InputError(f"point {name!r} is not in the trend files{hint}", key=key,
                                  path=path, line=_line_of(path, name)))
    return out
