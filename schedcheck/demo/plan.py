"""The fictional demo site's plan: the building, its units, sensors, calendars and planted faults.

Everything here is invented for demonstration and testing (no real building, person or
product). This module holds the plan as data and renders the site file (TOML) and the
calendars (iCalendar, RFC 5545) as text; :mod:`schedcheck.demo.build` turns the plan into true run
intervals, faults and readings.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import holidays as holidays_lib
import numpy as np
import pandas as pd

from schedcheck.demo.defaults import DEFAULT_MONTHS, DEFAULT_SEED, MAX_MONTHS  # noqa: F401
from schedcheck.demo.weather import outdoor_air_line, weather_toml
from schedcheck.intervals import NS_PER_S, from_ns, to_ns
from schedcheck.schedule.calendars import HOLIDAY_MARKER

TZ = "Europe/Oslo"
SITE_NAME = "Lindeskar Learning House"
FIRST_DAY = dt.date(2026, 2, 16)          # a Monday
EARLY_START, LATE_STOP = "2h", "30min"    # site default allowances (invented for the demo)
CLOSED = ((dt.date(2026, 5, 15), dt.date(2026, 5, 15)),     # the Friday after Ascension Day
          (dt.date(2026, 7, 13), dt.date(2026, 7, 31)))     # summer closure


@dataclass(frozen=True)
class Rule:
    """An occupied (or allowed) period: weekly on ``days`` from ``first``, or once on ``first``."""

    summary: str
    first: dt.date
    start: str                     # local HH:MM
    end: str                       # local HH:MM (same day)
    days: tuple[int, ...] = ()     # weekdays, Monday = 0; empty = a one-off event
    exdates: tuple[dt.date, ...] = ()
    on_holidays: bool = False      # marked to apply on public holidays and closures too

    def on(self, day: dt.date) -> bool:
        if not self.days:
            return day == self.first
        return day >= self.first and day.weekday() in self.days and day not in self.exdates


_WD = (0, 1, 2, 3, 4)
CALENDARS: dict[str, tuple[str, tuple[Rule, ...]]] = {
    "offices.ics": ("Office wings, occupied hours", (
        Rule("Offices open", dt.date(2026, 1, 5), "07:00", "17:00", _WD),)),
    "lecture-hall.ics": ("Lecture hall, occupied hours", (
        Rule("Teaching", dt.date(2026, 1, 5), "08:00", "16:00", _WD),
        Rule("Evening course", dt.date(2026, 1, 6), "18:00", "21:00", (1,),
             exdates=(dt.date(2026, 3, 31),)),
        Rule("Open day", dt.date(2026, 3, 21), "10:00", "15:00"),
        Rule("Choir concert", dt.date(2026, 4, 23), "19:00", "22:00"),
        Rule("Graduation ceremony", dt.date(2026, 5, 14), "11:00", "15:00",
             on_holidays=True))),   # Ascension Day: a public holiday
    "canteen.ics": ("Canteen and kitchen, occupied hours", (
        Rule("Kitchen and canteen open", dt.date(2026, 1, 5), "06:30", "15:00", _WD),)),
    "library.ics": ("Library, opening hours", (
        Rule("Library open (long days)", dt.date(2026, 1, 5), "08:00", "20:00", (0, 1, 2, 3)),
        Rule("Library open (Friday)", dt.date(2026, 1, 9), "08:00", "16:00", (4,)),
        Rule("Library open (Saturday)", dt.date(2026, 1, 10), "10:00", "14:00", (5,)))),
    "night-purge.ics": ("Night cooling allowed (not required)", tuple(
        Rule("Night cooling allowed", d, "01:00", "05:00")
        for d in (dt.date(2026, 5, m) for m in (5, 6, 7, 11, 12)))),
    "weekend-ventilation.ics": ("Weekend ventilation, allowed at low speed", (
        Rule("Weekend ventilation (low speed)", dt.date(2026, 1, 10), "09:00", "15:00",
             (5, 6)),)),
}
# allowed windows with a speed limit: calendar -> max_speed [-] (interface section 6)
LIMITED = {"weekend-ventilation.ics": 0.5}


@dataclass(frozen=True)
class Machine:
    """One monitored component and how its sensor sees it (levels in [mm/s], invented)."""

    unit: str
    id: str
    role: str
    sensor: str
    gateway: str
    power_kw: float               # electrical input at design speed [kW]
    speed: float                  # usual speed fraction [-]
    running_level: float          # RMS level at design speed [mm/s]
    noise_floor: float            # background level when stopped [mm/s]
    drift: float = 0.0            # relative level change per 30 days [-]
    carried_from: str | None = None   # sibling component id whose vibration is carried
    carried_level: float = 0.0    # [mm/s]
    variable_speed: bool = False
    axes: str = "xyz"             # axes the sensor reports (RMS each; peak on the last only)
    speeds: tuple[float, ...] = ()    # a multi-speed fan's speeds, in the site file [-]
    design_rpm: float | None = None   # with it the sensor writes rotation_hz [rpm]

    @property
    def key(self) -> str:
        return f"{self.unit}/{self.id}"


@dataclass(frozen=True)
class UnitPlan:
    id: str
    name: str
    calendar: str
    early_start: str | None = None    # None: the site default
    purge: bool = False               # uses the night-cooling windows
    clock_tz: str = TZ                # the zone the controller's clock keeps
    ignores_days_off: bool = False    # controller never got holidays and closures
    reduced_speed: bool = False       # runs at reduced speed (demo/speed_units.py)
    allowed: tuple[str, ...] = ()     # the unit's own allowed calendars (else the site's)


UNITS = (
    UnitPlan("AHU-1", "North office wing", "offices.ics", purge=True, ignores_days_off=True),
    UnitPlan("AHU-2", "Lecture hall", "lecture-hall.ics", early_start="1h"),
    UnitPlan("AHU-3", "Canteen and kitchen", "canteen.ics", early_start="1h30min",
             clock_tz="Etc/GMT-1"),   # POSIX sign: UTC+1 all year, no daylight saving
    UnitPlan("AHU-4", "South office wing", "offices.ics"),
    UnitPlan("AHU-5", "Library", "library.ics", early_start="1h", purge=True),
    UnitPlan("AHU-6", "West office wing", "offices.ics", reduced_speed=True),
    UnitPlan("AHU-7", "Craft workshops", "offices.ics", early_start="1h", reduced_speed=True,
             allowed=("night-purge.ics", "weekend-ventilation.ics")),
)
MACHINES = (
    Machine("AHU-1", "supply", "supply_fan", "VB-1011", "GW-N", 7.5, 0.85, 2.2, 0.040, 0.03),
    Machine("AHU-1", "exhaust", "exhaust_fan", "VB-1012", "GW-N", 5.5, 0.85, 1.6, 0.050,
            carried_from="supply", carried_level=0.12),
    Machine("AHU-2", "supply", "supply_fan", "VB-1021", "GW-N", 11.0, 0.80, 2.8, 0.040,
            variable_speed=True),
    Machine("AHU-2", "exhaust", "exhaust_fan", "VB-1022", "GW-N", 7.5, 0.80, 1.9, 0.045, -0.02),
    Machine("AHU-2", "wheel", "heat_wheel", "VB-1023", "GW-N", 0.37, 1.0, 0.7, 0.030,
            carried_from="supply", carried_level=0.28),
    Machine("AHU-3", "supply", "supply_fan", "VB-1031", "GW-S", 5.5, 0.90, 3.1, 0.040, 0.08),
    Machine("AHU-3", "exhaust", "exhaust_fan", "VB-1032", "GW-S", 4.0, 0.90, 2.4, 0.050),
    Machine("AHU-4", "supply", "supply_fan", "VB-1041", "GW-S", 7.5, 0.85, 1.8, 0.050, 0.02),
    Machine("AHU-4", "exhaust", "exhaust_fan", "VB-1042", "GW-S", 5.5, 0.85, 1.4, 0.060),
    Machine("AHU-5", "supply", "supply_fan", "VB-1051", "GW-L", 3.0, 0.75, 1.2, 0.030, axes="z"),
    Machine("AHU-5", "exhaust", "exhaust_fan", "VB-1052", "GW-L", 2.2, 0.75, 0.9, 0.035, axes="z"),
    # variable-speed drives; the supply sensor estimates the shaft frequency (rotation_hz)
    Machine("AHU-6", "supply", "supply_fan", "VB-1061", "GW-W", 5.5, 0.85, 2.6, 0.040,
            design_rpm=1450.0),
    Machine("AHU-6", "exhaust", "exhaust_fan", "VB-1062", "GW-W", 4.0, 0.85, 1.8, 0.050, 0.02),
    # two-speed fans (low and high)
    Machine("AHU-7", "supply", "supply_fan", "VB-1071", "GW-W", 4.0, 1.0, 2.4, 0.040,
            speeds=(0.5, 1.0)),
    Machine("AHU-7", "exhaust", "exhaust_fan", "VB-1072", "GW-W", 3.0, 1.0, 1.7, 0.045,
            speeds=(0.5, 1.0)),
)
READINGS_FILES = {"GW-N": "gw-north.csv.gz", "GW-S": "gw-south.csv.gz",
                  "GW-L": "gw-library.parquet", "GW-W": "gw-west.csv.gz"}

# The planted faults and data gaps (local times; invented for the demo).
NIGHT_OVERRIDE = ("AHU-2", tuple(dt.date(2026, 3, d) for d in (9, 10, 11, 12)),
                  "21:58:20", "05:03:40")
TRIP = ("AHU-4", dt.date(2026, 3, 18), "10:42:17", "14:57:40")
CONTROLS_CHANGE = ("AHU-4", dt.date(2026, 4, 20), "10:14:05")
GATEWAY_OUTAGE = ("GW-N", "2026-03-24T09:07:30", "2026-03-24T14:41:10")
BATTERY_FLAT = ("VB-1042", "2026-05-06T10:21:44", "2026-05-08T13:05:02")
WHEEL_BELOW = 9.0        # heat wheel runs while the outdoor air is colder than this [degC]



# -- the invented world around the building ---------------------------------------------------
def days_off(first: dt.date, last: dt.date) -> dict[dt.date, str]:
    """Norwegian public holidays (holidays package, pinned English names) and closure dates."""
    years = list(range(first.year, last.year + 1))
    hol = holidays_lib.country_holidays("NO", years=years, categories=("public",), language="en_US")
    out = {d: str(n) for d, n in hol.items() if first <= d <= last}
    for a, b in CLOSED:
        d = a
        while d <= b:
            if first <= d <= last:
                out.setdefault(d, "Closure day")
            d += dt.timedelta(days=1)
    return dict(sorted(out.items()))


def outdoor_temperature(instants_ns: np.ndarray, rng: np.random.Generator) -> np.ndarray:
    """Invented outdoor air of a coastal town [degC]: an annual cycle (coldest about 20 January
    at -2 degC, warmest about 20 July at 14 degC), day-to-day weather (AR(1), sd about 2.5 K) and
    4 K of daily swing peaking at 15:00 local. Demo data only, from no source."""
    t = np.asarray(instants_ns, dtype=np.int64)
    local = from_ns(t).tz_convert(TZ)
    base = to_ns(pd.Timestamp(FIRST_DAY).tz_localize(TZ))
    day = ((t - base) // (86400 * NS_PER_S)).astype(int)
    n_days = int(day.max()) + 2
    weather = np.zeros(n_days)
    shocks = rng.normal(0.0, 1.5, n_days)
    for i in range(1, n_days):
        weather[i] = 0.8 * weather[i - 1] + shocks[i]
    hour = local.hour.to_numpy() + local.minute.to_numpy() / 60.0
    season = 6.0 - 8.0 * np.cos(2 * np.pi * (local.day_of_year.to_numpy() - 20) / 365.0)
    return season + weather[day.clip(0, n_days - 1)] + 4.0 * np.cos(2 * np.pi * (hour - 15) / 24)


# -- rendering the plan as text ------------------------------------------------------------------
# The zone definition every calendar carries (RFC 5545 section 3.6.5 requires a VTIMEZONE for
# each TZID used); EU rule: last Sunday of March and of October at 01:00 UTC (Directive
# 2000/84/EC), i.e. 02:00 and 03:00 local.
_VTIMEZONE = """BEGIN:VTIMEZONE
TZID:Europe/Oslo
BEGIN:DAYLIGHT
TZOFFSETFROM:+0100
TZOFFSETTO:+0200
TZNAME:CEST
DTSTART:19810329T020000
RRULE:FREQ=YEARLY;BYMONTH=3;BYDAY=-1SU
END:DAYLIGHT
BEGIN:STANDARD
TZOFFSETFROM:+0200
TZOFFSETTO:+0100
TZNAME:CET
DTSTART:19961027T030000
RRULE:FREQ=YEARLY;BYMONTH=10;BYDAY=-1SU
END:STANDARD
END:VTIMEZONE"""
_BYDAY = ("MO", "TU", "WE", "TH", "FR", "SA", "SU")


def _ics_time(day: dt.date, hhmm: str) -> str:
    return f"{day:%Y%m%d}T{hhmm.replace(':', '')}00"


def calendar_text(name: str) -> str:
    """The iCalendar text (RFC 5545, CRLF line ends) of one of the demo's calendars."""
    title, rules = CALENDARS[name]
    stem = name.removesuffix(".ics")
    lines = ["BEGIN:VCALENDAR", "VERSION:2.0", "PRODID:-//schedcheck//demo site//EN",
             "CALSCALE:GREGORIAN", f"NAME:{title}",   # NAME: RFC 7986 section 5.1
             *_VTIMEZONE.split("\n")]
    for i, r in enumerate(rules, start=1):
        lines += ["BEGIN:VEVENT", f"UID:{stem}-{i}@lindeskar.invalid", "DTSTAMP:20260101T000000Z",
                  f"DTSTART;TZID={TZ}:{_ics_time(r.first, r.start)}",
                  f"DTEND;TZID={TZ}:{_ics_time(r.first, r.end)}", f"SUMMARY:{r.summary}"]
        if r.days:
            lines.append("RRULE:FREQ=WEEKLY;BYDAY=" + ",".join(_BYDAY[d] for d in r.days))
        for x in r.exdates:
            lines.append(f"EXDATE;TZID={TZ}:{_ics_time(x, r.start)}")
        if r.on_holidays:
            lines.append(f"CATEGORIES:{HOLIDAY_MARKER}")
        lines.append("END:VEVENT")
    lines.append("END:VCALENDAR")
    return "\r\n".join(lines) + "\r\n"


