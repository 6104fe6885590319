"""The evidence behind each finding: which findings get a close-up, over what span, and the
per-minute level trace of the components involved.

The report draws, for each of the costliest findings, a minute-resolution strip of the level
trace with the run states, the intended schedule and the allowances; the report is drawn from
the saved audit folder alone, so the levels of those spans are saved beside the other files
(``levels.csv.gz``, written by :mod:`schedcheck.outputs.levels_file`). This module decides the
spans and computes the trace; it opens no file.

Defaults (each a setting of :func:`evidence_levels`):

* ``STRIP_CONTEXT`` = 2 h either side of the finding, so the start and stop around it show
  (common practice, no source).
* ``STRIP_LONGEST`` = 24 h of a longer finding is drawn, from its start: at minute resolution a
  strip longer than a day is too dense to read on a page (common practice, no source).
* ``FIRST_RUN_KINDS``: a finding of a repeated pattern (clock offset, early starts, late stops,
  short cycling) can span weeks and begin on a day the unit stood still; its strip starts at the
  first start of running inside the finding instead of at the finding's start (common
  practice, no source).
* ``STRIPS_SHOWN`` = 40 findings, costliest first, get a strip: this bounds the saved levels
  to about 40 x 28 h x 60 rows per component and the report to a few megabytes
  (common practice, no source).
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np
import pandas as pd

from schedcheck.intervals import NS_PER_S, from_ns, to_ns
from schedcheck.runstate.levels import reading_levels

STRIP_CONTEXT = pd.Timedelta("2h")
STRIP_LONGEST = pd.Timedelta("24h")
STRIPS_SHOWN = 40
FIRST_RUN_KINDS = ("clock_offset", "early_start", "late_stop", "short_cycling")
NS_PER_MIN = 60 * NS_PER_S

LEVEL_COLUMNS = ("finding", "component", "time", "level")


def finding_keys(findings: pd.DataFrame) -> list[str]:
    """The key of each finding, in the table's order: its ``id`` where the table has one, else
    its 1-based row number as text (``"1"``, ``"2"``, ...), as in ``findings.csv``."""
    if "id" in findings.columns:
        ids = findings["id"].astype(str).tolist()
        if all(ids) and len(set(ids)) == len(ids):
            return ids
    return [str(i + 1) for i in range(len(findings))]


def costliest_first(findings: pd.DataFrame) -> np.ndarray:
    """Row positions of the findings ordered by cost, then kWh, then hours, largest first
    (stable: equal findings keep the table's order)."""
    if len(findings) == 0:
        return np.zeros(0, dtype=int)
    key = pd.DataFrame({
        "cost": pd.to_numeric(findings["cost"], errors="coerce").fillna(0.0).to_numpy()
        if "cost" in findings else np.zeros(len(findings)),
        "kwh": pd.to_numeric(findings["kwh"], errors="coerce").fillna(0.0).to_numpy(),
        "hours": pd.to_numeric(findings["hours"], errors="coerce").fillna(0.0).to_numpy(),
    })
    return key.sort_values(["cost", "kwh", "hours"], ascending=False,
                           kind="stable").index.to_numpy()


def finding_components(row) -> list[str]:
    """The component keys a finding involves: its ``components`` (a list, or text joined by
    ``;`` or ``,``) where present, else its one ``component``."""
    many = getattr(row, "components", None)
    if isinstance(many, (list, tuple)) and many:
        return [str(c) for c in many]
    if isinstance(many, str) and many.strip():
        sep = ";" if ";" in many else ","
        return [c.strip() for c in many.split(sep) if c.strip()]
    return [str(row.component)]


def strip_focus(kind: str, start: pd.Timestamp, end: pd.Timestamp,
                run_starts: np.ndarray | None = None) -> pd.Timestamp:
    """Where a finding's strip begins (before its context) [UTC]: the finding's start, or for
    the kinds in :data:`FIRST_RUN_KINDS` the first of ``run_starts`` [int64 ns, sorted; the
    starts of the component's run intervals] inside the finding, where there is one."""
    start = pd.Timestamp(start)
    if kind in FIRST_RUN_KINDS and run_starts is not None and len(run_starts):
        a, b = int(to_ns(start)), int(to_ns(pd.Timestamp(end)))
        i = int(np.searchsorted(run_starts, a, side="left"))
        if i < len(run_starts) and run_starts[i] < b:
            return pd.Timestamp(int(run_starts[i]), tz="UTC").floor("min")
    return start


def strip_window(start: pd.Timestamp, end: pd.Timestamp, window_start: pd.Timestamp,
                 window_end: pd.Timestamp, *, context: pd.Timedelta = STRIP_CONTEXT,
                 longest: pd.Timedelta = STRIP_LONGEST,
                 focus: pd.Timestamp | None = None) -> tuple[pd.Timestamp, pd.Timestamp]:
    """The span a finding's strip shows [UTC, half-open].

    The finding from ``focus`` (default its start; see :func:`strip_focus`) for at most
    ``longest``, with ``context`` either side, inside the audit window
    ``[window_start, window_end)``.
    """
    focus = pd.Timestamp(start) if focus is None else pd.Timestamp(focus)
    shown_end = min(pd.Timestamp(end), focus + longest)
    a = max(focus - context, pd.Timestamp(window_start))
    b = min(shown_end + context, pd.Timestamp(window_end))
    return a, max(a, b)


def minute_levels(t: np.ndarray, level: np.ndarray, a: int, b: int) -> tuple[np.ndarray,
                                                                             np.ndarray]:
    """Per-minute median level of the readings in ``[a, b)`` [int64 ns UTC].

    Returns the start of each minute that has a reading [int64 ns] and the median of the
    finite levels in it [reading unit]; minutes without a reading are absent (a gap).
    """
    lo, hi = np.searchsorted(t, a, side="left"), np.searchsorted(t, b, side="left")
    tt, lv = t[lo:hi], level[lo:hi]
    ok = np.isfinite(lv)
    tt, lv = tt[ok], lv[ok]
    if tt.size == 0:
        return np.zeros(0, np.int64), np.zeros(0)
    minute = tt - np.mod(tt, NS_PER_MIN)
    frame = pd.DataFrame({"m": minute, "v": lv})
    med = frame.groupby("m", sort=True)["v"].median()
    return med.index.to_numpy(np.int64), med.to_numpy(float)


def evidence_levels(findings: pd.DataFrame, sensors: Mapping[str, str],
                    readings: Mapping[str, pd.DataFrame], window_start: pd.Timestamp,
                    window_end: pd.Timestamp, *,
                    run_starts: Mapping[str, np.ndarray] | None = None,
                    shown: int = STRIPS_SHOWN,
                    context: pd.Timedelta = STRIP_CONTEXT,
                    longest: pd.Timedelta = STRIP_LONGEST) -> pd.DataFrame:
    """The per-minute level trace behind the costliest findings.

    Parameters
    ----------
    findings : DataFrame
        The audit's findings (``component``, ``start``, ``end`` UTC, ``hours`` [h], ``kwh``
        [kWh], ``cost``; optional ``id`` and ``components``).
    sensors : mapping
        Component key -> sensor id.
    readings : mapping
        Sensor id -> readings frame (``timestamp`` UTC and the level columns).
    window_start, window_end : Timestamp
        The audit window [UTC, half-open]; strips stay inside it.
    run_starts : mapping, optional
        Component key -> sorted starts of its run intervals [int64 ns], for
        :func:`strip_focus`.
    shown : int
        How many findings get a strip, costliest first [-].
    context : Timedelta
        Context either side of the finding [duration].
    longest : Timedelta
        Longest part of a finding drawn [duration].

    Returns
    -------
    DataFrame
        ``finding`` (key, :func:`finding_keys`), ``component``, ``time`` (minute start,
        UTC), ``level`` [reading unit]; rows in strip order, then component, then time.
    """
    keys = finding_keys(findings)
    traces: dict[str, tuple[np.ndarray, np.ndarray]] = {}
    parts = []
    for pos in costliest_first(findings)[:max(int(shown), 0)]:
        row = findings.iloc[int(pos)]
        comps = finding_components(row)
        focus = strip_focus(row["kind"], row["start"], row["end"],
                            (run_starts or {}).get(comps[0]))
        a, b = strip_window(row["start"], row["end"], window_start, window_end,
                            context=context, longest=longest, focus=focus)
        for comp in comps:
            sensor = sensors.get(comp)
            if sensor is None:
                continue
            if comp not in traces:   # each component's trace is read and sorted once
                frame = readings.get(sensor)
                t, lv = (reading_levels(frame, name=sensor)[:2]
                         if frame is not None and len(frame)
                         else (np.zeros(0, np.int64), np.zeros(0)))
                order = np.argsort(t, kind="stable")
                traces[comp] = (t[order], lv[order])
            t, lv = traces[comp]
            m, v = minute_levels(t, lv, int(to_ns(a)), int(to_ns(b)))
            parts.append(pd.DataFrame({"finding": keys[int(pos)], "component": comp,
                                       "time": from_ns(m), "level": v}))
    if not parts:
        return pd.DataFrame({"finding": pd.Series(dtype=str), "component": pd.Series(dtype=str),
                             "time": from_ns(np.zeros(0, np.int64)),
                             "level": pd.Series(dtype=float)})
    return pd.concat(parts, ignore_index=True)[list(LEVEL_COLUMNS)]
