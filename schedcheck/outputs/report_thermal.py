"""The report's outdoor-air figures: heating and cooling of off-schedule running beside the fan
energy, from the saved summary (no HTML here; the template shows them)."""

from __future__ import annotations

THERMAL_KEYS = ("off_schedule_heating_kwh", "off_schedule_cooling_kwh",
                "off_schedule_thermal_cost", "off_schedule_thermal_co2_kg",
                "off_schedule_hours_without_weather")


def thermal_context(summary: dict, comps: list[dict], units: list[dict]) -> dict:
    """Totals of the outdoor-air fields, and per unit, for the template.

    ``comps`` and ``units`` are the report's rows; each unit row gains ``thermal`` (sums of
    :data:`THERMAL_KEYS` over its components, None when none of them has outdoor air).
    Returns ``{"priced": bool, **totals, "fan_and_thermal_cost", "fan_and_thermal_co2_kg",
    "heating_settings", "cooling_settings"}``.
    """
    by_id = {c["id"]: c for c in summary.get("components", [])}
    priced = [c for c in by_id.values() if "off_schedule_heating_kwh" in (c.get("energy") or {})]
    for c in comps:
        c["thermal"] = _sums([by_id[c["id"]]]) if by_id.get(c["id"]) in priced else None
    for u in units:
        members = [by_id[c["id"]] for c in u["components"] if by_id.get(c["id"]) in priced]
        u["thermal"] = _sums(members) if members else None
    total = _sums(priced)
    fan_cost = sum((c.get("energy") or {}).get("off_schedule_cost") or 0.0 for c in by_id.values())
    fan_co2 = sum((c.get("energy") or {}).get("off_schedule_co2_kg") or 0.0
                  for c in by_id.values())
    return {"priced": bool(priced), **total,
            "fan_and_thermal_cost": fan_cost + total["off_schedule_thermal_cost"],
            "fan_and_thermal_co2_kg": fan_co2 + total["off_schedule_thermal_co2_kg"]}


def _sums(rows: list[dict]) -> dict:
    return {k: float(sum((r.get("energy") or {}).get(k) or 0.0 for r in rows))
            for k in THERMAL_KEYS}
