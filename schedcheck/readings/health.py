"""Data health over a chosen span: the one place health is measured again after a read.

A read measures each sensor's health over its own window (:func:`cleaning.clean_sensor`). The
audit cuts a window from a whole read, and the check measures every sensor against the span of
all sensors' data (so that one that starts late or stops early shows it as a gap); both use
:func:`health_over`.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pandas as pd

from schedcheck.intervals import to_ns
from schedcheck.readings.cleaning import Readings, SensorHealth, measure_gaps


def health_over(readings: Readings, start: pd.Timestamp, end: pd.Timestamp,
                max_gap: pd.Timedelta) -> dict[str, SensorHealth]:
    """Each sensor's health over ``[start, end)`` [UTC], from its clean readings there.

    First, last, count, median interval and gaps (silences longer than ``max_gap``, the window
    edges included) are measured for the span; counts of duplicates, out-of-order, fold and bad
    rows stay those of the read. A sensor without readings there has count 0 and one gap over
    the whole span.
    """
    out = {}
    for sensor, h in readings.health.items():
        frame = readings.by_sensor.get(sensor)
        if frame is None or len(frame) == 0:
            ts = np.empty(0, np.int64)
        else:
            ts = np.asarray(to_ns(frame["timestamp"]), dtype=np.int64)
            ts = ts[(ts >= start.value) & (ts < end.value)]
        fresh = dataclasses.replace(h, first=None, last=None, median_interval=None,
                                    count=len(ts))
        measure_gaps(fresh, ts, start, end, max_gap)
        out[sensor] = fresh
    return out


def health_over_data_span(readings: Readings, max_gap: pd.Timedelta) -> list[SensorHealth]:
    """Each sensor's health with silences measured against the span of all sensors' data
    (first to last reading of any sensor), in the order of ``readings.health``."""
    firsts = [h.first for h in readings.health.values() if h.first is not None]
    if not firsts:
        return list(readings.health.values())
    start = min(firsts)
    end = max(h.last for h in readings.health.values() if h.last is not None)
    end = end + pd.Timedelta(1, "ns")   # [start, end) holds the last reading
    return list(health_over(readings, start, end, max_gap).values())
