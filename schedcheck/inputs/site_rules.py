"""What the site file accepts: the keys of each table and the ranges of its values.

The validator (:mod:`schedcheck.inputs.site_sections`) and the reference test of
docs/site-file.md read these; the affinity-law exponent's range is
:data:`schedcheck.audit.energy.EXPONENT_RANGE`, shared with the energy model.
"""

from __future__ import annotations

import pandas as pd

# keys of each table, in the order the reference (docs/site-file.md) lists them
_TOP = ("site", "readings", "holidays", "schedule", "energy", "unit", "run_state", "findings",
        "weather", "heating", "cooling", "trends")
_SITE = ("name", "timezone")
_READINGS = ("files", "unit", "naive_time", "max_gap", "columns", "skip_bad_rows", "years")
_HOLIDAYS = ("country", "subdivision", "categories", "closed", "language", "drop", "add")
_SCHEDULE = ("occupied", "allowed", "early_start", "late_stop", "standby_speed")
_ENERGY = ("price", "currency", "co2_per_kwh", "exponent")
_UNIT = ("id", "name", "schedule", "component", "outdoor_air")
_WEATHER = ("file", "naive_time", "columns", "typical_year")
_TRENDS = ("files", "columns", "naive_time", "max_gap")
_HEATING = ("price", "efficiency", "co2_per_kwh")
_COOLING = ("price", "cop", "co2_per_kwh")
_OUTDOOR_AIR = ("flow", "heat_recovery", "supply_temperature", "extract_temperature")
_COMPONENT = ("id", "role", "sensor", "power_kw", "speed", "threshold", "speeds", "design_rpm",
              "command", "status")
_ALLOWED_ITEM = ("file", "max_speed")   # an allowed window given as a table

# Speeds above 1.0 cover fans driven past design speed by a drive (up to 20 %; common
# practice, no source).
SPEED_RANGE = (0.0, 1.2)          # exclusive low, inclusive high [-]

# An allowance is hours around an occupied period; one of days overlaps the next day's (and
# one of centuries overflowed the clock). At most a day (common practice, no source).
MAX_ALLOWANCE = pd.Timedelta("1D")

# readings.max_gap at most a day: a longer bridge would count a dead sensor's days as running
# or off instead of no data (common practice, no source)
MAX_GAP_LIMIT = pd.Timedelta("24h")
# trends.max_gap at most a week: a change-of-value log may stay silent over a long weekend,
# but a value held longer than a week says little about the hours after it (common practice,
# no source)
MAX_TREND_GAP = pd.Timedelta("7D")

# the widest `[readings] years` may be (first and last year, inclusive): the dates the
# commands take (--from, --to) and well inside the nanosecond clock (1677-2262)
YEARS_LIMIT = (1900, 2199)

# Upper bounds that keep the arithmetic finite (common practice, no source: fan motors stay far
# below 100 MW, and no vibration reading unit reaches a million).
MAX_POWER_KW = 100_000.0          # [kW]
MAX_THRESHOLD = 1e6               # [reading unit]
# design_rpm at most 100,000 rpm: beyond any fan or motor shaft (common practice, no source)
MAX_RPM = 100_000.0               # [rpm]

# Outdoor air ([heating], [cooling], a unit's outdoor_air). Ranges that catch a wrong unit or a
# typing slip (common practice, no source): air handling units move up to a few hundred thousand
# m3/h; a temperature efficiency is a ratio below 1 (EN 308 defines it as a temperature ratio);
# set points outside 5-40 degC are not comfort air; a boiler's efficiency stays below 1.1 (on
# the gross calorific value) and a heat pump's or chiller's COP below 10.
MAX_FLOW = 1_000_000.0            # [m3/h]
HEAT_RECOVERY_RANGE = (0.0, 0.95)  # inclusive [-]
AIR_TEMPERATURE_RANGE = (5.0, 40.0)   # inclusive [degC]
EFFICIENCY_RANGE = (0.1, 10.0)    # inclusive [-]: a boiler 0.7-1.1, a heat pump up to ~6
COP_RANGE = (0.5, 10.0)           # inclusive [-]
