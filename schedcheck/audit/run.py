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

import datetime as dt
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from schedcheck.audit.accounting import ComponentAccount, ScheduleSets, account
from schedcheck.audit.energy import affinity_power, price
from schedcheck.audit.outdoor_air import OutdoorTemperature, ThermalMinutes
from schedcheck.audit.thermal import finding_thermal, price_outdoor_air, with_thermal
from schedcheck.errors import TableError
from schedcheck.findings.find import energy_words, find_in_sets
from schedcheck.intervals import NS_PER_H, to_ns
from schedcheck.readings.cleaning import SensorHealth
from schedcheck.runstate.classify import ComponentStates
from schedcheck.runstate.onofflevel import Threshold
from schedcheck.runstate.states import NO_DATA_WARN
from schedcheck.schedule.intended import UnitSchedule
from schedcheck.site import Component, Site, Unit
from schedcheck.window import last_local_date

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
    findings: pd.DataFrame            # FINDING_COLUMNS, start/end UTC
    health: dict[str, SensorHealth] = field(default_factory=dict)   # sensor -> data health
    bad_rows: dict[str, object] = field(default_factory=lambda: {"count": 0, "examples": []})
    warnings: list[str] = field(default_factory=list)
    generated: pd.Timestamp = field(default_factory=lambda: pd.Timestamp.now("UTC").floor("s"))
    outdir: Path | None = None        # set by the job once the files are written
    files: dict[str, Path] = field(default_factory=dict)         # file name -> Path

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
            acc = account(cs.sets, sets, start, end, tz, counts_missed=comp.is_fan,
                          days_off=sched.days_off)
            found.append((comp, unit, cs, acc))
    # the one pricing step for the components: affinity law at the usual speed, then kWh
    kw = np.atleast_1d(affinity_power([c.power_kw for c, *_ in found],
                                      [c.speed for c, *_ in found], e.exponent))
    run_h = np.array([a.ns["running"] for *_, a in found], dtype=float) / NS_PER_H
    off_h = np.array([a.ns["off_schedule"] for *_, a in found], dtype=float) / NS_PER_H
    run_p = price(kw * run_h, e.price, e.co2_per_kwh)
    off_p = price(kw * off_h, e.price, e.co2_per_kwh)
    results: list[ComponentResult] = []
    for i, (comp, unit, cs, acc) in enumerate(found):
        k = float(kw[i])
        energy = {
            "running_kw": k,
            "running_kwh": float(run_p.kwh[i]), "running_cost": float(run_p.cost[i]),
            "running_co2_kg": float(run_p.co2_kg[i]),
            "off_schedule_kwh": float(off_p.kwh[i]), "off_schedule_cost": float(off_p.cost[i]),
            "off_schedule_co2_kg": float(off_p.co2_kg[i]),
        }
        daily = acc.daily.assign(off_schedule_kwh=acc.daily["off_schedule_ns"] / NS_PER_H * k)
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
        results.append(ComponentResult(comp, unit, acc, cs, cs.threshold, k, energy, daily, sw))
    result = AuditResult(
        site=site, start=start, end=end, first_date=first_date, last_date=last_date,
        components=results, schedules=dict(schedules), findings=empty_findings(),
        health=dict(health or {}), bad_rows=bad_rows or {"count": 0, "examples": []},
        warnings=all_warnings,
    )
    result.warnings += price_outdoor_air(result, weather)
    result.findings = price_findings((find or collect_findings)(result), result)
    return result


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
        frames.append(find_in_sets(
            comp.component, comp.account.states, comp.account.schedule, sched.days_off,
            start=result.start, end=result.end, tz=site.timezone, settings=site.findings,
        ))
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
    p = price(kw * energy_h, en.price, en.co2_per_kwh)
    for col, computed in (("kwh", p.kwh), ("cost", p.cost), ("co2_kg", p.co2_kg)):
        given = f[col].astype(float) if col in f else pd.Series(np.nan, index=f.index)
        f[col] = given.fillna(pd.Series(np.atleast_1d(computed)))
    thermal = finding_thermal(f, result)
    f["detail"] = [str(d).replace("{energy}", with_thermal(
                       energy_words(k, c, en.price, en.currency), t))
                   for d, k, c, t in zip(f["detail"], f["kwh"].tolist(), f["cost"].tolist(),
                                         thermal, strict=True)]
    f = f.drop(columns=[c for c in ("energy_hours",) if c in f])
    f = f.sort_values(["start", "component", "kind"], kind="stable").reset_index(drop=True)
    extra = [c for c in f.columns if c not in FINDING_COLUMNS]
    return f[list(FINDING_COLUMNS) + extra]
