"""The report's trends: for each component with a ``command``, a strip under its carpet plot
with the command, the status and the running side by side, and a short table of the
disagreements (the findings ``hand_mode``, ``failed_start``, ``false_status``).

Drawn from the saved files alone (``trends.csv``, ``runs.csv``, ``summary.json``); a folder
without ``trends.csv`` (a site without trends, or an older audit) gets no strip. Every text
from the files is escaped. Grey print stays readable: on is dark, off is white, unknown (or no
data) is hatched, and each disagreement is marked with a letter under its date.
"""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import numpy as np
import pandas as pd
from markupsafe import Markup, escape

from schedcheck.errors import InputError
from schedcheck.findings.kinds import DIAGNOSIS_KINDS
from schedcheck.outputs.saved import SavedAudit, _load_csv, _parse_instants
from schedcheck.outputs.svg import (
    HATCH_NODATA,
    INK_RUN,
    LEFT,
    MIN_W,
    TEXT,
    column_width,
    day_pieces,
    svg_open,
)
from schedcheck.outputs.trends_files import TREND_ROWS, TRENDS_FILE

TREND_KINDS = DIAGNOSIS_KINDS
MARKS = {"hand_mode": "H", "failed_start": "F", "false_status": "S"}
LANE_PX = 1.5            # pixels per hour of a lane: 36 px a day
LANE_GAP = 16.0         # room for the lane's name above it
TREND_STATES = ("on", "off", "unknown")


def read_trends_file(path: Path) -> pd.DataFrame | None:
    """``trends.csv`` with UTC ``start``/``end``, or None where the folder has none."""
    if not path.is_file():
        return None
    df = _load_csv(path)
    missing = [c for c in TREND_ROWS if c not in df.columns]
    if missing:
        raise InputError(f"header lacks column(s) {', '.join(missing)}", path=path, line=1)
    for col in ("start", "end"):
        df[col] = _parse_instants(df[col], path, col, blank_ok=False)
    bad = ~df["state"].isin(TREND_STATES).to_numpy()
    if bad.any():
        raise InputError(f"state {str(df['state'].iloc[int(bad.argmax())])[:20]!r} is not on, "
                         "off or unknown", path=path, line=int(bad.argmax()) + 2, key="state")
    return df


def _lane(pieces: list[tuple[pd.DataFrame, str]], tz: str, first: dt.date, ndays: int,
          cw: float, top: float, pid: str) -> list[str]:
    """One lane: white background, then each (intervals, fill) drawn per day column."""
    h = 24 * LANE_PX
    out = [f'<rect x="{LEFT}" y="{top:.1f}" width="{ndays * cw:.1f}" height="{h:.1f}" '
           f'fill="#fff" stroke="{TEXT}" stroke-width="0.5"/>']
    for frame, fill in pieces:
        if not len(frame):
            continue
        _, day, y0, y1 = day_pieces(frame["start"], frame["end"], tz, first, ndays)
        for d, a, b in zip(day.tolist(), y0.tolist(), y1.tolist(), strict=True):
            out.append(f'<rect x="{LEFT + d * cw:.1f}" y="{top + a / 60 * LANE_PX:.1f}" '
                       f'width="{cw:.1f}" height="{max((b - a) / 60 * LANE_PX, 0.3):.1f}" '
                       f'fill="{fill}"/>')
    return out


def strip_svg(lanes: list[tuple[str, list]], marks: list[tuple[int, str]], *, tz: str,
              first: dt.date, last: dt.date, title: str, pid: str) -> str:
    """The strip: one lane per signal (a column per local date, the hour of the day down each
    lane), and the disagreement marks under the dates."""
    ndays = (last - first).days + 1
    cw = column_width(ndays)
    lane_h = 24 * LANE_PX
    width = max(LEFT + ndays * cw + 8, MIN_W)
    height = len(lanes) * (lane_h + LANE_GAP) + 32
    out = [svg_open("chart trend-strip", width, height, title),
           f'<defs><pattern id="{pid}-uk" width="4" height="4" patternUnits="userSpaceOnUse" '
           f'patternTransform="rotate(45)"><rect width="4" height="4" fill="#fff"/>'
           f'<line x1="0" y1="0" x2="0" y2="4" stroke="{HATCH_NODATA}" stroke-width="1.6"/>'
           f'</pattern></defs>', f'<g font-size="10" fill="{TEXT}">']
    top = LANE_GAP
    for label, pieces in lanes:
        pieces = [(f, f"url(#{pid}-uk)" if fill == "hatch" else fill) for f, fill in pieces]
        out += _lane(pieces, tz, first, ndays, cw, top, pid)
        out.append(f'<text x="{LEFT}" y="{top - 4:.1f}">{escape(label)}</text>'
                   f'<text x="{LEFT - 4}" y="{top + 8:.1f}" text-anchor="end">00</text>'
                   f'<text x="{LEFT - 4}" y="{top + lane_h:.1f}" text-anchor="end">24</text>')
        top += lane_h + LANE_GAP
    for day, kind in marks:
        x = LEFT + (day + 0.5) * cw
        out.append(f'<text x="{x:.1f}" y="{top + 10:.1f}" text-anchor="middle" '
                   f'font-weight="bold">{MARKS[kind]}</text>')
    out.append(f'<text x="{LEFT}" y="{top + 24:.1f}">{first:%d %b %Y}</text>'
               f'<text x="{LEFT + ndays * cw:.1f}" y="{top + 24:.1f}" text-anchor="end">'
               f'{last:%d %b %Y}</text></g></svg>')
    return "".join(out)


