"""Rows of readings files, chunk by chunk, into per-sensor parts: parse, check, count, keep.

Used by :mod:`schedcheck.inputs.readings_files` for every format; the rules themselves are in
the core (:mod:`schedcheck.readings.cleaning`, :mod:`schedcheck.readings.timestamps`).
"""

from __future__ import annotations

from collections import Counter
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from schedcheck.errors import InputError
from schedcheck.readings import cleaning as rd
from schedcheck.site import EXTRA_COLUMNS, Site

BAD_ROW_EXAMPLES = 5          # bad rows named in a message (common practice, no source)
MARGIN = pd.Timedelta("1D")   # rows kept outside the window while placing autumn-fold rows
ORDER_SHIFT = 40              # read order = file index << 40 | row position


def _absent_levels(raw: pd.DataFrame, levels: tuple[str, ...], codes: np.ndarray,
                   n_names: int) -> dict[str, list[int]]:
    """Level column -> sensor codes that leave it empty on every one of their rows here.

    A gateway that carries sensors with different axes in one file writes empty cells for the
    axes a sensor does not have. Such a column is absent for that sensor, not a bad value on
    each row, provided the sensor fills at least one RMS column on some row here (a sensor
    with every level empty keeps its rows bad).
    """
    empty = {}
    for c in levels:
        col = raw[c]
        if pd.api.types.is_numeric_dtype(col):
            e = col.isna().to_numpy()
        else:
            e = np.asarray(pc.fill_null(pc.equal(rd.arrow_text(col), ""), True).to_numpy(
                zero_copy_only=False), dtype=bool)
        empty[c] = np.bincount(codes[~e], minlength=n_names) == 0
    rms = [c for c in levels if c in rd.RMS_COLUMNS]
    fills_rms = np.zeros(n_names, bool)
    for c in rms:
        fills_rms |= ~empty[c]
    out = {}
    for c in levels:
        k = np.flatnonzero(empty[c] & fills_rms)
        if k.size:
            out[c] = k.tolist()
    return out


class _Rows:
    """One chunk's rows with their sensor names and codes, file lines and positions."""

    def __init__(self, raw: pd.DataFrame, sensor: np.ndarray, codes: np.ndarray,
                 lines: np.ndarray | None, positions: np.ndarray) -> None:
        self.raw, self.sensor, self.codes = raw, sensor, codes
        self.lines, self.positions = lines, positions

    def where(self, keep: np.ndarray) -> _Rows:
        """Only the rows where ``keep`` is True (itself when it keeps every row)."""
        if keep.all():
            return self
        return _Rows(self.raw[keep], self.sensor[keep], self.codes[keep],
                     None if self.lines is None else self.lines[keep], self.positions[keep])


def _blank_rows(rows: _Rows) -> np.ndarray:
    """Rows with every cell empty (blank lines of a CSV file)."""
    no_sensor = rows.sensor == ""
    blank = no_sensor.copy()
    if no_sensor.any():
        raw = rows.raw
        for c in raw.columns:
            blank[no_sensor] &= (raw[c][no_sensor].fillna("").astype("str").str.strip()
                                 == "").to_numpy()
    return blank


def _extra_bad(raw: pd.DataFrame, values: np.ndarray, column: str) -> np.ndarray:
    """Rows whose optional column (``rotation_hz``) holds a value that is not a number from 0
    up: negative, infinite, or text that is no number. An empty cell (or NaN) is no value, as a
    stopped shaft has no rotation; such a row is kept."""
    with np.errstate(invalid="ignore"):
        bad = (values < 0) | np.isinf(values)
    col = raw[column]
    if pd.api.types.is_bool_dtype(col) or pd.api.types.is_datetime64_any_dtype(col):
        return bad | col.notna().to_numpy()      # true/false or times: no frequency at all
    if not pd.api.types.is_numeric_dtype(col) and np.isnan(values).any():
        text = rd.arrow_text(col)
        blank = pc.fill_null(pc.is_in(pc.ascii_lower(text),
                                      value_set=pa.array(["", "nan"])), True)
        bad |= np.isnan(values) & ~np.asarray(blank.to_numpy(zero_copy_only=False), dtype=bool)
    return bad


