"""One level per reading: the vector magnitude of a sensor's RMS axes, and its log10.

Step 1 of run-state classification (:mod:`schedcheck.runstate.classify`).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from schedcheck.errors import InputError
from schedcheck.intervals import to_ns

RMS = ("x_rms", "y_rms", "z_rms")
PEAK = ("x_peak", "y_peak", "z_peak")


def reading_levels(frame: pd.DataFrame, *, name: str = "readings") -> tuple[np.ndarray, ...]:
    """Times, levels and crest factors of one sensor's readings, sorted, one row per instant.

    Parameters
    ----------
    frame : DataFrame
        ``timestamp`` (tz-aware) and at least one of ``x_rms``, ``y_rms``, ``z_rms``; optional
        ``*_peak`` columns [reading unit].
    name : str
        Used in error messages (the sensor id).

    Returns
    -------
    t : ndarray of int64
        Reading instants [ns since epoch, UTC].
    level : ndarray
        Vector magnitude of the RMS axes [reading unit]; NaN where no axis has a value.
    crest : ndarray
        Crest factor: magnitude of the peak axes over the magnitude of the RMS of the same
        axes [-]; NaN without peaks.
    """
    if "timestamp" not in frame.columns:
        raise InputError("no 'timestamp' column", key=name)
    rms = [c for c in RMS if c in frame.columns]
    if not rms:
        raise InputError("no RMS level column (x_rms, y_rms or z_rms)", key=name)
    t = to_ns(frame["timestamp"]) if len(frame) else np.zeros(0, np.int64)

    def magnitude(cols: list[str]) -> np.ndarray:
        if not cols:
            return np.full(len(frame), np.nan)
        a = frame[cols].to_numpy(dtype=float)
        if (a < 0).any():
            bad = cols[int(np.flatnonzero((a < 0).any(axis=0))[0])]
            raise InputError(f"negative vibration level in column {bad}", key=name)
        out = np.sqrt(np.nansum(a * a, axis=1))
        return np.where(np.isnan(a).all(axis=1), np.nan, out)

    level = magnitude(rms)
    peaks = [c for c in PEAK if c in frame.columns]
    with np.errstate(invalid="ignore", divide="ignore"):
        # crest factor on the axes that have a peak: peak / RMS of the same axes
        peak = magnitude(peaks) / magnitude([p.replace("_peak", "_rms") for p in peaks
                                             if p.replace("_peak", "_rms") in frame.columns])
    if t.size > 1 and not (np.diff(t) > 0).all():
        order = np.argsort(t, kind="stable")
        t, level, peak = t[order], level[order], peak[order]
        keep = np.concatenate([[True], np.diff(t) > 0])
        t, level, peak = t[keep], level[keep], peak[keep]
    return t, level, peak


def log_levels(level: np.ndarray, floor: float) -> np.ndarray:
    """log10 of the levels [log10 reading unit].

    A level of exactly 0 (a sensor reporting nothing below its resolution) is raised to a tenth
    of the smaller of the floor level and the smallest positive level, so that zeros form their
    own group well below anything running.
    """
    lv = np.asarray(level, dtype=float)
    pos = lv[lv > 0]
    tiny = min(pos.min() if pos.size else floor, floor) / 10
    return np.log10(np.maximum(lv, tiny))
