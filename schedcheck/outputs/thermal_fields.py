"""The outdoor-air fields of the audit files (summary.json, daily.csv, findings.csv): which
columns, and their rounding. Written only where the site prices outdoor air."""

from __future__ import annotations

import math

from schedcheck.audit.thermal import THERMAL_ENERGY_KEYS

#: added to daily.csv and findings.csv (before ``detail``) when the site prices outdoor air
DAILY_THERMAL = ("off_schedule_heating_kwh", "off_schedule_cooling_kwh")
FINDINGS_THERMAL = ("heating_kwh", "cooling_kwh", "thermal_cost")
TOTAL_THERMAL = ("off_schedule_heating_kwh", "off_schedule_cooling_kwh",
                 "off_schedule_thermal_cost", "off_schedule_thermal_co2_kg")


def _digits(key: str, energy: int, cost: int, hours: int) -> int:
    if key.endswith("_cost"):
        return cost
    return hours if key.endswith("_weather") else energy


def _round(x, nd: int):
    x = float(x)
    return round(x, nd) + 0.0 if math.isfinite(x) else None


def prices_outdoor_air(result) -> bool:
    """Whether any component of the audit carries an outdoor-air estimate."""
    return any(c.thermal is not None for c in result.components)


def energy_fields(en: dict, energy: int, cost: int, hours: int) -> dict:
    """A component's outdoor-air energy fields (only those it has), rounded."""
    return {k: _round(en[k], _digits(k, energy, cost, hours))
            for k in THERMAL_ENERGY_KEYS if k in en}


def total_fields(components, energy: int, cost: int) -> dict:
    """Site totals of the outdoor-air fields (0 where no component has them)."""
    return {k: _round(sum(c.energy.get(k, 0.0) for c in components),
                      _digits(k, energy, cost, 0)) for k in TOTAL_THERMAL}


def finding_fields(row, energy: int, cost: int) -> dict:
    """A finding's outdoor-air fields (None where it has no estimate)."""
    out = {}
    for k in FINDINGS_THERMAL:
        v = getattr(row, k, float("nan"))
        out[k] = None if v != v else _round(v, _digits(k, energy, cost, 0))
    return out
