"""Half-open interval algebra on UTC instants.

An :class:`Intervals` is a set of instants written as sorted, disjoint, non-empty half-open
intervals ``[start, end)``; touching intervals are merged. Instants are int64 nanoseconds since
the Unix epoch (UTC), so every operation is exact to the nanosecond and vectorised with numpy.
The run-state classifier, the schedule expansion and the minute accounting all share it, which
is what guarantees that no minute is counted twice or lost.

Labelled intervals (a run state, an event summary) travel as DataFrames with ``start`` and
``end`` columns of dtype ``datetime64[ns, UTC]``; :meth:`Intervals.from_frame` and
:meth:`Intervals.to_frame` convert.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import dataclass

import numpy as np
import pandas as pd

from schedcheck.errors import TableError

NS_PER_S = 1_000_000_000
NS_PER_H = 3600 * NS_PER_S


def to_ns(value) -> np.ndarray | int:
    """Instants (Timestamp, DatetimeIndex, Series, array of datetime64) to int64 ns since epoch UTC.

    Naive values are refused: every instant in the core carries a zone.
    """
    if isinstance(value, pd.Timestamp):
        if value.tzinfo is None:
            raise ValueError("naive timestamp in the core; every instant must carry a zone")
        return int(value.tz_convert("UTC").as_unit("ns").value)
    if isinstance(value, (pd.Series, pd.Index)):
        idx = pd.DatetimeIndex(value)
        if idx.tz is None:
            raise ValueError("naive timestamps in the core; every instant must carry a zone")
        return idx.tz_convert("UTC").as_unit("ns").asi8.copy()
    arr = np.asarray(value)
    if arr.dtype.kind == "M":
        return arr.astype("datetime64[ns]").astype(np.int64)
    if arr.dtype.kind in "iu":
        return arr.astype(np.int64)
    raise TypeError(f"cannot read instants from {type(value).__name__}")


def from_ns(values) -> pd.DatetimeIndex:
    """int64 ns since epoch to a UTC :class:`pandas.DatetimeIndex` (unit ns)."""
    return pd.DatetimeIndex(np.asarray(values, dtype="int64").view("datetime64[ns]")).tz_localize(
        "UTC"
    )


def _as_ns_array(values) -> np.ndarray:
    if isinstance(values, (pd.Series, pd.Index, pd.Timestamp)):
        return np.atleast_1d(np.asarray(to_ns(values), dtype=np.int64))
    arr = np.atleast_1d(np.asarray(values))
    if arr.dtype.kind == "M":
        return to_ns(arr)
    return arr.astype(np.int64, copy=False)


@dataclass(frozen=True)
class Intervals:
    """A normalised set of half-open intervals ``[starts[i], ends[i])`` in int64 ns (UTC).

    Build with :meth:`from_arrays` (which normalises) rather than the constructor.
    """

    starts: np.ndarray
    ends: np.ndarray

    # -- construction ---------------------------------------------------------------------
    @classmethod
    def empty(cls) -> Intervals:
        return cls(np.empty(0, np.int64), np.empty(0, np.int64))

    @classmethod
    def from_arrays(cls, starts, ends) -> Intervals:
        """Normalise any intervals: drop empty ones, sort, merge overlapping and touching ones."""
        s, e = _as_ns_array(starts), _as_ns_array(ends)
        if s.shape != e.shape:
            raise ValueError("starts and ends differ in length")
        keep = e > s
        s, e = s[keep], e[keep]
        if s.size == 0:
            return cls.empty()
        order = np.argsort(s, kind="stable")
        s, e = s[order], e[order]
        run_end = np.maximum.accumulate(e)
        new = np.empty(s.size, dtype=bool)
        new[0] = True
        new[1:] = s[1:] > run_end[:-1]
        idx = np.flatnonzero(new)
        out_s = s[idx]
        out_e = np.maximum.reduceat(e, idx)
        return cls(out_s, out_e)

    @classmethod
    def from_frame(cls, frame: pd.DataFrame, start: str = "start", end: str = "end") -> Intervals:
        """Union of the rows of a DataFrame with tz-aware ``start``/``end`` columns."""
        if len(frame) == 0:
            return cls.empty()
        return cls.from_arrays(to_ns(frame[start]), to_ns(frame[end]))

    @classmethod
    def window(cls, start, end) -> Intervals:
        """The single interval ``[start, end)``."""
        return cls.from_arrays(np.array([to_ns(start)]), np.array([to_ns(end)]))

    # -- views ----------------------------------------------------------------------------
    def __len__(self) -> int:
        return int(self.starts.size)

    def __iter__(self):
        return iter(zip(self.starts.tolist(), self.ends.tolist(), strict=True))

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Intervals):
            return NotImplemented
        return np.array_equal(self.starts, other.starts) and np.array_equal(self.ends, other.ends)

    def __hash__(self) -> int:  # pragma: no cover - frozen dataclass needs one
        return hash((self.starts.tobytes(), self.ends.tobytes()))

    @property
    def lengths(self) -> np.ndarray:
        """Length of each interval [ns]."""
        return self.ends - self.starts

    def duration_ns(self) -> int:
        """Total length [ns]."""
        return int(self.lengths.sum())

    def hours(self) -> float:
        """Total length [h]."""
        return self.duration_ns() / NS_PER_H

    def to_frame(self, tz: str | None = None) -> pd.DataFrame:
        """DataFrame with ``start`` and ``end`` (UTC, or converted to ``tz`` for display)."""
        s, e = from_ns(self.starts), from_ns(self.ends)
        if tz is not None:
            s, e = s.tz_convert(tz), e.tz_convert(tz)
        return pd.DataFrame({"start": s, "end": e})

    # -- algebra --------------------------------------------------------------------------
    def _combine(self, other: Intervals, keep: Callable[[np.ndarray, np.ndarray], np.ndarray]):
        pts = np.concatenate([self.starts, self.ends, other.starts, other.ends])
        if pts.size == 0:
            return Intervals.empty()
        na, nb = self.starts.size, other.starts.size
        da = np.concatenate(
            [np.ones(na, np.int64), -np.ones(na, np.int64), np.zeros(2 * nb, np.int64)]
        )
        db = np.concatenate(
            [np.zeros(2 * na, np.int64), np.ones(nb, np.int64), -np.ones(nb, np.int64)]
        )
        order = np.argsort(pts, kind="stable")
        pts, da, db = pts[order], da[order], db[order]
        ca, cb = np.cumsum(da), np.cumsum(db)
        # coverage counts hold on [pts[i], pts[i+1]); within equal points the final count wins
        sel = keep(ca[:-1] > 0, cb[:-1] > 0)
        return Intervals.from_arrays(pts[:-1][sel], pts[1:][sel])

    def union(self, other: Intervals) -> Intervals:
        return Intervals.from_arrays(
            np.concatenate([self.starts, other.starts]), np.concatenate([self.ends, other.ends])
        )

    def intersection(self, other: Intervals) -> Intervals:
        return self._combine(other, lambda a, b: a & b)

    def difference(self, other: Intervals) -> Intervals:
        return self._combine(other, lambda a, b: a & ~b)

    __or__ = union
    __and__ = intersection
    __sub__ = difference

    def clip(self, start, end) -> Intervals:
        """The part inside ``[start, end)``."""
        return self.intersection(Intervals.window(start, end))

    def complement(self, start, end) -> Intervals:
        """The part of ``[start, end)`` not in this set."""
        return Intervals.window(start, end).difference(self)

    def shift_ends(self, before: int, after: int) -> Intervals:
        """Widen every interval by ``before`` ns at its start and ``after`` ns at its end."""
        return Intervals.from_arrays(self.starts - int(before), self.ends + int(after))

    def contains(self, instants) -> np.ndarray:
        """Boolean mask: which of the int64 ns ``instants`` lie in the set."""
        t = np.asarray(instants, dtype=np.int64)
        k = np.searchsorted(self.starts, t, side="right") - 1
        inside = k >= 0
        kk = np.clip(k, 0, None)
        return inside & (t < self.ends[kk]) if self.starts.size else np.zeros(t.shape, bool)

    def cumulative_ns(self, instants) -> np.ndarray:
        """Length of the set before each instant: ``|set ∩ (-inf, t)|`` [ns]."""
        t = np.asarray(instants, dtype=np.int64)
        if self.starts.size == 0:
            return np.zeros(t.shape, np.int64)
        cum = np.concatenate([[0], np.cumsum(self.lengths)])
        k = np.searchsorted(self.starts, t, side="right") - 1
        kk = np.clip(k, 0, None)
        partial = np.clip(t - self.starts[kk], 0, self.lengths[kk])
        return np.where(k >= 0, cum[kk] + partial, 0)

    def ns_per_bin(self, edges) -> np.ndarray:
        """Length of the set inside each bin ``[edges[i], edges[i+1])`` [ns]; edges ascending."""
        return np.diff(self.cumulative_ns(np.asarray(edges, dtype=np.int64)))


def union_all(sets: Iterable[Intervals]) -> Intervals:
    """Union of many interval sets."""
    sets = list(sets)
    if not sets:
        return Intervals.empty()
    return Intervals.from_arrays(
        np.concatenate([s.starts for s in sets]), np.concatenate([s.ends for s in sets])
    )


def table_ns(frame, name: str, columns: tuple[str, ...]) -> tuple[np.ndarray, np.ndarray]:
    """The ``start`` and ``end`` columns of a labelled-interval table as int64 ns [UTC].

    The one check of an interval table where it enters the core: a
    :class:`schedcheck.errors.TableError` names the table (``name``) when it is not a DataFrame,
    lacks one of ``columns``, holds naive or unreadable instants, or has a row that ends before
    it starts.
    """
    if not isinstance(frame, pd.DataFrame):
        raise TableError(f"expected a table, got {type(frame).__name__}", key=name)
    missing = [c for c in columns if c not in frame.columns]
    if missing:
        raise TableError(f"missing column(s) {', '.join(missing)}", key=name)
    out = []
    for col in ("start", "end"):
        try:
            out.append(np.asarray(to_ns(frame[col]), dtype=np.int64))
        except (ValueError, TypeError) as exc:
            raise TableError(f"column '{col}' must hold zone-aware instants ({exc})",
                             key=name) from None
    s, e = out
    if len(frame) and bool(np.any(e < s)):
        row = int(np.flatnonzero(e < s)[0])
        raise TableError(f"row {row} ends before it starts", key=name)
    return s, e


def check_labels(frame, name: str, column: str, allowed: tuple[str, ...], what: str) -> np.ndarray:
    """The ``column`` of an interval table as str, refusing any label not in ``allowed``.

    ``what`` names the labels in the message (``run states``, ``schedule kinds``).
    """
    labels = frame[column].astype(str).to_numpy() if len(frame) else np.empty(0, dtype=object)
    bad = sorted(set(labels) - set(allowed))
    if bad:
        raise TableError(f"unknown {column} {bad[0]!r}; expected one of {', '.join(allowed)} "
                         f"(unknown {what}: {', '.join(bad)})", key=f"{name}.{column}")
    return labels
