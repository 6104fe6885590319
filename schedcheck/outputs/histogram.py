"""A histogram picture of one component's vibration levels, as plain SVG text.

The x axis is the level on a log scale (ticks at 1-2-5 steps in the reading unit); the y axis
is the number of readings on a square-root scale, so that a small running group next to a
large stopped group stays visible. The on/off level is a solid line, the hysteresis band
between the off and on levels is shaded, and the source of the level is written beside it.
No plotting library: the report reuses :func:`histogram_svg` to embed the picture inline.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from html import escape
from pathlib import Path

import numpy as np

WIDTH, HEIGHT = 640, 300
LEFT, RIGHT, TOP, BOTTOM = 56, 16, 40, 46


def _fmt(v: float) -> str:
    return f"{v:.3g}"


def _ticks(lo: float, hi: float) -> list[float]:
    """1-2-5 ticks (as log10 values) between lo and hi (log10); only decades when wide."""
    steps = (1, 2, 5) if hi - lo <= 3 else (1,)
    out = []
    for d in range(math.floor(lo), math.ceil(hi) + 1):
        for s in steps:
            x = d + math.log10(s)
            if lo <= x <= hi:
                out.append(x)
    return out


def histogram_svg(
    counts: Sequence[float],
    edges_log10: Sequence[float],
    level: float,
    on_level: float,
    off_level: float,
    title: str,
    *,
    source: str | None = None,
    unit: str = "",
    floor: float | None = None,
) -> str:
    """An SVG picture of a level histogram with the on/off level and hysteresis band.

    Parameters
    ----------
    counts : sequence of float
        Readings per bin [-].
    edges_log10 : sequence of float
        Bin edges, ``len(counts) + 1``, as log10 of the level [log10 reading unit].
    level, on_level, off_level : float
        On/off level and the hysteresis levels [reading unit]; NaN or <= 0 to leave out.
    title : str
        Heading (escaped here).
    source : str, optional
        ``learned``, ``configured`` or ``floor``; written beside the level line.
    unit : str
        Reading unit label for the axis, e.g. ``mm/s``.
    floor : float, optional
        The absolute floor level, drawn as a dashed line [reading unit].

    Returns
    -------
    str
        A complete ``<svg>`` element (UTF-8 text, no external references).
    """
    c = np.asarray(counts, dtype=float)
    e = np.asarray(edges_log10, dtype=float)
    if e.size != c.size + 1 or c.size == 0:
        raise ValueError("edges_log10 must have one more entry than counts")
    pw, ph = WIDTH - LEFT - RIGHT, HEIGHT - TOP - BOTTOM
    x0, x1 = float(e[0]), float(e[-1])
    top = math.sqrt(max(float(c.max()), 1.0))

    def X(v: float) -> float:
        return LEFT + (v - x0) / (x1 - x0) * pw

    def Y(n: float) -> float:
        return TOP + ph - math.sqrt(max(n, 0.0)) / top * ph

    out = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH}" height="{HEIGHT}" '
           f'viewBox="0 0 {WIDTH} {HEIGHT}" font-family="sans-serif" font-size="11">',
           f'<title>{escape(title)}</title>',
           f'<rect x="0" y="0" width="{WIDTH}" height="{HEIGHT}" fill="#ffffff"/>',
           f'<text x="{LEFT}" y="18" font-size="13" font-weight="bold">{escape(title)}</text>']

    def ok(v: float) -> bool:
        return v is not None and np.isfinite(v) and v > 0

    if ok(on_level) and ok(off_level):
        a, b = X(max(math.log10(off_level), x0)), X(min(math.log10(on_level), x1))
        if b > a:
            out.append(f'<rect x="{a:.1f}" y="{TOP}" width="{b - a:.1f}" height="{ph}" '
                       'fill="#e8e0c8"><title>hysteresis band: off below '
                       f'{_fmt(off_level)}, on above {_fmt(on_level)}</title></rect>')
    for i, n in enumerate(c):
        if n <= 0:
            continue
        a, b = X(e[i]), X(e[i + 1])
        out.append(f'<rect x="{a:.1f}" y="{Y(n):.1f}" width="{max(b - a - 0.6, 0.6):.1f}" '
                   f'height="{TOP + ph - Y(n):.1f}" fill="#5a6f86"><title>'
                   f'{_fmt(10 ** e[i])} to {_fmt(10 ** e[i + 1])}: {int(n)} readings'
                   '</title></rect>')
    # axes and ticks
    out.append(f'<line x1="{LEFT}" y1="{TOP + ph}" x2="{LEFT + pw}" y2="{TOP + ph}" '
               'stroke="#333"/>')
    out.append(f'<line x1="{LEFT}" y1="{TOP}" x2="{LEFT}" y2="{TOP + ph}" stroke="#333"/>')
    for t in _ticks(x0, x1):
        x = X(t)
        out.append(f'<line x1="{x:.1f}" y1="{TOP + ph}" x2="{x:.1f}" y2="{TOP + ph + 4}" '
                   'stroke="#333"/>')
        out.append(f'<text x="{x:.1f}" y="{TOP + ph + 16}" text-anchor="middle">'
                   f'{_fmt(10 ** t)}</text>')
    for frac in (0.25, 1.0):
        n = (frac * top) ** 2
        y = Y(n)
        out.append(f'<text x="{LEFT - 4}" y="{y + 4:.1f}" text-anchor="end">{n:.0f}</text>')
    label = f"level [{escape(unit)}], log scale" if unit else "level, log scale"
    out.append(f'<text x="{LEFT + pw / 2:.1f}" y="{HEIGHT - 8}" text-anchor="middle">'
               f'{label}</text>')
    out.append(f'<text x="14" y="{TOP + ph / 2:.1f}" text-anchor="middle" '
               f'transform="rotate(-90 14 {TOP + ph / 2:.1f})">readings (square-root scale)</text>')
    same = ok(level) and floor is not None and ok(floor) and abs(floor / level - 1) < 0.01
    if floor is not None and ok(floor) and x0 <= math.log10(floor) <= x1 and not same:
        x = X(math.log10(floor))
        out.append(f'<line x1="{x:.1f}" y1="{TOP}" x2="{x:.1f}" y2="{TOP + ph}" stroke="#666" '
                   'stroke-dasharray="4 3"/>')
        out.append(f'<text x="{x + 3:.1f}" y="{TOP + 12}" fill="#666">floor {_fmt(floor)}</text>')
    if ok(level):
        lv = math.log10(level)
        if x0 <= lv <= x1:
            x = X(lv)
            words = f"on/off level {_fmt(level)}" + (f" ({escape(source)})" if source else "")
            anchor, dx = ("start", 4) if x < LEFT + pw * 0.7 else ("end", -4)
            out.append(f'<line x1="{x:.1f}" y1="{TOP - 6}" x2="{x:.1f}" y2="{TOP + ph}" '
                       'stroke="#a0281e" stroke-width="2"/>')
            out.append(f'<text x="{x + dx:.1f}" y="{TOP - 8}" text-anchor="{anchor}" '
                       f'fill="#a0281e">{words}</text>')
    out.append("</svg>")
    return "\n".join(out) + "\n"


def write_histogram(path: str | Path, svg: str) -> Path:
    """Write one picture (creating its folder); returns the path."""
    p = Path(path)
    p.parent.mkdir(parents=True, exist_ok=True)
    p.write_text(svg, encoding="utf-8")
    return p
