"""Building-system trend points: samples of a fan's command or status -> on / off / unknown.

A building automation system logs a point either at intervals or on change of value. A value
holds until the next sample of the same point; a point silent for longer than ``max_gap`` is
unknown from ``max_gap`` after its last sample until its next one (interface section 8), and
before its first sample. Instants are int64 ns UTC; intervals are half-open.

Values (:func:`parse_values`): ``on``/``off``, ``1``/``0``, ``true``/``false``,
``active``/``inactive`` in any case (BACnet's binary present-value words), or a number: a speed
command in percent, on when above 0.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from schedcheck.intervals import Intervals

#: Words read as on and as off (any case; BACnet binary values are active/inactive).
ON_WORDS = frozenset({"on", "true", "active", "yes", "run", "running", "start"})
OFF_WORDS = frozenset({"off", "false", "inactive", "no", "stop", "stopped"})


@dataclass(frozen=True)
class PointStates:
    """One point over a window ``[start, end)``: where it said on, off, or nothing usable."""

    on: Intervals
    off: Intervals
    unknown: Intervals

    @property
    def known(self) -> Intervals:
        return self.on.union(self.off)


def parse_values(values: pd.Series) -> tuple[np.ndarray, np.ndarray]:
    """Trend values as on (1.0) / off (0.0) per row, and a mask of rows that could not be read.

    Numbers are a speed command in percent (or 1/0): on when above 0. Negative numbers and
    non-finite ones are unreadable.
    """
    text = values.astype("string").str.strip().str.lower()
    out = np.full(len(text), np.nan)
    on = text.isin(ON_WORDS).to_numpy(dtype=bool, na_value=False)
    off = text.isin(OFF_WORDS).to_numpy(dtype=bool, na_value=False)
    out[on], out[off] = 1.0, 0.0
    rest = ~(on | off)
    num = pd.to_numeric(text[rest].str.rstrip("%"), errors="coerce").to_numpy(dtype=float)
    ok = np.isfinite(num) & (num >= 0)
    idx = np.flatnonzero(rest)
    out[idx[ok]] = (num[ok] > 0).astype(float)
    bad = np.isnan(out)
    return out, bad


def point_states(times: np.ndarray, values: np.ndarray, start: int, end: int,
                 max_gap: int) -> PointStates:
    """On / off / unknown intervals of one point over ``[start, end)`` [int64 ns UTC].

    Parameters
    ----------
    times : ndarray of int64
        Sample instants [ns UTC], any order; samples at the same instant keep the last one.
    values : ndarray of float
        1.0 (on) or 0.0 (off) per sample.
    start, end : int
        The window [ns UTC].
    max_gap : int
        How long a value holds without a new sample [ns].
    """
    t = np.asarray(times, dtype=np.int64)
    v = np.asarray(values, dtype=float)
    order = np.argsort(t, kind="stable")
    t, v = t[order], v[order]
    if t.size:   # several samples at one instant: the last in the file wins
        last = np.concatenate([t[1:] != t[:-1], [True]])
        t, v = t[last], v[last]
    nxt = np.concatenate([t[1:], [np.iinfo(np.int64).max]])
    hold_end = np.minimum(nxt, t + max_gap)
    on = Intervals.from_arrays(t[v > 0], hold_end[v > 0]).clip(start, end)
    off = Intervals.from_arrays(t[v <= 0], hold_end[v <= 0]).clip(start, end)
    unknown = Intervals.window(start, end).difference(on.union(off))
    return PointStates(on=on, off=off, unknown=unknown)
