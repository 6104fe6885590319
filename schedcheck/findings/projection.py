"""A yearly figure only from what recurs: repeated findings, with one-off events apart.

Scaling the whole window's cost to a year turns a one-off fault (a unit left on for four weeks)
into a yearly loss. :func:`project_year` scales only **recurring patterns**:

- A pattern is the findings of one unit and one kind. It recurs when they fall on at least
  ``recurring_dates`` local dates (default :data:`DEFAULT_RECURRING_DATES`) in at least
  ``recurring_weeks`` ISO weeks (default :data:`DEFAULT_RECURRING_WEEKS`): a nightly or
  weekly habit, not one burst. A single finding, however long (``continuous``,
  ``clock_offset``), is one-off by this rule; so is a run of nights inside one or two weeks.
- A recurring pattern's yearly cost is its cost in the window times 365 / the window's days;
  for ``holiday`` findings, its mean cost per finding times the days off (public holidays and
  closures) of the year that begins on the window's first date, since holidays do not fall
  evenly through the year.
- Everything else is one-off: its cost is shown apart and not scaled.

With no recurring pattern the yearly figure is None and ``basis`` says why, in plain words
(no pattern, or a window too short to show one). The later behaviour-episode work (CAPA) may
refine what "recurring" means; until then this rule is common practice, no source.
"""

from __future__ import annotations

import datetime as dt

import pandas as pd

from schedcheck.findings.kinds import DIAGNOSIS_KINDS

# A pattern recurs when its findings fall on this many local dates ... Common practice, no
# source: three is the least that is a habit rather than a coincidence (the same count as the
# early-start / late-stop repeat rule).
DEFAULT_RECURRING_DATES = 3
# ... in this many ISO weeks. Common practice, no source: a burst of nights in one week that
# then stops is an event, not a yearly pattern; three separate weeks show it comes back.
DEFAULT_RECURRING_WEEKS = 3
DAYS_PER_YEAR = 365


def _weeks(dates: list[dt.date]) -> int:
    return len({d.isocalendar()[:2] for d in dates})


def project_year(
    findings: pd.DataFrame,
    first: dt.date,
    last: dt.date,
    *,
    days_off_in_year: int | None = None,
    recurring_dates: int = DEFAULT_RECURRING_DATES,
    recurring_weeks: int = DEFAULT_RECURRING_WEEKS,
) -> dict:
    """The honest yearly projection of an audit's findings.

    Parameters
    ----------
    findings : DataFrame
        One row per unit finding: ``id, unit, kind, date`` (local ISO date), ``kwh`` [kWh],
        ``cost`` [currency].
    first, last : date
        The window's local dates, both inclusive.
    days_off_in_year : int, optional
        Public holidays and closure days in the 365 days from ``first``; without it a holiday
        pattern is scaled by the window's days like the others.
    recurring_dates, recurring_weeks : int
        The recurrence rule (see the module text).

    Returns
    -------
    dict
        ``yearly_cost`` and ``yearly_kwh`` (None without a recurring pattern), ``basis`` (one
        sentence), ``recurring`` (one entry per pattern: ``unit, kind, findings, dates, weeks,
        kwh, cost, yearly_kwh, yearly_cost, scaling, ids``), ``one_off_cost``,
        ``one_off_kwh`` and ``one_off`` (the ids).
    """
    ndays = (last - first).days + 1
    recurring, one_off = [], []
    if len(findings):   # the trends' diagnoses carry no energy: nothing of theirs to scale
        findings = findings[~findings["kind"].isin(DIAGNOSIS_KINDS)]
    if len(findings):
        f = findings.assign(day=[dt.date.fromisoformat(str(d)) for d in findings["date"]])
        for (unit, kind), part in f.groupby(["unit", "kind"], sort=True):
            dates = sorted(set(part["day"]))
            if len(dates) >= recurring_dates and _weeks(dates) >= recurring_weeks:
                kwh, cost = float(part["kwh"].fillna(0).sum()), float(part["cost"].fillna(0).sum())
                if kind == "holiday" and days_off_in_year is not None:
                    factor, scaling = days_off_in_year / len(part), (
                        f"per holiday or closure day ({days_off_in_year} in a year)")
                else:
                    factor, scaling = DAYS_PER_YEAR / ndays, f"per day of the {ndays}-day window"
                recurring.append({
                    "unit": unit, "kind": kind, "findings": len(part), "dates": len(dates),
                    "weeks": _weeks(dates), "kwh": kwh, "cost": cost,
                    "yearly_kwh": kwh * factor, "yearly_cost": cost * factor,
                    "scaling": scaling, "ids": part["id"].tolist()})
            else:
                one_off.append(part)
    off = pd.concat(one_off) if one_off else pd.DataFrame({"id": [], "kwh": [], "cost": []})
    out = {
        "yearly_cost": sum(r["yearly_cost"] for r in recurring) if recurring else None,
        "yearly_kwh": sum(r["yearly_kwh"] for r in recurring) if recurring else None,
        "recurring": sorted(recurring, key=lambda r: -r["yearly_cost"]),
        "one_off_cost": float(off["cost"].fillna(0).sum()),
        "one_off_kwh": float(off["kwh"].fillna(0).sum()),
        "one_off": sorted(off["id"].tolist()),
        "rule": {"recurring_dates": recurring_dates, "recurring_weeks": recurring_weeks},
    }
    out["basis"] = _basis(out, ndays, recurring_weeks)
    return out


def pattern_words(recurring: list[dict]) -> str:
    """The recurring patterns in words: ``AHU-1 holiday running on 6 dates in 4 weeks``."""
    return "; ".join(f"{r.get('unit')} {str(r.get('kind')).replace('_', ' ')} running on "
                     f"{r.get('dates')} dates in {r.get('weeks')} weeks" for r in recurring)


def _basis(p: dict, ndays: int, weeks: int) -> str:
    if p["recurring"]:
        n = len(p["recurring"])
        what = "1 recurring pattern is" if n == 1 else f"{n} recurring patterns are"
        return (f"Only {what} scaled to a year (a pattern: the same kind of finding on one unit "
                f"on {p['rule']['recurring_dates']} or more dates in {weeks} or more weeks); "
                "one-off events are shown apart and not scaled.")
    if ndays < 7 * (weeks - 1) + 1:
        return (f"No yearly figure: {ndays} days are too few to tell a recurring pattern from "
                f"a one-off event (a pattern must show in {weeks} separate weeks).")
    return ("No yearly figure: no finding recurs (the same kind on one unit on "
            f"{p['rule']['recurring_dates']} or more dates in {weeks} or more weeks); the "
            "findings are one-off events and are not scaled to a year.")