def _levels(rows: _Rows, levels: tuple[str, ...], n_names: int
            ) -> tuple[pd.DataFrame, np.ndarray, dict[str, list[int]]]:
    """Level values, rows with a bad level, and the columns absent per sensor code.

    A sensor with fewer axes in a shared file leaves its other columns empty: those are not
    bad values (:func:`_absent_levels`).
    """
    lv, lbad = rd.level_values(rows.raw, levels)
    extra = [c for c in levels if c in EXTRA_COLUMNS]
    if extra:   # optional columns: an empty cell is no value (a stopped shaft has no rotation)
        lbad = np.zeros(len(rows.raw), bool)
        for c in levels:
            v = lv[c].to_numpy()
            lbad |= _extra_bad(rows.raw, v, c) if c in extra else (~np.isfinite(v) | (v < 0))
    levels = tuple(c for c in levels if c not in extra)
    absent = _absent_levels(rows.raw, levels, rows.codes, n_names)
    if absent:
        lbad = np.zeros(len(rows.raw), bool)
        for c in extra:
            lbad |= _extra_bad(rows.raw, lv[c].to_numpy(), c)
        for c in levels:
            cbad = rd.bad_levels(lv[c].to_numpy())
            lbad |= cbad & ~np.isin(rows.codes, absent.get(c, []))
    return lv, lbad, absent


