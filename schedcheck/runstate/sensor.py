"""What the readings themselves say about the sensor: reading step, axes, reading interval.

Part of run-state classification (see :mod:`schedcheck.runstate.classify`). Real sensors report
in whole steps (1 mg), combine several axes, and often report every 15 minutes rather than every
minute; the defaults of the classifier follow these properties instead of assuming them.

Defaults (each with its source):

* ``STEP_SHARE`` = 0.99: readings count as quantised when at least this share of the RMS values
  are whole multiples of the smallest difference between distinct values (common practice, no
  source).
* Dither: for grouping only, each quantised level gets a fixed pseudo-random offset, uniform
  over +-half a step, the standard model of quantisation error (B. Widrow, I. Kollar,
  "Quantization Noise", Cambridge University Press, 2008, ch. 4-5: uniform error over one step).
  The histogram then has no empty bins between steps, which would otherwise look like valleys.
* ``GAP_PERIODS`` = 3: when readings come less often than half ``max_gap``, silences up to three
  reading intervals are bridged (one or two lost packets; common practice, no source).
* ``COARSE_INTERVAL`` = 5 min: above this median reading interval starts and short cycling are
  only seen coarsely, and the states say so (common practice, no source).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from schedcheck.durations import format_duration

RMS = ("x_rms", "y_rms", "z_rms")
STEP_SHARE = 0.99          # [-]
GAP_PERIODS = 3.0          # [reading intervals]
COARSE_INTERVAL = pd.Timedelta("5min")
DITHER_SEED = 20260101     # fixed: the same readings always give the same grouping
_SAMPLE = 50_000           # values examined for the step (evenly spaced sample)


def axes_count(frame: pd.DataFrame | None) -> int:
    """Number of RMS axis columns with at least one value (1 to 3; 1 when there are none)."""
    if frame is None or len(frame) == 0:
        return 1
    n = sum(1 for c in RMS if c in frame.columns and frame[c].notna().any())
    return max(n, 1)


def reading_step(frame: pd.DataFrame | None) -> float:
    """The step the RMS values are reported in (1.0 for whole mg) [reading unit]; 0 if none.

    The smallest difference between distinct positive values is the step when at least
    ``STEP_SHARE`` of the values are whole multiples of it.
    """
    if frame is None or len(frame) == 0:
        return 0.0
    cols = [c for c in RMS if c in frame.columns]
    rows = frame[cols]
    if len(rows) > _SAMPLE:   # an evenly spaced sample of rows is enough to see the step
        rows = rows.iloc[np.linspace(0, len(rows) - 1, _SAMPLE).astype(np.int64)]
    v = rows.to_numpy(dtype=float).ravel()
    v = v[np.isfinite(v) & (v > 0)]
    if v.size < 20:
        return 0.0
    u = np.unique(v)
    if u.size < 2 or u.size > v.size / 4:      # nearly every value distinct: not quantised
        return 0.0
    d = float(np.diff(u).min())
    if d <= 0:
        return 0.0
    q = v / d
    whole = np.abs(q - np.round(q)) <= 1e-6 * np.maximum(q, 1.0)
    return d if whole.mean() >= STEP_SHARE else 0.0


def dithered(level: np.ndarray, step: float) -> np.ndarray:
    """Levels spread uniformly over +-half a step (for grouping only; see the module notes)."""
    lv = np.asarray(level, dtype=float)
    if step <= 0 or lv.size == 0:
        return lv
    u = np.random.default_rng(DITHER_SEED).random(lv.size) - 0.5
    return np.maximum(lv + u * step, step / 2)


def median_interval(t: np.ndarray) -> pd.Timedelta | None:
    """Median time between consecutive readings, rounded [duration]; None with fewer than two."""
    if t.size < 2:
        return None
    period = pd.Timedelta(int(np.median(np.diff(t))), "ns")
    # said in whole seconds, or whole minutes from two minutes on (jitter is not news)
    return period.round("1min") if period >= pd.Timedelta("2min") else period.round("1s")


def timing(t: np.ndarray, max_gap: pd.Timedelta, sensor: str) -> tuple[pd.Timedelta, list[str]]:
    """The gap length used for one sensor, and warnings about its reading interval.

    ``max_gap`` is kept unless the sensor's median reading interval is more than half of it (then
    nearly every silence would be no data): the gap becomes ``GAP_PERIODS`` reading intervals.
    """
    warn: list[str] = []
    period = median_interval(t)
    if period is None:
        return max_gap, warn
    gap = max_gap
    if period * 2 > max_gap:
        gap = period * GAP_PERIODS
        warn.append(f"sensor {sensor} reports about every {format_duration(period)}, too seldom "
                    f"for max_gap {format_duration(max_gap)}: silences up to "
                    f"{format_duration(gap)} are bridged; set [readings] max_gap to change this")
    if period > COARSE_INTERVAL:
        warn.append(f"sensor {sensor} reports about every {format_duration(period)}: runs and "
                    "stops shorter than a few readings are not seen, so starts per day and "
                    "short cycling are uncertain")
    return gap, warn
