"""The core of the main job: run states x intended schedule -> hours, energy and findings.

:func:`run_audit` takes what the loaders produced (run states per component, the intended
schedule per unit) and returns one :class:`AuditResult`; it opens no file and prints nothing.
The writers in :mod:`schedcheck.outputs.files` turn the result into the audit's files.

A unit's own state is its state component's (:attr:`schedcheck.site.Unit.state_component`,
its supply fan where it has one). Energy is priced with the fan affinity law
(:mod:`schedcheck.audit.energy`) at each component's usual running speed.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from schedcheck.audit.accounting import ComponentAccount, account_component
from schedcheck.audit.energy import affinity_power, price
from schedcheck.intervals import NS_PER_H, Intervals, to_ns
from schedcheck.site import Component, Site, Unit
from schedcheck.window import last_local_date

#: Share of the window without data above which a component's figures get a warning
#: (common practice, no source: a tenth unknown makes hour totals noticeably low).
NO_DATA_WARN_SHARE = 0.10

FINDING_COLUMNS = ("component", "kind", "start", "end", "hours", "kwh", "cost", "co2_kg",
                   "detail")


@dataclass
class ComponentResult:
    """Everything the audit found for one component."""

    component: Component
    unit: Unit
    account: ComponentAccount
    states: pd.DataFrame              # start, end, state, level [UTC] as classified
    threshold: object | None          # runstate threshold record (level, source, ...)
    running_kw: float                 # electrical input while running [kW]
    energy: dict[str, float]          # running_kwh, running_cost, running_co2_kg, off_schedule_*
    state_warnings: list[str] = field(default_factory=list)

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
    schedules: dict[str, object]      # unit id -> UnitSchedule
    findings: pd.DataFrame            # FINDING_COLUMNS, start/end UTC
    health: dict[str, object] = field(default_factory=dict)    # sensor -> SensorHealth
    bad_rows: dict = field(default_factory=lambda: {"count": 0, "examples": []})
    warnings: list[str] = field(default_factory=list)
    generated: pd.Timestamp = field(default_factory=lambda: pd.Timestamp.now("UTC").floor("s"))
    outdir: object | None = None      # set by the job once the files are written (a Path)
    files: dict = field(default_factory=dict)                  # file name -> Path

    def component(self, key: str) -> ComponentResult:
        for c in self.components:
            if c.key == key:
                return c
        raise KeyError(key)


def component_energy(account: ComponentAccount, running_kw: float, price_per_kwh: float,
                     co2_per_kwh: float) -> dict[str, float]:
    """kWh, cost and CO2 of running and of off-schedule running.

    Parameters
    ----------
    account : ComponentAccount
        The component's hour figures.
    running_kw : float
        Electrical input while running [kW] (affinity law at the usual speed).
    price_per_kwh : float
        [currency/kWh].
    co2_per_kwh : float
        [kg CO2e/kWh].
    """
    h = account.hours()
    run = price(running_kw * h["running"], price_per_kwh, co2_per_kwh)
    off = price(running_kw * h["off_schedule"], price_per_kwh, co2_per_kwh)
    return {
        "running_kw": running_kw,
        "running_kwh": run.kwh, "running_cost": run.cost, "running_co2_kg": run.co2_kg,
        "off_schedule_kwh": off.kwh, "off_schedule_cost": off.cost,
        "off_schedule_co2_kg": off.co2_kg,
    }


def run_audit(
    site: Site,
    states: Mapping[str, object],
    schedules: Mapping[str, object],
    start: pd.Timestamp,
    end: pd.Timestamp,
    *,
    first_date: dt.date | None = None,
    last_date: dt.date | None = None,
    health: Mapping[str, object] | None = None,
    bad_rows: dict | None = None,
    warnings: list[str] | None = None,
    find=None,
) -> AuditResult:
    """Compare run states with the intended schedule for every component of a site.

    Parameters
    ----------
    site : Site
        The site settings.
    states : mapping
        Component key (``UNIT/COMPONENT``) -> ``runstate.ComponentStates`` (or a DataFrame
        ``start, end, state, level``) covering the window [UTC].
    schedules : mapping
        Unit id -> ``schedule.UnitSchedule`` (``intervals``: start, end, kind, source;
        ``days_off``: date, name, kind) [UTC].
    start, end : Timestamp
        The audit window ``[start, end)`` [UTC], on local midnights.
    first_date, last_date : date, optional
        The window's local dates (inclusive); derived from ``start``/``end`` when omitted.
    health, bad_rows, warnings
        Data-health figures, rejected rows and load warnings, carried into the result.
    find : callable, optional
        The finding rules, ``find(result) -> DataFrame``; by default
        :func:`schedcheck.findings.find.find_issues` through :func:`collect_findings`.

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
    results: list[ComponentResult] = []
    all_warnings = list(warnings or [])
    for unit in site.units:
        sched = schedules.get(unit.id)
        if sched is None:
            raise ValueError(f"no schedule for unit {unit.id}")
        sched_frame = getattr(sched, "intervals", sched)
        days_off = getattr(sched, "days_off", None)
        if unit.components and not any(c.is_fan for c in unit.components):
            all_warnings.append(
                f"{unit.id}: no fan is monitored (no supply, exhaust or return fan), so off time "
                "in occupied periods is not checked as missed operation for this unit")
        for comp in unit.components:
            cs = states.get(comp.key)
            if cs is None:
                raise ValueError(f"no run states for component {comp.key}")
            frame = cs if isinstance(cs, pd.DataFrame) else cs.intervals
            acc = account_component(frame, sched_frame, start, end, tz,
                                    counts_missed=comp.is_fan, days_off=days_off)
            kw = float(affinity_power(comp.power_kw, comp.speed, e.exponent))
            energy = component_energy(acc, kw, e.price, e.co2_per_kwh)
            acc.daily["off_schedule_kwh"] = acc.daily["off_schedule_ns"] / NS_PER_H * kw
            threshold = None if isinstance(cs, pd.DataFrame) else getattr(cs, "threshold", None)
            sw = [str(w) for w in getattr(cs, "warnings", []) or []]
            sw += [str(w) for w in getattr(threshold, "warnings", []) or []]
            for w in acc.warnings:
                all_warnings.append(f"{comp.key}: {w}")
            share = acc.ns["no_data"] / acc.ns["period"]
            if share > NO_DATA_WARN_SHARE:
                all_warnings.append(
                    f"{comp.key}: {share:.0%} of the window has no data "
                    f"({acc.ns['no_data'] / NS_PER_H:.1f} h); its hours and kWh cover only the "
                    "known time and may understate the running")
            results.append(ComponentResult(comp, unit, acc, frame, threshold, kw, energy, sw))
    result = AuditResult(
        site=site, start=start, end=end, first_date=first_date, last_date=last_date,
        components=results, schedules=dict(schedules), findings=empty_findings(),
        health=dict(health or {}), bad_rows=bad_rows or {"count": 0, "examples": []},
        warnings=all_warnings,
    )
    found = (find or collect_findings)(result)
    result.findings = price_findings(found, result)
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


