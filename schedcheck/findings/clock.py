"""The clock_offset rule: starts and stops shifted by a daylight-saving change (see findings.py).

A controller clock that does not follow daylight saving time keeps the old UTC offset, so after
the change in spring its programme runs an hour late in local time (starts and stops later),
and after the change in autumn an hour early. The rule compares each working day's first start
and last stop, measured from that day's occupied start and end, before and after each change.

A window that starts after a change, or ends just after one, still needs the days around it:
the audit passes the run states and schedule of a look-back (reaching at least
:data:`schedcheck.daylight.CLOCK_REACH` before the latest change,
:func:`schedcheck.daylight.reference_first`) and of the days after
the window where readings exist as ``ctx.reference``; the rule finds the change and its
shifted days there, and the finding, its hours and the time it explains stay inside the
window.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import numpy as np
import pandas as pd

from schedcheck.daylight import changes
from schedcheck.findings.rules import NS_PER_MIN, Context, Found, day_text, local_dates, midnight_ns
from schedcheck.intervals import Intervals, union_all

# "About an hour": the shift must lie within this of the change (45-75 min for a one-hour
# change). Common practice, no source.
CLOCK_TOLERANCE = pd.Timedelta("15min")
# Working days compared on each side of a change (two working weeks). Common practice, no source.
CLOCK_DAYS = 10
# Fewest working days with a usable start and stop on each side. Common practice, no source.
CLOCK_MIN_DAYS = 3
# Share of the compared working days after the change that must be shifted. Common practice,
# no source.
CLOCK_SHARE = 0.7
# Runs are looked for this far around the occupied period of a working day; a day whose
# running reaches further (running all night, say) says nothing about the clock. Common
# practice, no source.
CLOCK_LOOK = pd.Timedelta("3h")


@dataclass
class _Day:
    date: dt.date
    occ_start: int
    occ_end: int
    first: int
    last: int

    @property
    def dev_start(self) -> float:   # [min]
        return (self.first - self.occ_start) / NS_PER_MIN

    @property
    def dev_stop(self) -> float:    # [min]
        return (self.last - self.occ_end) / NS_PER_MIN


def _working_days(ctx: Context) -> list[_Day]:
    occ = ctx.occupied
    if len(occ) == 0 or len(ctx.run) == 0:
        return []
    dates = local_dates(occ.starts, ctx.tz)
    by_day: dict[dt.date, tuple[int, int]] = {}
    for d, s, e in zip(dates, occ.starts.tolist(), occ.ends.tolist(), strict=True):
        a, _ = by_day.get(d, (s, e))
        by_day[d] = (min(a, s), e)
    look = CLOCK_LOOK.value
    out = []
    run = ctx.run
    for d, (os_, oe) in sorted(by_day.items()):
        if d in ctx.days_off:
            continue
        lo, hi = os_ - look, oe + look
        if lo < ctx.start or hi > ctx.end:
            continue
        i0 = int(np.searchsorted(run.ends, lo, side="right"))
        i1 = int(np.searchsorted(run.starts, hi, side="left")) - 1
        if i1 < i0:
            continue
        first, last = int(run.starts[i0]), int(run.ends[i1])
        if first < lo or last > hi:
            continue
        # a data gap before the first start or after the last stop hides the real edge; gaps
        # between them do not matter
        seen = ctx.no_data.cumulative_ns(np.array([lo, first + NS_PER_MIN, last - NS_PER_MIN, hi]))
        if seen[1] > seen[0] or seen[3] > seen[2]:
            continue
        out.append(_Day(d, os_, oe, first, last))
    return out


def _zones(ref: Context, days: list[_Day], shift_ns: int) -> Intervals:
    """Local stretches next to the occupied edges that a clock shift explains."""
    reach = shift_ns + CLOCK_TOLERANCE.value
    allow = ref.allowance
    starts, ends = [], []
    for day in days:
        k = np.flatnonzero(allow.ends == day.occ_start)
        before = int(allow.lengths[k[0]]) if k.size else 0
        k = np.flatnonzero(allow.starts == day.occ_end)
        after = int(allow.lengths[k[0]]) if k.size else 0
        starts += [day.occ_start - before - reach, day.occ_end - reach]
        ends += [day.occ_start + reach, day.occ_end + after + reach]
    return Intervals.from_arrays(np.array(starts, np.int64), np.array(ends, np.int64))


def clock_offset(ctx: Context) -> list[Found]:
    """One finding per daylight-saving change after which the unit kept the old clock."""
    ref = ctx.reference if ctx.reference is not None else ctx
    first, last = local_dates([ref.start, ref.end - 1], ctx.tz)
    found_changes = changes(first, last, ctx.tz)
    if not found_changes:
        return []
    days = _working_days(ref)
    tol = CLOCK_TOLERANCE.value / NS_PER_MIN
    bounds = [first] + [c for c, _ in found_changes] + [last + dt.timedelta(days=1)]
    out: list[Found] = []
    zones: list[Intervals] = []
    flagged_before = False
    for i, (change, delta) in enumerate(found_changes):
        before = [d for d in days if bounds[i] <= d.date < change][-CLOCK_DAYS:]
        after_all = [d for d in days if change <= d.date < bounds[i + 2]]
        after = after_all[:CLOCK_DAYS]
        if len(before) < CLOCK_MIN_DAYS or len(after) < CLOCK_MIN_DAYS:
            flagged_before = False
            continue
        b_start = np.array([d.dev_start for d in before])
        base_start = float(np.median(b_start))
        base_stop = float(np.median([d.dev_stop for d in before]))
        q75, q25 = np.percentile(b_start, [75, 25])
        tol_start = tol + float(q75 - q25)   # optimal start moves the start a little every day

        def shifted(d: _Day, tol_start=tol_start, base_start=base_start, base_stop=base_stop,
                    delta=delta) -> bool:
            return (abs(d.dev_stop - base_stop - delta) <= tol
                    and abs(d.dev_start - base_start - delta) <= tol_start)

        med_start = float(np.median([d.dev_start for d in after])) - base_start
        med_stop = float(np.median([d.dev_stop for d in after])) - base_stop
        hits = [d for d in after if shifted(d)]
        ok = (abs(med_start - delta) <= tol_start and abs(med_stop - delta) <= tol
              and len(hits) >= CLOCK_SHARE * len(after))
        if not ok:
            flagged_before = False
            continue
        if flagged_before:
            # the clock came back into line with the local time: the earlier finding ends here
            flagged_before = False
            continue
        flagged_before = True
        shifted_days = [d for d in after_all if shifted(d)]
        # Once the shift is established, the controller keeps the wrong clock every working
        # day until the next change, including days whose optimal start wandered past the
        # tolerance: the edges of all of them are explained by it (one cause, one finding).
        zone = _zones(ref, after_all, int(abs(delta) * NS_PER_MIN))
        zones.append(zone)
        start = midnight_ns(change, ctx.tz)
        end = min(max(start + 1, max(d.last for d in shifted_days)), ctx.end)
        if end <= ctx.start or start >= ctx.end:
            continue   # wholly before or after the window: nothing of it to report here
        running = (ctx.run - ctx.scheduled) & zone
        hours = running.hours()
        began = "began" if delta > 0 else "ended"
        way = "later" if delta > 0 else "earlier"
        detail = (f"From {day_text(change)}, the day daylight saving time {began}, the unit "
                  f"started and stopped about {abs(delta) / 60:.0f} h {way} than before on "
                  f"{len(hits)} of the first {len(after)} working days (median start "
                  f"{med_start:+.0f} min, stop {med_stop:+.0f} min), running {hours:.1f} h "
                  "outside the schedule because of it{energy}; check that the controller clock "
                  "follows daylight saving time (its time zone and daylight-saving setting).")
        start = max(start, ctx.start)   # the change may lie in the look-back
        out.append(Found("clock_offset", start, end, change, hours, hours, detail))
    if zones:
        ctx.explained = ctx.explained | union_all(zones)
    return out
