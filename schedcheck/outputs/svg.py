"""The report's pictures as inline SVG text: the carpet plot and the daily bar chart.

Both are drawn from whole intervals, not minutes: every interval is cut at local midnights into
one piece per day column, and all pieces of one kind become sub-paths of a single ``<path>``
(``M x y h w v h h -w z``), so a year of several components stays a few tens of kilobytes.

The look is the project's own. States differ by lightness and pattern, not by hue alone, so the
pictures survive grey-scale print and colour-vision deficiency: running is dark ink, off is a
pale tint, no data is a grey hatch on white; off-schedule bars carry white stripes.

Daylight-saving days: the vertical axis of the carpet plot is the local wall clock, 0-24 h.
On the spring change day the skipped hour does not exist, and an interval across it is drawn
as one block; on the autumn change day the repeated hour is drawn over itself. The hour figures
in the tables are computed from elapsed time and are not affected.
"""

from __future__ import annotations

import datetime as dt
import functools

import numpy as np
import pandas as pd
from markupsafe import escape

from schedcheck.intervals import from_ns, to_ns

# The palette (our own choice; contrast checked by eye in colour and grey-scale print).
INK_RUN = "#1d3557"        # running: dark navy
TINT_OFF = "#e6ebf1"       # off: pale blue-grey
INK_LOW = "#6f88ab"        # running at reduced speed: mid blue-grey (a mid grey in print)
LOW_SHARE = 0.75           # reduced speed: at most this share of the top speed (as the
#                            setback finding; common practice, no source)
HATCH_NODATA = "#8d939c"   # no data: grey hatch on white
LINE_OCCUPIED = "#e59400"  # occupied period outline: amber ...
LINE_UNDER = "#4a2f00"     # ... over a dark brown underlay
LINE_ALLOW = "#7d8794"     # allowance / allowed window: dotted grey outline
BAR_IN = "#4f7cac"         # in schedule
BAR_ALLOW = "#b9cbe0"      # allowance / allowed window
BAR_OFFSCHED = "#b4441a"   # off-schedule running: rust with white stripes
BAR_MISSED = "#6d597a"     # missed operation (drawn below the axis, dotted)
MARK_DAYOFF = "#e59400"    # holiday / closure marks under the date axis
GRID = "#c9ced6"
TEXT = "#333a44"

HOUR_PX = 8.0               # carpet plot: pixels per hour of the day
PLOT_W = 720.0              # target width of the plot area [px]
COL_MIN, COL_MAX = 1.6, 28.0  # limits of a day column's width [px]
LEFT, TOP = 40.0, 22.0      # margins for labels [px]
MIN_W = 240.0               # narrowest picture, room for its caption [px]
SIDES_MIN_PX = 12.0         # outlines get sides only on columns at least this wide [px]
MIN_PER_DAY = 1440.0


def column_width(ndays: int) -> float:
    """Width of one day column [px] for ``ndays`` columns."""
    return float(min(COL_MAX, max(COL_MIN, PLOT_W / max(ndays, 1))))


