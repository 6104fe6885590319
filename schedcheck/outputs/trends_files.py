"""The trends' part of the audit files (interface section 8).

* ``summary.json``, per component with a ``command``: ``trends`` (the point names) and the hour
  figures ``hours.ran_while_commanded_off``, ``hours.off_while_commanded_on``,
  ``hours.command_unknown`` and, with a status, ``hours.status_disagrees`` and
  ``hours.status_unknown`` [h], each counted only where the run state and the point are both
  known (``*_unknown``: known run state, unknown point);
* ``trends.csv``: every point's ``on`` / ``off`` / ``unknown`` intervals over the window
  (``component, role, point, state, start, end, hours``, local ISO 8601), written only when the
  site has trends; the report draws its command and status strips from it.
"""

from __future__ import annotations

from pathlib import Path

import pandas as pd

from schedcheck.intervals import from_ns
from schedcheck.outputs.instants import local_iso
from schedcheck.outputs.values import HOURS_DECIMALS, _r

TRENDS_FILE = "trends.csv"
TREND_ROWS = ("component", "role", "point", "state", "start", "end", "hours")


def trend_hours(result, key: str) -> dict:
    """The hour figures a commanded component adds to its ``hours`` (empty without one)."""
    tr = result.trends.get(key)
    if tr is None:
        return {}
    return {k: _r(v, HOURS_DECIMALS) for k, v in tr.hours().items()}


def trend_points(result, key: str) -> dict:
    """``{"trends": {"command": ..., "status": ...}}`` for a commanded component, else {}."""
    tr = result.trends.get(key)
    if tr is None:
        return {}
    return {"trends": {"command": tr.command_point, "status": tr.status_point}}


def trends_frame(result) -> pd.DataFrame:
    """The rows of ``trends.csv`` (see the module docstring), in component and time order."""
    tz = result.site.timezone
    rows = []
    for key, tr in result.trends.items():
        for role, point, states in (("command", tr.command_point, tr.command),
                                    ("status", tr.status_point, tr.status)):
            if states is None:
                continue
            parts = [(name, iv) for name, iv in (("on", states.on), ("off", states.off),
                                                 ("unknown", states.unknown))]
            items = sorted(((int(s), int(e), name) for name, iv in parts
                            for s, e in zip(iv.starts, iv.ends, strict=True)))
            for s, e, name in items:
                a, b = from_ns([s])[0], from_ns([e])[0]
                rows.append((key, role, point, name, local_iso(a, tz), local_iso(b, tz),
                             _r((e - s) / 3.6e12, HOURS_DECIMALS)))
    return pd.DataFrame(rows, columns=list(TREND_ROWS))


def write_trends_file(result, outdir: Path, write_csv) -> dict[str, Path]:
    """``trends.csv`` into ``outdir`` when the audit has trends (``write_csv(frame, path)``)."""
    if not result.trends:
        return {}
    return {TRENDS_FILE: write_csv(trends_frame(result), Path(outdir) / TRENDS_FILE)}
