"""One finding per unit and problem: the components of a unit that move together.

The finding rules run per component, so a unit whose supply and exhaust fans (and heat wheel)
are kept on by one time program gives one finding per component for one problem. The
:func:`group_by_unit` step joins them: findings of **one unit and one kind whose spans overlap,
or lie within** ``together`` **of each other** (default :data:`DEFAULT_TOGETHER`, the setting
``[findings] together``) are one finding. Joining is transitive (A with B and B with C make one).

The joined finding carries:

- ``id``: ``UNIT-KIND-YYYY-MM-DD`` from the unit, the kind and the local date it began (a
  second finding of the same unit, kind and date gets ``-2``, a third ``-3``, in order of
  start), so the same finding keeps its id when the audit window changes;
- ``unit``, ``components`` (the components involved, the unit's state component first) and
  ``component`` (the first of them, as interface.md section 4 asks for one);
- ``start`` / ``end``: the earliest start and the latest end of its parts;
- ``hours``: unit-hours, the longest of its parts' hours (a unit running off-schedule for an
  hour is one unit-hour however many of its components ran), and ``component_hours``, their sum;
- ``kwh``, ``cost``, ``co2_kg``: the sums of the parts, and ``parts``: each component's own
  ``component, start, end, hours, kwh, cost, co2_kg``;
- ``detail``: the sentence of the lead part (the state component's, else the longest), with
  the unit's energy and, where more than one component is involved, each one's energy.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from schedcheck.intervals import to_ns

# Findings of one unit and kind this close in time are one problem. Common practice, no
# source: fans of one unit that share a time program start and stop within a minute or two
# of each other; half an hour also joins a wheel that follows its fans with a delay, and is
# far shorter than the gap between two nights.
DEFAULT_TOGETHER = pd.Timedelta("30min")

#: Columns of :func:`group_by_unit`'s table, in order (more may follow).
#: Outdoor-air columns a finding carries where its unit prices outdoor air (summed over parts).
THERMAL_COLUMNS = ("heating_kwh", "cooling_kwh", "thermal_cost", "thermal_co2_kg")
GROUPED_COLUMNS = ("id", "unit", "component", "components", "kind", "start", "end", "date",
                   "hours", "component_hours", "kwh", "cost", "co2_kg", "detail", "parts")

PART_FIELDS = ("component", "start", "end", "hours", "kwh", "cost", "co2_kg")


def finding_id(unit: str, kind: str, date: str) -> str:
    """A readable id from the unit, the kind and the local date the finding began.

    Characters other than letters, digits, ``.``, ``_`` and ``-`` become ``-`` so the id is
    safe in a file name, a CSV cell and an iCalendar UID (RFC 5545 section 3.8.4.7 asks only
    for a globally unique text).
    """
    safe = re.sub(r"[^A-Za-z0-9._-]+", "-", str(unit)).strip("-") or "unit"
    return f"{safe}-{kind}-{date}"


def _groups(starts: np.ndarray, ends: np.ndarray, tol: int) -> list[list[int]]:
    """Indices (sorted by start) joined where a span begins within ``tol`` of the reach so far."""
    order = np.argsort(starts, kind="stable")
    out: list[list[int]] = []
    reach = None
    for i in order.tolist():
        if reach is not None and starts[i] <= reach + tol:
            out[-1].append(i)
            reach = max(reach, int(ends[i]))
        else:
            out.append([i])
            reach = int(ends[i])
    return out


def group_by_unit(
    findings: pd.DataFrame,
    unit_of: dict[str, str],
    lead_of: dict[str, str],
    tz: str,
    *,
    together: pd.Timedelta = DEFAULT_TOGETHER,
    describe=None,
) -> pd.DataFrame:
    """Join per-component findings into one finding per unit and problem.

    Parameters
    ----------
    findings : DataFrame
        Priced per-component findings: ``component, kind, start, end`` (UTC), ``hours`` [h],
        ``kwh`` [kWh], ``cost`` [currency], ``co2_kg`` [kg] and ``detail``; an optional
        ``detail_template`` (the sentence with ``{energy}`` still in it) and ``date`` (local
        ISO date the finding began; derived from ``start`` when absent).
    unit_of : dict
        Component key -> unit id.
    lead_of : dict
        Unit id -> its state component's key (the supply fan where it has one).
    tz : str
        The site's IANA zone (local dates of the ids).
    together : Timedelta
        Findings of one unit and kind whose spans overlap or lie this close are one [duration].
    describe : callable, optional
        ``describe(kwh, cost) -> str``: the words that replace ``{energy}`` in the sentence.

    Returns
    -------
    DataFrame
        :data:`GROUPED_COLUMNS`, one row per unit finding, sorted by start, unit and kind.
    """
    f = findings.reset_index(drop=True)
    if len(f) == 0:
        return pd.DataFrame({c: pd.Series([], dtype=object) for c in GROUPED_COLUMNS})
    if "date" not in f or f["date"].isna().any():
        f["date"] = [pd.Timestamp(s).tz_convert(tz).date().isoformat() for s in f["start"]]
    if "detail_template" not in f:
        f["detail_template"] = f["detail"] if "detail" in f else ""
    f["unit"] = f["component"].map(unit_of)
    s, e = np.asarray(to_ns(f["start"])), np.asarray(to_ns(f["end"]))
    tol = int(pd.Timedelta(together).value)
    cols = _Columns(f, s, e)
    rows: list[dict] = []
    for (_unit, _kind), part in f.groupby(["unit", "kind"], sort=False):
        idx = part.index.to_numpy()
        for g in _groups(s[idx], e[idx], tol):
            rows.append(_joined(cols, idx[g], lead_of, describe))
    out = pd.DataFrame(rows)
    out = out.sort_values(["start", "unit", "kind"], kind="stable").reset_index(drop=True)
    out["id"] = _ids(out)
    extra = [c for c in THERMAL_COLUMNS if c in out]
    return out[list(GROUPED_COLUMNS) + extra]


class _Columns:
    """The per-component findings' columns as arrays, taken once for every group (a group is
    a list of row positions; sums run over the rows in that order, NaN as 0, as pandas sums)."""

    def __init__(self, f: pd.DataFrame, s: np.ndarray, e: np.ndarray) -> None:
        self.start, self.end = f["start"], f["end"]
        self.s, self.e = s, e
        self.component = f["component"].to_numpy(dtype=object)
        self.unit = f["unit"].to_numpy(dtype=object)
        self.kind = f["kind"].to_numpy(dtype=object)
        self.date = f["date"].to_numpy(dtype=object)
        self.template = f["detail_template"].to_numpy(dtype=object)
        self.words = (f["thermal_words"].to_numpy(dtype=object) if "thermal_words" in f
                      else None)
        self.num = {c: f[c].to_numpy(dtype=float)
                    for c in ("hours", "kwh", "cost", "co2_kg", *THERMAL_COLUMNS) if c in f}

    def total(self, col: str, rows: np.ndarray, min_count: int = 0) -> float:
        """The sum of ``col`` over ``rows``, NaN as 0; NaN with fewer than ``min_count``
        numbers (as pandas' ``sum(min_count=...)``)."""
        vals = self.num[col][rows]
        if np.count_nonzero(~np.isnan(vals)) < min_count:
            return float("nan")
        return float(np.nansum(vals))


def _joined(c: _Columns, rows: np.ndarray, lead_of: dict[str, str], describe) -> dict:
    """One unit finding from the per-component rows ``rows`` (positions, in start order)."""
    unit = str(c.unit[rows[0]])
    lead_key = lead_of.get(unit)
    comp = c.component[rows]
    hours = c.num["hours"][rows]
    is_lead = comp == lead_key
    if is_lead.any():
        lead = int(rows[np.flatnonzero(is_lead)[0]])
    else:   # the longest, the earliest of equals (NaN hours last, as pandas sorts)
        order = sorted(range(len(rows)), key=lambda i: (bool(np.isnan(hours[i])),
                                                        -np.nan_to_num(hours[i]), c.s[rows[i]]))
        lead = int(rows[order[0]])
    comps = list(dict.fromkeys([c.component[lead]] + comp.tolist()))
    kwh, cost, co2 = (c.total(k, rows) for k in ("kwh", "cost", "co2_kg"))
    parts = []
    for key in comps:
        mine = rows[comp == key]
        parts.append({"component": key, "start": c.start.iloc[mine[np.argmin(c.s[mine])]],
                      "end": c.end.iloc[mine[np.argmax(c.e[mine])]],
                      "hours": c.total("hours", mine), "kwh": c.total("kwh", mine),
                      "cost": c.total("cost", mine), "co2_kg": c.total("co2_kg", mine)})
    detail = str(c.template[lead])
    # outdoor-air words (heating and cooling of the unit's outdoor air, on its supply fan)
    words = next((str(w) for w in c.words[rows] if w), "") if c.words is not None else ""
    if describe is not None:
        detail = detail.replace("{energy}", describe(kwh, cost, words) if words
                                else describe(kwh, cost))
    if len(comps) > 1:
        shown = ", ".join(
            f"{p['component']}" + (f" {p['kwh']:,.1f} kWh" if kwh > 0 else "") for p in parts)
        detail += f" Components involved: {shown}."
    return {"unit": unit, "component": comps[0], "components": comps, "kind": c.kind[lead],
            "start": c.start.iloc[rows[np.argmin(c.s[rows])]],
            "end": c.end.iloc[rows[np.argmax(c.e[rows])]], "date": c.date[rows[0]],
            # unit-hours: the longest component's hours (its pieces summed: a night split
            # at a holiday's midnight is one finding of both pieces)
            "hours": max(p["hours"] for p in parts), "component_hours": c.total("hours", rows),
            "kwh": kwh, "cost": cost, "co2_kg": co2, "detail": detail, "parts": parts,
            **{k: c.total(k, rows, min_count=1) for k in THERMAL_COLUMNS if k in c.num}}


def _ids(out: pd.DataFrame) -> list[str]:
    seen: dict[str, int] = {}
    ids = []
    for unit, kind, date in zip(out["unit"], out["kind"], out["date"], strict=True):
        base = finding_id(unit, kind, str(date))
        seen[base] = seen.get(base, 0) + 1
        ids.append(base if seen[base] == 1 else f"{base}-{seen[base]}")
    return ids
