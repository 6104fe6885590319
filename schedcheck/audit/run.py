"""The core of the main job: run states x intended schedule -> hours, energy and findings.

:func:`run_audit` takes what the loaders produced (run states per component, the intended
schedule per unit) and returns one :class:`AuditResult`; it opens no file and prints nothing.
The writers in :mod:`schedcheck.outputs.files` turn the result into the audit's files.

A unit's own state is its state component's (:attr:`schedcheck.site.Unit.state_component`,
its supply fan where it has one). Energy is priced with the fan affinity law
(:mod:`schedcheck.audit.energy`) at each component's usual running speed.

Data passes in one form: each component's :class:`ComponentStates` gives its ``sets`` to the
accounting, each unit's schedule table is read once into a :class:`ScheduleSets`, and the
findings run on the account's own sets. Pricing is one vectorised step for all components
(running and off-schedule kWh, cost, CO2, the daily kWh) and one for all findings
(:func:`price_findings`); nothing priced earlier is changed afterwards.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from schedcheck.audit.accounting import ComponentAccount, ScheduleSets, account
from schedcheck.audit.energy import affinity_power, price
from schedcheck.audit.outdoor_air import OutdoorTemperature, ThermalMinutes
from schedcheck.audit.speed_limits import (
    LimitZones,
    energy_between,
    energy_per_bin,
    limit_zones,
    within_limit,
)
from schedcheck.audit.thermal import finding_thermal, price_outdoor_air, with_thermal
from schedcheck.errors import TableError
from schedcheck.findings.find import energy_words, find_in_sets, resolved
from schedcheck.findings.grouping import group_by_unit
from schedcheck.findings.projection import project_year
from schedcheck.findings.rules import Reference
from schedcheck.findings.speed_rules import speed_kinds
from schedcheck.intervals import NS_PER_H, Intervals, to_ns, union_all
from schedcheck.readings.cleaning import SensorHealth
from schedcheck.runstate.classify import ComponentStates
from schedcheck.runstate.onofflevel import Threshold
from schedcheck.runstate.speeds import SpeedPieces
from schedcheck.runstate.states import NO_DATA_WARN
from schedcheck.schedule.daysoff import days_off as days_off_between
from schedcheck.schedule.intended import UnitSchedule
from schedcheck.site import Component, Site, Unit
from schedcheck.window import day_edges, last_local_date

FINDING_COLUMNS = ("component", "kind", "start", "end", "hours", "kwh", "cost", "co2_kg",
                   "detail")


@dataclass
class ComponentResult:
    """Everything the audit found for one component.

    ``account`` holds the hour figures (its ``daily`` table unpriced); ``daily`` is that table
    with ``off_schedule_kwh`` [kWh] added, built by the audit's pricing step.
    """

    component: Component
    unit: Unit
    account: ComponentAccount
    states: ComponentStates           # as classified (pieces with their levels)
    threshold: Threshold | None       # the on/off level and why; None for states from a table
    running_kw: float                 # electrical input while running [kW]
    energy: dict[str, float]          # running_kwh, running_cost, running_co2_kg, off_schedule_*
    daily: pd.DataFrame               # account.daily + off_schedule_kwh
    state_warnings: list[str] = field(default_factory=list)
    zones: LimitZones = field(default_factory=LimitZones.none)   # speed limits in force

    @property
    def speeds(self) -> SpeedPieces:   # the run time by speed (runstate.speeds)
        return self.states.speed_pieces
    thermal: ThermalMinutes | None = None   # outdoor-air energy by minute (its unit's supply fan)

    @property
    def key(self) -> str:
        return self.component.key


@dataclass
class AuditResult:
    """The audit of one site over one window (see :func:`run_audit`)."""

    site: Site
    start: pd.Timestamp               # window start [UTC]
    end: pd.Timestamp                 # window end, exclusive [UTC]
    first_date: dt.date               # first local date
    last_date: dt.date                # last local date (inclusive)
    components: list[ComponentResult]
    schedules: dict[str, UnitSchedule]  # unit id -> its intended schedule
    findings: pd.DataFrame            # one per unit and problem (findings.grouping), UTC
    health: dict[str, SensorHealth] = field(default_factory=dict)   # sensor -> data health
    bad_rows: dict[str, object] = field(default_factory=lambda: {"count": 0, "examples": []})
    warnings: list[str] = field(default_factory=list)
    generated: pd.Timestamp = field(default_factory=lambda: pd.Timestamp.now("UTC").floor("s"))
    outdir: Path | None = None        # set by the job once the files are written
    lookback_start: pd.Timestamp | None = None   # first instant of the look-back used [UTC]
    reference: dict[str, Reference] = field(default_factory=dict)   # component key -> look-back
    files: dict[str, Path] = field(default_factory=dict)         # file name -> Path
    levels: pd.DataFrame | None = None  # per-minute levels behind findings (audit.evidence)
    component_findings: pd.DataFrame | None = None   # FINDING_COLUMNS, one per component
    unit_hours: dict[str, float] = field(default_factory=dict)   # unit -> off-schedule unit-h
    projection: dict = field(default_factory=dict)   # findings.projection.project_year
    episodes: dict[str, list] = field(default_factory=dict)   # key -> changes.capa.Episode
    trends: dict = field(default_factory=dict)   # key -> audit.trends_step.TrendTrack

    @property
    def component_hours(self) -> float:
        """Off-schedule running summed over every component [h]."""
        return sum(c.account.ns["off_schedule"] for c in self.components) / NS_PER_H

    def component(self, key: str) -> ComponentResult:
        for c in self.components:
            if c.key == key:
                return c
        raise KeyError(key)


def run_audit(
    site: Site,
    states: Mapping[str, ComponentStates],
    schedules: Mapping[str, UnitSchedule],
    start: pd.Timestamp,
    end: pd.Timestamp,
    *,
    first_date: dt.date | None = None,
    last_date: dt.date | None = None,
    health: Mapping[str, SensorHealth] | None = None,
    bad_rows: dict[str, object] | None = None,
    warnings: list[str] | None = None,
    find: Callable[[AuditResult], pd.DataFrame | None] | None = None,
    lookback: Lookback | None = None,
    weather: OutdoorTemperature | None = None,
) -> AuditResult:
    """Compare run states with the intended schedule for every component of a site.

    Parameters
    ----------
    site : Site
        The site settings.
    states : mapping
        Component key (``UNIT/COMPONENT``) -> :class:`ComponentStates` covering the window
        (from the classifier, or :meth:`ComponentStates.from_table`) [UTC].
    schedules : mapping
        Unit id -> :class:`UnitSchedule` (``intervals``: start, end, kind, source;
        ``days_off``: date, name, kind) [UTC]; each schedule table is read once here
        (:meth:`ScheduleSets.from_table`).
    start, end : Timestamp
        The audit window ``[start, end)`` [UTC], on local midnights.
    first_date, last_date : date, optional
        The window's local dates (inclusive); derived from ``start``/``end`` when omitted.
    health, bad_rows, warnings
        Data-health figures, rejected rows and load warnings, carried into the result.
    find : callable, optional
        The finding rules, ``find(result) -> DataFrame`` (``component, kind, start, end`` and
        optionally ``hours``, ``energy_hours``, ``kwh``, ``cost``, ``co2_kg``, ``detail``, ...);
        by default :func:`collect_findings`. The findings are then priced with the components
        in one step (:func:`price_findings`).
    lookback : Lookback, optional
        Run states and schedules over the look-back and the window (:class:`Lookback`): the
        clock rule's reference days. Every figure and finding stays inside the window.
    weather : OutdoorTemperature, optional
        Outdoor temperature; with it, the supply fan of each unit with ``outdoor_air`` is
        priced for heating and cooling its off-schedule outdoor air
        (:func:`schedcheck.audit.thermal.price_outdoor_air`).

    Returns
    -------
    AuditResult
    """
    start = pd.Timestamp(start).tz_convert("UTC").as_unit("ns")
    end = pd.Timestamp(end).tz_convert("UTC").as_unit("ns")
    tz = site.timezone
    if first_date is None:
        first_date = start.tz_convert(tz).date()
    if last_date is None:
        last_date = last_local_date(end, tz)
    e = site.energy
    all_warnings = list(warnings or [])
    found: list[tuple[Component, Unit, ComponentStates, ComponentAccount]] = []
    for unit in site.units:
        sched = schedules.get(unit.id)
        if sched is None:
            raise TableError(f"no schedule for unit {unit.id}", key="schedules")
        sets = ScheduleSets.from_table(sched.intervals, start, end)
        if unit.components and not any(c.is_fan for c in unit.components):
            all_warnings.append(
                f"{unit.id}: no fan is monitored (no supply, exhaust or return fan), so off time "
                "in occupied periods is not checked as missed operation for this unit")
        for comp in unit.components:
            cs = states.get(comp.key)
            if cs is None:
                raise TableError(f"no run states for component {comp.key}", key="states")
            zones = _zones(sets, sched)
            pieces = cs.speed_pieces
            acc = account(cs.sets, sets, start, end, tz, counts_missed=comp.is_fan,
                          days_off=sched.days_off, limited=zones.limited,
                          within_limit=within_limit(pieces, zones))
            found.append((comp, unit, cs, acc, zones))
    # the one pricing step for the components: the affinity law at each piece's speed, summed
    # over local days (running, and off-schedule less what a speed limit would have used)
    _, edge_ts = day_edges(start.tz_convert(tz).date(), last_local_date(end, tz), tz)
    ed = np.clip(to_ns(edge_ts), to_ns(start), to_ns(end))     # as the accounting's days
    run_kwh, off_kwh, daily_off = [], [], []
    for comp, _unit, cs, acc, zones in found:
        run_kwh.append(float(energy_per_bin(cs.speed_pieces, comp.power_kw, e.exponent,
                                            ed).sum()))
        d = energy_per_bin(cs.speed_pieces, comp.power_kw, e.exponent, ed,
                           inside=acc.off_schedule, zones=zones)
        daily_off.append(d)
        off_kwh.append(float(d.sum()))
    run_h = np.array([a.ns["running"] for *_, a, _ in found], dtype=float) / NS_PER_H
    kw = np.where(run_h > 0, np.array(run_kwh) / np.where(run_h > 0, run_h, 1.0),
                  np.atleast_1d(affinity_power([c.power_kw for c, *_ in found] or [0.0],
                                               [c.speed for c, *_ in found] or [0.0],
                                               e.exponent))[: len(found)])
    run_p = price(np.array(run_kwh, dtype=float), e.price, e.co2_per_kwh)
    off_p = price(np.array(off_kwh, dtype=float), e.price, e.co2_per_kwh)
    results: list[ComponentResult] = []
    for i, (comp, unit, cs, acc, zones) in enumerate(found):
        k = float(kw[i])
        energy = {
            "running_kw": k,
            "running_kwh": float(run_p.kwh[i]), "running_cost": float(run_p.cost[i]),
            "running_co2_kg": float(run_p.co2_kg[i]),
            "off_schedule_kwh": float(off_p.kwh[i]), "off_schedule_cost": float(off_p.cost[i]),
            "off_schedule_co2_kg": float(off_p.co2_kg[i]),
        }
        daily = acc.daily.assign(off_schedule_kwh=daily_off[i][: len(acc.daily)])
        sw = [str(w) for w in cs.warnings]
        sw += [str(w) for w in (cs.threshold.warnings if cs.threshold is not None else ())]
        for w in acc.warnings:
            all_warnings.append(f"{comp.key}: {w}")
        share = acc.ns["no_data"] / acc.ns["period"]
        if share > NO_DATA_WARN.understate:
            all_warnings.append(
                f"{comp.key}: {share:.0%} of the window has no data "
                f"({acc.ns['no_data'] / NS_PER_H:.1f} h); its hours and kWh cover only the "
                "known time and may understate the running")
        results.append(ComponentResult(comp, unit, acc, cs, cs.threshold, k, energy, daily, sw,
                                       zones))
    result = AuditResult(
        site=site, start=start, end=end, first_date=first_date, last_date=last_date,
        components=results, schedules=dict(schedules), findings=empty_findings(),
        health=dict(health or {}), bad_rows=bad_rows or {"count": 0, "examples": []},
        warnings=all_warnings,
    )
    if lookback is not None and (lookback.start < start or lookback.end > end):
        lb0 = pd.Timestamp(min(lookback.start, start)).tz_convert("UTC").as_unit("ns")
        lb1 = pd.Timestamp(max(lookback.end, end)).tz_convert("UTC").as_unit("ns")
        result.lookback_start = lb0 if lb0 < start else None
        result.reference = lookback.references(site, lb0, lb1)
    result.warnings += price_outdoor_air(result, weather)
    result.component_findings = price_findings((find or collect_findings)(result), result)
    result.findings = unit_findings(result.component_findings, result)
    result.unit_hours = unit_off_schedule_hours(result)
    result.projection = projection(result)
    return result


def unit_findings(component_findings: pd.DataFrame, result: AuditResult) -> pd.DataFrame:
    """One finding per unit and problem (:func:`schedcheck.findings.grouping.group_by_unit`),
    with the site's ``[findings] together`` tolerance and the unit's energy in the sentence."""
    site = result.site
    en = site.energy
    p = resolved(site.findings)
    unit_of = {c.key: c.unit.id for c in result.components}
    lead_of = {u.id: u.state_component.key for u in site.units if u.state_component is not None}
    return group_by_unit(component_findings, unit_of, lead_of, site.timezone,
                         together=p.together,
                         describe=lambda k, c, t="": with_thermal(
                             energy_words(k, c, en.price, en.currency), t))


def unit_off_schedule_hours(result: AuditResult) -> dict[str, float]:
    """Unit id -> unit-hours off schedule: the hours in which at least one of the unit's
    components ran off-schedule (the union of their off-schedule running) [h]."""
    out: dict[str, float] = {}
    for unit in result.site.units:
        sets = [c.account.off_schedule for c in result.components if c.unit.id == unit.id]
        out[unit.id] = union_all(sets).duration_ns() / NS_PER_H if sets else 0.0
    return out


# Days off that count for a yearly holiday pattern: those on Monday to Friday, where a unit
# whose controller lacks the holiday calendar runs its working-day program. Common practice,
# no source.
WORKING_WEEKDAYS = 5


def projection(result: AuditResult) -> dict:
    """The honest yearly projection (:func:`schedcheck.findings.projection.project_year`)."""
    site = result.site
    p = resolved(site.findings)
    year = days_off_between(site.holidays, result.first_date,
                            result.first_date + dt.timedelta(days=364), path=site.path)
    dates = {d if type(d) is dt.date else pd.Timestamp(d).date() for d in year["date"]}
    weekdays = sum(1 for d in dates if d.weekday() < WORKING_WEEKDAYS)
    return project_year(result.findings, result.first_date, result.last_date,
                        days_off_in_year=weekdays, recurring_dates=p.recurring_dates,
                        recurring_weeks=p.recurring_weeks)


@dataclass(frozen=True)
class Lookback:
    """What the classifier saw over the look-back, the window and the days after it,
    ``[start, end)``: component key -> :class:`ComponentStates` and unit id ->
    :class:`UnitSchedule`."""

    start: pd.Timestamp
    end: pd.Timestamp
    states: Mapping[str, ComponentStates]
    schedules: Mapping[str, UnitSchedule]

    def references(self, site: Site, start: pd.Timestamp,
                   end: pd.Timestamp) -> dict[str, Reference]:
        """One :class:`Reference` per component, each schedule table read once."""
        out = {}
        for unit in site.units:
            sched = self.schedules.get(unit.id)
            if sched is None:
                continue
            sets = ScheduleSets.from_table(sched.intervals, start, end)
            for comp in unit.components:
                cs = self.states.get(comp.key)
                if cs is not None:
                    out[comp.key] = Reference(cs.sets, sets, start, end, sched.days_off)
        return out


def _explained(comp: ComponentResult) -> ScheduleSets:
    """The schedule the findings read: allowed windows with a speed limit allow only the
    running at or below it, as in the accounting."""
    sc, z = comp.account.schedule, comp.zones
    if not len(z.starts):
        return sc
    allowed = (sc.allowed - z.limited) | within_limit(comp.speeds, z)
    return dataclasses.replace(sc, allowed=allowed)


def _zones(sets: ScheduleSets, sched: UnitSchedule) -> LimitZones:
    """The unit's speed-limit zones: limited allowed windows and standby ventilation."""
    limits = getattr(sched, "limits", None)
    standby = getattr(sched, "standby_speed", None)
    if (limits is None or not len(limits)) and standby is None:
        return LimitZones.none()
    limited = (Intervals.from_frame(limits) if limits is not None and len(limits)
               else Intervals.empty())
    free = sets.occupied | sets.allowance | (sets.allowed - limited)
    return limit_zones(sets.window, free, limits, standby)