def day_pieces(start: pd.Series, end: pd.Series, tz: str, first: dt.date,
               ndays: int) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Cut intervals at local midnights into per-day pieces on the wall clock.

    Parameters
    ----------
    start, end : Series of datetime64[ns, UTC]
        Interval edges (half-open).
    tz : str
        IANA zone of the local clock.
    first : date
        Local date of column 0.
    ndays : int
        Number of day columns; pieces outside ``0 .. ndays-1`` are dropped.

    Returns
    -------
    row, day, y0, y1 : ndarray
        Index of the source interval, day column, and the piece's wall-clock start and end
        within the day [min, 0-1440].
    """
    if len(start) == 0:
        empty = np.zeros(0)
        return empty.astype(int), empty.astype(int), empty, empty
    origin = pd.Timestamp(first).as_unit("ns").value
    s = (pd.DatetimeIndex(start).tz_convert(tz).tz_localize(None).as_unit("ns").asi8 - origin)
    e = (pd.DatetimeIndex(end).tz_convert(tz).tz_localize(None).as_unit("ns").asi8 - origin)
    s = s / 6e10
    e = e / 6e10
    # a piece inside the repeated autumn hour can end "before" it starts on the wall clock
    keep = np.flatnonzero(e > s)
    s, e = s[keep], e[keep]
    d0 = np.floor(s / MIN_PER_DAY).astype(np.int64)
    d1 = np.floor((e - 1e-9) / MIN_PER_DAY).astype(np.int64)
    d0c = np.maximum(d0, 0)
    d1c = np.minimum(d1, ndays - 1)
    n = np.maximum(d1c - d0c + 1, 0)
    rows = np.repeat(np.arange(len(s)), n)
    offs = np.arange(int(n.sum())) - np.repeat(np.cumsum(n) - n, n)
    day = d0c[rows] + offs
    base = day * MIN_PER_DAY
    y0 = np.maximum(s[rows], base) - base
    y1 = np.minimum(e[rows], base + MIN_PER_DAY) - base
    ok = y1 > y0
    return keep[rows][ok], day[ok], y0[ok], y1[ok]


def _num(values: np.ndarray) -> list[str]:
    """Numbers to short text with one decimal at most (0.1 px is under a minute on the plots)."""
    n = np.rint(np.asarray(values, dtype=float) * 10).astype(np.int64).ravel()
    if n.size == 0:
        return []
    uniq, inverse = np.unique(n, return_inverse=True)     # pixels repeat: format each once
    sign = np.where(uniq < 0, "-", "").tolist()
    u = np.abs(uniq)
    whole, tenth = (u // 10).tolist(), (u % 10).tolist()
    text = np.array([f"{s}{w}.{t}" if t else f"{s}{w}"
                     for s, w, t in zip(sign, whole, tenth, strict=True)], dtype=object)
    return text[inverse].tolist()


def rect_path(x: np.ndarray, y: np.ndarray, w: float | np.ndarray, h: np.ndarray) -> str:
    """Rectangles as sub-paths of one SVG path ``d`` attribute."""
    w = np.broadcast_to(np.asarray(w, dtype=float), np.shape(x))
    xs, ys, ws, hs = _num(x), _num(y), _num(w), _num(h)
    return "".join(f"M{a} {b}h{c}v{d}h-{c}z" for a, b, c, d in zip(xs, ys, ws, hs, strict=True))


def _hlines(x: np.ndarray, y: np.ndarray, w: float) -> str:
    xs, ys, ws = _num(x), _num(y), _num(np.full(len(x), w))
    return "".join(f"M{a} {b}h{c}" for a, b, c in zip(xs, ys, ws, strict=True))


def _defs(pid: str) -> str:
    return (
        f'<defs><pattern id="{pid}-nd" width="4" height="4" patternUnits="userSpaceOnUse" '
        f'patternTransform="rotate(45)"><rect width="4" height="4" fill="#fff"/>'
        f'<line x1="0" y1="0" x2="0" y2="4" stroke="{HATCH_NODATA}" stroke-width="1.6"/>'
        f'</pattern><pattern id="{pid}-os" width="5" height="5" patternUnits="userSpaceOnUse" '
        f'patternTransform="rotate(-45)"><rect width="5" height="5" fill="{BAR_OFFSCHED}"/>'
        f'<line x1="0" y1="0" x2="0" y2="5" stroke="#fff" stroke-width="1.3"/></pattern>'
        f'<pattern id="{pid}-ms" width="4" height="4" patternUnits="userSpaceOnUse">'
        f'<rect width="4" height="4" fill="#fff"/><circle cx="2" cy="2" r="1.2" '
        f'fill="{BAR_MISSED}"/></pattern></defs>'
    )


DAILY_LABELS_MAX_DAYS = 31   # a label under every day up to a month, else every Monday
MONDAY_LABEL_PX = 40.0       # least room between two Monday labels [px]
# (common practice, no source: a calendar month is what a monthly audit reads day by day)


def _date_axis(first: dt.date, ndays: int, cw: float, y: float) -> str:
    """Tick labels under the date axis: every day for windows up to
    :data:`DAILY_LABELS_MAX_DAYS`, else every Monday (every second or fourth where columns are
    narrow), with the month names on a second line."""
    parts = []
    dates = [first + dt.timedelta(days=i) for i in range(ndays)]
    if ndays <= DAILY_LABELS_MAX_DAYS:
        wide = cw >= 50
        for i, d in enumerate(dates):
            label = d.strftime("%a %d %b") if wide else d.strftime("%d")
            x = LEFT + (i + 0.5) * cw
            size = "" if cw >= 14 else ' font-size="8"'
            weight = ' font-weight="600"' if d.weekday() == 0 else ""
            parts.append(f'<text x="{x:.1f}" y="{y:.1f}" text-anchor="middle"{size}{weight}>'
                         f'{label}</text>')
    else:
        every = next((k for k in (1, 2, 4, 8) if 7 * cw * k >= MONDAY_LABEL_PX), 13)
        mondays = [i for i, d in enumerate(dates) if d.weekday() == 0]
        for n, i in enumerate(mondays):
            x = LEFT + i * cw
            parts.append(f'<line x1="{x:.1f}" y1="{y - 10:.1f}" x2="{x:.1f}" '
                         f'y2="{y - 7:.1f}" stroke="{TEXT}"/>')
            if n % every == 0 and (ndays - i) * cw > 14:
                parts.append(f'<text x="{x:.1f}" y="{y:.1f}" text-anchor="middle">'
                             f'{dates[i].strftime("%d")}</text>')
    for i, d in enumerate(dates):
        if (d.day == 1 or i == 0) and (ndays - i) * cw > 24:
            x = LEFT + i * cw
            label = d.strftime("%b %Y" if d.month == 1 or i == 0 else "%b")
            parts.append(f'<line x1="{x:.1f}" y1="{y + 3:.1f}" x2="{x:.1f}" y2="{y + 12:.1f}" '
                         f'stroke="{GRID}"/><text x="{x + 2:.1f}" y="{y + 12:.1f}">{label}'
                         f'</text>')
    return "".join(parts)


def _days_off_marks(days_off: pd.DataFrame | None, first: dt.date, ndays: int, cw: float,
                    y: float) -> str:
    if days_off is None or len(days_off) == 0:
        return ""
    parts = []
    for row in days_off.itertuples(index=False):
        i = (row.date - first).days
        if 0 <= i < ndays:
            kind = "closure" if getattr(row, "kind", "") == "closure" else "holiday"
            tip = escape(f"{row.date.isoformat()}: {row.name} ({kind})")
            parts.append(f'<rect x="{LEFT + i * cw:.2f}" y="{y:.1f}" width="{max(cw, 2):.2f}" '
                         f'height="6" fill="{MARK_DAYOFF}"><title>{tip}</title></rect>')
    return "".join(parts)


def svg_open(cls: str, width: float, height: float, title: str) -> str:
    """The opening tag and accessible title of one inline chart (``title`` escaped here)."""
    return (f'<svg xmlns="http://www.w3.org/2000/svg" class="{cls}" role="img" '
            f'viewBox="0 0 {width:.0f} {height:.0f}" width="{width:.0f}" height="{height:.0f}" '
            f'aria-label="{escape(title)}"><title>{escape(title)}</title>')


def carpet_svg(runs: pd.DataFrame, schedule: pd.DataFrame | None, days_off: pd.DataFrame | None,
               *, tz: str, first: dt.date, last: dt.date, title: str, pid: str) -> str:
    """Carpet plot of one component: a column per local date, wall-clock hour down the side.

    Parameters
    ----------
    runs : DataFrame
        ``start``, ``end`` (UTC) and ``state`` (run / off / no_data) of one component.
    schedule : DataFrame or None
        The unit's intended intervals, ``start``, ``end`` (UTC), ``kind``; occupied periods are
        outlined (top and bottom edges, and sides where columns are wide enough).
    days_off : DataFrame or None
        ``date``, ``name``, ``kind`` (holiday / closure), marked under the date axis.
    tz : str
        Site time zone.
    first, last : date
        Local dates of the first and last column (inclusive).
    title : str
        Accessible title (escaped here).
    pid : str
        Prefix for ids inside the SVG; unique within the page.

    Returns
    -------
    str
        An ``<svg>`` element.
    """
    ndays = (last - first).days + 1
    cw = column_width(ndays)
    ph = 24 * HOUR_PX
    width = max(LEFT + ndays * cw + 8, MIN_W)
    height = TOP + ph + 48
    k = HOUR_PX / 60.0
    out = [svg_open("chart carpet", width, height, title), _defs(pid),
           f'<g font-size="10" fill="{TEXT}">']
    # hour grid and labels
    for h in range(0, 25, 6):
        y = TOP + h * HOUR_PX
        out.append(f'<text x="{LEFT - 4}" y="{y + 3.5:.1f}" text-anchor="end">{h:02d}:00</text>')
    out.append("</g>")
    fills = {"off": TINT_OFF, "run": INK_RUN, "no_data": f"url(#{pid}-nd)"}
    if len(runs):
        rows, day, y0, y1 = day_pieces(runs["start"], runs["end"], tz, first, ndays)
        states = runs["state"].to_numpy()[rows].astype(object)
        if "speed" in runs.columns:   # running at reduced speed is shaded lighter
            sp = pd.to_numeric(runs["speed"], errors="coerce").to_numpy(dtype=float)
            top = np.nanmax(sp) if np.isfinite(sp).any() else np.nan
            low = (sp <= LOW_SHARE * top)[rows] & (states == "run")
            states[low] = "run_low"
        fills["run_low"] = INK_LOW
        for state in ("off", "no_data", "run", "run_low"):
            m = states == state
            if m.any():
                d = rect_path(LEFT + day[m] * cw, TOP + y0[m] * k, cw, (y1[m] - y0[m]) * k)
                out.append(f'<path class="st-{state}" fill="{fills[state]}" d="{d}"/>')
        if (states == "run_low").any():
            out.append(f'<rect x="{LEFT + 300}" y="3" width="10" height="10" fill="{INK_LOW}"/>'
                       f'<text x="{LEFT + 314}" y="12" font-size="10" fill="{TEXT}">running '
                       f'at reduced speed (at most {LOW_SHARE:.0%} of top speed)</text>')
    for h in (6, 12, 18):
        y = TOP + h * HOUR_PX
        out.append(f'<path d="M{LEFT} {y}h{ndays * cw:.1f}" stroke="#fff" stroke-opacity=".55" '
                   f'stroke-width=".6"/>')
    if schedule is not None and len(schedule):
        # units on one calendar share the outline: drawn once (keyed by the intervals)
        out.append(_schedule_outline(np.asarray(to_ns(schedule["start"])).tobytes(),
                                     np.asarray(to_ns(schedule["end"])).tobytes(),
                                     tuple(schedule["kind"].astype(str).tolist()), tz, first,
                                     ndays))
    out.append(f'<rect x="{LEFT}" y="{TOP}" width="{ndays * cw:.2f}" height="{ph}" fill="none" '
               f'stroke="{TEXT}" stroke-width=".6"/>')
    out.append(_days_off_marks(days_off, first, ndays, cw, TOP + ph + 3))
    out.append(f'<g font-size="10" fill="{TEXT}">{_date_axis(first, ndays, cw, TOP + ph + 21)}'
               f'</g>')
    mondays = "; dates mark Mondays" if ndays > DAILY_LABELS_MAX_DAYS else ""
    out.append(f'<text x="{LEFT}" y="12" font-size="10" fill="{TEXT}">local time, one column '
               f'per day{mondays}</text></svg>')
    return "".join(out)


@functools.lru_cache(maxsize=32)
def _schedule_outline(start: bytes, end: bytes, kinds: tuple[str, ...], tz: str,
                      first: dt.date, ndays: int) -> str:
    """The carpet's outline of intended intervals (``start``/``end`` as int64 ns bytes, UTC)."""
    cw, k = column_width(ndays), HOUR_PX / 60.0
    kind = np.array(kinds, dtype=object)
    starts = from_ns(np.frombuffer(start, dtype=np.int64))
    ends = from_ns(np.frombuffer(end, dtype=np.int64))
    out = []
    spare = kind != "occupied"
    _, day, y0, y1 = day_pieces(starts[spare], ends[spare], tz, first, ndays)
    if len(day):
        x = LEFT + day * cw
        if cw >= SIDES_MIN_PX:
            d = rect_path(x + 0.8, TOP + y0 * k, cw - 1.6, (y1 - y0) * k)
        else:
            d = _hlines(x, TOP + y0 * k, cw) + _hlines(x, TOP + y1 * k, cw)
        out.append(f'<path class="allowance" d="{d}" fill="none" stroke="{LINE_ALLOW}" '
                   f'stroke-width=".9" stroke-dasharray="2 1.5"/>')
    occ = kind == "occupied"
    _, day, y0, y1 = day_pieces(starts[occ], ends[occ], tz, first, ndays)
    if len(day):
        x = LEFT + day * cw
        if cw >= SIDES_MIN_PX:
            d = rect_path(x + 0.6, TOP + y0 * k, cw - 1.2, (y1 - y0) * k)
            under, over = 1.9, 1.0
        else:  # narrow columns: start and stop edges only, drawn bolder
            d = _hlines(x, TOP + y0 * k, cw) + _hlines(x, TOP + y1 * k, cw)
            under, over = 2.8, 1.5
        # two-tone line: the dark underlay shows on pale "off", the amber on dark "run",
        # so the outline survives grey-scale print on both
        out.append(f'<path d="{d}" fill="none" stroke="{LINE_UNDER}" stroke-width="{under}"/>'
                   f'<path class="occupied" d="{d}" fill="none" stroke="{LINE_OCCUPIED}" '
                   f'stroke-width="{over}"/>')
    return "".join(out)


