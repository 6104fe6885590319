"""The report's evidence pack: a close-up strip per finding, the provenance block and the page
footer text, all computed from the saved audit folder (no HTML templates here).
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
from markupsafe import Markup

from schedcheck.audit.evidence import (
    STRIP_CONTEXT,
    STRIP_LONGEST,
    costliest_first,
    finding_components,
    finding_keys,
    strip_focus,
    strip_window,
)
from schedcheck.intervals import to_ns
from schedcheck.outputs.saved import SavedAudit
from schedcheck.outputs.strip_svg import interval_columns, strip_svg


def anchor(key: str) -> str:
    """An HTML id for a finding's close-up (letters, digits and dashes only)."""
    return "ev-" + re.sub(r"[^A-Za-z0-9-]+", "-", str(key)).strip("-")


def _window(data: SavedAudit) -> tuple[pd.Timestamp, pd.Timestamp]:
    p = data.summary["period"]
    return (pd.Timestamp(p["start"]).tz_convert("UTC"), pd.Timestamp(p["end"]).tz_convert("UTC"))


def _marks(threshold: dict) -> list[float]:
    """The on/off level first, then the hysteresis levels where they differ from it."""
    out = []
    for key in ("level", "on_level", "off_level"):
        v = threshold.get(key)
        if v is not None and v > 0 and all(abs(v - m) > 1e-9 * max(v, 1) for m in out):
            out.append(float(v))
    return out


def evidence_strips(data: SavedAudit, comps: dict[str, dict], labels: dict[str, str],
                    span_text) -> list[dict]:
    """One entry per finding with saved levels, costliest first.

    Parameters
    ----------
    data : SavedAudit
        The saved folder (its ``levels`` may be None: then no strips).
    comps : dict
        Component id -> the report's component row (``threshold``, ``unit``).
    labels : dict
        Finding kind -> plain label.
    span_text : callable
        ``(start, end, tz) -> (from, to)`` text, as the findings table writes it.
    """
    levels, f = data.levels, data.findings
    if levels is None or len(levels) == 0 or len(f) == 0:
        return []
    keys = finding_keys(f)
    by_key = levels.groupby("finding", sort=False).indices      # key -> row positions
    lv_comp = levels["component"].to_numpy(dtype=object)
    lv_time = np.asarray(to_ns(levels["time"]))
    lv_level = levels["level"].to_numpy(float)
    runs = interval_columns(data.runs, "state")
    runs["component"] = data.runs["component"].to_numpy(dtype=object)
    sched_all = interval_columns(data.schedule, "kind")
    sched_all["unit"] = data.schedule["unit"].to_numpy(dtype=object)
    w0, w1 = _window(data)
    tz = data.timezone
    unit_word = data.summary["site"].get("reading_unit") or ""
    out = []
    for pos in costliest_first(f):
        key = keys[int(pos)]
        if key not in by_key:
            continue
        row = f.iloc[int(pos)]
        ids = finding_components(row)
        mine_runs = (runs["component"] == ids[0]) & (runs["state"] == "run")
        focus = strip_focus(row["kind"], row["start"], row["end"],
                            np.sort(runs["start"][mine_runs]))
        a, b = strip_window(row["start"], row["end"], w0, w1, focus=focus)
        a_ns, b_ns = int(to_ns(a)), int(to_ns(b))
        shown_end = min(row["end"], focus + STRIP_LONGEST)
        unit = (comps.get(ids[0]) or {}).get("unit") or ids[0].split("/")[0]
        sched = _rows(sched_all, (sched_all["unit"] == unit) & (sched_all["end"] > a_ns)
                      & (sched_all["start"] < b_ns))
        lv = by_key[key]
        rows = []
        for cid in ids:
            mine = lv[lv_comp[lv] == cid]
            th = (comps.get(cid) or {}).get("threshold") or {}
            rows.append({"id": cid, "runs": _rows(runs, (runs["component"] == cid)
                                                  & (runs["end"] > a_ns)
                                                  & (runs["start"] < b_ns)),
                         "time": lv_time[mine], "level": lv_level[mine], "marks": _marks(th)})
        kind = labels.get(row["kind"], row["kind"])
        when = span_text(row["start"], row["end"], tz)
        title = f"{', '.join(ids)}: {kind}, {when[0]} to {when[1]}"
        out.append({
            "key": key, "anchor": anchor(key), "components": ids, "kind": kind,
            "when": when, "shown": span_text(a, b, tz), "hours": row["hours"],
            "kwh": row["kwh"], "cost": row.get("cost"), "detail": row.get("detail", ""),
            "cut": bool(row["end"] > shown_end or focus > row["start"]),
            "svg": Markup(strip_svg(a=a, b=b, span=(max(row["start"], a), shown_end), tz=tz,
                                    schedule=sched, rows=rows, title=title,
                                    pid=anchor(key), unit=unit_word)),
        })
    return out


def _rows(cols: dict[str, np.ndarray], keep: np.ndarray) -> dict[str, np.ndarray]:
    return {k: v[keep] for k, v in cols.items()}


def strip_settings() -> dict:
    """The strip's context and longest span, for the report's caption [h]."""
    return {"context_h": STRIP_CONTEXT / pd.Timedelta("1h"),
            "longest_h": STRIP_LONGEST / pd.Timedelta("1h")}


def css_string(text: str) -> Markup:
    """A CSS string literal of ``text``, safe inside ``<style>``: everything but letters,
    digits and spaces is written as a CSS hex escape ended by one space, which the escape
    consumes (CSS Syntax Level 3, section 4.3.7)."""
    body = "".join(c if (c.isalnum() or c == " ") else f"\\{ord(c):x} " for c in str(text))
    return Markup(f'"{body}"')


def provenance_rows(summary: dict) -> dict | None:
    """The provenance block's content: version, inputs (path, size, SHA-256), look-back and
    settings as ``name = value`` lines; None when the audit recorded none."""
    prov = summary.get("provenance")
    if not isinstance(prov, dict):
        return None
    inputs = [i for i in prov.get("inputs") or [] if isinstance(i, dict)]
    lines = []

    def walk(prefix: str, value) -> None:
        if isinstance(value, dict):
            for k, v in value.items():
                walk(f"{prefix}.{k}" if prefix else str(k), v)
        else:
            shown = "default" if value is None else (
                ", ".join(map(str, value)) if isinstance(value, list) else str(value))
            lines.append((prefix, shown or "–"))

    settings = dict(prov.get("settings") or {})
    units = settings.get("units")
    if isinstance(units, dict):   # each component's figures are in the report's own tables
        settings["units"] = {u: {k: v for k, v in (body or {}).items() if k != "components"}
                             for u, body in units.items()}
    walk("", settings)
    period = summary.get("period") or {}
    return {"version": prov.get("version", ""), "inputs": inputs,
            "total_bytes": sum(int(i.get("bytes") or 0) for i in inputs),
            "lookback": period.get("lookback_start") or prov.get("lookback_start"),
            "settings": lines}
