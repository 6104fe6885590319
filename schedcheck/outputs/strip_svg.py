"""The close-up of one finding as inline SVG: a minute-resolution strip of elapsed time.

From top to bottom: the intended schedule (occupied periods filled amber, allowances and
allowed windows dotted grey), then per component involved its run state band (the carpet
plot's marks: dark running, pale off, hatched no data) and its level trace, one point per
minute on a log scale, with the on/off level dashed. The finding's own span is shaded behind
every row. Time runs left to right in elapsed time, labelled on the local clock; a clock change
inside the strip shows as a jump of the hour labels, not a stretch of the trace.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
from markupsafe import escape

from schedcheck.intervals import to_ns
from schedcheck.outputs.svg import (
    BAR_OFFSCHED,
    GRID,
    INK_RUN,
    LINE_ALLOW,
    LINE_OCCUPIED,
    LINE_UNDER,
    TEXT,
    TINT_OFF,
    _defs,
    _num,
    rect_path,
    svg_open,
)

STRIP_W = 960.0          # picture width [px]; the page scales it down to fit
S_LEFT, S_RIGHT = 62.0, 12.0
BAND_H = 10.0            # schedule and state bands [px]
TRACE_H = 78.0           # level trace panel [px]
GAP_BREAK_MIN = 3.0      # a trace gap longer than this many minutes breaks the line [min]
SPAN_FILL = "#f6dccf"    # the finding's span, behind everything: pale rust
TICK_STEPS_H = (1, 2, 3, 6, 12)


def _x(t_ns: np.ndarray, a: int, b: int) -> np.ndarray:
    return S_LEFT + (np.asarray(t_ns, dtype=float) - a) / max(b - a, 1) * (STRIP_W - S_LEFT
                                                                             - S_RIGHT)


def _clip(start, end, a: int, b: int) -> tuple[np.ndarray, np.ndarray]:
    s = np.clip(to_ns(start), a, b) if len(start) else np.zeros(0, np.int64)
    e = np.clip(to_ns(end), a, b) if len(end) else np.zeros(0, np.int64)
    keep = e > s
    return s[keep], e[keep]


def interval_columns(table, label: str) -> dict[str, np.ndarray]:
    """``start``, ``end`` [int64 ns] and ``label`` (text) of an interval table as arrays: a
    DataFrame, or a dict of such arrays already (then returned as it is)."""
    if isinstance(table, dict):
        return table
    if len(table) == 0:
        return {"start": np.zeros(0, np.int64), "end": np.zeros(0, np.int64),
                label: np.zeros(0, dtype=object)}
    return {"start": np.asarray(to_ns(table["start"])), "end": np.asarray(to_ns(table["end"])),
            label: table[label].to_numpy(dtype=object)}


def _pieces(cols: dict[str, np.ndarray], label: str, value: str, a: int,
            b: int) -> tuple[np.ndarray, np.ndarray]:
    """The intervals of ``cols`` labelled ``value``, clipped to ``[a, b)``, empty ones left out."""
    mine = cols[label] == value
    return _clip(cols["start"][mine], cols["end"][mine], a, b)


def _log_range(levels: np.ndarray, marks: list[float]) -> tuple[float, float]:
    """log10 limits of the trace panel: the levels seen and the on/off levels, padded."""
    vals = np.concatenate([np.asarray(levels, float), np.asarray(marks, float)])
    vals = vals[np.isfinite(vals) & (vals > 0)]
    if vals.size == 0:
        return -2.0, 1.0
    lo, hi = math.log10(float(np.percentile(vals, 0.5))), math.log10(float(vals.max()))
    lo, hi = min(lo, math.log10(float(vals.min()))), hi
    if hi - lo < 1.0:
        mid = (hi + lo) / 2
        lo, hi = mid - 0.5, mid + 0.5
    return lo - 0.08 * (hi - lo), hi + 0.08 * (hi - lo)


def _level_ticks(lo: float, hi: float) -> list[float]:
    """Decades, with 2 and 5 between them when the panel spans under two decades."""
    mult = (1.0,) if hi - lo >= 2.0 else (1.0, 2.0, 5.0)
    out = []
    for d in range(math.floor(lo), math.ceil(hi) + 1):
        for m in mult:
            v = m * 10.0 ** d
            if lo <= math.log10(v) <= hi:
                out.append(v)
    return out


def _time_ticks(a: int, b: int, tz: str) -> list[tuple[int, str, bool]]:
    """(instant [ns], label, is local midnight) for hour ticks on the local clock."""
    hours = (b - a) / 3.6e12
    step = next((s for s in TICK_STEPS_H if hours / s <= 14), 24)
    first = pd.Timestamp(a, tz="UTC").tz_convert(tz).floor("h", ambiguous=False,
                                                          nonexistent="shift_forward")
    rng = pd.date_range(first, pd.Timestamp(b, tz="UTC").tz_convert(tz), freq="h")
    out = []
    for ts in rng:
        t = int(ts.value)
        if a <= t <= b and ts.hour % step == 0 and ts.minute == 0:
            midnight = ts.hour == 0
            out.append((t, ts.strftime("%a %d %b") if midnight else ts.strftime("%H:%M"),
                        midnight))
    return out


def _trace_path(t: np.ndarray, v: np.ndarray, a: int, b: int, lo: float, hi: float,
                y0: float) -> str:
    """The level trace as one path; the line breaks at gaps longer than GAP_BREAK_MIN."""
    ok = np.isfinite(v) & (v > 0)
    t, v = t[ok], v[ok]
    if t.size == 0:
        return ""
    xs = _num(_x(t, a, b))
    ly = np.clip(np.log10(v), lo, hi)
    ys = _num(y0 + TRACE_H - (ly - lo) / (hi - lo) * TRACE_H)
    brk = np.concatenate([[True], np.diff(t) > GAP_BREAK_MIN * 6e10])
    return "".join(("M" if k else "L") + f"{x} {y}" for x, y, k in zip(xs, ys, brk,
                                                                        strict=True))


def strip_svg(*, a: pd.Timestamp, b: pd.Timestamp, span: tuple[pd.Timestamp, pd.Timestamp],
              tz: str, schedule: pd.DataFrame, rows: list[dict], title: str, pid: str,
              unit: str = "") -> str:
    """One finding's close-up strip.

    Parameters
    ----------
    a, b : Timestamp
        The strip's span [UTC, half-open].
    span : (Timestamp, Timestamp)
        The part of the finding inside the strip, shaded [UTC].
    tz : str
        Site time zone (labels only).
    schedule : DataFrame or dict
        The unit's intended intervals (``start``, ``end`` UTC, ``kind``), or the same as
        arrays (:func:`interval_columns`).
    rows : list of dict
        Per component: ``id``; ``runs`` (``start``, ``end`` UTC, ``state``; a DataFrame or
        arrays as ``schedule``); ``time``
        [int64 ns] and ``level`` [reading unit] of the per-minute trace; ``marks``: on/off
        levels to draw (``level``, and ``on_level``/``off_level`` where they differ).
    title : str
        Accessible title (escaped here).
    pid : str
        Prefix for ids inside the SVG; unique within the page.
    unit : str
        Reading unit label for the level axis.

    Returns
    -------
    str
        An ``<svg>`` element.
    """
    a_ns, b_ns = int(to_ns(pd.Timestamp(a))), int(to_ns(pd.Timestamp(b)))
    top = 16.0
    height = top + BAND_H + 6 + len(rows) * (BAND_H + TRACE_H + 22) + 24
    out = [svg_open("chart strip", STRIP_W, height, title),
           _defs(pid)]
    s0, s1 = (int(to_ns(pd.Timestamp(x))) for x in span)
    xs0, xs1 = _x(np.array([max(s0, a_ns), min(s1, b_ns)]), a_ns, b_ns)
    out.append(f'<rect class="span" x="{xs0:.1f}" y="{top - 4:.1f}" '
               f'width="{max(xs1 - xs0, 1):.1f}" height="{height - top - 20:.1f}" '
               f'fill="{SPAN_FILL}"/>')
    ticks = _time_ticks(a_ns, b_ns, tz)
    for t, _, midnight in ticks:
        x = float(_x(np.array([t]), a_ns, b_ns)[0])
        out.append(f'<path d="M{x:.1f} {top - 4:.1f}V{height - 22:.1f}" stroke="{GRID}" '
                   f'stroke-width="{1.2 if midnight else 0.6}"/>')
    out.append(f'<g font-size="10" fill="{TEXT}"><text x="{S_LEFT - 4}" y="{top + 8:.1f}" '
               f'text-anchor="end">schedule</text></g>')
    y = top
    schedule = interval_columns(schedule, "kind")
    for kind, fill, stroke in (("allowance", "#eef0f3", LINE_ALLOW), ("allowed", "#eef0f3",
                                                                       LINE_ALLOW),
                               ("occupied", LINE_OCCUPIED, LINE_UNDER)):
        s, e = _pieces(schedule, "kind", kind, a_ns, b_ns)
        if len(s):
            x0, x1 = _x(s, a_ns, b_ns), _x(e, a_ns, b_ns)
            d = rect_path(x0, np.full(len(s), y), x1 - x0, np.full(len(s), BAND_H))
            dash = ' stroke-dasharray="2 1.5"' if kind != "occupied" else ""
            out.append(f'<path class="sched-{kind}" d="{d}" fill="{fill}" stroke="{stroke}" '
                       f'stroke-width=".8"{dash}/>')
    y += BAND_H + 6
    fills = {"off": TINT_OFF, "run": INK_RUN, "no_data": f"url(#{pid}-nd)"}
    for row in rows:
        out.append(f'<g font-size="10" fill="{TEXT}"><text x="{S_LEFT}" y="{y + 8:.1f}" '
                   f'font-weight="600">{escape(row["id"])}<tspan font-weight="400"> · level in '
                   f'{escape(unit or "reading units")}, log scale</tspan></text>'
                   f'<text x="{S_LEFT - 4}" '
                   f'y="{y + 21:.1f}" text-anchor="end">state</text></g>')
        y += 12
        runs = interval_columns(row["runs"], "state")
        for state in ("off", "no_data", "run"):
            s, e = _pieces(runs, "state", state, a_ns, b_ns)
            if len(s):
                x0, x1 = _x(s, a_ns, b_ns), _x(e, a_ns, b_ns)
                d = rect_path(x0, np.full(len(s), y), x1 - x0, np.full(len(s), BAND_H))
                out.append(f'<path class="st-{state}" fill="{fills[state]}" d="{d}"/>')
        y += BAND_H + 4
        out.append(_trace_panel(row, a_ns, b_ns, y))
        y += TRACE_H + 6
    out.append(f'<g font-size="10" fill="{TEXT}">')
    for t, label, midnight in ticks:
        x = float(_x(np.array([t]), a_ns, b_ns)[0])
        weight = ' font-weight="600"' if midnight else ""
        out.append(f'<text x="{x:.1f}" y="{height - 8:.1f}" text-anchor="middle"{weight}>'
                   f'{label}</text>')
    out.append("</g></svg>")
    return "".join(out)


def _trace_panel(row: dict, a: int, b: int, y: float) -> str:
    marks = [m for m in row.get("marks") or [] if m is not None and m > 0]
    lo, hi = _log_range(row["level"], marks)
    w = STRIP_W - S_LEFT - S_RIGHT
    out = [f'<rect x="{S_LEFT}" y="{y:.1f}" width="{w:.1f}" height="{TRACE_H}" fill="none" '
           f'stroke="{GRID}" stroke-width=".6"/><g font-size="9" fill="{TEXT}">']
    for v in _level_ticks(lo, hi):
        ty = y + TRACE_H - (math.log10(v) - lo) / (hi - lo) * TRACE_H
        out.append(f'<text x="{S_LEFT - 4}" y="{ty + 3:.1f}" text-anchor="end">{v:g}</text>'
                   f'<path d="M{S_LEFT} {ty:.1f}h{w:.1f}" stroke="{GRID}" stroke-width=".4"/>')
    out.append("</g>")
    for i, m in enumerate(dict.fromkeys(marks)):
        my = y + TRACE_H - (min(max(math.log10(m), lo), hi) - lo) / (hi - lo) * TRACE_H
        out.append(f'<path class="onoff" d="M{S_LEFT} {my:.1f}h{w:.1f}" stroke="{BAR_OFFSCHED}" '
                   f'stroke-width=".9" stroke-dasharray="{"5 3" if i == 0 else "2 2"}"/>')
    d = _trace_path(np.asarray(row["time"], np.int64), np.asarray(row["level"], float), a, b,
                    lo, hi, y)
    if d:
        out.append(f'<path class="trace" d="{d}" fill="none" stroke="{INK_RUN}" '
                   f'stroke-width="1" stroke-linejoin="round"/>')
    else:
        out.append(f'<text x="{S_LEFT + w / 2:.1f}" y="{y + TRACE_H / 2:.1f}" font-size="11" '
                   f'text-anchor="middle" fill="{TEXT}">no readings in this span</text>')
    return "".join(out)
