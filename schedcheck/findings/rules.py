"""The finding rules behind :func:`schedcheck.findings.find.find_issues` (documented there).

Each rule takes a :class:`Context` (one component's interval sets, int64 ns UTC) and returns a
list of :class:`Found`. Sentences carry ``{energy}`` where the caller puts the kWh and cost.
"""

from __future__ import annotations

import datetime as dt
from collections import Counter, defaultdict
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from schedcheck.findings.timetext import (  # noqa: F401 - re-exported for the other rules
    NS_PER_MIN,
    _list_dates,
    _long,
    day_text,
    hhmm,
    local,
    local_dates,
    midnight_ns,
    minutes_text,
    span_text,
)
from schedcheck.intervals import NS_PER_H, Intervals
from schedcheck.site import FAN_ROLES

if TYPE_CHECKING:
    from schedcheck.audit.accounting import ScheduleSets
    from schedcheck.runstate.states import StateSets

# An episode from the afternoon or evening of one date to the morning of the next, next to a
# working day, is one night finding even when the other date is a weekend day or a holiday
# (the override is the night's, not the day's). Local hour that splits "evening" from
# "morning"; common practice, no source.
OVERNIGHT_NOON = 12


@dataclass(frozen=True)
class Params:
    """Resolved finding settings (defaults and their sources are in findings.py)."""

    min_off_schedule: pd.Timedelta
    min_missed: pd.Timedelta
    continuous: pd.Timedelta
    max_starts_per_day: int
    max_pause: pd.Timedelta
    min_overrun: pd.Timedelta
    repeat_days: int
    no_data_bridge: pd.Timedelta
    together: pd.Timedelta
    recurring_dates: int
    recurring_weeks: int
    min_disagreement: pd.Timedelta = pd.Timedelta("30min")   # trends/against.py's default


@dataclass
class Context:
    """One component's inputs as interval sets (int64 ns, UTC), clipped to the window."""

    key: str
    role: str
    tz: str
    start: int
    end: int
    run: Intervals
    off: Intervals
    no_data: Intervals
    occupied: Intervals
    allowance: Intervals
    allowed: Intervals
    days_off: dict[dt.date, tuple[str, str]]
    params: Params
    explained: Intervals = field(default_factory=Intervals.empty)   # set by the clock rule
    consumed: Intervals = field(default_factory=Intervals.empty)    # set by the continuous rule
    # the same inputs over the look-back and the window, for rules that compare with the days
    # before the window (the clock rule's reference days); None: the window alone
    reference: Context | None = None

    @property
    def scheduled(self) -> Intervals:
        return self.occupied | self.allowance | self.allowed

    def off_schedule(self) -> Intervals:
        """Off-schedule running not yet explained by an earlier rule."""
        return self.run - self.scheduled - self.explained - self.consumed

    def occupied_dates(self) -> set[dt.date]:
        out: set[dt.date] = set()
        for a, b in zip(local_dates(self.occupied.starts, self.tz),
                        local_dates(self.occupied.ends - 1, self.tz), strict=True):
            out.update(a + dt.timedelta(days=i) for i in range((b - a).days + 1))
        return out


@dataclass(frozen=True)
class Reference:
    """One component's run states and its unit's schedule over the look-back, the window and
    the days after it, ``[start, end)`` (UTC), with the days off of that span (see
    :class:`Context`)."""

    states: StateSets
    schedule: ScheduleSets
    start: pd.Timestamp
    end: pd.Timestamp
    days_off: pd.DataFrame | None = None


@dataclass
class Found:
    kind: str
    start: int              # UTC ns
    end: int                # UTC ns
    date: dt.date           # local date the finding began
    hours: float            # [h]
    energy_hours: float     # off-schedule running hours priced [h]
    detail: str