def collect_findings(result: AuditResult) -> pd.DataFrame:
    """Run the finding rules (:func:`schedcheck.findings.find.find_issues`) on every component."""
    from schedcheck.audit.accounting import state_frame_from_sets
    from schedcheck.findings.find import find_issues  # written alongside this module

    site = result.site
    frames = []
    for comp in result.components:
        sched = result.schedules[comp.unit.id]
        frames.append(find_issues(
            comp.component, state_frame_from_sets(comp.account.states),
            getattr(sched, "intervals", sched), getattr(sched, "days_off", None),
            start=result.start, end=result.end, tz=site.timezone, running_kw=comp.running_kw,
            price=site.energy.price, co2_per_kwh=site.energy.co2_per_kwh,
            currency=site.energy.currency, settings=site.findings,
        ))
    frames = [f for f in frames if len(f)]
    return pd.concat(frames, ignore_index=True) if frames else empty_findings()


def price_findings(found: pd.DataFrame | None, result: AuditResult) -> pd.DataFrame:
    """Fill ``hours``, ``kwh``, ``cost`` and ``co2_kg`` of each finding and order the table.

    ``kwh`` is the energy of the component's *off-schedule* running inside the finding's
    interval (a ``missed`` finding is time off, so it has none); values the rules already
    gave are kept.
    """
    if found is None or len(found) == 0:
        return empty_findings()
    f = found.copy().reset_index(drop=True)
    for col in ("start", "end"):
        f[col] = pd.to_datetime(f[col], utc=True).dt.as_unit("ns")
    if "detail" not in f:
        f["detail"] = ""
    by_key = {c.key: c for c in result.components}
    hours = np.empty(len(f))
    kwh = np.empty(len(f))
    for i, row in enumerate(f.itertuples(index=False)):
        s, e = to_ns(row.start), to_ns(row.end)
        hours[i] = (e - s) / NS_PER_H
        comp = by_key.get(row.component)
        if comp is None:
            raise ValueError(f"finding for unknown component {row.component!r}")
        inside = comp.account.off_schedule & Intervals.from_arrays([s], [e])
        kwh[i] = inside.hours() * comp.running_kw
    given_h = f["hours"] if "hours" in f else pd.Series(np.nan, index=f.index)
    f["hours"] = given_h.astype(float).fillna(pd.Series(hours))
    given_k = f["kwh"] if "kwh" in f else pd.Series(np.nan, index=f.index)
    f["kwh"] = given_k.astype(float).fillna(pd.Series(kwh))
    for col, factor in (("cost", result.site.energy.price),
                        ("co2_kg", result.site.energy.co2_per_kwh)):
        given = f[col].astype(float) if col in f else pd.Series(np.nan, index=f.index)
        f[col] = given.fillna(f["kwh"] * factor)
    f = f.sort_values(["start", "component", "kind"], kind="stable").reset_index(drop=True)
    extra = [c for c in f.columns if c not in FINDING_COLUMNS]
    return f[list(FINDING_COLUMNS) + extra]
