"""Behaviour episodes of every component of an audit, and the findings that belong to them.

:func:`with_episodes` runs after the audit (:func:`schedcheck.audit.run.run_audit`): for each
component it takes the daily off-schedule hours of the audit's own daily rows, finds the
periods in which they departed from their usual level with CAPA
(:func:`schedcheck.changes.capa.daily_episodes`), keeps them on ``AuditResult.episodes``
(component key -> list of :class:`~schedcheck.changes.capa.Episode`) and marks each unit
finding that lies in a collective episode of more running than usual with its
``episode_start`` and ``episode_end`` (local dates, inclusive), adding "since ... / until ..."
to its sentence.

The series CAPA dates is not the plain off-schedule hours but the share of the time that could
be off-schedule that the unit ran, in hours of a usual day (:func:`dating_hours`). The plain
hours move with the calendar: a unit that runs around the clock has 24 off-schedule hours on a
Saturday and 12 on a working day, and fewer on the nights an allowed window exists (night
cooling allowed, say), since running in it conforms; dated on the plain hours, every weekend
and the first night of the window look like changes of behaviour when only the calendar
changed. So:

* each allowed window is filled in as the unit behaved next to it: the share of the possible
  (unscheduled) time within :data:`DATING_REACH` before and after the window that the unit ran
  off-schedule, times the window's length (a unit that ran straight through counts the window
  as running; one that was off around it and ran only inside it, as the window allows, counts
  nothing);
* the filled hours are divided by the day's time outside its occupied hours and allowances
  (allowed windows included), and multiplied by that time's median over the window.

The episode's ``mean_h_per_day`` and ``usual_h_per_day`` are the plain off-schedule hours.

Days with more than :data:`MAX_NO_DATA_H` of no data carry no figure (the usual level stands
in for them, no evidence either way), as in the compare command.
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd

from schedcheck.audit.accounting import ScheduleSets
from schedcheck.audit.run import AuditResult, ComponentResult
from schedcheck.changes.capa import Episode, daily_episodes
from schedcheck.intervals import NS_PER_H, Intervals, to_ns
from schedcheck.window import day_edges

#: How far on each side of an allowed window the unit's behaviour is read to fill the window
#: in [duration]: an hour, long enough to see whether the unit ran up to the window and on
#: after it, short enough to stay in the same night. Common practice, no source.
DATING_REACH = pd.Timedelta("1h")

#: A day with more hours than this of no data has no figure [h] (the compare command's rule,
#: :data:`schedcheck.changes.compare.MAX_NO_DATA_H`; common practice, no source).
MAX_NO_DATA_H = 2.0

#: Words for "the same again" by finding kind, for "every night since 2026-04-20".
PATTERN_WORDS = {"night": "every night", "weekend": "every weekend", "holiday": "on days off",
                 "continuous": "around the clock", "clock_offset": "every working day",
                 "early_start": "every working day",
                 "late_stop": "every working day", "short_cycling": "day after day",
                 "setback": "day after day", "over_speed": "day after day"}


def _between(iv: Intervals, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    return (iv.cumulative_ns(b) - iv.cumulative_ns(a)).astype(float)


def dating_hours(comp: ComponentResult, edges_ns: np.ndarray,
                 reach: pd.Timedelta = DATING_REACH) -> np.ndarray:
    """The series behaviour is dated on (module docstring) [h/day]: one figure per bin of
    ``edges_ns`` (local day edges, UTC ns); NaN on a day with no time outside its occupied
    hours and allowances."""
    return dating_series(comp.account.off_schedule, comp.account.schedule, edges_ns, reach)


def dating_series(off: Intervals, sc: ScheduleSets, edges_ns: np.ndarray,
                  reach: pd.Timedelta = DATING_REACH) -> np.ndarray:
    """:func:`dating_hours` from the off-schedule running ``off`` and the schedule ``sc``."""
    filled = off.ns_per_bin(edges_ns).astype(float)
    allowed = sc.allowed - sc.occupied - sc.allowance
    base = (sc.unscheduled | allowed).ns_per_bin(edges_ns).astype(float)
    if len(allowed):
        s, e, r = allowed.starts, allowed.ends, int(pd.Timedelta(reach).value)
        possible = sc.unscheduled
        ran = _between(off, s - r, s) + _between(off, e, e + r)
        could = _between(possible, s - r, s) + _between(possible, e, e + r)
        share = np.divide(ran, could, out=np.zeros_like(ran), where=could > 0)
        filled -= (off & allowed).ns_per_bin(edges_ns)   # what the window already counts
        for a, b, k in zip(s.tolist(), e.tolist(), share.tolist(), strict=True):
            if k > 0:
                filled += k * Intervals.from_arrays([a], [b]).ns_per_bin(edges_ns)
    out = np.full(base.size, np.nan)
    ok = base > 0
    if ok.any():
        out[ok] = filled[ok] / base[ok] * float(np.median(base[ok])) / NS_PER_H
    return out


def window_edges(dates: list[dt.date], result: AuditResult) -> np.ndarray:
    """The local day edges of ``dates`` (consecutive) as UTC ns, clipped to the audit window as
    the accounting's days are."""
    _, edges = day_edges(dates[0], dates[-1], result.site.timezone)
    return np.clip(to_ns(edges), to_ns(result.start), to_ns(result.end))