# -- continuous ---------------------------------------------------------------------------
def continuous(ctx: Context) -> list[Found]:
    """Running without a stop for the continuous length or more: one finding per run."""
    run = ctx.run
    if len(run) == 0:
        return []
    s, e = run.starts, run.ends
    gap_start, gap_end = e[:-1], s[1:]
    covered = ctx.no_data.cumulative_ns(gap_end) - ctx.no_data.cumulative_ns(gap_start)
    gap = gap_end - gap_start
    join = (covered == gap) & (gap <= ctx.params.no_data_bridge.value)
    groups = Intervals.from_arrays(np.concatenate([s, gap_start[join]]),
                                   np.concatenate([e, gap_end[join]]))
    out = []
    spans = []
    off_schedule = ctx.off_schedule()
    for gs, ge in groups:
        if ge - gs < ctx.params.continuous.value:
            continue
        off_sched = off_schedule.clip(int(gs), int(ge))
        hours = off_sched.hours()
        if hours * NS_PER_H < ctx.params.min_off_schedule.value:
            continue
        spans.append((gs, ge))
        a = local(gs, ctx.tz)
        since = ("from the start of the audit window" if gs <= ctx.start
                 else f"from {day_text(a.date())} {a:%H:%M}")
        b = local(ge, ctx.tz)
        until = ("and was still running at the end of the audit window" if ge >= ctx.end
                 else f"to {day_text(b.date())} {b:%H:%M}")
        gap = ctx.no_data.clip(int(gs), int(ge)).hours()
        seen = f" (with {gap:.1f} h of no data in between)" if gap >= 0.05 else ""
        out.append(Found(
            "continuous", int(gs), int(ge), a.date(), hours, hours,
            f"Ran without a stop seen for {_long(ge - gs)} {since} {until}{seen}, "
            f"{hours:.1f} h of it outside the schedule{{energy}}; look for a manual override, "
            "a hand switch or a unit stuck in occupied mode, and ask the owner whether any "
            "of this running is needed.",
        ))
    if spans:
        ctx.consumed = ctx.consumed | Intervals.from_arrays(
            np.array([a for a, _ in spans]), np.array([b for _, b in spans]))
    return out


# -- night / weekend / holiday ------------------------------------------------------------
def episodes(ctx: Context, pieces: Intervals) -> list[Intervals]:
    """Group off-schedule pieces separated by short stops with no scheduled time between."""
    if len(pieces) == 0:
        return []
    gs, ge = pieces.ends[:-1], pieces.starts[1:]
    sched = ctx.scheduled
    no_sched = (sched.cumulative_ns(ge) - sched.cumulative_ns(gs)) == 0
    join = no_sched & ((ge - gs) < ctx.params.max_pause.value)
    cut = np.concatenate([[0], np.flatnonzero(~join) + 1, [len(pieces)]])
    return [Intervals(pieces.starts[a:b], pieces.ends[a:b]) for a, b in zip(cut[:-1], cut[1:],
                                                                               strict=True)]


def _day_label(ctx: Context, day: dt.date, occupied_dates: set[dt.date]):
    if day in occupied_dates:
        return ("night",)
    if day in ctx.days_off:
        return ("holiday", day)
    if unscheduled_weekday(day, occupied_dates):
        return ("unscheduled_day",)
    return ("weekend",)


def unscheduled_weekday(day: dt.date, occupied_dates: set[dt.date]) -> bool:
    """A Monday to Friday with no occupied period (and no day off) whose weekday is occupied
    on other dates of the window: a working day taken out of the calendar (an EXDATE, a
    cancelled or deleted occurrence), not a weekend."""
    return day.weekday() < 5 and any(d.weekday() == day.weekday() for d in occupied_dates)


def _unscheduled_finding(ctx: Context, part: Intervals, runs: str) -> Found:
    s, e = int(part.starts[0]), int(part.ends[-1])
    hours = part.hours()
    d0, d1 = local_dates([s, e - 1], ctx.tz)
    day = day_text(d0) if d0 == d1 else f"{day_text(d0, year=False)} to {day_text(d1)}"
    detail = (f"Ran {hours:.1f} h{runs} on {day} {span_text(s, e, ctx.tz)}, a working day with "
              "no occupied period in the calendar (taken out of the series){energy}; check "
              "whether the building was in use that day: if it was, the calendar is wrong, if "
              "not, look for an override or a time programme that did not follow the change.")
    return Found("unscheduled_day", s, e, d0, hours, hours, detail)


def _overnight(ctx: Context, ep: Intervals, first: dt.date, last: dt.date,
               occupied_dates: set[dt.date]) -> bool:
    """One night before or after a working day: the episode crosses one midnight, begins after
    noon and ends before noon, and one of its two dates has an occupied period."""
    if (last - first).days != 1 or not ({first, last} & occupied_dates):
        return False
    a, b = local(int(ep.starts[0]), ctx.tz), local(int(ep.ends[-1]), ctx.tz)
    return a.hour >= OVERNIGHT_NOON and (b.hour, b.minute, b.second) <= (OVERNIGHT_NOON, 0, 0)