def trend_sections(data: SavedAudit, comps: list[dict], labels: dict, span) -> None:
    """Set ``c["trends"]`` (Markup or None) on each component row of the report."""
    trends = read_trends_file(data.outdir / TRENDS_FILE)
    by_comp = {c["id"]: c for c in data.summary["components"]}
    for c in comps:
        c["trends"] = None
        rec = by_comp.get(c["id"]) or {}
        if trends is None or not isinstance(rec.get("trends"), dict):
            continue
        mine = trends[trends["component"] == c["id"]]
        c["trends"] = Markup(_section(data, c, rec, mine, labels, span))


def _section(data: SavedAudit, c: dict, rec: dict, mine: pd.DataFrame, labels, span) -> str:
    tz, first, last = data.timezone, data.first_date, data.last_date
    lanes = []
    for role in ("command", "status"):
        part = mine[mine["role"] == role]
        if not len(part):
            continue
        name = str(part["point"].iloc[0])
        lanes.append((f"{role}: {name}", [(part[part["state"] == "on"], INK_RUN),
                                         (part[part["state"] == "unknown"], "hatch")]))
    runs = data.runs[data.runs["component"] == c["id"]]
    lanes.append(("running (vibration)", [(runs[runs["state"] == "run"], INK_RUN),
                                          (runs[runs["state"] == "no_data"], "hatch")]))
    found = _disagreements(data, c["id"])
    marks = [((r["date"] - first).days, r["kind"]) for r in found]
    svg = strip_svg(lanes, marks, tz=tz, first=first, last=last, pid=c["pid"] + "t",
                    title=f"{c['id']}: command, status and running by local date and hour")
    h = rec.get("hours") or {}
    figs = [f"ran while commanded off <b>{_h(h.get('ran_while_commanded_off'))} h</b>",
            f"off while commanded on <b>{_h(h.get('off_while_commanded_on'))} h</b>",
            f"command unknown {_h(h.get('command_unknown'))} h"]
    if "status_disagrees" in h:
        figs += [f"status disagrees <b>{_h(h.get('status_disagrees'))} h</b>",
                 f"status unknown {_h(h.get('status_unknown'))} h"]
    out = ['<div class="trends"><p class="figs">Building-system trends · '
           + " · ".join(figs) + "</p>", svg,
           '<p class="note">Each lane has a column per day and the hour of the day downwards: '
           "dark is on (running), white is off, hatched is unknown (the point silent too long, "
           "or no vibration data). Letters under the dates: H ran while commanded off, F "
           "commanded on but not running, S status disagrees.</p>"]
    if found:
        out.append('<table class="trend-table"><thead><tr><th>Local time</th><th>Kind</th>'
                   '<th class="n">Hours</th><th>What to check</th></tr></thead><tbody>')
        for r in found:
            a, b = span(r["start"], r["end"], tz)
            out.append(f"<tr><td>{escape(a)} – {escape(b)}</td>"
                       f"<td>{escape(labels.get(r['kind'], r['kind']))}</td>"
                       f'<td class="n">{_h(r["hours"])}</td><td>{escape(r["detail"])}</td></tr>')
        out.append("</tbody></table>")
    else:
        out.append('<p class="note">No disagreement long enough to be a finding.</p>')
    out.append("</div>")
    return "".join(out)


def _h(x) -> str:
    return "–" if x is None or not np.isfinite(float(x)) else f"{float(x):,.1f}"


def _disagreements(data: SavedAudit, key: str) -> list[dict]:
    """This component's trend findings (its own part of each), in time order."""
    out = []
    tz = data.timezone
    for f in data.summary.get("findings") or []:
        if f.get("kind") not in TREND_KINDS or key not in (f.get("components") or []):
            continue
        part = next((p for p in f.get("parts") or [] if p.get("component") == key), f)
        try:
            a, b = pd.Timestamp(part["start"]).tz_convert("UTC"), pd.Timestamp(
                part["end"]).tz_convert("UTC")
        except (KeyError, ValueError, TypeError):
            continue
        detail = str(f.get("detail") or "") if f.get("component") == key else \
            f"{key}: part of {f.get('id')}: {f.get('detail') or ''}"
        out.append({"kind": f["kind"], "start": a, "end": b, "hours": part.get("hours"),
                    "date": a.tz_convert(tz).date(), "detail": detail})
    return sorted(out, key=lambda r: r["start"])