def component_episodes(comp: ComponentResult, result: AuditResult, **settings
                       ) -> list[Episode]:
    """The behaviour episodes of one component that reach into the audit window, local dates.

    Where the audit has a look-back (``result.reference``), the days before the window count
    too, so an episode that began before a month audited alone keeps its real start ("since
    when") and the month's usual level is that of the longer span; the off-schedule running of
    the look-back days is the running outside the occupied periods, allowances and allowed
    windows. Episodes that end before the window, and odd days before it, are left out.
    """
    daily = comp.daily
    dates = [pd.Timestamp(d).date() for d in daily["date"]]
    if not dates:
        return []
    edges_ns = window_edges(dates, result)
    hours = (daily["off_schedule_ns"] / NS_PER_H).to_numpy(dtype=float)
    no_data = (daily["no_data_ns"] / NS_PER_H).to_numpy(dtype=float)
    dating = dating_hours(comp, edges_ns)
    ref = result.reference.get(comp.key)
    if ref is not None and result.lookback_start is not None:
        tz = result.site.timezone
        first = pd.Timestamp(result.lookback_start).tz_convert(tz).date()
        if first < dates[0]:
            before, edges = day_edges(first, dates[0] - dt.timedelta(days=1), tz)
            e_ns = np.clip(to_ns(edges), to_ns(ref.start), to_ns(result.start))
            sc = ref.schedule
            off = ref.states.run - (sc.occupied | sc.allowance_any)
            dates = before + dates
            hours = np.concatenate([off.ns_per_bin(e_ns) / NS_PER_H, hours])
            no_data = np.concatenate([ref.states.no_data.ns_per_bin(e_ns) / NS_PER_H, no_data])
            dating = np.concatenate([dating_series(off, sc, e_ns), dating])
    usable = no_data <= MAX_NO_DATA_H
    found = daily_episodes(dates, np.where(usable, dating, np.nan),
                           shown=np.where(usable, hours, np.nan), **settings)
    return [ep for ep in found if ep.end >= result.first_date
            and (ep.kind == "collective" or ep.start >= result.first_date)]


def episode_settings(result: AuditResult) -> dict:
    """CAPA's settings from the site's ``[findings]`` table: ``episode_floor`` [h/day] (default
    :data:`schedcheck.changes.capa.SCALE_FLOOR_H`) and ``episode_min_days`` [days] (default
    :data:`schedcheck.changes.capa.MIN_LENGTH`)."""
    f = result.site.findings
    out = {}
    if f.episode_floor is not None:
        out["floor"] = float(f.episode_floor)
    if f.episode_min_days is not None:
        out["min_length"] = int(f.episode_min_days)
    return out


def with_episodes(result: AuditResult, **settings) -> AuditResult:
    """Find every component's episodes (``settings`` over the site's: :func:`episode_settings`)
    and mark the unit findings that lie in one (in place; returns ``result``)."""
    settings = episode_settings(result) | settings
    result.episodes = {c.key: component_episodes(c, result, **settings)
                       for c in result.components}
    seen_from = result.first_date     # the first day the episodes could see
    if result.lookback_start is not None and result.reference:
        seen_from = min(seen_from, pd.Timestamp(result.lookback_start)
                        .tz_convert(result.site.timezone).date())
    result.findings = mark_findings(result.findings, result.episodes, seen_from,
                                    result.last_date, result.site.timezone)
    return result


def rising(episodes: list[Episode]) -> list[Episode]:
    """The collective episodes of more off-schedule running than usual."""
    return [ep for ep in episodes
            if ep.kind == "collective" and ep.mean_h_per_day > ep.usual_h_per_day]


def episode_of(components, first: dt.date, last: dt.date,
               episodes: dict[str, list[Episode]]) -> Episode | None:
    """The rising collective episode a finding over local dates ``first`` .. ``last`` lies in:
    of its components in order (the lead first), the one holding its first date, else the
    first that overlaps it; None if none."""
    for key in components:
        eps = rising(episodes.get(key, []))
        for ep in eps:
            if ep.start <= first <= ep.end:
                return ep
        for ep in eps:
            if ep.start <= last and first <= ep.end:
                return ep
    return None


def since_words(kind: str, ep: Episode, first_date: dt.date, last_date: dt.date) -> str:
    """"Off-schedule running like this every night since 2026-04-20 (14.1 h a day against a
    usual 0.0 h)", with "last seen on ..." where the episode ended before the window did (the
    days after it may be days off, on which a fault of working days does not show), and "since
    at least ..." where it began on ``first_date``, the first day the episodes could see (it
    may have begun before)."""
    words = PATTERN_WORDS.get(kind, "day after day")
    until = f", last seen on {ep.end.isoformat()}" if ep.end < last_date else ""
    since = "since at least" if ep.start <= first_date else "since"
    return (f"Off-schedule running like this {words} {since} {ep.start.isoformat()}{until} "
            f"({ep.mean_h_per_day:.1f} h a day against a usual {ep.usual_h_per_day:.1f} h).")


def mark_findings(findings: pd.DataFrame, episodes: dict[str, list[Episode]],
                  first_date: dt.date, last_date: dt.date, tz: str) -> pd.DataFrame:
    """``episode_start`` / ``episode_end`` (ISO local dates, "" where none) on each unit
    finding (:mod:`schedcheck.findings.grouping`), and the sentence told since when."""
    f = findings.copy()
    starts, ends, details = [], [], []
    for row in f.itertuples(index=False):
        first = pd.Timestamp(str(row.date)).date()
        end = pd.Timestamp(row.end) - pd.Timedelta("1ns")
        last = max(first, end.tz_convert(tz).date())
        ep = episode_of(list(row.components), first, last, episodes)
        starts.append(ep.start.isoformat() if ep else "")
        ends.append(ep.end.isoformat() if ep else "")
        details.append(f"{row.detail} {since_words(row.kind, ep, first_date, last_date)}" if ep
                       else row.detail)
    f["episode_start"] = pd.Series(starts, index=f.index, dtype=object)
    f["episode_end"] = pd.Series(ends, index=f.index, dtype=object)
    if len(f):
        f["detail"] = details
    return f