def empty_findings() -> pd.DataFrame:
    """A findings table with no rows and the right columns."""
    utc = pd.DatetimeIndex([], tz="UTC").as_unit("ns")
    return pd.DataFrame({
        "component": pd.Series([], dtype=object), "kind": pd.Series([], dtype=object),
        "start": utc, "end": utc, "hours": pd.Series([], dtype=float),
        "kwh": pd.Series([], dtype=float), "cost": pd.Series([], dtype=float),
        "co2_kg": pd.Series([], dtype=float), "detail": pd.Series([], dtype=object),
    })


def collect_findings(result: AuditResult) -> pd.DataFrame | None:
    """The finding rules (:func:`schedcheck.findings.find.find_in_sets`) on every component,
    on the sets its account used; unpriced (``energy_hours`` per finding)."""
    site = result.site
    frames = []
    for comp in result.components:
        sched = result.schedules[comp.unit.id]
        found = find_in_sets(
            comp.component, comp.account.states, _explained(comp), sched.days_off,
            start=result.start, end=result.end, tz=site.timezone, settings=site.findings,
            reference=result.reference.get(comp.key),
        )
        frames.append(speed_kinds(found, comp.speeds, comp.account.off_schedule,
                                  comp.zones.zone_set(), site.timezone))
    frames = [f for f in frames if len(f)]
    return pd.concat(frames, ignore_index=True) if frames else None


