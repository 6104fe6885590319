"""The site file's outdoor-air sections: ``[weather]``, ``[heating]``, ``[cooling]`` and a unit's
``outdoor_air`` table (interface section 7). Called by
:class:`schedcheck.inputs.site_sections.SiteValidator`; every problem is collected with its key.
"""

from __future__ import annotations

from pathlib import Path

from schedcheck.inputs.site_rules import (
    _COOLING,
    _HEATING,
    _OUTDOOR_AIR,
    _WEATHER,
    AIR_TEMPERATURE_RANGE,
    COP_RANGE,
    EFFICIENCY_RANGE,
    HEAT_RECOVERY_RANGE,
    MAX_FLOW,
)
from schedcheck.inputs.site_values import ValueReader, hint
from schedcheck.site import (
    WEATHER_COLUMNS,
    CoolingSettings,
    HeatingSettings,
    OutdoorAir,
    WeatherSettings,
)


def weather_settings(v: ValueReader, data: dict, base: Path) -> WeatherSettings | None:
    """The ``[weather]`` table, or None when the site file has none."""
    if "weather" not in data:
        return None
    w = v.table(data, "weather", "weather", _WEATHER)
    name = v.string(w, "file", "weather.file", required=True)
    path = None
    if name is not None:
        p = Path(name).expanduser()
        path = (p if p.is_absolute() else base / p).resolve()
        if path.is_dir():
            v.err("weather.file", f"{name!r} is a folder; name the weather file (.csv or .epw)")
        elif path.exists() and not path.is_file():
            v.err("weather.file", f"weather file {name!r} is not a regular file (a device, "
                  "pipe or socket); name the weather file (.csv or .epw) itself")
        elif not path.is_file():
            v.err("weather.file", f"weather file {name!r} does not exist (relative to "
                  f"{base.resolve()})")
    naive = v.string(w, "naive_time", "weather.naive_time", choices=("local", "utc"))
    typical = v.boolean(w, "typical_year", "weather.typical_year")
    columns: dict[str, str] = {}
    cols = w.get("columns", {})
    if not isinstance(cols, dict):
        v.err("weather.columns", "must be a table such as { temperature = \"t_out\" }")
        cols = {}
    for ours, theirs in cols.items():
        k = f"weather.columns.{ours}"
        if ours not in WEATHER_COLUMNS:
            v.err(k, "unknown column" + hint(ours, WEATHER_COLUMNS))
        elif not isinstance(theirs, str) or not theirs.strip():
            v.err(k, f"must be the column name in the file, not {theirs!r}")
        else:
            columns[ours] = theirs
    if len(set(columns.values())) < len(columns):
        v.err("weather.columns", "one file column is named for two of ours")
    if path is None:
        return None
    return WeatherSettings(file=path, naive_time=naive, columns=columns, typical_year=typical)


def heating_settings(v: ValueReader, data: dict) -> HeatingSettings:
    h = v.table(data, "heating", "heating", _HEATING)
    d = HeatingSettings()
    lo, hi = EFFICIENCY_RANGE
    return HeatingSettings(
        price=v.number(h, "price", "heating.price", d.price, lo=0.0),
        efficiency=v.number(h, "efficiency", "heating.efficiency", d.efficiency, lo=lo, hi=hi),
        co2_per_kwh=v.number(h, "co2_per_kwh", "heating.co2_per_kwh", d.co2_per_kwh, lo=0.0),
    )


def cooling_settings(v: ValueReader, data: dict) -> CoolingSettings:
    c = v.table(data, "cooling", "cooling", _COOLING)
    d = CoolingSettings()
    lo, hi = COP_RANGE
    return CoolingSettings(
        price=v.number(c, "price", "cooling.price", d.price, lo=0.0),
        cop=v.number(c, "cop", "cooling.cop", d.cop, lo=lo, hi=hi),
        co2_per_kwh=v.number(c, "co2_per_kwh", "cooling.co2_per_kwh", d.co2_per_kwh, lo=0.0),
    )


def outdoor_air(v: ValueReader, u: dict, ukey: str) -> OutdoorAir | None:
    """A unit's ``outdoor_air`` table, or None when it has none."""
    if "outdoor_air" not in u:
        return None
    key = f"{ukey}.outdoor_air"
    t = u["outdoor_air"]
    if not isinstance(t, dict):
        v.err(key, "must be a table such as { flow = 8000, heat_recovery = 0.8 }")
        return None
    v.unknown(t, key, _OUTDOOR_AIR)
    d = OutdoorAir(flow=0.0)
    lo_t, hi_t = AIR_TEMPERATURE_RANGE
    flow = v.number(t, "flow", f"{key}.flow", required=True, lo=0.0, lo_open=True, hi=MAX_FLOW)
    eta = v.number(t, "heat_recovery", f"{key}.heat_recovery", d.heat_recovery,
                   lo=HEAT_RECOVERY_RANGE[0], hi=HEAT_RECOVERY_RANGE[1])
    supply = v.number(t, "supply_temperature", f"{key}.supply_temperature",
                      d.supply_temperature, lo=lo_t, hi=hi_t)
    extract = v.number(t, "extract_temperature", f"{key}.extract_temperature",
                       d.extract_temperature, lo=lo_t, hi=hi_t)
    if flow is None:
        return None
    return OutdoorAir(flow=flow, heat_recovery=eta, supply_temperature=supply,
                      extract_temperature=extract)