def off_schedule_days(ctx: Context) -> list[Found]:
    """Episodes of off-schedule running at least the persistence long, classed by day kind."""
    persist = ctx.params.min_off_schedule.value
    occ_dates = ctx.occupied_dates()
    out = []
    for ep in episodes(ctx, ctx.off_schedule()):
        if ep.duration_ns() < persist:
            continue
        first, last = local_dates([ep.starts[0], ep.ends[-1] - 1], ctx.tz)
        if _overnight(ctx, ep, first, last, occ_dates):
            out.append(_day_finding(ctx, ("night",), ep))
            continue
        segs = []   # [label, seg_start, seg_end, running ns]
        for i in range((last - first).days + 1):
            day = first + dt.timedelta(days=i)
            a = max(int(ep.starts[0]), midnight_ns(day, ctx.tz))
            b = min(int(ep.ends[-1]), midnight_ns(day + dt.timedelta(days=1), ctx.tz))
            part = ep.clip(a, b)
            if len(part) == 0:
                continue
            label = _day_label(ctx, day, occ_dates)
            if segs and segs[-1][0] == label:
                segs[-1][2] = b
                segs[-1][3] += part.duration_ns()
            else:
                segs.append([label, a, b, part.duration_ns()])
        while len(segs) > 1:
            k = min(range(len(segs)), key=lambda j: segs[j][3])
            if segs[k][3] >= persist:
                break
            left = segs[k - 1][3] if k > 0 else -1
            right = segs[k + 1][3] if k + 1 < len(segs) else -1
            j = k - 1 if left >= right else k + 1
            lo, hi = min(j, k), max(j, k)
            segs[j] = [segs[j][0], segs[lo][1], segs[hi][2], segs[j][3] + segs[k][3]]
            del segs[k]
        for label, a, b, _ in segs:
            out.append(_day_finding(ctx, label, ep.clip(a, b)))
    return out


def _day_finding(ctx: Context, label: tuple, part: Intervals) -> Found:
    s, e = int(part.starts[0]), int(part.ends[-1])
    hours = part.hours()
    d0, d1 = local_dates([s, e - 1], ctx.tz)
    runs = f" in {len(part)} runs" if len(part) > 1 else ""
    when = span_text(s, e, ctx.tz)
    if label[0] == "unscheduled_day":
        return _unscheduled_finding(ctx, part, runs)
    if label[0] == "holiday":
        name, kind = ctx.days_off[label[1]]
        date = f"{label[1].day} {label[1]:%b %Y}"
        if kind == "holiday":
            on = f"on {name} ({date}, a public holiday)"
        else:
            extra = "" if name == "site closure" else f" ({name})"
            on = f"on {date}, a closure day of the site{extra},"
        detail = (f"Ran {hours:.1f} h{runs} {on} "
                  f"{when}{{energy}}; check that the "
                  + ("holiday calendar is loaded in the controller." if kind == "holiday" else
                     "closure dates are entered in the controller's holiday calendar."))
        return Found("holiday", s, e, label[1], hours, hours, detail)
    if label[0] == "weekend":
        days = [d0 + dt.timedelta(days=i) for i in range((d1 - d0).days + 1)]
        if all(d.weekday() >= 5 for d in days):
            where = ("on " + day_text(d0)) if d0 == d1 else (
                f"over the weekend of {day_text(d0, year=False)} to {day_text(d1)}")
            where += f" {when}"
        elif d0 == d1:
            where = f"on {day_text(d0)} {when}, a day with no occupied period in the schedule"
        else:
            a, b = local(s, ctx.tz), local(e, ctx.tz)
            where = (f"between {day_text(d0, year=False)} {a:%H:%M} and {day_text(b.date())} "
                     f"{b:%H:%M}, days with no occupied period in the schedule")
        detail = (f"Ran {hours:.1f} h{runs} {where}{{energy}}; check the "
                  "unoccupied days in the controller's time programme and look for an override "
                  "left on.")
        return Found("weekend", s, e, d0, hours, hours, detail)
    where = f"on {day_text(d0)}" if d0 == d1 else (
        f"on the night of {day_text(d0, year=False)} to {day_text(d1)}")
    edge = ""
    if s > ctx.start and bool(ctx.run.contains(np.array([s - 1]))[0]):
        edge = f", running on after {_LATE_EDGE[_edge_kind(ctx, s - 1)]}"
    elif e < ctx.end and bool(ctx.run.contains(np.array([e]))[0]):
        edge = f", starting early before {_EARLY_EDGE[_edge_kind(ctx, e)]}"
    detail = (f"Ran {hours:.1f} h{runs} outside the schedule {where} {when}{edge}{{energy}}; "
              "check the start and stop times in the controller's time programme and look for "
              "an override, a hand switch or a demand signal keeping it on.")
    return Found("night", s, e, d0, hours, hours, detail)


# -- early_start / late_stop ----------------------------------------------------------------
_EARLY_EDGE = {"allowance": "the early-start allowance", "occupied": "the occupied period",
               "allowed": "an allowed window"}
_LATE_EDGE = {"allowance": "the late-stop allowance", "occupied": "the occupied period",
              "allowed": "an allowed window"}


def _edge_kind(ctx: Context, t: int) -> str:
    for kind in ("occupied", "allowance", "allowed"):
        if bool(getattr(ctx, kind).contains(np.array([t]))[0]):
            return kind
    return "allowance"


