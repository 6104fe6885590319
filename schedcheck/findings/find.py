"""Findings: run states x intended schedule -> faults a contractor can act on.

One call, :func:`find_issues`, turns one component's run-state intervals, its unit's intended
schedule and the days off into a table of findings. The rules, in the order they are applied
(each later rule only sees what the earlier ones left unexplained, so one cause gives one
finding, not ten symptoms):

1. **clock_offset** (:mod:`schedcheck.findings.clock`). For each daylight-saving change inside
   the window, the first start and last stop of each working day (relative to that day's
   occupied period) are compared with the median of up to ``CLOCK_DAYS`` working days before
   the change. When, over the first ``CLOCK_DAYS`` working days after it (at least
   ``CLOCK_MIN_DAYS``), the median start shift *and* the stop shift on at least
   ``CLOCK_SHARE`` of the days lie within ``CLOCK_TOLERANCE`` of the change itself (+1 h in
   spring, -1 h in autumn: the direction of a controller clock that kept the old offset), one
   finding starts on the change date. The off-schedule running and the occupied time off next
   to the occupied edges of each shifted day (within the shift plus the tolerance) belong to
   this finding and raise no night, early_start, late_stop or missed finding. A later change
   that brings the times back into line ends the finding instead of raising a new one.
2. **continuous**. Running without a stop (gaps with no data of up to ``NO_DATA_BRIDGE``
   between runs do not count as stops) for ``DEFAULT_CONTINUOUS`` or more, holding at least
   the persistence of off-schedule running, is one finding from the date the run began; its
   off-schedule running raises nothing else.
3. **night / weekend / holiday**. Off-schedule running (running minus occupied, allowance and
   allowed time) is grouped into episodes: pieces separated by stops shorter than
   ``DEFAULT_MAX_PAUSE`` with no scheduled time between them belong together. An episode
   with at least ``DEFAULT_MIN_OFF_SCHEDULE`` of running is cut at local midnights where the
   kind of day changes: a public holiday or closure date without an occupied period is
   ``holiday`` (one finding per date, named after the day), any other date without an
   occupied period (Saturdays and Sundays in most schedules) is ``weekend``, and a date with
   an occupied period is ``night`` (so a night that runs past midnight stays one finding).
   A cut piece with less running than the persistence joins its longer neighbour. An episode
   that crosses one midnight, begins after noon and ends before noon, next to a working day,
   is not cut at all: it is one ``night`` (the night before or after a working day), even
   when the other date is a weekend day or a holiday. A night finding that runs straight on
   from the late-stop allowance, or into the early-start allowance, says so.
4. **early_start / late_stop**. Episodes below the persistence that end where scheduled time
   begins (running on into it) are early starts; those that begin where scheduled time ends
   (running on from it) are late stops. Overruns shorter than ``DEFAULT_MIN_OVERRUN`` are
   edge jitter and ignored. An ISO week with overruns of one kind on at least
   ``DEFAULT_REPEAT_DAYS`` local dates is one finding, with the dates listed.
5. **missed**. Occupied time not running, in one stretch, with at least ``DEFAULT_MIN_MISSED``
   of it known to be off (no-data time is never counted as off) is one finding. Only fans
   (supply, exhaust, return) raise it: a heat wheel runs only when heat recovery pays, and a
   component of role ``other`` is not known to be required.
6. **short_cycling**. More than ``DEFAULT_MAX_STARTS_PER_DAY`` starts (a run that follows a
   known stop) in one local day is one finding for that day.

Energy: ``kwh`` is ``running_kw`` times the off-schedule running hours of the finding; it is 0
for ``missed`` (nothing ran) and ``short_cycling`` (the harm is wear, and the running is
already priced by the other kinds). ``cost = kwh * price`` and ``co2_kg = kwh * co2_per_kwh``.

None of these rules is a reason to switch off a life-safety sequence: smoke control, freeze
protection and code-minimum ventilation keep running whatever a finding says; the sentences
ask the contractor to check, and local codes and licensed practice decide.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import math
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import numpy as np
import pandas as pd

from schedcheck.audit import energy
from schedcheck.audit.accounting import ScheduleSets
from schedcheck.errors import InputError
from schedcheck.findings import clock as findings_clock
from schedcheck.findings import rules as findings_rules
from schedcheck.findings.grouping import DEFAULT_TOGETHER
from schedcheck.findings.kinds import KINDS  # noqa: F401 - re-exported
from schedcheck.findings.projection import DEFAULT_RECURRING_DATES, DEFAULT_RECURRING_WEEKS
from schedcheck.findings.rules import Context, Params, Reference
from schedcheck.intervals import check_labels, from_ns, to_ns
from schedcheck.runstate.states import StateSets
from schedcheck.schedule.kinds import DAY_OFF_KINDS
from schedcheck.site import Component, FindingSettings
from schedcheck.trends.against import MIN_DISAGREEMENT

# Off-schedule running must persist this long to be a finding on its own. Common practice for
# alarms (a one-hour persistence before a schedule alarm is raised), no source.
DEFAULT_MIN_OFF_SCHEDULE = pd.Timedelta("1h")
# Occupied time off this long is a missed-operation finding. Common practice, no source: half
# an hour without ventilation in an occupied space is long enough for people to notice stale
# air, and short enough to catch a late start every morning.
DEFAULT_MIN_MISSED = pd.Timedelta("30min")
# Running without a stop this long is "continuous" (an override left on, a unit stuck in
# occupied mode). Common practice, no source: a day and a night without a stop cannot be a
# normal schedule with a night setback.
DEFAULT_CONTINUOUS = pd.Timedelta("24h")
# More starts than this in one local day is short cycling. Common practice, no source: a
# scheduled unit starts once or twice a day (plus a night purge); motor makers allow only a
# handful of starts per hour for fan motors (from memory), so more than six a day points at a
# control loop, a trip that resets itself or a schedule fighting an override.
DEFAULT_MAX_STARTS_PER_DAY = 6
# Stops shorter than this inside off-schedule running do not end an episode. Common practice,
# no source: a unit cycling 50 min on, 10 min off all night is one night of running.
DEFAULT_MAX_PAUSE = pd.Timedelta("30min")
# Early starts and late stops shorter than this are ignored. Common practice, no source: it
# absorbs the minute or two of edge jitter in one-a-minute readings.
DEFAULT_MIN_OVERRUN = pd.Timedelta("10min")
# Overruns of one kind on this many local dates of one ISO week make a finding. Common
# practice, no source: three days is a habit, not a one-off.
DEFAULT_REPEAT_DAYS = 3
# Gaps with no data of up to this long between two runs are not stops for the continuous
# rule (the sentence says how long the data was missing). Common practice, no source: a flat
# sensor battery or a gateway outage over a long weekend does not mean the fan stopped.
NO_DATA_BRIDGE = pd.Timedelta("72h")
# Clock offset: "about an hour" means within this of the daylight-saving change (45-75 min).
# Common practice, no source.
CLOCK_TOLERANCE = findings_clock.CLOCK_TOLERANCE
# Clock offset: working days compared before and after a change. Common practice, no source
# (two working weeks).
CLOCK_DAYS = findings_clock.CLOCK_DAYS
# Clock offset: fewest working days on each side of the change. Common practice, no source.
CLOCK_MIN_DAYS = findings_clock.CLOCK_MIN_DAYS
# Clock offset: share of the working days after the change that must be shifted. Common
# practice, no source.
CLOCK_SHARE = findings_clock.CLOCK_SHARE

# Command or status disagreeing with the vibration this long is a finding: the trends'
# MIN_DISAGREEMENT (trends/against.py; common practice, no source).

#: Columns of :func:`find_issues`' table.
COLUMNS = ["component", "kind", "start", "end", "date", "hours", "kwh", "cost", "co2_kg",
           "detail"]
#: Columns of :func:`find_in_sets`' table, before pricing.
UNPRICED_COLUMNS = ["component", "kind", "start", "end", "date", "hours", "energy_hours",
                    "detail"]


def default_settings() -> dict[str, object]:
    """The documented default of every finding setting, keyed like ``[findings]`` in a site file."""
    return {
        "min_off_schedule": DEFAULT_MIN_OFF_SCHEDULE,
        "min_missed": DEFAULT_MIN_MISSED,
        "continuous": DEFAULT_CONTINUOUS,
        "max_starts_per_day": DEFAULT_MAX_STARTS_PER_DAY,
        "max_pause": DEFAULT_MAX_PAUSE,
        "min_overrun": DEFAULT_MIN_OVERRUN,
        "repeat_days": DEFAULT_REPEAT_DAYS,
        "together": DEFAULT_TOGETHER,
        "recurring_dates": DEFAULT_RECURRING_DATES,
        "recurring_weeks": DEFAULT_RECURRING_WEEKS,
        "min_disagreement": pd.Timedelta(hours=MIN_DISAGREEMENT),
    }


def resolved(settings: FindingSettings | None) -> Params:
    """The finding settings with the defaults filled in, checked (an InputError names the
    ``findings.KEY`` that is out of range)."""
    return _params(settings)


def _params(settings: FindingSettings | None) -> Params:
    values = default_settings()
    for name in values:
        given = getattr(settings, name, None) if settings is not None else None
        if given is not None:
            values[name] = given
    for name, value in values.items():
        if isinstance(value, pd.Timedelta):
            if value <= pd.Timedelta(0):
                raise InputError(f"must be a positive duration, not {value}",
                                 key=f"findings.{name}")
        elif isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 1:
            raise InputError(f"must be a whole number of at least 1, not {value!r}",
                             key=f"findings.{name}")
    return Params(no_data_bridge=NO_DATA_BRIDGE, **values)


def _days_off(days_off: pd.DataFrame | None) -> dict[dt.date, tuple[str, str]]:
    if days_off is None or len(days_off) == 0:
        return {}
    if not isinstance(days_off, pd.DataFrame) or "date" not in days_off.columns:
        raise InputError("missing column date", key="days_off")
    names = days_off["name"] if "name" in days_off.columns else pd.Series("", index=days_off.index)
    kinds = days_off["kind"] if "kind" in days_off.columns else pd.Series("holiday",
                                                                          index=days_off.index)
    check_labels(pd.DataFrame({"kind": kinds}), "days_off", "kind", DAY_OFF_KINDS, "day-off kinds")
    out: dict[dt.date, tuple[str, str]] = {}
    for value, nm, kd in zip(days_off["date"], names, kinds, strict=True):
        try:
            day = value if type(value) is dt.date else pd.Timestamp(value).date()
        except (ValueError, TypeError):
            raise InputError(f"{value!r} is not a date", key="days_off.date") from None
        label = ("" if pd.isna(nm) else str(nm).strip()) or (
            "an unnamed closure day" if kd == "closure" else "an unnamed holiday")
        if day in out and out[day][0] != label:  # two names on one date: keep both
            label = f"{out[day][0]} / {label}"
        out[day] = (label, str(kd))
    return out


def find_issues(
    component: Component,
    states: pd.DataFrame,
    schedule: pd.DataFrame,
    days_off: pd.DataFrame | None,
    *,
    start: pd.Timestamp,
    end: pd.Timestamp,
    tz: str,
    running_kw: float,
    price: float = 0.0,
    co2_per_kwh: float = 0.0,
    currency: str = "",
    settings: FindingSettings | None = None,
) -> pd.DataFrame:
    """Findings for one component over the audit window ``[start, end)``.

    Parameters
    ----------
    component : Component
        The component; its ``key`` names the findings and its ``role`` decides whether
        occupied time off is a fault (fans only).
    states : DataFrame
        Run-state intervals ``start, end, state, level`` (UTC) covering the window; ``state`` is
        ``run``, ``off`` or ``no_data``.
    schedule : DataFrame
        The unit's intended intervals ``start, end, kind, source`` (UTC); ``kind`` is
        ``occupied``, ``allowance`` or ``allowed``.
    days_off : DataFrame or None
        Public holidays and closures ``date, name, kind`` (local dates; kind ``holiday`` or
        ``closure``).
    start, end : Timestamp
        The audit window [UTC, zone-aware].
    tz : str
        IANA zone of the site; local dates and the sentences use it.
    running_kw : float
        Electrical input while running [kW].
    price : float
        Energy price [currency/kWh].
    co2_per_kwh : float
        Emission factor [kg CO2e/kWh].
    currency : str
        Currency label used in the sentences.
    settings : FindingSettings, optional
        Overrides of the default constants; None fields keep the defaults.

    Returns
    -------
    DataFrame
        One row per finding, sorted by start: ``component, kind, start, end`` (UTC),
        ``date`` (local date the finding began), ``hours`` [h], ``kwh`` [kWh], ``cost``
        [currency], ``co2_kg`` [kg] and ``detail`` (one sentence with local times).

    Raises
    ------
    InputError
        When a number or setting is out of range; a :class:`schedcheck.errors.TableError`
        (an InputError) when a table lacks a column, holds an unknown state or kind or naive
        instants. The tables are read once, by :meth:`StateSets.from_table` and
        :meth:`ScheduleSets.from_table`; the rules then run on the sets
        (:func:`find_in_sets`) and the findings are priced in one step (:func:`priced`).
    """
    try:
        ZoneInfo(str(tz))
    except (ZoneInfoNotFoundError, ValueError):
        raise InputError(f"unknown time zone {tz!r}", key="site.timezone") from None
    for name, value in (("running_kw", running_kw), ("price", price),
                        ("co2_per_kwh", co2_per_kwh)):
        if not isinstance(value, (int, float)) or not math.isfinite(value) or value < 0:
            raise InputError(f"must be a finite number of at least 0, not {value!r}", key=name)
    for name, value in (("start", start), ("end", end)):
        if not isinstance(value, pd.Timestamp) or value.tzinfo is None:
            raise InputError("must be a zone-aware instant", key=name)
    if int(to_ns(end)) <= int(to_ns(start)):
        raise InputError(f"the audit window ends ({end}) before it starts ({start})", key="end")
    _params(settings)
    st = StateSets.from_table(states, start, end)
    sc = ScheduleSets.from_table(schedule, start, end)
    found = find_in_sets(component, st, sc, days_off, start=start, end=end, tz=str(tz),
                         settings=settings)
    p = energy.price(float(running_kw) * found["energy_hours"].to_numpy(float), float(price),
                     float(co2_per_kwh))
    out = priced(found, p, float(price), str(currency))
    return out.sort_values(["start", "kind"], kind="stable").reset_index(drop=True)


def find_in_sets(
    component: Component,
    states: StateSets,
    schedule: ScheduleSets,
    days_off: pd.DataFrame | None,
    *,
    start: pd.Timestamp,
    end: pd.Timestamp,
    tz: str,
    settings: FindingSettings | None = None,
    reference: Reference | None = None,
) -> pd.DataFrame:
    """The findings of one component before pricing, from the sets the accounting used.

    Parameters are as for :func:`find_issues`, but ``states`` and ``schedule`` are already
    interval sets over ``[start, end)`` (checked where they entered the core). ``reference``:
    the same over the look-back, the window and the days after it
    (:class:`schedcheck.findings.rules.Reference`),
    for the clock rule's reference days; every finding stays inside ``[start, end)``.

    Returns
    -------
    DataFrame
        :data:`UNPRICED_COLUMNS`, in the order the rules found them: ``energy_hours`` is the
        off-schedule running each finding prices [h] and ``detail`` carries ``{energy}`` where
        :func:`priced` puts the kWh and cost.
    """
    w0, w1 = int(to_ns(start)), int(to_ns(end))
    ctx = Context(
        key=component.key, role=component.role, tz=str(tz), start=w0, end=w1,
        run=states.run, off=states.off, no_data=states.no_data,
        occupied=schedule.occupied, allowance=schedule.allowance, allowed=schedule.allowed,
        days_off=_days_off(days_off), params=_params(settings),
    )
    if reference is not None:
        ctx.reference = dataclasses.replace(
            ctx, start=int(to_ns(reference.start)), end=int(to_ns(reference.end)),
            run=reference.states.run,
            off=reference.states.off, no_data=reference.states.no_data,
            occupied=reference.schedule.occupied, allowance=reference.schedule.allowance,
            allowed=reference.schedule.allowed, days_off=_days_off(reference.days_off))
    found = findings_clock.clock_offset(ctx)
    found += findings_rules.continuous(ctx)
    found += findings_rules.off_schedule_days(ctx)
    found += findings_rules.overruns(ctx)
    found += findings_rules.missed(ctx)
    found += findings_rules.short_cycling(ctx)
    return pd.DataFrame({
        "component": pd.Series([ctx.key] * len(found), dtype=object),
        "kind": pd.Series([f.kind for f in found], dtype=object),
        "start": from_ns([f.start for f in found]), "end": from_ns([f.end for f in found]),
        "date": pd.Series([f.date.isoformat() for f in found], dtype=object),
        "hours": pd.Series([f.hours for f in found], dtype=float),
        "energy_hours": pd.Series([f.energy_hours for f in found], dtype=float),
        "detail": pd.Series([f.detail for f in found], dtype=object),
    })


def energy_words(kwh: float, cost: float, price: float, currency: str) -> str:
    """The kWh and cost a finding's sentence carries in place of ``{energy}``."""
    if kwh > 0 and price > 0:
        return f" ({kwh:,.1f} kWh, about {cost:,.2f} {currency})".replace(" )", ")")
    return f" ({kwh:,.1f} kWh)" if kwh > 0 else ""


def priced(found: pd.DataFrame, energy_priced: energy.Priced, price: float,
           currency: str) -> pd.DataFrame:
    """Findings with their energy, cost and CO2 (one entry of ``energy_priced`` per row) and
    the sentences completed; ``energy_hours`` is dropped. Columns :data:`COLUMNS` first."""
    f = found.drop(columns="energy_hours").reset_index(drop=True)
    kwh = np.asarray(energy_priced.kwh, dtype=float)
    cost = np.asarray(energy_priced.cost, dtype=float)
    f["kwh"], f["cost"], f["co2_kg"] = kwh, cost, np.asarray(energy_priced.co2_kg, dtype=float)
    if "detail" not in f:
        f["detail"] = ""
    f["detail"] = [str(d).replace("{energy}", energy_words(k, c, price, currency))
                   for d, k, c in zip(f["detail"], kwh.tolist(), cost.tolist(), strict=True)]
    first = [c for c in COLUMNS if c in f.columns]
    return f[first + [c for c in f.columns if c not in first]]
