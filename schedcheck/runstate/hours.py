"""Hours per run state of one component's interval table."""

from __future__ import annotations

import pandas as pd

from schedcheck.runstate.states import STATES


def hours_by_state(intervals: pd.DataFrame) -> dict[str, float]:
    """Total hours in each run state [h], every state of
    :data:`schedcheck.runstate.states.STATES` present (0.0 where absent).

    ``intervals``: a ``start, end, state`` table (``ComponentStates.intervals``).
    """
    hours = (intervals["end"] - intervals["start"]).dt.total_seconds() / 3600.0
    return {s: float(hours[intervals["state"] == s].sum()) for s in STATES}
