"""Trends: the building system's command and status points against the vibration's run states."""

from schedcheck import lazy_exports

__getattr__, __all__ = lazy_exports(__name__, {
    "PointStates": "points", "parse_values": "points", "point_states": "points",
    "TrendComparison": "against", "compare_trends": "against", "trend_findings": "against",
})