def daily_bars_svg(daily: pd.DataFrame, *, first: dt.date, last: dt.date, title: str,
                   pid: str) -> str:
    """Daily stacked bars of one component: in schedule, allowance or allowed, off-schedule.

    Missed operation (occupied hours known to be off) hangs below the axis.

    Parameters
    ----------
    daily : DataFrame
        Rows of ``daily.csv`` for one component: ``date`` and the ``*_h`` columns [h].
    first, last : date
        Local dates of the first and last bar (inclusive).
    title : str
        Accessible title (escaped here).
    pid : str
        Prefix for ids inside the SVG; unique within the page.
    """
    ndays = (last - first).days + 1
    cw = column_width(ndays)
    ph = 24 * HOUR_PX * 0.6          # 24 h of bar height
    day = np.array([(d - first).days for d in daily["date"]], dtype=int)
    ok = (day >= 0) & (day < ndays)
    day = day[ok]
    col = {c: daily[c].fillna(0).to_numpy(dtype=float)[ok]
           for c in ("in_schedule_h", "in_allowance_h", "off_schedule_h", "missed_h")}
    top = max(24.0, float((col["in_schedule_h"] + col["in_allowance_h"]
                           + col["off_schedule_h"]).max(initial=0)))
    missed_max = float(col["missed_h"].max(initial=0))
    # room below the axis for the longest missed bar at the same scale (a whole missed day
    # is as long as a whole day running), so no bar runs into the date labels
    below = missed_max / top * ph
    k = ph / top
    base_y = TOP + ph
    width = max(LEFT + ndays * cw + 8, MIN_W)
    height = base_y + below + 44
    bw = max(cw * 0.8, min(cw, 1.2))
    x = LEFT + day * cw + (cw - bw) / 2
    out = [svg_open("chart bars", width, height, title), _defs(pid),
           f'<g font-size="10" fill="{TEXT}">']
    for h in (0, 6, 12, 18, 24):
        if h <= top:
            y = base_y - h * k
            out.append(f'<path d="M{LEFT} {y:.1f}h{ndays * cw:.1f}" stroke="{GRID}" '
                       f'stroke-width=".6"/><text x="{LEFT - 4}" y="{y + 3.5:.1f}" '
                       f'text-anchor="end">{h} h</text>')
    out.append("</g>")
    acc = np.zeros(len(day))
    for name, fill in (("in_schedule_h", BAR_IN), ("in_allowance_h", BAR_ALLOW),
                       ("off_schedule_h", f"url(#{pid}-os)")):
        v = col[name]
        m = v > 0
        if m.any():
            y = base_y - (acc[m] + v[m]) * k
            d = rect_path(x[m], y, bw, v[m] * k)
            out.append(f'<path class="bar-{name[:-2]}" fill="{fill}" d="{d}"/>')
        acc = acc + v
    m = col["missed_h"] > 0
    if m.any():
        d = rect_path(x[m], np.full(int(m.sum()), base_y), bw, col["missed_h"][m] * k)
        out.append(f'<path class="bar-missed" fill="url(#{pid}-ms)" stroke="{BAR_MISSED}" '
                   f'stroke-width=".5" d="{d}"/>')
    out.append(f'<path d="M{LEFT} {base_y:.1f}h{ndays * cw:.1f}" stroke="{TEXT}" '
               f'stroke-width=".8"/>')
    out.append(f'<g font-size="10" fill="{TEXT}">'
               f'{_date_axis(first, ndays, cw, base_y + below + 24)}</g>')
    out.append(f'<text x="{LEFT}" y="12" font-size="10" fill="{TEXT}">hours per day</text>'
               f'</svg>')
    return "".join(out)