def overruns(ctx: Context) -> list[Found]:
    """Repeated short early starts and late stops: one finding per ISO week and kind."""
    p = ctx.params
    rows = defaultdict(list)   # (kind, iso year, iso week) -> [(date, s, e, edge)]
    for ep in episodes(ctx, ctx.off_schedule()):
        if ep.duration_ns() >= p.min_off_schedule.value:
            continue
        for s, e in ep:
            if e - s < p.min_overrun.value:
                continue
            late = s > ctx.start and bool(ctx.run.contains(np.array([s - 1]))[0])
            early = (not late) and e < ctx.end and bool(ctx.run.contains(np.array([e]))[0])
            if not (late or early):
                continue
            kind = "late_stop" if late else "early_start"
            day = local_dates([s if late else e - 1], ctx.tz)[0]
            edge = _edge_kind(ctx, s - 1 if late else e)
            iso = day.isocalendar()
            rows[(kind, iso[0], iso[1])].append((day, s, e, edge))
    out = []
    for (kind, year, week), items in sorted(rows.items(), key=lambda kv: kv[1][0][1]):
        days = sorted({d for d, *_ in items})
        if len(days) < p.repeat_days:
            continue
        lengths = [e - s for _, s, e, _ in items]
        hours = sum(lengths) / NS_PER_H
        edge = Counter(x[3] for x in items).most_common(1)[0][0]
        size = (f"by {minutes_text(min(lengths))} to {minutes_text(max(lengths))}"
                if minutes_text(min(lengths)) != minutes_text(max(lengths))
                else f"by {minutes_text(min(lengths))}")
        where = f"on {len(days)} days of ISO week {week} of {year} ({_list_dates(days)})"
        if kind == "early_start":
            detail = (f"Started before {_EARLY_EDGE[edge]} {where} {size}, {hours:.1f} h in all"
                      "{energy}; check the start time and the optimal-start limit in the "
                      "controller's time programme.")
        else:
            detail = (f"Ran on after {_LATE_EDGE[edge]} {where} {size}, {hours:.1f} h in all"
                      "{energy}; check the stop time in the controller's time programme and any "
                      "run-on or extension timer.")
        out.append(Found(kind, min(x[1] for x in items), max(x[2] for x in items), days[0],
                         hours, hours, detail))
    return out


# -- missed ---------------------------------------------------------------------------------
def missed(ctx: Context) -> list[Found]:
    """Occupied time off (known, not no data) for the minimum or longer: one per stretch."""
    if ctx.role not in FAN_ROLES:   # only fans must run through every occupied period
        return []
    out = []
    stretches = ctx.occupied - ctx.run - ctx.explained
    for a, b in stretches:
        off = ctx.off.clip(a, b)
        if off.duration_ns() < ctx.params.min_missed.value:
            continue
        s, e = int(off.starts[0]), int(off.ends[-1])
        hours = off.hours()
        gap = ctx.no_data.clip(a, b).hours()
        extra = f" (and {gap:.1f} h with no data)" if gap >= 0.05 else ""
        day = local_dates([s], ctx.tz)[0]
        air = {"supply_fan": ", so the spaces it serves got no supply air from it",
               "exhaust_fan": ", so the spaces it serves got no extract from it",
               "return_fan": ", so the spaces it serves got no return air from it"}.get(
                   ctx.role, "")
        detail = (f"Was off for {hours:.1f} h{extra} of the occupied period on {day_text(day)} "
                  f"{span_text(s, e, ctx.tz)}{air}; check the alarm log for a trip or a held "
                  "stop, a failed start command and any hand switch left off.")
        out.append(Found("missed", s, e, day, hours, 0.0, detail))
    return out


# -- short_cycling --------------------------------------------------------------------------
def short_cycling(ctx: Context) -> list[Found]:
    """More starts in a local day than the limit: one finding per day."""
    run = ctx.run
    if len(run) == 0:
        return []
    real = (run.starts > ctx.start) & ctx.off.contains(run.starts - 1)
    idx = np.flatnonzero(real)
    if idx.size == 0:
        return []
    days = local_dates(run.starts[idx], ctx.tz)
    count = Counter(days)
    out = []
    for day, n in sorted(count.items()):
        if n <= ctx.params.max_starts_per_day:
            continue
        sel = idx[[d == day for d in days]]
        s, e = int(run.starts[sel[0]]), int(run.ends[sel[-1]])
        lengths = run.ends[sel] - run.starts[sel]
        running = run.clip(midnight_ns(day, ctx.tz),
                           midnight_ns(day + dt.timedelta(days=1), ctx.tz)).hours()
        detail = (f"Started {n} times on {day_text(day)} (runs of {minutes_text(lengths.min())} "
                  f"to {minutes_text(lengths.max())}, {running:.1f} h running in all); check the "
                  "start and stop conditions and the control loop for hunting, and the alarm log "
                  "for a trip that resets itself.")
        out.append(Found("short_cycling", s, e, day, running, 0.0, detail))
    return out
