"""The JSON form of a controls-change check (``schedcheck compare --format json``).

Interface section 5, with extra fields; figures are rounded for reading, with no negative zero.
"""

from __future__ import annotations

import json

from schedcheck.changes.compare import CompareResult
from schedcheck.outputs.episode_records import episode_records


def _round(x: float, digits: int) -> float:
    """Rounded, without a negative zero in the output."""
    return round(float(x), digits) + 0.0


def _component(c, price: float) -> dict:
    """One component's before, after, difference, change points and notes."""
    fig = c.figures
    side = {
        p: {k: _round(getattr(v, f"{p}_mean"), 3) for k, v in fig.items()}
        | {"days": c.days[p]["days"], "days_used": c.days[p]["used"],
           "days_no_data": c.days[p]["no_data"]}
        for p in ("before", "after")
    }
    diff = {}
    for k, v in fig.items():
        diff[k] = _round(v.difference, 3)
        name = "ci95" if k == "off_schedule_h_per_day" else f"{k}_ci95"
        diff[name] = [_round(v.ci95[0], 3), _round(v.ci95[1], 3)]
    if "kwh_per_day" in fig:
        per_year = fig["kwh_per_day"].difference * 365.0
        diff["kwh_per_year"] = _round(per_year, 1)
        diff["cost_per_year"] = _round(per_year * price, 1)
    return {
        "id": c.id, "unit": c.unit, "role": c.role,
        "before": side["before"], "after": side["after"], "difference": diff,
        "change_points": [
            {"date": p.date.isoformat(), "latest": p.latest.isoformat(),
             "before_mean": _round(p.before_mean, 3),
             "after_mean": _round(p.after_mean, 3)} for p in c.change_points],
        "episodes": episode_records(c.episodes),
        "changed_on": (None if c.dated is None else
                       {"date": c.dated.date.isoformat(), "how": c.dated.how,
                        **episode_records([c.dated.episode])[0]}),
        "notes": [str(n) for n in c.notes],
    }


def compare_json(result: CompareResult) -> dict:
    """The JSON form of ``result`` as plain dicts and lists (interface section 5)."""
    def iso(t):
        return t.tz_convert(result.timezone).isoformat()

    return {
        "change": result.change.isoformat(),
        "before": {"start": iso(result.before_start), "end": iso(result.change_start),
                   "days": result.before_days},
        "after": {"start": iso(result.change_start), "end": iso(result.after_end),
                  "days": result.after_days},
        "site": {"name": result.site_name, "timezone": result.timezone},
        "currency": result.currency,
        "components": [_component(c, result.price) for c in result.components],
        "warnings": list(result.warnings),
    }


def compare_json_text(result: CompareResult) -> str:
    """:func:`compare_json` as indented UTF-8 JSON text, ending with a newline."""
    return json.dumps(compare_json(result), indent=2, ensure_ascii=False) + "\n"