def _closed() -> str:
    return ", ".join(f'"{a}"' if a == b else f'"{a}/{b}"' for a, b in CLOSED)


def site_toml() -> str:
    """The demo's site file (TOML); paths are relative to the folder it is written to."""
    out = [
        "# Demo site: an INVENTED building with invented data, written by `schedcheck demo`.",
        "# Nothing here describes a real building; use it to learn the tool and to test it.",
        "",
        "[site]",
        f'name = "{SITE_NAME}, Vellesund (fictional)"',
        f'timezone = "{TZ}"',
        "",
        "[readings]",
        'files = ["readings/*.csv.gz", "readings/*.parquet"]',
        'unit = "mm/s"',
        'max_gap = "5min"',
        "",
        "[holidays]",
        'country = "NO"',
        f"closed = [{_closed()}]",
        "",
        "[schedule]",
        'occupied = "calendars/offices.ics"',
        'allowed = ["calendars/night-purge.ics"]',
        f'early_start = "{EARLY_START}"',
        f'late_stop = "{LATE_STOP}"',
        "",
        "[energy]",
        "price = 1.20                # per kWh (invented for the demo)",
        'currency = "NOK"',
        "co2_per_kwh = 0.017         # kg CO2e per kWh (invented for the demo)",
        "exponent = 3.0              # fan affinity law: power against speed cubed",
        *weather_toml(),
    ]
    for u in UNITS:
        out += ["", "[[unit]]", f'id = "{u.id}"', f'name = "{u.name}"']
        over = [f'occupied = "calendars/{u.calendar}"'] if u.calendar != "offices.ics" else []
        if u.early_start:
            over.append(f'early_start = "{u.early_start}"')
        if u.allowed:
            over.append("allowed = [" + ", ".join(
                f'{{ file = "calendars/{c}", max_speed = {LIMITED[c]} }}' if c in LIMITED
                else f'"calendars/{c}"' for c in u.allowed) + "]")
        if over:
            out.append("schedule = { " + ", ".join(over) + " }")
        if outdoor_air_line(u.id):
            out.append(outdoor_air_line(u.id))
        for m in (m for m in MACHINES if m.unit == u.id):
            out += ["", "[[unit.component]]", f'id = "{m.id}"', f'role = "{m.role}"',
                    f'sensor = "{m.sensor}"', f"power_kw = {m.power_kw}", f"speed = {m.speed}"]
            if m.speeds:
                out.append("speeds = [" + ", ".join(str(v) for v in m.speeds) + "]")
            if m.design_rpm:
                out.append(f"design_rpm = {m.design_rpm:g}")
    return "\n".join(out) + "\n"
