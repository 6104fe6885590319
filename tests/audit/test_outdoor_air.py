"""Outdoor air: sensible heating and cooling of off-schedule running (audit/outdoor_air.py)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from schedcheck.audit.outdoor_air import (
    MINUTE_NS,
    RHO_CP,
    OutdoorTemperature,
    minute_edges,
    off_schedule_thermal,
    recovery_span,
    thermal_power,
    thermal_prices,
    uncovered_hours,
)
from schedcheck.intervals import Intervals
from schedcheck.site import CoolingSettings, HeatingSettings, OutdoorAir
from tests.helpers import utc

H = 3_600 * 10**9


def _weather(pairs) -> OutdoorTemperature:
    return OutdoorTemperature(np.array([utc(t).value for t, _ in pairs], dtype=np.int64),
                              np.array([v for _, v in pairs], dtype=float))


@pytest.mark.validation
def test_sensible_heat_matches_the_handbook_inch_pound_form():
    # ASHRAE Handbook - Fundamentals, sensible heat of standard air: q [Btu/h] = 1.08 x cfm x
    # dT [F] (from memory; the constant is 60 min/h x 0.075 lb/ft3 x 0.24 Btu/(lb F)).
    # 1000 cfm heated by 20 F: 21,600 Btu/h = 6.330 kW (1 W = 3.412142 Btu/h).
    q_handbook_kw = 1.08 * 1000 * 20 / 3412.142
    flow_m3h = 1000 * 0.028316847 * 60          # 1000 cfm [m3/h]
    air = OutdoorAir(flow=flow_m3h, heat_recovery=0.0, supply_temperature=20.0)
    heat, cool = thermal_power(20.0 - 20 / 1.8, 1.0, air)
    # the handbook's 0.075 lb/ft3 is 1.201 kg/m3 and 0.24 Btu/(lb F) is 1.005 kJ/(kg K): the
    # same standard air as our 1.21 kJ/(m3 K) to within 0.5 %
    assert float(heat) == pytest.approx(q_handbook_kw, rel=0.005)
    assert float(cool) == 0.0


@pytest.mark.validation
def test_sensible_heat_matches_the_handbook_si_form():
    # ASHRAE Handbook - Fundamentals, SI edition, load-calculation chapter: q_s [W] = 1.23 x
    # Q [L/s] x dT [K] (from memory; 1.23 = 1.2 kg/m3 x 1.025 kJ/(kg K) of moist air). Ours is
    # dry standard air (1.204 x 1.006 = 1.21), 1.6 % lower: within 2 %.
    q_handbook_kw = 1.23 * 1000 * 10 / 1000        # 1000 L/s cooled by 10 K
    air = OutdoorAir(flow=3600.0, heat_recovery=0.0, supply_temperature=16.0)
    _, cool = thermal_power(26.0, 1.0, air)
    assert float(cool) == pytest.approx(q_handbook_kw, rel=0.02)
    assert RHO_CP == pytest.approx(1.204 * 1.006, rel=2e-3)


@pytest.mark.validation
def test_heat_recovery_is_the_supply_side_temperature_ratio_of_en_308():
    # EN 308 (and EN 13053): temperature ratio eta_t = (t22 - t21) / (t11 - t21), with t21 the
    # outdoor air entering the recovery, t22 the supply air leaving it and t11 the extract air.
    t21, t11, eta = -10.0, 22.0, 0.8
    lo, hi = recovery_span(t21, eta, t11)
    t22 = float(hi)                                 # full recovery warms the cold outdoor air
    assert (t22 - t21) / (t11 - t21) == pytest.approx(eta)
    assert float(lo) == t21                        # bypassed: it stays at the outdoor value
    # in summer the same ratio cools the warm outdoor air towards the extract air
    lo, hi = recovery_span(30.0, eta, 24.0)
    assert (float(lo) - 30.0) / (24.0 - 30.0) == pytest.approx(eta) and float(hi) == 30.0


def test_modulated_recovery_needs_no_heat_or_cooling_between_the_two():
    air = OutdoorAir(flow=3600.0, heat_recovery=0.8, supply_temperature=18.0,
                     extract_temperature=21.0)
    # 10 degC outside: full recovery would reach 18.8, so it is throttled to exactly 18
    heat, cool = thermal_power(np.array([10.0, 19.0, -10.0, 30.0]), 1.0, air)
    assert heat[0] == 0.0 and cool[0] == 0.0
    assert heat[1] == 0.0 and cool[1] == pytest.approx(RHO_CP * 1.0)   # 19 -> 18, no help
    assert heat[2] == pytest.approx(RHO_CP * (18 - (-10 + 0.8 * 31)))
    assert cool[3] == pytest.approx(RHO_CP * (30 + 0.8 * (21 - 30) - 18))


def test_flow_scales_with_speed():
    air = OutdoorAir(flow=7200.0, supply_temperature=18.0)
    heat, _ = thermal_power(8.0, np.array([1.0, 0.5, 0.3]), air)
    assert heat == pytest.approx(RHO_CP * 2.0 * 10 * np.array([1.0, 0.5, 0.3]))


def test_interpolation_is_linear_and_stops_three_hours_from_a_reading():
    w = _weather([("2026-01-05T00:00Z", 0.0), ("2026-01-05T02:00Z", 4.0),
                  ("2026-01-05T12:00Z", -6.0)])
    at = [utc(t).value for t in ("2026-01-05T01:00Z", "2026-01-05T01:30Z", "2026-01-05T05:00Z",
                                 "2026-01-05T05:01Z", "2026-01-05T09:00Z", "2026-01-05T15:00Z",
                                 "2026-01-05T15:01Z", "2026-01-04T21:00Z", "2026-01-04T20:59Z")]
    t = w.at(at)
    assert t[:3] == pytest.approx([2.0, 3.0, 4.0 - 10.0 * 3 / 10])
    assert np.isnan(t[3])                          # 3 h 1 min from both readings
    assert t[4] == pytest.approx(-3.0)             # 3 h from the noon reading
    assert t[5] == -6.0 and np.isnan(t[6])         # after the last reading: up to 3 h
    assert t[7] == 0.0 and np.isnan(t[8])          # before the first one too


def test_minute_series_counts_every_off_schedule_minute_once():
    start, end = utc("2026-01-05T00:00Z"), utc("2026-01-06T00:00Z")
    off = Intervals.from_arrays(
        np.array([utc("2026-01-05T05:00:30Z").value, utc("2026-01-05T20:00Z").value]),
        np.array([utc("2026-01-05T06:00:30Z").value, utc("2026-01-05T22:00Z").value]))
    # constant -2 degC until 12:00, then nothing until 01:00 (20:00-22:00 is >3 h from both)
    w = _weather([(f"2026-01-05T{h:02d}:00Z", -2.0) for h in range(0, 13)]
                 + [("2026-01-06T01:00Z", -2.0)])
    air = OutdoorAir(flow=3600.0, heat_recovery=0.0, supply_temperature=18.0)
    tm = off_schedule_thermal(off, w, air, 0.5, start, end)
    assert tm.inside_ns.sum() == off.duration_ns()
    tot = tm.totals
    assert tot["heating_kwh"] == pytest.approx(RHO_CP * 0.5 * 20 * 1.0)   # 05:00:30 - 06:00:30
    assert tot["unestimated_h"] == pytest.approx(2.0)                     # 20:00-22:00
    assert tot["cooling_kwh"] == 0.0
    # findings that split the set share its energy exactly
    cut = utc("2026-01-05T05:30:15Z").value
    heat, _ = tm.between(np.array([start.value, cut]), np.array([cut, end.value]))
    assert heat.sum() == pytest.approx(tot["heating_kwh"])
    assert heat[0] == pytest.approx(RHO_CP * 0.5 * 20 * (29.75 / 60))
    # per day
    h, c, u = tm.per_bin(np.array([start.value, end.value]))
    assert h[0] == pytest.approx(tot["heating_kwh"]) and u[0] == pytest.approx(2.0)


def test_a_speed_per_minute_is_used_minute_by_minute():
    start, end = utc("2026-01-05T00:00Z"), utc("2026-01-05T02:00Z")
    edges = minute_edges(start, end)
    assert len(edges) == 121 and edges[1] - edges[0] == MINUTE_NS
    off = Intervals.window(start, end)
    w = _weather([("2026-01-05T00:00Z", 8.0), ("2026-01-05T02:00Z", 8.0)])
    speed = np.where(np.arange(120) < 60, 1.0, 0.3)
    tm = off_schedule_thermal(off, w, OutdoorAir(flow=3600.0), speed, start, end)
    assert tm.totals["heating_kwh"] == pytest.approx(RHO_CP * 10 * (1.0 + 0.3))


def test_uncovered_hours_and_prices():
    w = _weather([("2026-01-05T00:00Z", 1.0)])
    assert uncovered_hours(w, utc("2026-01-05T00:00Z"), utc("2026-01-06T00:00Z")) == \
        pytest.approx(21.0)
    p = thermal_prices(np.array([95.0]), np.array([30.0]),
                       HeatingSettings(price=1.0, efficiency=0.95, co2_per_kwh=0.2),
                       CoolingSettings(price=2.0, cop=3.0, co2_per_kwh=0.1))
    assert p["heat_purchased_kwh"][0] == pytest.approx(100.0)
    assert p["cooling_electricity_kwh"][0] == pytest.approx(10.0)
    assert p["thermal_cost"][0] == pytest.approx(100.0 + 20.0)
    assert p["thermal_co2_kg"][0] == pytest.approx(20.0 + 1.0)


def test_weather_series_refuses_unsorted_or_non_finite_values():
    with pytest.raises(ValueError):
        OutdoorTemperature(np.array([2, 1]), np.array([0.0, 1.0]))
    with pytest.raises(ValueError):
        OutdoorTemperature(np.array([1, 2]), np.array([0.0, np.nan]))
    assert pd.isna(OutdoorTemperature(np.array([], dtype=np.int64), np.array([])).at([0])[0])
