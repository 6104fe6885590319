"""Readings: per-sensor rows -> clean level series in UTC, data health, window clipping, spans."""

from schedcheck import lazy_exports

__getattr__, __all__ = lazy_exports(__name__, {
    "Readings": "cleaning", "SensorHealth": "cleaning", "measure_gaps": "cleaning",
    "health_over": "health", "health_over_data_span": "health",
    "DataSpanError": "spans", "data_days": "spans",
    "audit_window": "window_clip", "clip_readings": "window_clip",
    "window_warnings": "window_clip",
})
