"""Outdoor air: the sensible heating and cooling that off-schedule running costs (interface
section 7).

A unit that runs when nobody is there draws outdoor air that must be brought to the supply set
point. Minute by minute over the off-schedule running of the unit's supply fan:

* outdoor temperature, interpolated linearly in time between weather readings; a minute more
  than :data:`MAX_REACH` from the nearest reading has no thermal estimate (counted);
* volume flow ``V = flow * speed / 3600`` [m3/s] (flow proportional to speed, the first fan
  affinity law);
* heat recovery modulated (or bypassed) between none and full: with full recovery the supply
  side reaches ``T_full = T_out + eta * (T_extract - T_out)``, with none it stays at ``T_out``;
  ``lo, hi = min, max(T_out, T_full)``;
* heating power ``rho_cp * V * max(0, T_supply - hi)`` and cooling power
  ``rho_cp * V * max(0, lo - T_supply)`` [kW] (sensible heat only).

``eta`` is the supply-side temperature ratio of EN 308 (and EN 13053):
``eta = (t_supply_after_recovery - t_outdoor) / (t_extract - t_outdoor)``, so ``T_full`` above is
that definition solved for the supply-side temperature.

What this leaves out (the report says so): latent heat (moisture), duct and fan heat gains and
losses, the building's own heat balance (an empty building may need some heat anyway), defrost
cycles. Core code: numpy in and out, no file access.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from schedcheck.intervals import NS_PER_H, Intervals, to_ns
from schedcheck.site import OutdoorAir

#: Standard air, rho * cp [kJ/(m3 K)]: 1.204 kg/m3 x 1.006 kJ/(kg K) (dry air at 20 degC and
#: 101.325 kPa; interface section 7). ASHRAE Handbook - Fundamentals (psychrometrics chapter)
#: gives the same product in its SI sensible-heat form q = 1.23 x L/s x dT [W] (from memory).
RHO_CP = 1.21

#: A minute farther than this from the nearest weather reading has no thermal estimate. Hourly
#: weather files miss a reading now and then; three hours of linear interpolation stays within a
#: few kelvin of the truth on most days (common practice, no source; interface section 7).
MAX_REACH = pd.Timedelta("3h")

#: Step of the minute-by-minute sum [ns].
MINUTE_NS = 60 * 10**9

#: Plausible outdoor air temperatures, inclusive [degC]; outside this a value is a typing slip,
#: a unit in kelvin or fahrenheit, or a missing-value code (common practice, no source: the
#: lowest and highest air temperatures recorded on Earth are about -89 and +57 degC).
TEMPERATURE_RANGE = (-60.0, 60.0)


@dataclass(frozen=True)
class OutdoorTemperature:
    """Outdoor air temperature readings, sorted, one per instant.

    ``ns`` are instants [UTC ns since the epoch, int64], ``degc`` the temperatures [degC];
    ``source`` names the file for messages.
    """

    ns: np.ndarray
    degc: np.ndarray
    source: str = ""

    def __post_init__(self) -> None:
        ns = np.asarray(self.ns, dtype=np.int64)
        t = np.asarray(self.degc, dtype=float)
        if ns.shape != t.shape or ns.ndim != 1:
            raise ValueError("ns and degc must be 1-D arrays of one length")
        if len(ns) > 1 and np.any(np.diff(ns) <= 0):
            raise ValueError("weather instants must be strictly increasing")
        if not np.all(np.isfinite(t)):
            raise ValueError("weather temperatures must be finite")
        object.__setattr__(self, "ns", ns)
        object.__setattr__(self, "degc", t)

    def at(self, instants, reach: pd.Timedelta = MAX_REACH) -> np.ndarray:
        """Temperature at instants [UTC ns]: linear in time between readings; NaN farther than
        ``reach`` from the nearest reading [degC]."""
        x = np.asarray(instants, dtype=np.int64)
        out = np.full(x.shape, np.nan)
        if len(self.ns) == 0:
            return out
        t = np.interp(x.astype(float), self.ns.astype(float), self.degc)
        i = np.searchsorted(self.ns, x)
        before = np.where(i > 0, x - self.ns[np.maximum(i - 1, 0)], np.iinfo(np.int64).max)
        after = np.where(i < len(self.ns), self.ns[np.minimum(i, len(self.ns) - 1)] - x,
                         np.iinfo(np.int64).max)
        near = np.minimum(before, after) <= int(reach.value)
        out[near] = t[near]
        return out


def recovery_span(t_out, heat_recovery, t_extract):
    """The supply-side temperatures modulated heat recovery can reach: ``(lo, hi)`` [degC].

    Parameters
    ----------
    t_out : float or array_like
        Outdoor air temperature [degC].
    heat_recovery : float
        Temperature efficiency of the recovery, supply side (EN 308) [-].
    t_extract : float
        Extract air temperature [degC].
    """
    t = np.asarray(t_out, dtype=float)
    full = t + heat_recovery * (t_extract - t)
    return np.minimum(t, full), np.maximum(t, full)


def thermal_power(t_out, speed, air: OutdoorAir):
    """Sensible heating and cooling power for outdoor air: ``(heating_kw, cooling_kw)`` [kW].

    Parameters
    ----------
    t_out : float or array_like
        Outdoor air temperature [degC]; NaN gives NaN.
    speed : float or array_like
        Fan speed as a fraction of design speed [-]; the flow scales with it.
    air : OutdoorAir
        Design flow [m3/h], heat recovery [-], supply and extract temperatures [degC].
    """
    v = air.flow * np.asarray(speed, dtype=float) / 3600.0          # [m3/s]
    lo, hi = recovery_span(t_out, air.heat_recovery, air.extract_temperature)
    heat = RHO_CP * v * np.maximum(0.0, air.supply_temperature - hi)
    cool = RHO_CP * v * np.maximum(0.0, lo - air.supply_temperature)
    return heat, cool


def minute_edges(start, end) -> np.ndarray:
    """Edges of the minutes that cover ``[start, end)`` [UTC ns]; a per-minute ``speed`` for
    :func:`off_schedule_thermal` has one entry per minute (``len(edges) - 1``)."""
    s, e = int(to_ns(pd.Timestamp(start))), int(to_ns(pd.Timestamp(end)))
    first = s - s % MINUTE_NS
    last = e + (-e) % MINUTE_NS
    return np.arange(first, last + 1, MINUTE_NS, dtype=np.int64)


@dataclass(frozen=True)
class ThermalMinutes:
    """Outdoor-air energy of one component's off-schedule running, minute by minute.

    ``edges`` bound the minutes [UTC ns]; per minute, ``inside_ns`` is its off-schedule running
    [ns], ``heating_kwh`` and ``cooling_kwh`` the delivered energy [kWh] (0 where there is no
    estimate) and ``unestimated_ns`` the off-schedule running without a temperature [ns].
    """

    off: Intervals
    edges: np.ndarray
    inside_ns: np.ndarray
    heating_kwh: np.ndarray
    cooling_kwh: np.ndarray
    unestimated_ns: np.ndarray

    @property
    def totals(self) -> dict[str, float]:
        """Delivered heating and cooling [kWh] and off-schedule hours without estimate [h]."""
        return {"heating_kwh": float(self.heating_kwh.sum()),
                "cooling_kwh": float(self.cooling_kwh.sum()),
                "unestimated_h": float(self.unestimated_ns.sum()) / NS_PER_H}

    def per_bin(self, edges) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Heating and cooling [kWh] and hours without estimate [h] between consecutive
        ``edges`` [UTC ns] (local days, say), each minute counted in the bin of its start."""
        edges = np.asarray(edges, dtype=np.int64)
        idx = np.searchsorted(edges, self.edges[:-1], side="right") - 1
        ok = (idx >= 0) & (idx < len(edges) - 1)
        n = max(len(edges) - 1, 0)

        def add(values):
            return np.bincount(idx[ok], weights=values[ok], minlength=n)[:n]

        return add(self.heating_kwh), add(self.cooling_kwh), add(self.unestimated_ns) / NS_PER_H

    def between(self, starts, ends) -> tuple[np.ndarray, np.ndarray]:
        """Heating and cooling [kWh] of the off-schedule running inside each ``[start, end)``
        [UTC ns]; a minute split by a bound is shared in proportion to its running each side."""
        heat = self._cumulative(self.heating_kwh, ends) - self._cumulative(self.heating_kwh,
                                                                           starts)
        cool = self._cumulative(self.cooling_kwh, ends) - self._cumulative(self.cooling_kwh,
                                                                           starts)
        return heat, cool

    def _cumulative(self, kwh: np.ndarray, instants) -> np.ndarray:
        x = np.clip(np.asarray(instants, dtype=np.int64), self.edges[0], self.edges[-1])
        b = np.clip((x - self.edges[0]) // MINUTE_NS, 0, len(kwh) - 1).astype(np.int64)
        before = np.concatenate([[0.0], np.cumsum(kwh)])[b]
        part = self.off.cumulative_ns(x) - self.off.cumulative_ns(self.edges[b])
        rate = np.divide(kwh[b], self.inside_ns[b], out=np.zeros(len(b)),
                         where=self.inside_ns[b] > 0)
        return before + rate * part


def off_schedule_thermal(off: Intervals, weather: OutdoorTemperature, air: OutdoorAir,
                         speed, start, end) -> ThermalMinutes:
    """Outdoor-air heating and cooling of off-schedule running, minute by minute.

    Parameters
    ----------
    off : Intervals
        The component's off-schedule running, inside ``[start, end)`` [UTC ns].
    weather : OutdoorTemperature
        Outdoor temperature readings.
    air : OutdoorAir
        The unit's outdoor-air settings.
    speed : float or array_like
        Fan speed as a fraction of design speed [-]: one value, or one per minute of
        :func:`minute_edges` ``(start, end)`` (the speed the run states carry).
    start, end : Timestamp
        The audit window [UTC].

    Returns
    -------
    ThermalMinutes
        Per-minute delivered energy; the temperature of a minute is the one at its middle.
    """
    edges = minute_edges(start, end)
    inside = off.ns_per_bin(edges).astype(np.int64)
    speed = np.broadcast_to(np.asarray(speed, dtype=float), inside.shape)
    t_out = weather.at(edges[:-1] + MINUTE_NS // 2)
    heat_kw, cool_kw = thermal_power(t_out, speed, air)
    known = np.isfinite(t_out)
    hours = inside / NS_PER_H
    heat = np.where(known, heat_kw * hours, 0.0)
    cool = np.where(known, cool_kw * hours, 0.0)
    unknown_ns = np.where(known, 0, inside)
    return ThermalMinutes(off, edges, inside, heat, cool, unknown_ns)


def uncovered_hours(weather: OutdoorTemperature, start, end) -> float:
    """Hours of ``[start, end)`` that lie farther than :data:`MAX_REACH` from any weather
    reading (no thermal estimate there, whether the unit runs or not) [h]."""
    edges = minute_edges(start, end)
    mid = edges[:-1] + MINUTE_NS // 2
    return float(np.count_nonzero(np.isnan(weather.at(mid)))) / 60.0


def thermal_prices(heating_kwh, cooling_kwh, heating, cooling) -> dict[str, np.ndarray]:
    """Purchased heat and cooling electricity [kWh], their cost [currency] and CO2 [kg CO2e].

    Purchased heat is delivered heat / ``heating.efficiency``; cooling electricity is delivered
    cooling / ``cooling.cop``. Vectorised over components, days or findings.
    """
    heat_in = np.asarray(heating_kwh, dtype=float) / heating.efficiency
    cool_in = np.asarray(cooling_kwh, dtype=float) / cooling.cop
    cost = heat_in * heating.price + cool_in * cooling.price
    co2 = heat_in * heating.co2_per_kwh + cool_in * cooling.co2_per_kwh
    return {"heat_purchased_kwh": heat_in, "cooling_electricity_kwh": cool_in,
            "thermal_cost": cost, "thermal_co2_kg": co2}