class Collector:
    """Accumulates rows of every file, bad rows and file-level problems."""

    def __init__(self, site: Site, start, end) -> None:
        self.site = site
        self.tz = site.timezone
        self.naive_time = site.readings.naive_time
        self.years = site.readings.years
        self.owner = {c.sensor: c.key for c in site.components}
        self.start, self.end = start, end
        self.parts: dict[str, list[pd.DataFrame]] = {s: [] for s in self.owner}
        self.unconfigured: Counter = Counter()
        self.problems: list[InputError] = []
        self.bad_total = 0
        self.bad_examples: list[InputError] = []
        self.bad_by_sensor: Counter = Counter()
        self.bad_by_file: dict[str, list] = {}
        self.naive_by_file: dict[str, list] = {}

    def take(self, raw: pd.DataFrame, path: Path, file_idx: int, levels: tuple[str, ...],
             lines: np.ndarray | None, positions: np.ndarray, comma_decimal: bool = False
             ) -> None:
        """Take one chunk of raw rows (columns already renamed to ours).

        ``lines``: file line of each row (CSV) or None (Parquet); ``positions``: each row's
        position in its file, for the read order. Rows of sensors not configured are counted,
        bad rows counted and named, rows without an offset counted per file, and the good
        rows near the window kept per sensor.
        """
        if len(raw) == 0:
            return
        # text work on the distinct ids only, not on every row (first-appearance order kept)
        raw_codes, raw_ids = pd.factorize(raw["sensor"].fillna(""))
        new_codes, uniques = pd.factorize(pd.Series(raw_ids).astype("str").str.strip())
        codes = new_codes[raw_codes]
        names = np.asarray(uniques, dtype=object)
        rows = _Rows(raw, names[codes], codes, lines, positions)
        if lines is not None:   # blank lines in a CSV are not data
            rows = rows.where(~_blank_rows(rows))
        rows = rows.where(self._configured(rows, names))
        if len(rows.raw) == 0:
            return
        rows.raw = rows.raw.reset_index(drop=True)
        if comma_decimal:
            for c in levels:
                rows.raw[c] = rows.raw[c].astype("str").str.replace(",", ".", regex=False)
        tp = rd.parse_timestamps(rows.raw["timestamp"], naive_time=self.naive_time, tz=self.tz,
                                 years=self.years)
        lv, lbad, absent = _levels(rows, levels, len(names))
        naive = tp.status == rd.NAIVE
        if naive.any():
            self._note_naive(rows, path, naive)
        time_bad = ~np.isin(tp.status, (rd.OK, rd.AMBIGUOUS, rd.NAIVE))
        bad = (time_bad | lbad | (rows.sensor == "")) & ~naive
        if bad.any():
            self._bad(rows.raw, tp, levels, bad, path, rows.lines, rows.sensor, absent,
                      rows.codes)
        good = ~bad & ~naive
        if good.any():
            self._keep(rows, tp, lv, good & self._near_window(tp), file_idx, names, levels,
                       absent)

    def _configured(self, rows: _Rows, names: np.ndarray) -> np.ndarray:
        """Rows of configured sensors (or without a sensor, bad rows); the others counted."""
        counts = np.bincount(rows.codes, minlength=len(names))
        mine = np.array([n in self.owner or n == "" for n in names], bool)
        for k in np.flatnonzero(~mine & (counts > 0)):
            self.unconfigured[names[k]] += int(counts[k])
        return mine[rows.codes]

    def _note_naive(self, rows: _Rows, path: Path, naive: np.ndarray) -> None:
        """Count rows whose time stamp has no offset, remembering the first of each file."""
        rec = self.naive_by_file.setdefault(str(path), [None, 0])
        if rec[0] is None:
            i = int(np.flatnonzero(naive)[0])
            rec[0] = (self._where(path, rows.lines, i, rows.sensor, rows.raw),
                      rows.raw["timestamp"].iloc[i])
        rec[1] += int(naive.sum())

    def _near_window(self, tp) -> np.ndarray:
        """Rows within :data:`MARGIN` of the window. Rows of a repeated autumn hour have two
        candidate instants: they are near the window when either is (a fold far outside it is
        not placed, so it cannot warn)."""
        amb = tp.status == rd.AMBIGUOUS
        lo = np.where(amb, tp.late, tp.utc)
        hi = np.where(amb, tp.early, tp.utc)
        inside = np.ones(len(tp.utc), bool)
        if self.start is not None:
            inside &= (lo == rd.NAT) | (lo >= (self.start - MARGIN).value)
        if self.end is not None:
            inside &= (hi == rd.NAT) | (hi < (self.end + MARGIN).value)
        return inside

    def _keep(self, rows: _Rows, tp, lv: pd.DataFrame, keep: np.ndarray, file_idx: int,
              names: np.ndarray, levels: tuple[str, ...], absent: dict[str, list[int]]
              ) -> None:
        """Append the kept rows to their sensors' parts (read order, instants, levels)."""
        order = (np.int64(file_idx) << ORDER_SHIFT) + rows.positions.astype(np.int64)
        cols = {"order": order, "utc": tp.utc}
        if (tp.status == rd.AMBIGUOUS).any():   # kept only where needed: they cost memory
            cols.update(early=tp.early, late=tp.late, wall=tp.wall)
        frame = pd.DataFrame(cols).join(lv.reset_index(drop=True))
        for k in np.unique(rows.codes[keep]):
            name = names[k]
            if name:
                gone = [c for c in levels if k in absent.get(c, ())]
                part = frame[keep & (rows.codes == k)]
                self.parts[name].append(part.drop(columns=gone) if gone else part)

    def _where(self, path, lines, i, sensor, raw) -> InputError:
        if lines is not None:
            return InputError("", path=path, line=int(lines[i]))
        return InputError("", path=path, key=f"sensor {sensor[i]} at {raw['timestamp'].iloc[i]}")

    def _bad(self, raw, tp, levels, bad, path, lines, sensor, absent=None, codes=None) -> None:
        idx = np.flatnonzero(bad)
        rec = self.bad_by_file.setdefault(str(path), [[], 0])   # [first few errors, count]
        for s, n in Counter(sensor[idx]).items():
            if s:
                self.bad_by_sensor[s] += n
        self.bad_total += len(idx)
        rec[1] += len(idx)
        for i in idx[:max(0, BAD_ROW_EXAMPLES - len(rec[0]))]:   # the rest are only counted
            reason = None
            if tp.status[i] not in (rd.OK, rd.AMBIGUOUS):
                reason = rd.describe_time(raw["timestamp"].iloc[i], int(tp.status[i]), self.tz,
                                          self.years)
            if reason is None and sensor[i] == "":
                reason = "sensor is missing"
            if reason is None:
                for c in levels:
                    if absent and codes[i] in absent.get(c, ()):
                        continue
                    if c in EXTRA_COLUMNS:   # optional: an empty cell is no value
                        cell = raw[c].iloc[i]
                        if cell is None or str(cell).strip().lower() in ("", "nan"):
                            continue
                        reason = rd.describe_level(cell, c)
                        reason = reason and reason.removeprefix("level ")
                    else:
                        reason = rd.describe_level(raw[c].iloc[i], c)
                    if reason:
                        break
            w = self._where(path, lines, int(i), sensor, raw)
            err = InputError(reason or "bad row", path=w.path, line=w.line, key=w.key)
            rec[0].append(err)
            if len(self.bad_examples) < BAD_ROW_EXAMPLES:
                self.bad_examples.append(err)

    def file_errors(self) -> list[InputError]:
        """Problems that no option skips: unreadable files, missing columns, naive times."""
        out = list(self.problems)
        for first, n in self.naive_by_file.values():
            where, text = first
            more = f" ({n - 1:,} more rows like it)" if n > 1 else ""
            out.append(InputError(
                f"timestamp {str(text)!r} has no UTC offset{more}; add Z or an offset in the "
                "export, or set naive_time = \"local\" or \"utc\" in [readings] of the site file",
                path=where.path, line=where.line, key=where.key))
        return out

    def bad_row_errors(self) -> list[InputError]:
        """One problem per file with bad rows: the first, then where the next few are."""
        out = []
        for named, count in self.bad_by_file.values():
            first, rest = named[0], count - 1
            if rest:
                spots = [str(e.line) if e.line is not None else e.key
                         for e in named[1:BAD_ROW_EXAMPLES]]
                label = "line" if first.line is not None else "row"
                label += "s" if len(spots) > 1 else ""
                extra = f" and {rest - len(spots):,} more" if rest > len(spots) else ""
                tail = (f" (and {rest:,} more bad row{'s' if rest > 1 else ''}: {label} "
                        f"{', '.join(spots)}{extra}; pass --skip-bad-rows to drop them)")
            else:
                tail = " (pass --skip-bad-rows to drop bad rows)"
            out.append(InputError(first.message + tail, path=first.path, line=first.line,
                                  key=first.key))
        return out