def price_findings(found: pd.DataFrame | None, result: AuditResult) -> pd.DataFrame:
    """The findings' pricing step: ``hours``, ``kwh``, ``cost``, ``co2_kg``, the sentences'
    ``{energy}``, and the table's order.

    ``kwh`` is the component's running power times the finding's ``energy_hours`` [h]; where
    a finding has none, the off-schedule running inside its interval (a ``missed`` finding is
    time off, so it has none). Values the rules already gave are kept. Vectorised over all
    findings of all components.
    """
    if found is None or len(found) == 0:
        return empty_findings()
    f = found.copy().reset_index(drop=True)
    for col in ("start", "end"):
        f[col] = pd.to_datetime(f[col], utc=True).dt.as_unit("ns")
    if "detail" not in f:
        f["detail"] = ""
    by_key = {c.key: c for c in result.components}
    unknown = sorted(set(f["component"]) - set(by_key))
    if unknown:
        raise TableError(f"finding for unknown component {unknown[0]!r}", key="findings")
    s, e = to_ns(f["start"]), to_ns(f["end"])
    kw = f["component"].map({k: c.running_kw for k, c in by_key.items()}).to_numpy(float)
    energy_h = (f["energy_hours"].astype(float).to_numpy() if "energy_hours" in f
                else np.full(len(f), np.nan))
    todo = np.isnan(energy_h)
    for key in set(f.loc[todo, "component"]):
        rows = todo & (f["component"] == key).to_numpy()
        inside = by_key[key].account.off_schedule
        energy_h[rows] = (inside.cumulative_ns(e[rows]) - inside.cumulative_ns(s[rows])) / NS_PER_H
    given_h = f["hours"] if "hours" in f else pd.Series(np.nan, index=f.index)
    f["hours"] = given_h.astype(float).fillna(pd.Series((e - s) / NS_PER_H))
    en = result.site.energy
    kwh = kw * energy_h
    for key in set(f["component"]):
        # at the speeds run: the off-schedule energy inside the finding, scaled to its hours
        rows = (f["component"] == key).to_numpy() & (energy_h > 0)
        c = by_key[key]
        off = c.account.off_schedule
        inside_h = (off.cumulative_ns(e[rows]) - off.cumulative_ns(s[rows])) / NS_PER_H
        at_speed = energy_between(c.speeds, c.component.power_kw, en.exponent, s[rows],
                                  e[rows], off, c.zones)
        with np.errstate(invalid="ignore", divide="ignore"):
            kwh[rows] = np.where(inside_h > 0, at_speed * energy_h[rows] / inside_h,
                                 kwh[rows])
    p = price(kwh, en.price, en.co2_per_kwh)
    for col, computed in (("kwh", p.kwh), ("cost", p.cost), ("co2_kg", p.co2_kg)):
        given = f[col].astype(float) if col in f else pd.Series(np.nan, index=f.index)
        f[col] = given.fillna(pd.Series(np.atleast_1d(computed)))
    thermal = finding_thermal(f, result)
    f["thermal_words"] = thermal
    f["detail_template"] = f["detail"].astype(str)
    f["detail"] = [str(d).replace("{energy}", with_thermal(
                       energy_words(k, c, en.price, en.currency), t))
                   for d, k, c, t in zip(f["detail"], f["kwh"].tolist(), f["cost"].tolist(),
                                         thermal, strict=True)]
    f = f.drop(columns=[c for c in ("energy_hours",) if c in f])
    f = f.sort_values(["start", "component", "kind"], kind="stable").reset_index(drop=True)
    extra = [c for c in f.columns if c not in FINDING_COLUMNS]
    return f[list(FINDING_COLUMNS) + extra]
