"""A unit's intended schedule: calendars + days off + allowances -> intervals (UTC).

Steps, for the local dates ``first..last`` of an audit window:

1. The ``occupied`` calendars are expanded (:mod:`schedcheck.schedule.calendars`); their events may
   overlap and come in any order.
2. Days off (public holidays and closures, :mod:`.daysoff`) remove occupied periods.
   The rule: an occurrence belongs to the local date it *starts* on. An occurrence that starts
   on a day off is removed whole, including any part after midnight; an occurrence that starts
   the evening before a day off and runs past midnight into it is kept whole (it is the
   previous day's period). An occurrence of 24 hours or more also loses every whole local day
   off it spans. An event whose CATEGORIES contain ``OPEN-ON-HOLIDAYS`` is never removed.
3. The union of what remains is the *occupied* time.
4. *Allowance*: the occupied time widened by ``early_start`` before and ``late_stop`` after
   each occupied period, minus the occupied time. A period removed by a day off gets no
   allowance.
5. *Allowed* windows: the union of the ``allowed`` calendars' events minus occupied and
   allowance. Days off do not remove allowed windows (running there is acceptable, never
   required).

The three kinds never overlap (occupied > allowance > allowed), so every instant is in at most
one; instants in none are unscheduled. Everything is clipped to the window.
"""

from __future__ import annotations

import datetime as dt
import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path

import icalendar
import numpy as np
import pandas as pd

from schedcheck.durations import format_duration
from schedcheck.intervals import Intervals, from_ns, union_all
from schedcheck.schedule.calendars import MAX_WINDOW_DAYS, check_window, expand_calendar
from schedcheck.schedule.daysoff import DAYS_OFF_COLUMNS
from schedcheck.schedule.daysoff import days_off as compute_days_off
from schedcheck.site import HolidaySettings
from schedcheck.window import day_window, local_midnight

_ZERO = pd.Timedelta(0)
INTERVAL_COLUMNS = ["start", "end", "kind", "source"]

# a window of a week or more with no occupied period at all is worth a word (common practice,
# no source: a building in use is occupied some time every week)
EMPTY_WARN_DAYS = 7
LIMIT_COLUMNS = ("start", "end", "max_speed")

CalendarList = Sequence[tuple[str | Path, icalendar.Calendar]]


@dataclass
class UnitSchedule:
    """The intended schedule of one unit in one window.

    Attributes
    ----------
    unit : str
        The unit's id.
    intervals : pandas.DataFrame
        ``start, end`` (``datetime64[ns, UTC]``), ``kind`` (``occupied``, ``allowance`` or
        ``allowed``), ``source`` (event summaries, or the allowance rule); sorted by start,
        never overlapping.
    days_off : pandas.DataFrame
        ``date, name, kind`` (``holiday`` | ``closure``) in the window.
    warnings : list of str
        One line each.
    first, last : datetime.date
        The window's local dates, both inclusive.
    timezone : str
        The site's zone.
    """

    unit: str
    intervals: pd.DataFrame
    days_off: pd.DataFrame
    warnings: list[str] = field(default_factory=list)
    first: dt.date | None = None
    last: dt.date | None = None
    timezone: str = "UTC"
    # allowed windows with a max_speed: start, end [UTC], max_speed [-]; may overlap (the
    # higher limit holds); already without occupied, allowance and unlimited allowed time
    limits: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(columns=LIMIT_COLUMNS))
    standby_speed: float | None = None   # outside occupied and allowances: allowed up to this

    def of_kind(self, kind: str) -> Intervals:
        """The instants of one kind as an :class:`Intervals`."""
        return Intervals.from_frame(self.intervals[self.intervals["kind"] == kind])


def _expand_all(calendars: CalendarList, tz, first, last, max_days,
                reach: tuple[int, int] | None = None) -> tuple[pd.DataFrame, list]:
    """Every calendar's events; with ``reach`` (an occupied calendar), a warning for each event
    marked free with an occurrence that touches ``[reach[0], reach[1])`` [ns UTC]."""
    frames, warnings = [], []
    for path, cal in calendars:
        result = expand_calendar(cal, tz, first, last, path=path, max_days=max_days)
        frames.append(result.events)
        warnings.extend(result.warnings)
        if reach is not None:
            # a calendar program's "free" flag often marks a closure or a reminder; here every
            # event is a period the unit must run, so say so rather than guess
            labels = dict.fromkeys(lab for lab, s, e in result.free
                                   if s < reach[1] and e > reach[0])
            warnings.extend(
                f"{label}: is marked free (TRANSP:TRANSPARENT) but counts as occupied time, "
                "like every event of an occupied calendar; if it marks a closure, put its "
                "dates in [holidays] closed or cancel it" for label in labels)
    frames = [f for f in frames if len(f)]
    if not frames:
        return pd.DataFrame({"start": from_ns([]), "end": from_ns([]), "source": [],
                             "open_on_holidays": pd.Series([], dtype=bool),
                             "event_start": from_ns([]), "event_end": from_ns([])}), warnings
    return pd.concat(frames, ignore_index=True), warnings


