"""The report's episodes chart: one component's daily off-schedule hours with its behaviour
episodes marked (interface.md section 10; :mod:`schedcheck.changes.episodes`).

Drawn from ``daily.csv`` and the component's ``episodes`` in ``summary.json`` alone, so
``schedcheck report`` redraws it. Readable in grey print: the daily hours are dark bars, a
collective episode a pale band with a hatched top edge and its dates written above it, a point
anomaly an open triangle over its day, and the usual level a dashed line; colour adds nothing
the shapes do not say.
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
from markupsafe import Markup, escape

from schedcheck.outputs.svg import (
    GRID,
    INK_RUN,
    LEFT,
    MIN_W,
    TEXT,
    _date_axis,
    column_width,
    rect_path,
    svg_open,
)

BAND = "#dfe3e8"          # a collective episode: pale grey band (our own choice)
EDGE = "#4a5260"          # its top edge and the point marks: dark grey
PLOT_H = 90.0             # height of the plot area [px]
TOP = 30.0                # room for the episode labels [px]


def episode_words(ep: dict) -> str:
    """"2026-04-20 .. 2026-05-17: 15.5 h a day (usual 0.0)" for one episode record."""
    span = ep["start"] if ep["start"] == ep["end"] else f"{ep['start']} .. {ep['end']}"
    return (f"{span}: {ep['mean_h_per_day']:.1f} h a day off schedule "
            f"(usual {ep['usual_h_per_day']:.1f})")


def episodes_svg(daily: pd.DataFrame, episodes: list[dict], *, first: dt.date, last: dt.date,
                 title: str, pid: str) -> str:
    """The chart as inline SVG text.

    Parameters
    ----------
    daily : DataFrame
        Rows of ``daily.csv`` for one component: ``date`` and ``off_schedule_h`` [h].
    episodes : list of dict
        The component's ``episodes`` records (``start``, ``end`` local ISO dates inclusive,
        ``kind``, ``mean_h_per_day``, ``usual_h_per_day``).
    first, last : date
        Local dates of the first and last day (inclusive).
    title : str
        Accessible title (escaped here).
    pid : str
        Prefix for ids inside the SVG; unique within the page.
    """
    ndays = (last - first).days + 1
    cw = column_width(ndays)
    day = np.array([(pd.Timestamp(d).date() - first).days for d in daily["date"]], dtype=int)
    hours = daily["off_schedule_h"].fillna(0).to_numpy(dtype=float)
    ok = (day >= 0) & (day < ndays)
    day, hours = day[ok], hours[ok]
    top = max(6.0, float(np.ceil(hours.max(initial=0) / 6.0) * 6.0))
    k = PLOT_H / top
    base_y = TOP + PLOT_H
    width = max(LEFT + ndays * cw + 8, MIN_W)
    height = base_y + 44
    out = [svg_open("chart episodes", width, height, title) +
           f'<defs><pattern id="{pid}-eh" width="4" height="4" patternUnits="userSpaceOnUse" '
           f'patternTransform="rotate(45)"><rect width="4" height="4" fill="{BAND}"/>'
           f'<line x1="0" y1="0" x2="0" y2="4" stroke="{EDGE}" stroke-width="1"/></pattern>'
           f'</defs>']
    collective = [e for e in episodes if e.get("kind") == "collective"]
    for i, ep in enumerate(collective):
        a = (dt.date.fromisoformat(ep["start"]) - first).days
        b = (dt.date.fromisoformat(ep["end"]) - first).days + 1
        a, b = max(a, 0), min(b, ndays)
        if b <= a:
            continue
        x0, w = LEFT + a * cw, (b - a) * cw
        out.append(f'<rect class="episode" x="{x0:.1f}" y="{TOP:.1f}" width="{w:.1f}" '
                   f'height="{PLOT_H:.1f}" fill="{BAND}"/><rect x="{x0:.1f}" y="{TOP - 5:.1f}" '
                   f'width="{w:.1f}" height="5" fill="url(#{pid}-eh)" stroke="{EDGE}" '
                   f'stroke-width=".6"/><text x="{x0 + 2:.1f}" y="{TOP - 8 - 10 * (i % 2):.1f}" '
                   f'font-size="10" fill="{TEXT}">{escape(_label(ep))}</text>')
        u = float(ep.get("usual_h_per_day") or 0.0)
        y = base_y - min(u, top) * k
        out.append(f'<path class="usual" d="M{LEFT} {y:.1f}h{ndays * cw:.1f}" stroke="{EDGE}" '
                   f'stroke-width=".8" stroke-dasharray="4 3"/>')
    out.append(f'<g font-size="10" fill="{TEXT}">')
    for h in np.linspace(0, top, 3):
        y = base_y - h * k
        out.append(f'<path d="M{LEFT} {y:.1f}h{ndays * cw:.1f}" stroke="{GRID}" '
                   f'stroke-width=".6"/><text x="{LEFT - 4}" y="{y + 3.5:.1f}" '
                   f'text-anchor="end">{h:g} h</text>')
    out.append("</g>")
    bw = max(cw * 0.8, min(cw, 1.2))
    m = hours > 0
    if m.any():
        x = LEFT + day[m] * cw + (cw - bw) / 2
        d = rect_path(x, base_y - hours[m] * k, bw, hours[m] * k)
        out.append(f'<path class="bar-off_schedule" fill="{INK_RUN}" d="{d}"/>')
    for ep in episodes:
        if ep.get("kind") != "point":
            continue
        a = (dt.date.fromisoformat(ep["start"]) - first).days
        if 0 <= a < ndays:
            cx = LEFT + (a + 0.5) * cw
            y = base_y - min(float(ep["mean_h_per_day"]), top) * k - 3
            out.append(f'<path class="point" d="M{cx - 3.5:.1f} {y - 6:.1f}h7l-3.5 6z" '
                       f'fill="#fff" stroke="{EDGE}" stroke-width="1"/>')
    out.append(f'<path d="M{LEFT} {base_y:.1f}h{ndays * cw:.1f}" stroke="{TEXT}" '
               f'stroke-width=".8"/><g font-size="10" fill="{TEXT}">'
               f'{_date_axis(first, ndays, cw, base_y + 24)}</g>'
               f'<text x="{LEFT}" y="10" font-size="10" fill="{TEXT}">off-schedule hours per '
               f'day; bands: episodes, triangles: odd days, dashed: usual level</text></svg>')
    return "".join(out)


def _label(ep: dict) -> str:
    return f"since {ep['start']}, {ep['mean_h_per_day']:.1f} h/day"


def add_episode_chart(comp: dict, summary: dict, daily: pd.DataFrame, first: dt.date,
                      last: dt.date) -> None:
    """Put the chart (``episodes_chart``) and the episodes in words (``episode_lines``) on one
    component's report row, from its record in ``summary.json``."""
    rec = next((c for c in summary.get("components", []) if c.get("id") == comp["id"]), {})
    eps = list(rec.get("episodes") or [])
    comp["episode_lines"] = [f"{'from' if e['kind'] == 'collective' else 'odd day'} "
                             f"{episode_words(e)}" for e in eps]
    comp["episodes_chart"] = Markup(episodes_svg(
        daily, eps, first=first, last=last, pid=comp["pid"] + "e",
        title=f"{comp['id']}: off-schedule hours per day and behaviour episodes"))
