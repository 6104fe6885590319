"""The audit's outdoor-air step: heating and cooling of off-schedule running, per component,
per local day and per finding, from one minute series per component
(:func:`schedcheck.audit.outdoor_air.off_schedule_thermal`).

Priced on each unit's supply fan only (the fan that draws the outdoor air), at the speeds of
its run pieces, minute by minute (:func:`thermal_speed`).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from schedcheck.audit.outdoor_air import (
    OutdoorTemperature,
    ThermalMinutes,
    minute_edges,
    off_schedule_thermal,
    thermal_prices,
    uncovered_hours,
)
from schedcheck.intervals import NS_PER_H, to_ns
from schedcheck.window import day_edges

#: energy fields the outdoor-air step adds to a priced component (summary.json ``energy``)
THERMAL_ENERGY_KEYS = (
    "off_schedule_heating_kwh", "off_schedule_cooling_kwh", "off_schedule_heat_purchased_kwh",
    "off_schedule_cooling_electricity_kwh", "off_schedule_thermal_cost",
    "off_schedule_thermal_co2_kg", "off_schedule_hours_without_weather",
)
#: columns the step adds to each finding (NaN where the component has no outdoor air)
THERMAL_FINDING_COLUMNS = ("heating_kwh", "cooling_kwh", "thermal_cost", "thermal_co2_kg")


def thermal_speed(comp_result, start, end) -> np.ndarray:
    """The fan speed of each minute of :func:`~schedcheck.audit.outdoor_air.minute_edges`
    ``(start, end)`` [-]: the time-weighted mean speed of the running in that minute, at the
    speeds the run states carry (:mod:`schedcheck.runstate.speeds`); the component's usual
    ``speed`` in minutes without running (they hold no off-schedule running either)."""
    edges = minute_edges(start, end)
    pieces = comp_result.speeds
    run_ns = comp_result.account.states.run.ns_per_bin(edges).astype(float)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = pieces.speed_ns_per_bin(edges) / run_ns
    return np.where(run_ns > 0, mean, comp_result.component.speed)


def price_outdoor_air(result, weather: OutdoorTemperature | None) -> list[str]:
    """Add the outdoor-air energy to every supply fan of a unit with ``outdoor_air``.

    Sets ``thermal`` (a :class:`ThermalMinutes`), the :data:`THERMAL_ENERGY_KEYS` in
    ``energy`` and ``off_schedule_heating_kwh`` / ``off_schedule_cooling_kwh`` in ``daily`` of
    each such component (NaN days for the others); returns warnings (a unit without a supply
    fan, weather that does not cover the window, minutes without an estimate).
    """
    site = result.site
    warnings: list[str] = []
    for comp in result.components:
        comp.daily = comp.daily.assign(off_schedule_heating_kwh=np.nan,
                                       off_schedule_cooling_kwh=np.nan)
    wanted = [u for u in site.units if u.outdoor_air is not None]
    if not wanted or weather is None:
        return warnings
    gap_h = uncovered_hours(weather, result.start, result.end)
    if gap_h > 0:
        first = pd.Timestamp(int(weather.ns[0]), tz="UTC").tz_convert(site.timezone)
        last = pd.Timestamp(int(weather.ns[-1]), tz="UTC").tz_convert(site.timezone)
        warnings.append(
            f"weather: {gap_h:.1f} h of the audit window are more than 3 h from any outdoor "
            f"temperature reading (the file runs {first:%Y-%m-%d %H:%M} .. {last:%Y-%m-%d %H:%M}"
            ", gaps inside it included); off-schedule running there has no thermal estimate")
    _, edges = day_edges(result.first_date, result.last_date, site.timezone)
    day_ns = to_ns(edges)
    keys = [c.key for c in result.components]
    for unit in wanted:
        fan = unit.supply_fan
        if fan is None:
            warnings.append(f"{unit.id}: has outdoor_air but no monitored supply fan, so the "
                            "heating and cooling of its outdoor air are not estimated")
            continue
        comp = result.components[keys.index(fan.key)]
        tm = off_schedule_thermal(comp.account.off_schedule, weather, unit.outdoor_air,
                                  thermal_speed(comp, result.start, result.end),
                                  result.start, result.end)
        comp.thermal = tm
        tot = tm.totals
        p = thermal_prices(tot["heating_kwh"], tot["cooling_kwh"], site.heating, site.cooling)
        comp.energy.update({
            "off_schedule_heating_kwh": tot["heating_kwh"],
            "off_schedule_cooling_kwh": tot["cooling_kwh"],
            "off_schedule_heat_purchased_kwh": float(p["heat_purchased_kwh"]),
            "off_schedule_cooling_electricity_kwh": float(p["cooling_electricity_kwh"]),
            "off_schedule_thermal_cost": float(p["thermal_cost"]),
            "off_schedule_thermal_co2_kg": float(p["thermal_co2_kg"]),
            "off_schedule_hours_without_weather": tot["unestimated_h"],
        })
        heat, cool, _ = tm.per_bin(day_ns)
        comp.daily = comp.daily.assign(off_schedule_heating_kwh=heat,
                                       off_schedule_cooling_kwh=cool)
        if tot["unestimated_h"] > 0:
            share = tot["unestimated_h"] / max(comp.account.ns["off_schedule"] / NS_PER_H, 1e-9)
            warnings.append(f"{comp.key}: {tot['unestimated_h']:.1f} h of off-schedule running "
                            f"({share:.0%}) have no outdoor temperature within 3 h, so their "
                            "heating and cooling are not counted")
    return warnings


def finding_thermal(f: pd.DataFrame, result) -> list[str]:
    """Add :data:`THERMAL_FINDING_COLUMNS` to the findings table ``f`` (in place) from each
    component's minute series, and return per finding the words its sentence adds
    (``"; outdoor air heating 412.0 kWh, about 391.40 NOK"``, or "")."""
    site = result.site
    for col in THERMAL_FINDING_COLUMNS:
        f[col] = np.nan
    words = [""] * len(f)
    if len(f) == 0:
        return words
    s, e = to_ns(f["start"]), to_ns(f["end"])
    for comp in result.components:
        tm: ThermalMinutes | None = getattr(comp, "thermal", None)
        if tm is None:
            continue
        rows = np.flatnonzero((f["component"] == comp.key).to_numpy())
        if not len(rows):
            continue
        heat, cool = tm.between(s[rows], e[rows])
        missed = (f["kind"].to_numpy()[rows] == "missed")
        heat, cool = np.where(missed, 0.0, heat), np.where(missed, 0.0, cool)
        p = thermal_prices(heat, cool, site.heating, site.cooling)
        f.loc[rows, "heating_kwh"] = heat
        f.loc[rows, "cooling_kwh"] = cool
        f.loc[rows, "thermal_cost"] = p["thermal_cost"]
        f.loc[rows, "thermal_co2_kg"] = p["thermal_co2_kg"]
        for r, h, c, cost in zip(rows, heat, cool, p["thermal_cost"], strict=True):
            words[r] = thermal_words(h, c, cost, site.energy.currency)
    return words


def thermal_words(heating_kwh: float, cooling_kwh: float, cost: float, currency: str) -> str:
    """Plain words for a finding's outdoor-air energy, or "" when there is none."""
    parts = []
    if heating_kwh >= 0.05:
        parts.append(f"heating the outdoor air {heating_kwh:,.1f} kWh")
    if cooling_kwh >= 0.05:
        parts.append(f"cooling it {cooling_kwh:,.1f} kWh")
    if not parts:
        return ""
    money = f", about {cost:,.2f} {currency}".rstrip() if cost > 0 else ""
    return "; " + " and ".join(parts) + money


def with_thermal(energy_text: str, thermal_text: str) -> str:
    """A finding's ``{energy}`` words with its outdoor-air words inside the brackets."""
    if not thermal_text:
        return energy_text
    if energy_text.endswith(")"):
        return energy_text[:-1] + thermal_text + ")"
    return f" ({thermal_text[2:]})"