def _days_off_intervals(dates, tz: str) -> Intervals:
    starts = [int(local_midnight(d, tz).value) for d in dates]
    ends = [int(local_midnight(d + dt.timedelta(days=1), tz).value) for d in dates]
    return Intervals.from_arrays(np.array(starts, np.int64), np.array(ends, np.int64))


def _remove_days_off(events: pd.DataFrame, off_dates: set, tz: str) -> pd.DataFrame:
    """Apply the day-off rule of the module docstring; returns pieces ``start, end, source``.

    The rule looks at each whole occurrence (``event_start``, ``event_end``), not at the part
    that falls inside the window.
    """
    if not len(events) or not off_dates:
        return events[["start", "end", "source"]]
    start_dates = events["event_start"].dt.tz_convert(tz).dt.date
    keep = events["open_on_holidays"].to_numpy() | ~start_dates.isin(off_dates).to_numpy()
    kept = events[keep]
    long = (kept["event_end"] - kept["event_start"]) >= pd.Timedelta(days=1)
    long &= ~kept["open_on_holidays"]
    if not long.any():
        return kept[["start", "end", "source"]]
    off = _days_off_intervals(sorted(off_dates), tz)
    pieces = [kept.loc[~long, ["start", "end", "source"]]]
    for row in kept[long].itertuples(index=False):
        rest = Intervals.window(row.start, row.end).difference(off).to_frame()
        rest["source"] = row.source
        pieces.append(rest)
    return pd.concat(pieces, ignore_index=True)


def _label_merged(merged: Intervals, pieces: pd.DataFrame) -> list[str]:
    """For each merged interval, the distinct sources of the pieces overlapping it ('; ')."""
    labels: list[list[str]] = [[] for _ in range(len(merged))]
    if len(merged) and len(pieces):
        ps = pd.DatetimeIndex(pieces["start"]).as_unit("ns").asi8
        pe = pd.DatetimeIndex(pieces["end"]).as_unit("ns").asi8
        lo = np.searchsorted(merged.ends, ps, side="right")
        hi = np.searchsorted(merged.starts, pe, side="left")
        for i, j, src in zip(lo.tolist(), hi.tolist(), pieces["source"].tolist(), strict=True):
            for k in range(i, j):
                if src not in labels[k]:
                    labels[k].append(src)
    return ["; ".join(x) for x in labels]


def _allowance_labels(allowance: Intervals, occupied: Intervals, early, late) -> list[str]:
    occ_starts, occ_ends = set(occupied.starts.tolist()), set(occupied.ends.tolist())
    out = []
    for a, b in allowance:
        parts = []
        if a in occ_ends:
            parts.append(f"late stop {format_duration(late)}")
        if b in occ_starts:
            parts.append(f"early start {format_duration(early)}")
        out.append(" + ".join(parts) or "allowance")
    return out


def _clipped_labels(clipped: Intervals, full: Intervals, labels: list[str]) -> list[str]:
    """Labels of ``full``'s intervals carried over to their clipped parts."""
    k = np.searchsorted(full.starts, clipped.starts, side="right") - 1
    return [labels[i] for i in k.tolist()]


def _frame(iv: Intervals, kind: str, sources: list[str]) -> pd.DataFrame:
    f = iv.to_frame()
    f["kind"] = kind
    f["source"] = pd.Series(sources, dtype=object)
    return f


