"""The demo town's weather file and the outdoor-air settings of its units (all invented).

The outdoor temperature is the demo's own seeded series (:func:`schedcheck.demo.plan.
outdoor_temperature`, the one the heat wheel follows), sampled on the hour and rounded to
0.1 degC as a weather station reports it, with two planted gaps: a short one that the audit
bridges by interpolation and a long one that leaves off-schedule running without a thermal
estimate. The true five-minute series stays in memory (:attr:`DemoSite.outdoor`) for the tests.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from schedcheck.intervals import from_ns, to_ns

WEATHER_FILE = "weather/vellesund-outdoor.csv"
HOUR_NS = 3_600 * 10**9

# unit id -> outdoor air at design speed [m3/h], heat recovery temperature ratio [-], supply
# and extract temperatures [degC]; invented for the demo (the canteen's kitchen unit has no
# recovery, as kitchen extract often has none because of grease)
OUTDOOR_AIR = {
    "AHU-1": (6000, 0.75, 18.0, 21.0),
    "AHU-2": (9000, 0.78, 18.0, 22.0),
    "AHU-3": (5000, 0.0, 17.0, 22.0),
    "AHU-4": (6000, 0.50, 18.0, 21.0),      # an older plate exchanger
    "AHU-5": (2500, 0.80, 19.0, 21.0),
}
# weather station silences, local wall times (invented): the first is bridged (under 3 h from a
# reading), the second is not
WEATHER_GAPS = (("2026-03-03T01:30", "2026-03-03T04:30"), ("2026-04-28T18:30", "2026-04-29T08:30"))


def weather_table(grid_ns: np.ndarray, temps: np.ndarray, tz: str) -> pd.DataFrame:
    """Hourly readings (``timestamp`` local ISO 8601 with offset, ``temperature`` [degC])."""
    on_hour = (grid_ns % HOUR_NS) == 0
    t, v = grid_ns[on_hour], np.round(temps[on_hour], 1)
    keep = np.ones(t.size, bool)
    for a, b in WEATHER_GAPS:
        lo = to_ns(pd.Timestamp(a).tz_localize(tz))
        hi = to_ns(pd.Timestamp(b).tz_localize(tz))
        keep &= ~((t > lo) & (t < hi))
    local = from_ns(t[keep]).tz_convert(tz)
    return pd.DataFrame({"timestamp": local.strftime("%Y-%m-%dT%H:%M:%S%z"),
                         "temperature": v[keep]})


def weather_toml() -> list[str]:
    """The site file's [weather], [heating] and [cooling] tables."""
    return [
        "",
        "[weather]",
        f'file = "{WEATHER_FILE}"     # invented hourly outdoor temperature [degC]',
        "",
        "[heating]",
        "price = 0.90                # per kWh of district heat (invented for the demo)",
        "efficiency = 1.0            # district heat is metered as delivered",
        "co2_per_kwh = 0.06          # kg CO2e per kWh (invented for the demo)",
        "",
        "[cooling]",
        "price = 1.20                # per kWh of electricity",
        "cop = 3.0                   # chiller: delivered cooling per kWh of electricity",
        "co2_per_kwh = 0.017",
    ]


def outdoor_air_line(unit_id: str) -> str | None:
    """A unit's ``outdoor_air`` line in the site file, or None."""
    if unit_id not in OUTDOOR_AIR:
        return None
    flow, eta, supply, extract = OUTDOOR_AIR[unit_id]
    return (f"outdoor_air = {{ flow = {flow}, heat_recovery = {eta}, supply_temperature = "
            f"{supply}, extract_temperature = {extract} }}")
