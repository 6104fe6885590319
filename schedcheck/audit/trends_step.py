"""The audit's trends step: each component's building-system command and status against the
run states the audit accounted (interface section 8).

:func:`with_trends` wraps the audit's finding rules (:func:`schedcheck.audit.run.
collect_findings`): it reads each commanded component's points over the window
(:func:`schedcheck.trends.points.point_states`), holds them against the component's own
account states (:func:`schedcheck.trends.against.compare_trends`), keeps the result on
``AuditResult.trends`` and adds the findings ``hand_mode``, ``failed_start`` and
``false_status``. Those carry no energy of their own (``energy_hours`` 0): the running they
describe is priced once, by the schedule's findings.

Minute accounting, per component: the known minutes (run or off) split exactly into command on,
command off and command unknown (and the same for the status); no-data minutes of the
vibration are in none of them.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass

import numpy as np
import pandas as pd

from schedcheck.errors import TableError
from schedcheck.findings.find import resolved
from schedcheck.intervals import NS_PER_H, to_ns
from schedcheck.runstate.states import NO_DATA_WARN
from schedcheck.trends.against import TrendComparison, compare_trends, trend_findings
from schedcheck.trends.points import PointStates, point_states

#: Samples per point: ``name -> (instants [int64 ns UTC], values 1.0 on / 0.0 off)``.
Samples = Mapping[str, tuple[np.ndarray, np.ndarray]]


@dataclass(frozen=True)
class TrendTrack:
    """One commanded component over the window: its points' states and the comparison."""

    command_point: str
    status_point: str | None
    command: PointStates
    status: PointStates | None
    comparison: TrendComparison

    def hours(self) -> dict[str, float]:
        return self.comparison.hours()


def track(result, samples: Samples, max_gap: pd.Timedelta) -> dict[str, TrendTrack]:
    """Component key -> :class:`TrendTrack` for every component with a ``command``."""
    lo, hi = int(to_ns(result.start)), int(to_ns(result.end))
    gap = int(pd.Timedelta(max_gap).value)
    out = {}
    for comp in result.components:
        c = comp.component
        if c.command is None:
            continue
        states = {}
        for role, name in (("command", c.command), ("status", c.status)):
            if name is None:
                states[role] = None
                continue
            if name not in samples:
                raise TableError(f"no trend samples for point {name!r} ({role} of {c.key})",
                                 key="trends")
            t, v = samples[name]
            states[role] = point_states(t, v, lo, hi, gap)
        sets = comp.account.states
        cmp = compare_trends(sets, states["command"], states["status"])
        _check_minutes(c.key, sets, states["command"], cmp)
        out[c.key] = TrendTrack(c.command, c.status, states["command"], states["status"], cmp)
    return out


def _check_minutes(key: str, sets, command: PointStates, cmp: TrendComparison) -> None:
    """Known time = command on + off + unknown, to the nanosecond (nothing lost or doubled)."""
    known = sets.run.union(sets.off)
    parts = (known.intersection(command.on).duration_ns()
             + known.intersection(command.off).duration_ns() + cmp.command_unknown.duration_ns())
    if parts != known.duration_ns():   # pragma: no cover - an interval algebra bug
        raise TableError(f"{key}: command minutes do not add up "
                         f"({parts / NS_PER_H:.4f} h of {known.duration_ns() / NS_PER_H:.4f} h)",
                         key="trends")


def unknown_warnings(result) -> list[str]:
    """A warning per point unknown for more than NO_DATA_WARN.understate of the known time
    (silent longer than ``max_gap``): its figures cover only the rest."""
    out = []
    for key, tr in result.trends.items():
        sets = result.component(key).account.states
        known_h = sets.run.union(sets.off).duration_ns() / NS_PER_H
        h = tr.hours()
        for role, point in (("command", tr.command_point), ("status", tr.status_point)):
            unknown = h.get(f"{role}_unknown")
            if point is None or not known_h or unknown is None:
                continue
            if unknown / known_h > NO_DATA_WARN.understate:
                out.append(f"{key}: its {role} point {point} is unknown for {unknown:,.1f} h of "
                           f"the {known_h:,.1f} h with a known run state (silent longer than "
                           "[trends] max_gap, or not yet logging); its trend figures cover "
                           "only the rest")
    return out


def with_trends(samples: Samples | None, max_gap: pd.Timedelta,
                find: Callable | None = None) -> Callable:
    """The audit's ``find`` step with the trends' findings added (see the module docstring)."""
    def run(result) -> pd.DataFrame | None:
        from schedcheck.audit.run import collect_findings

        base = (find or collect_findings)(result)
        if not samples:
            return base
        result.trends = track(result, samples, max_gap)
        result.warnings += unknown_warnings(result)
        p = resolved(result.site.findings)
        frames = [trend_findings(k, tr.comparison, result.start, result.end,
                                 result.site.timezone,
                                 min_hours=p.min_disagreement / pd.Timedelta(hours=1),
                                 together=p.together) for k, tr in result.trends.items()]
        frames = [f for f in [base, *frames] if f is not None and len(f)]
        return pd.concat(frames, ignore_index=True) if frames else None
    return run
