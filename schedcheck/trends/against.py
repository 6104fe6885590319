"""The building system's command and status held against what the vibration says.

Every figure is counted only where both sides are known: a minute where the run state is
no data, or the point is unknown, counts in neither numerator (interface section 8):

* ``ran_while_commanded_off`` = run ∩ command off;
* ``off_while_commanded_on`` = off ∩ command on;
* ``status_disagrees`` = (run ∩ status off) ∪ (off ∩ status on).

Findings (:func:`trend_findings`), one per kind and local date where that day's disagreement
reaches ``min_hours`` (default :data:`MIN_DISAGREEMENT`):

* ``hand_mode``: running while commanded off (a hand-off-auto switch left in hand, a bypassed
  starter: no controls change will stop it);
* ``failed_start``: commanded on, not running (a tripped overload, a broken belt, a lost drive);
* ``false_status``: the status point says running while the vibration says stopped, or the
  reverse (nobody is alarmed, or a healthy fan is reported failed).

A controller clock that is wrong moves the command and the running together, so it gives none
of these (it is the schedule comparison's ``clock_offset``).
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import numpy as np
import pandas as pd

from schedcheck.intervals import NS_PER_H, Intervals, from_ns
from schedcheck.runstate.states import StateSets
from schedcheck.trends.points import PointStates
from schedcheck.window import day_edges

#: Disagreement on one local date before it is a finding [h]: half an hour, longer than any
#: start or stop delay of a fan and its drive (common practice, no source). A setting:
#: ``[findings] min_disagreement``.
MIN_DISAGREEMENT = 0.5

KIND_WORDS = {
    "hand_mode": ("ran {h} h on {day} while its command was off", "check the hand-off-auto "
                  "switch and the starter: no controls change will stop it"),
    "failed_start": ("was off {h} h on {day} while commanded on", "check for a tripped "
                     "overload, a broken belt or a lost drive"),
    "false_status": ("disagreed {h} h on {day} with its status point", "check the current "
                     "switch or drive feedback that the status point reads"),
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
                   end: pd.Timestamp, tz: str, *,
                   min_hours: float = MIN_DISAGREEMENT) -> pd.DataFrame:
    """Findings ``hand_mode``, ``failed_start``, ``false_status`` per local date [UTC]."""
    first = pd.Timestamp(start).tz_convert(tz).date()
    last = (pd.Timestamp(end) - pd.Timedelta(1, "ns")).tz_convert(tz).date()
    dates, edges = day_edges(first, last, tz)
    edges_ns = np.asarray(edges.asi8, dtype=np.int64)
    rows = []
    sets = {"hand_mode": comparison.ran_while_commanded_off,
            "failed_start": comparison.off_while_commanded_on,
            "false_status": comparison.status_disagrees}
    for kind, found in sets.items():
        if found is None or not len(found):
            continue
        per_day = found.ns_per_bin(edges_ns) / NS_PER_H
        for i in np.flatnonzero(per_day >= min_hours):
            day = found.clip(int(edges_ns[i]), int(edges_ns[i + 1]))
            rows.append(_row(key, kind, dates[i], day, float(per_day[i])))
    cols = ["component", "kind", "start", "end", "date", "hours", "detail"]
    if not rows:
        return pd.DataFrame({c: pd.Series(dtype=object) for c in cols}).assign(
            start=from_ns([]), end=from_ns([]), hours=pd.Series(dtype=float))
    return pd.DataFrame(rows, columns=cols)


def _row(key: str, kind: str, day: dt.date, spans: Intervals, hours: float) -> list:
    what, action = KIND_WORDS[kind]
    text = what.format(h=f"{hours:.1f}", day=f"{day:%a} {day.day} {day:%b}")
    return [key, kind, from_ns([int(spans.starts[0])])[0], from_ns([int(spans.ends[-1])])[0],
            day.isoformat(), round(hours, 2), f"{key} {text}: {action}."]