def expand_unit_schedule(
    occupied: CalendarList,
    allowed: CalendarList,
    tz: str,
    first: dt.date,
    last: dt.date,
    *,
    early_start: pd.Timedelta = _ZERO,
    late_stop: pd.Timedelta = _ZERO,
    holidays: HolidaySettings | None = None,
    days_off: pd.DataFrame | None = None,
    unit: str = "",
    site_path: str | Path | None = None,
    allowed_limits: Sequence[float | None] = (),
    standby_speed: float | None = None,
) -> UnitSchedule:
    """Intended intervals of one unit on local dates ``first..last`` (inclusive).

    Parameters
    ----------
    occupied, allowed : sequence of (path, icalendar.Calendar)
        Parsed calendars with the file they came from (named in messages).
    tz : str
        The site's IANA zone.
    first, last : datetime.date
        The window's local dates, both inclusive.
    early_start, late_stop : pandas.Timedelta
        Allowance before and after each occupied period [duration].
    holidays : schedcheck.site.HolidaySettings, optional
        Public holidays and closures; days off are computed from it (also just outside the
        window, so that allowances at the window's edges are right).
    days_off : pandas.DataFrame, optional
        Precomputed ``date, name, kind`` instead of ``holidays``.
    unit : str
        The unit's id, carried into the result.
    site_path : str or Path, optional
        The site file, for messages about holiday settings.
    allowed_limits : sequence of float or None
        Per ``allowed`` calendar, its ``max_speed`` [-] (None or missing: any speed).
    standby_speed : float, optional
        Outside occupied periods and allowances, running at or below it is allowed [-].

    Returns
    -------
    UnitSchedule
    """
    check_window(first, last)
    early, late = pd.Timedelta(early_start), pd.Timedelta(late_stop)
    if early < pd.Timedelta(0) or late < pd.Timedelta(0):
        raise ValueError("allowances must not be negative")
    pad = max(1, math.ceil(max(early, late) / pd.Timedelta(days=1)) + 1)
    p_first, p_last = first - dt.timedelta(days=pad), last + dt.timedelta(days=pad)
    if days_off is None:
        settings = holidays if holidays is not None else HolidaySettings()
        padded_off = compute_days_off(settings, p_first, p_last, path=site_path)
    else:
        padded_off = days_off
    off_dates = set(padded_off["date"]) if len(padded_off) else set()

    max_days = MAX_WINDOW_DAYS + 2 * pad
    w0, w1 = day_window(first, last, tz)
    reach = (int(w0.value - late.value), int(w1.value + early.value))   # with its allowances
    occ_events, warnings = _expand_all(occupied, tz, p_first, p_last, max_days, reach)
    alw_events, w2 = _expand_all(allowed, tz, p_first, p_last, max_days)
    warnings += w2

    pieces = _remove_days_off(occ_events, off_dates, tz)
    occ = Intervals.from_frame(pieces)
    allowance = occ.shift_ends(early.value, late.value).difference(occ)
    allowed_iv = Intervals.from_frame(alw_events).difference(occ).difference(allowance)

    occ_c, allow_c, alw_c = occ.clip(w0, w1), allowance.clip(w0, w1), allowed_iv.clip(w0, w1)
    frames = [
        _frame(occ_c, "occupied", _label_merged(occ_c, _clip_pieces(pieces, w0, w1))),
        _frame(allow_c, "allowance", _clipped_labels(
            allow_c, allowance, _allowance_labels(allowance, occ, early, late))),
        _frame(alw_c, "allowed", _label_merged(alw_c, _clip_pieces(alw_events, w0, w1))),
    ]
    if occupied and not len(occ_c) and (last - first).days + 1 >= EMPTY_WARN_DAYS:
        names = ", ".join(Path(str(p)).name for p, _ in occupied)
        warnings.append(f"no occupied period from {first} to {last} in {names} (after public "
                        "holidays and closures): all running in the window counts as "
                        "off-schedule")
    intervals = pd.concat(frames, ignore_index=True)
    intervals = intervals.sort_values("start", kind="stable").reset_index(drop=True)
    intervals = intervals[INTERVAL_COLUMNS]
    if len(padded_off):
        in_window = [first <= d <= last for d in padded_off["date"]]
        window_off = padded_off[in_window].reset_index(drop=True)
    else:
        window_off = pd.DataFrame(columns=DAYS_OFF_COLUMNS)
    limits = _limits(allowed, allowed_limits, tz, p_first, p_last, max_days,
                     occ | allowance, w0, w1)
    return UnitSchedule(unit=unit, intervals=intervals, days_off=window_off,
                        warnings=warnings, first=first, last=last, timezone=tz,
                        limits=limits, standby_speed=standby_speed)


def _limits(allowed: CalendarList, limits: Sequence[float | None], tz, first, last, max_days,
            taken: Intervals, w0, w1) -> pd.DataFrame:
    """The allowed windows of calendars with a ``max_speed``, without ``taken`` time and
    without any calendar's windows that allow every speed."""
    lim = [(cal, limits[i] if i < len(limits) else None) for i, cal in enumerate(allowed)]
    if all(v is None for _, v in lim):
        return pd.DataFrame(columns=LIMIT_COLUMNS)
    free = union_all(Intervals.from_frame(_expand_all([c], tz, first, last, max_days)[0])
                     for c, v in lim if v is None)
    rows = []
    for c, v in lim:
        if v is None:
            continue
        iv = (Intervals.from_frame(_expand_all([c], tz, first, last, max_days)[0]) - taken
              - free).clip(w0, w1)
        f = iv.to_frame()
        f["max_speed"] = float(v)
        rows.append(f)
    out = pd.concat(rows, ignore_index=True)
    return out.sort_values("start", kind="stable").reset_index(drop=True)[list(LIMIT_COLUMNS)]


def _clip_pieces(pieces: pd.DataFrame, w0, w1) -> pd.DataFrame:
    """Pieces that overlap the window (for labelling)."""
    if not len(pieces):
        return pieces
    return pieces[(pieces["end"] > w0) & (pieces["start"] < w1)]


def union_of(schedules: Sequence[UnitSchedule], kind: str) -> Intervals:
    """The union of one kind over several schedules."""
    return union_all(s.of_kind(kind) for s in schedules)
