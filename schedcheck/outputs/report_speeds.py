"""The report's speed figures: running hours by speed in words, and how the off-schedule energy
moves with the assumed speed (the affinity law)."""

from __future__ import annotations


def by_speed_text(c: dict) -> str:
    """Running hours by speed in words, with an estimate's range: ``30 %: 120.0 h
    (estimated, 11-43 %); 85 %: 120.0 h``; empty with one speed or none."""
    rows = (c.get("hours") or {}).get("by_speed") or []
    if len(rows) < 2:
        return ""
    est = {round(lv["speed"], 2): lv for lv in c.get("speed_levels") or []
           if lv.get("source") == "estimated"}
    parts = []
    for r in rows:
        text = f"{r['speed']:.0%}: {r['hours']:,.1f} h"
        lv = est.get(round(r["speed"], 2)) or next(
            (v for k, v in est.items() if abs(k - r["speed"]) <= 0.025), None)
        if lv is not None:
            text += f" (estimated from the vibration level, {lv['low']:.0%}-{lv['high']:.0%})"
        parts.append(text)
    return "; ".join(parts)


SENSITIVITY_STEP = 0.05  # speed fraction +/- for the sensitivity line (common practice, no source)


def speed_sensitivity(comps: list[dict]) -> dict:
    """How the off-schedule energy moves with the assumed speed, and what no data could hide.

    Affinity law: power scales with speed**n, so the off-schedule kWh of a component at speed
    s +/- SENSITIVITY_STEP is kwh * ((s +/- step) / s) ** n. The no-data bound is the energy had the
    component run through every no-data hour at its assumed power [kWh].
    """
    low = high = hidden = 0.0
    for c in comps:
        kwh = (c["energy"].get("off_schedule_kwh") or 0.0)
        s, n = c.get("speed"), c.get("exponent")
        if s and n and s > SENSITIVITY_STEP:
            low += kwh * ((s - SENSITIVITY_STEP) / s) ** n
            high += kwh * (min(s + SENSITIVITY_STEP, 1.0) / s) ** n if s < 1.0 else kwh
        else:
            low += kwh
            high += kwh
        hidden += (c["hours"].get("no_data") or 0.0) * (c["energy"].get("running_kw") or 0.0)
    return {"kwh_speed_low": low, "kwh_speed_high": high, "kwh_no_data_max": hidden,
            "speed_step": SENSITIVITY_STEP}
