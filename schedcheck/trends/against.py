"""The building system's command and status held against what the vibration says.

Every figure is counted only where both sides are known: a minute where the run state is
no data, or the point is unknown, counts in neither numerator (interface section 8):

* ``ran_while_commanded_off`` = run ∩ command off;
* ``off_while_commanded_on`` = off ∩ command on;
* ``status_disagrees`` = (run ∩ status off) ∪ (off ∩ status on).

Findings (:func:`trend_findings`), one per kind and episode of disagreement that lasts
``min_hours`` (default :data:`MIN_DISAGREEMENT`) or more:

* ``hand_mode``: running while commanded off (a hand-off-auto switch left in hand, a bypassed
  starter: no controls change will stop it);
* ``failed_start``: commanded on, not running (a tripped overload, a broken belt, a lost drive);
* ``false_status``: the status point says running while the vibration says stopped, or the
  reverse (nobody is alarmed, or a healthy fan is reported failed).

A controller clock that is wrong moves the command and the running together, so it gives none
of these (it is the schedule comparison's ``clock_offset``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from schedcheck.findings.grouping import DEFAULT_TOGETHER
from schedcheck.intervals import NS_PER_H, Intervals, from_ns, to_ns
from schedcheck.runstate.states import StateSets
from schedcheck.trends.points import PointStates

#: Disagreement in one episode before it is a finding [h]: half an hour, longer than any
#: start or stop delay of a fan and its drive (common practice, no source). A setting:
#: ``[findings] min_disagreement``.
MIN_DISAGREEMENT = 0.5

KIND_WORDS = {
    "hand_mode": ("ran {h} h {when} while its command was off", "check the hand-off-auto "
                  "switch and the starter (no controls change will stop it), unless someone "
                  "put it in hand on purpose"),
    "failed_start": ("was off {h} h {when} while commanded on", "check for a tripped "
                     "overload, a broken belt or a lost drive"),
    "false_status": ("disagreed {h} h {when} with its status point", "check the current "
                     "switch or drive feedback that the status point reads (the controls "
                     "raise no fan-failure alarm while it lies)"),
}


@dataclass(frozen=True)
class TrendComparison:
    """One component's states held against its command (and status, where given) [ns]."""

    ran_while_commanded_off: Intervals
    off_while_commanded_on: Intervals
    status_disagrees: Intervals | None
    command_unknown: Intervals          # known states where the command is unknown
    status_unknown: Intervals | None    # known states where the status is unknown

    def hours(self) -> dict[str, float]:
        """The hour figures summary.json carries [h] (status figures only with a status)."""
        out = {"ran_while_commanded_off": self.ran_while_commanded_off.hours(),
               "off_while_commanded_on": self.off_while_commanded_on.hours(),
               "command_unknown": self.command_unknown.hours()}
        if self.status_disagrees is not None:
            out["status_disagrees"] = self.status_disagrees.hours()
            out["status_unknown"] = self.status_unknown.hours()
        return out


def compare_trends(states: StateSets, command: PointStates,
                   status: PointStates | None = None) -> TrendComparison:
    """Hold one component's run states against its command and optional status point."""
    known = states.run.union(states.off)
    disagrees = status_unknown = None
    if status is not None:
        disagrees = (states.run.intersection(status.off)
                     .union(states.off.intersection(status.on)))
        status_unknown = known.intersection(status.unknown)
    return TrendComparison(
        ran_while_commanded_off=states.run.intersection(command.off),
        off_while_commanded_on=states.off.intersection(command.on),
        status_disagrees=disagrees,
        command_unknown=known.intersection(command.unknown),
        status_unknown=status_unknown,
    )


def trend_findings(key: str, comparison: TrendComparison, start: pd.Timestamp,
                   end: pd.Timestamp, tz: str, *, min_hours: float = MIN_DISAGREEMENT,
                   together: pd.Timedelta = DEFAULT_TOGETHER) -> pd.DataFrame:
    """Findings ``hand_mode``, ``failed_start``, ``false_status``, one per episode [UTC].

    An episode is disagreement whose pieces lie within ``together`` of each other (a fan in
    hand that stops for ten minutes is one episode); it is a finding when it lasts
    ``min_hours`` or more in all. ``date`` is the local date it began. The window
    ``start``/``end`` only bounds the search: the sets are already cut to it.
    """
    rows = []
    sets = {"hand_mode": comparison.ran_while_commanded_off,
            "failed_start": comparison.off_while_commanded_on,
            "false_status": comparison.status_disagrees}
    lo, hi = int(to_ns(pd.Timestamp(start))), int(to_ns(pd.Timestamp(end)))
    tol = int(pd.Timedelta(together).value)
    for kind, found in sets.items():
        if found is None:
            continue
        found = found.clip(lo, hi)
        if not len(found):
            continue
        s, e = found.starts, found.ends
        breaks = np.flatnonzero(s[1:] - e[:-1] > tol) + 1
        for a, b in zip(np.r_[0, breaks], np.r_[breaks, len(s)], strict=True):
            hours = float((e[a:b] - s[a:b]).sum()) / NS_PER_H
            if hours >= min_hours:
                rows.append(_row(key, kind, int(s[a]), int(e[b - 1]), hours, tz))
    cols = ["component", "kind", "start", "end", "date", "hours", "energy_hours", "detail"]
    if not rows:
        return pd.DataFrame({c: pd.Series(dtype=object) for c in cols}).assign(
            start=from_ns([]), end=from_ns([]), hours=pd.Series(dtype=float),
            energy_hours=pd.Series(dtype=float))
    return pd.DataFrame(rows, columns=cols)


def _when(a: pd.Timestamp, b: pd.Timestamp) -> str:
    """``on Sat 18 Apr`` within one local day, else ``from Wed 11 Mar 21:58 to Thu 12 Mar
    05:03``."""
    last = b - pd.Timedelta(1, "ns")
    if last.date() == a.date():
        return f"on {a:%a} {a.day} {a:%b}"
    return f"from {a:%a} {a.day} {a:%b %H:%M} to {b:%a} {b.day} {b:%b %H:%M}"


def _row(key: str, kind: str, s: int, e: int, hours: float, tz: str) -> list:
    what, action = KIND_WORDS[kind]
    a, b = from_ns([s])[0], from_ns([e])[0]
    text = what.format(h=f"{hours:.1f}", when=_when(a.tz_convert(tz), b.tz_convert(tz)))
    # energy_hours 0: the running is priced by the schedule's findings, not twice
    return [key, kind, a, b, a.tz_convert(tz).date().isoformat(), round(hours, 4), 0.0,
            f"{key} {text}: {action}."]