def legend_svg(pid: str) -> str:
    """A small legend of every mark the two charts use, for the top of the charts section."""
    items = [
        (INK_RUN, "running", None), (TINT_OFF, "off", None), (f"url(#{pid}-nd)", "no data", None),
        (TINT_OFF, "occupied period (outline)", LINE_OCCUPIED), (BAR_IN, "in schedule", None),
        (BAR_ALLOW, "allowance, allowed window (dotted)", None),
        (f"url(#{pid}-os)", "off-schedule running", None),
        (f"url(#{pid}-ms)", "missed (below the axis)", None),
        (MARK_DAYOFF, "holiday or closure (under the dates)", None),
    ]
    out = [f'<svg xmlns="http://www.w3.org/2000/svg" class="legend" role="img" '
           f'viewBox="0 0 720 64" width="720" height="64" aria-label="legend">{_defs(pid)}'
           f'<g font-size="11" fill="{TEXT}">']
    for i, (fill, label, stroke) in enumerate(items):
        x = 4 + (i % 3) * 240
        y = 4 + (i // 3) * 20
        box = f'<rect x="{x}" y="{y}" width="14" height="12" fill="{fill}"'
        if stroke:
            out.append(f'{box} stroke="{LINE_UNDER}" stroke-width="2.6"/><rect x="{x}" y="{y}" '
                       f'width="14" height="12" fill="none" stroke="{stroke}" stroke-width="1.2"/>')
        elif fill == BAR_ALLOW:
            out.append(f'{box} stroke="{LINE_ALLOW}" stroke-dasharray="2 1.5"/>')
        else:
            out.append(f'{box} stroke="{GRID}"/>')
        out.append(f'<text x="{x + 19}" y="{y + 10}">{label}</text>')
    out.append("</g></svg>")
    return "".join(out)
