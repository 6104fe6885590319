"""Minute accounting: run states x intended schedule -> hour figures and daily rows.

Every instant of the audit window ``[start, end)`` lies in exactly one *state* (``run``,
``off``, ``no_data``) and exactly one *schedule class* (occupied, allowance, unscheduled);
allowed windows count with the allowances. The figures follow the identities of the user
interface, exactly (integer nanoseconds) before any rounding:

* ``period = running + off + no_data``
* ``running = in_schedule + in_allowance + off_schedule``
* ``scheduled = occupied hours = in_schedule + occupied_off + occupied_no_data``
* ``missed = occupied_off`` for fans; ``0`` for other roles (a heat wheel runs only when heat
  recovery pays, so its off time in occupied periods is not a fault). ``occupied_off`` is kept
  for every role so that nothing is hidden.

A *start* is a change from ``off`` to ``run`` seen in the data and a *stop* one from ``run`` to
``off``; a run that begins at the window start or right after a stretch of no data is not
counted as a start, because the data does not show the machine starting.

Run states arrive as a :class:`schedcheck.runstate.states.StateSets` and the schedule as a
:class:`ScheduleSets`, the one form both travel in; :func:`account_component` reads tables into
them first (the one check of a table, raising :class:`schedcheck.errors.TableError`).

Local days come from :func:`schedcheck.window.day_edges`, so days of 23 and 25 hours at
daylight-saving changes are counted at their true length.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from schedcheck.errors import TableError
from schedcheck.intervals import NS_PER_H, Intervals, check_labels, table_ns, to_ns
from schedcheck.runstate.states import StateSets
from schedcheck.schedule.kinds import ALLOWANCE, ALLOWED, OCCUPIED, SCHEDULE_KINDS
from schedcheck.window import day_edges, last_local_date

WEEKDAYS = ("Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun")

#: hour figures, in the order they are reported
FIGURES = (
    "period", "scheduled", "running", "in_schedule", "in_allowance", "off_schedule",
    "missed", "off", "no_data", "occupied_off", "occupied_no_data",
)


@dataclass(frozen=True)
class ScheduleSets:
    """A unit's intended schedule over the window ``[start, end)`` as interval sets [UTC].

    ``occupied``, ``allowance`` and ``allowed`` hold each kind as given (clipped to the window;
    they may overlap); the findings read them so. The accounting's disjoint classes, by
    priority occupied > allowance/allowed, are :attr:`allowance_any` and :attr:`unscheduled`.
    """

    window: Intervals
    occupied: Intervals
    allowance: Intervals      # early start and late stop
    allowed: Intervals        # allowed windows

    @property
    def allowance_any(self) -> Intervals:
        """Allowance and allowed time outside the occupied periods."""
        return (self.allowance | self.allowed) - self.occupied

    @property
    def unscheduled(self) -> Intervals:
        """The rest of the window: neither occupied nor allowed in any way."""
        return self.window - self.occupied - self.allowance_any

    @classmethod
    def from_table(cls, schedule: pd.DataFrame, start: pd.Timestamp, end: pd.Timestamp,
                   *, name: str = "schedule") -> ScheduleSets:
        """Read an intended-schedule table (``start``, ``end``, ``kind``; tz-aware).

        ``kind`` is ``occupied``, ``allowance`` or ``allowed``; the one check of a schedule
        table where it enters the core.

        Raises
        ------
        TableError
            A missing column, naive instants or an unknown kind, naming ``name``.
        """
        win = Intervals.window(start, end)
        if isinstance(schedule, pd.DataFrame) and len(schedule) == 0:
            e = Intervals.empty()
            return cls(win, e, e, e)
        s, e = table_ns(schedule, name, ("start", "end", "kind"))
        kinds = check_labels(schedule, name, "kind", SCHEDULE_KINDS, "schedule kinds")

        def of(kind: str) -> Intervals:
            return Intervals.from_arrays(s[kinds == kind], e[kinds == kind]) & win

        return cls(win, of(OCCUPIED), of(ALLOWANCE), of(ALLOWED))


@dataclass
class ComponentAccount:
    """Hour figures of one component over the audit window.

    ``ns`` holds each figure of :data:`FIGURES` in integer nanoseconds (exact); ``hours()``
    converts. ``daily`` has one row per local date (:func:`_daily_frame`), in hours only;
    the audit's pricing step builds the priced copy (:attr:`ComponentResult.daily
    <schedcheck.audit.run.ComponentResult>`) and never changes this one. ``states`` and
    ``schedule`` are the sets counted, which the findings then read.
    """

    ns: dict[str, int]
    starts: int
    daily: pd.DataFrame
    off_schedule: Intervals          # the off-schedule running itself [UTC ns]
    missed_intervals: Intervals      # occupied and known off (empty unless missed counts)
    states: StateSets
    schedule: ScheduleSets
    counts_missed: bool
    warnings: list[str] = field(default_factory=list)

    def hours(self) -> dict[str, float]:
        """Each figure in hours [h], unrounded."""
        return {k: v / NS_PER_H for k, v in self.ns.items()}


def state_sets(states: pd.DataFrame, start: pd.Timestamp, end: pd.Timestamp) -> StateSets:
    """Run states read from a table (see :meth:`StateSets.from_table`)."""
    return StateSets.from_table(states, start, end)


def schedule_sets(schedule: pd.DataFrame, start: pd.Timestamp, end: pd.Timestamp) -> ScheduleSets:
    """An intended schedule read from a table (see :meth:`ScheduleSets.from_table`)."""
    return ScheduleSets.from_table(schedule, start, end)


def transitions(states: StateSets) -> tuple[np.ndarray, np.ndarray]:
    """Seen starts (off -> run) and stops (run -> off) [UTC ns]."""
    run, off = states.run, states.off
    if len(run) == 0 or len(off) == 0:
        return np.empty(0, np.int64), np.empty(0, np.int64)
    starts = run.starts[off.contains(run.starts - 1)]
    stops = run.ends[off.contains(run.ends)]
    return starts, stops


def account_component(
    states: pd.DataFrame,
    schedule: pd.DataFrame,
    start: pd.Timestamp,
    end: pd.Timestamp,
    tz: str,
    *,
    counts_missed: bool = True,
    days_off: pd.DataFrame | None = None,
) -> ComponentAccount:
    """Hour figures and daily rows of one component, from tables.

    Reads the tables once (:meth:`StateSets.from_table`, :meth:`ScheduleSets.from_table`) and
    calls :func:`account`; see there. ``states``: ``start``, ``end``, ``state`` [UTC];
    ``schedule``: ``start``, ``end``, ``kind`` [UTC].
    """
    start, end = _window(start, end)
    return account(StateSets.from_table(states, start, end),
                   ScheduleSets.from_table(schedule, start, end), start, end, tz,
                   counts_missed=counts_missed, days_off=days_off)


def account(
    states: StateSets,
    schedule: ScheduleSets,
    start: pd.Timestamp,
    end: pd.Timestamp,
    tz: str,
    *,
    counts_missed: bool = True,
    days_off: pd.DataFrame | None = None,
    limited: Intervals | None = None,
    within_limit: Intervals | None = None,
) -> ComponentAccount:
    """Hour figures and daily rows of one component.

    Parameters
    ----------
    states : StateSets
        The component's run states, tiling the window [UTC].
    schedule : ScheduleSets
        The unit's intended schedule over the same window [UTC].
    start, end : Timestamp
        The audit window; must fall on local midnights of ``tz`` for whole daily rows [UTC].
    tz : str
        IANA time zone of the site; local days are cut at its midnights.
    counts_missed : bool
        Whether off time in occupied periods counts as ``missed`` (fans: yes; heat wheels: no).
    days_off : DataFrame, optional
        ``date``, ``name``, ``kind`` of the unit's holidays and closures, for the daily rows.
    limited : Intervals, optional
        Allowed windows with a ``max_speed`` (allowed only up to the limit) [UTC].
    within_limit : Intervals, optional
        Running inside the speed-limit zones at or below the limit
        (:func:`schedcheck.audit.speed_limits.within_limit`): allowed, counted in allowance.

    Returns
    -------
    ComponentAccount
    """
    start, end = _window(start, end)
    st, sc = states, schedule
    allowance_any = sc.allowance_any
    if limited is not None:
        allowance_any = allowance_any - limited
    if within_limit is not None:
        allowance_any = allowance_any | (within_limit - sc.occupied)
    allowed_any = sc.occupied | allowance_any
    sets = {
        "period": Intervals.window(start, end),
        "scheduled": sc.occupied,
        "running": st.run,
        "in_schedule": st.run & sc.occupied,
        "in_allowance": st.run & allowance_any,
        "off_schedule": st.run - allowed_any,
        "off": st.off,
        "no_data": st.no_data,
        "occupied_off": st.off & sc.occupied,
        "occupied_no_data": st.no_data & sc.occupied,
    }
    sets["missed"] = sets["occupied_off"] if counts_missed else Intervals.empty()
    first, last = _local_dates(start, end, tz)
    dates, edges = day_edges(first, last, tz)
    edges_ns = np.clip(to_ns(edges), to_ns(start), to_ns(end))
    per_day = {k: sets[k].ns_per_bin(edges_ns) for k in FIGURES}
    seen_starts, seen_stops = transitions(st)
    daily = _daily_frame(dates, edges_ns, per_day, seen_starts, seen_stops, tz, days_off)
    ns = {k: int(sets[k].duration_ns()) for k in FIGURES}
    _check_identities(ns)
    return ComponentAccount(
        ns=ns,
        starts=int(seen_starts.size),
        daily=daily,
        off_schedule=sets["off_schedule"],
        missed_intervals=sets["missed"],
        states=st,
        schedule=sc,
        counts_missed=counts_missed,
        warnings=list(st.warnings),
    )


def _window(start: pd.Timestamp, end: pd.Timestamp) -> tuple[pd.Timestamp, pd.Timestamp]:
    start = pd.Timestamp(start).tz_convert("UTC")
    end = pd.Timestamp(end).tz_convert("UTC")
    if end <= start:
        raise TableError(f"empty audit window [{start}, {end})", key="window")
    return start, end


def _local_dates(start: pd.Timestamp, end: pd.Timestamp, tz: str) -> tuple[dt.date, dt.date]:
    first = start.tz_convert(tz).date()
    last = last_local_date(end, tz)
    return first, last


def _check_identities(ns: dict[str, int]) -> None:
    """The interface's identities, exact in ns; a failure is a bug, not a user error."""
    if ns["running"] + ns["off"] + ns["no_data"] != ns["period"]:
        raise AssertionError("running + off + no_data != period")
    if ns["in_schedule"] + ns["in_allowance"] + ns["off_schedule"] != ns["running"]:
        raise AssertionError("in_schedule + in_allowance + off_schedule != running")
    if ns["in_schedule"] + ns["occupied_off"] + ns["occupied_no_data"] != ns["scheduled"]:
        raise AssertionError("in_schedule + occupied_off + occupied_no_data != scheduled")


def _daily_frame(dates, edges_ns, per_day, seen_starts, seen_stops, tz, days_off) -> pd.DataFrame:
    names: dict[dt.date, str] = {}
    if days_off is not None and len(days_off):
        for d, n in zip(days_off["date"], days_off["name"], strict=True):
            d = pd.Timestamp(d).date()
            names[d] = f"{names[d]}; {n}" if d in names and n not in names[d] else str(n)
    bins_s = np.searchsorted(edges_ns, seen_starts, side="right") - 1
    bins_e = np.searchsorted(edges_ns, seen_stops, side="right") - 1
    n = len(dates)
    starts_per_day = np.bincount(bins_s[(bins_s >= 0) & (bins_s < n)], minlength=n)[:n]
    first_start = _per_bin_instant(seen_starts, bins_s, n, tz, last=False)
    last_stop = _per_bin_instant(seen_stops, bins_e, n, tz, last=True)
    # one frame from all columns at once (adding columns one by one costs a copy each)
    return pd.DataFrame({
        "date": dates,
        "weekday": [WEEKDAYS[d.weekday()] for d in dates],
        "day_off": [names.get(d, "") for d in dates],
        **{f"{k}_ns": per_day[k].astype(np.int64) for k in FIGURES},
        "first_start": first_start,
        "last_stop": last_stop,
        "starts": starts_per_day.astype(np.int64),
    })


def _per_bin_instant(instants: np.ndarray, bins: np.ndarray, n: int, tz: str, *, last: bool
                     ) -> pd.Series:
    """The first (or last) of sorted ``instants`` in each of ``n`` bins, local; NaT if none."""
    out = np.full(n, np.iinfo(np.int64).min, dtype=np.int64)   # NaT
    ok = (bins >= 0) & (bins < n)
    b, t = bins[ok], instants[ok]
    if b.size:
        if last:
            b, t = b[::-1], t[::-1]
        uniq, idx = np.unique(b, return_index=True)
        out[uniq] = t[idx]
    idx_local = pd.DatetimeIndex(out.view("datetime64[ns]")).tz_localize("UTC").tz_convert(tz)
    return pd.Series(idx_local)
