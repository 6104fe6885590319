"""The typed settings of a site (the site file's contents) that the rest of the code uses.

CONTRACT (shared by every module; change only with care): the dataclasses below. They are
built by :func:`schedcheck.inputs.site_file.load_site`, which reads the TOML, validates
everything, collects *every* problem and raises :class:`schedcheck.errors.InputProblems`.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from schedcheck.readings.timestamps import YEAR_RANGE

FAN_ROLES = ("supply_fan", "exhaust_fan", "return_fan")
ROLES = FAN_ROLES + ("heat_wheel", "other")


@dataclass(frozen=True)
class ScheduleSettings:
    """Intended schedule of a unit (site default merged with the unit's override)."""

    occupied: tuple[Path, ...] = ()          # iCalendar files: periods the unit must run
    allowed: tuple[Path, ...] = ()           # iCalendar files: running acceptable, not required
    early_start: pd.Timedelta = pd.Timedelta(0)   # allowance before each occupied period
    late_stop: pd.Timedelta = pd.Timedelta(0)     # allowance after each occupied period
    # per file of ``allowed``: its ``max_speed`` [-], None = any speed is allowed there
    allowed_limits: tuple[float | None, ...] = ()
    # outside occupied periods and allowances, running at or below this speed is allowed [-]
    standby_speed: float | None = None

    def allowed_limit(self, i: int) -> float | None:
        """The ``max_speed`` of the i-th allowed calendar (None: any speed)."""
        return self.allowed_limits[i] if i < len(self.allowed_limits) else None


@dataclass(frozen=True)
class Component:
    """One monitored rotating part of a unit."""

    id: str                      # unique within its unit, e.g. "supply"
    unit: str                    # the unit's id, e.g. "AHU-1"
    role: str                    # one of ROLES
    sensor: str                  # sensor id in the readings
    power_kw: float              # electrical input at design speed [kW]
    speed: float                 # usual running speed as a fraction of design speed [-]
    threshold: float | None = None   # fixed on/off level [reading unit], None = learn it
    speeds: tuple[float, ...] = ()   # a multi-speed fan's speeds, lowest first [-]
    design_rpm: float | None = None  # rotation speed at design speed [rpm]
    command: str | None = None       # building-system point that commands it ([trends])
    status: str | None = None        # building-system point that reports it running

    @property
    def key(self) -> str:
        """Reported id, ``UNIT/COMPONENT``."""
        return f"{self.unit}/{self.id}"

    @property
    def is_fan(self) -> bool:
        return self.role in FAN_ROLES


@dataclass(frozen=True)
class OutdoorAir:
    """A unit's outdoor air (``outdoor_air`` of a ``[[unit]]``), priced on its supply fan."""

    flow: float                       # outdoor air at design speed [m3/h]; scales with speed
    heat_recovery: float = 0.0        # temperature efficiency of the recovery [-]; 0 = none
    supply_temperature: float = 18.0  # supply air set point [degC]
    extract_temperature: float = 21.0  # air leaving the rooms [degC]


@dataclass(frozen=True)
class Unit:
    id: str
    name: str
    schedule: ScheduleSettings
    components: tuple[Component, ...]
    outdoor_air: OutdoorAir | None = None    # None: no thermal cost is estimated

    @property
    def supply_fan(self) -> Component | None:
        """The unit's supply fan (the component its outdoor air is priced on), if monitored."""
        return next((c for c in self.components if c.role == "supply_fan"), None)

    @property
    def state_component(self) -> Component | None:
        """The component whose run state is the unit's: its supply fan, else its first fan."""
        for c in self.components:
            if c.role == "supply_fan":
                return c
        for c in self.components:
            if c.is_fan:
                return c
        return self.components[0] if self.components else None


@dataclass(frozen=True)
class ReadingsSettings:
    files: tuple[str, ...]                    # patterns as written, resolved against the site dir
    unit: str = "mm/s"                        # label only
    naive_time: str | None = None             # None, "local" or "utc"
    # a longer silence between two readings is no data: five one-minute readings missed in a
    # row (common practice, no source); at most inputs.site_rules.MAX_GAP_LIMIT
    max_gap: pd.Timedelta = pd.Timedelta("5min")
    # our name -> name in the files, or names tried in order (exports that differ per gateway)
    columns: dict[str, str | tuple[str, ...]] = field(default_factory=dict)
    skip_bad_rows: bool = False
    # readings dated outside these years [first, last) are refused as bad rows (the site
    # file's `years` gives the last year inclusive)
    years: tuple[int, int] = YEAR_RANGE


@dataclass(frozen=True)
class HolidaySettings:
    country: str | None = None                # ISO 3166-1 alpha-2; None = no public holidays
    subdivision: str | None = None
    categories: tuple[str, ...] = ("public",)
    closed: tuple[tuple[dt.date, dt.date], ...] = ()   # inclusive local date ranges
    language: str = "en_US"                   # pinned holiday-name language
    drop_names: tuple[str, ...] = ()          # public holidays the site works on, by name
    drop_dates: tuple[dt.date, ...] = ()      # ... and by local date
    add: tuple[dt.date, ...] = ()             # extra days off kept as holidays (local dates)


@dataclass(frozen=True)
class EnergySettings:
    price: float = 0.0            # per kWh [currency/kWh]
    currency: str = ""
    co2_per_kwh: float = 0.0      # [kg CO2e/kWh]
    # fan affinity law exponent, power against speed [-]: the cube law (U.S. DOE Motor Systems
    # Tip Sheet #11); audit/energy.py takes its DEFAULT_EXPONENT from here
    exponent: float = 3.0


@dataclass(frozen=True)
class WeatherSettings:
    """Optional ``[weather]`` table: the outdoor temperature file."""

    file: Path                                # CSV (timestamp, temperature) or .epw, resolved
    naive_time: str | None = None             # CSV only: None, "local" or "utc"
    columns: dict[str, str] = field(default_factory=dict)   # ours -> the CSV's column name
    typical_year: bool = False                # .epw of a typical year: laid on every audit year


@dataclass(frozen=True)
class TrendSettings:
    """Optional ``[trends]`` table: the building system's command and status exports."""

    files: tuple[str, ...]                    # patterns as written, resolved against the site dir
    columns: dict[str, str] = field(default_factory=dict)   # ours -> the export's column name
    naive_time: str | None = None             # None, "local" or "utc"
    # a point silent longer than this is unknown afterwards: a day, so a change-of-value log
    # that repeats its value daily stays known (common practice, no source)
    max_gap: pd.Timedelta = pd.Timedelta("24h")


@dataclass(frozen=True)
class HeatingSettings:
    """Optional ``[heating]`` table: what delivered heat costs."""

    price: float = 0.0            # per kWh of purchased heat or fuel [currency/kWh]
    efficiency: float = 1.0       # delivered heat per unit purchased [-] (a heat pump: its COP)
    co2_per_kwh: float = 0.0      # per kWh purchased [kg CO2e/kWh]


@dataclass(frozen=True)
class CoolingSettings:
    """Optional ``[cooling]`` table: what delivered cooling costs."""

    price: float = 0.0            # per kWh of electricity [currency/kWh]
    cop: float = 3.0              # delivered cooling per kWh of electricity [-]
    co2_per_kwh: float = 0.0      # per kWh of electricity [kg CO2e/kWh]


@dataclass(frozen=True)
class RunStateSettings:
    """Optional ``[run_state]`` table: classifier settings (defaults in runstate/classify.py).

    The site-file validator derives the allowed keys from these fields, so adding a field here
    is enough to make a new key accepted (type-checked from its annotation).
    """

    min_run: pd.Timedelta | None = None     # shortest run kept [duration]; None = default
    min_stop: pd.Timedelta | None = None    # shortest stop kept [duration]; None = default
    floor: float | None = None              # absolute floor level [reading unit]; None = default
    resolution: float | None = None         # reading step [reading unit]; None = from the data
    idle_ratio: float | None = None         # low group at most this x running level may be idle
    shift_days: int | None = field(default=None, metadata={"min": 1})  # level-shift block [d]
    lookback: pd.Timedelta | None = None    # states and clock reference days before the window
    learn_from_all: bool | None = None      # levels from every reading in the files (default)
    # vibration velocity ~ speed ** this, for estimated speeds (runstate/speeds.py) [-]
    speed_exponent: float | None = field(default=None, metadata={"min": 0.5, "max": 4.0})


@dataclass(frozen=True)
class FindingSettings:
    """Optional ``[findings]`` table: finding rules (defaults in findings/find.py).

    As for RunStateSettings, allowed keys come from these fields; None means the documented
    default. A field's ``metadata["min"]`` sets the smallest value the site file may give.
    """

    min_off_schedule: pd.Timedelta | None = None   # off-schedule running this long = finding
    min_missed: pd.Timedelta | None = None         # occupied time off before it is a finding
    continuous: pd.Timedelta | None = None         # running without a stop this long = continuous
    max_starts_per_day: int | None = field(default=None, metadata={"min": 1})  # short cycling
    max_pause: pd.Timedelta | None = None          # shorter stops do not end an episode
    min_overrun: pd.Timedelta | None = None        # shorter early starts / late stops are ignored
    repeat_days: int | None = field(default=None, metadata={"min": 1})  # overrun days a week
    together: pd.Timedelta | None = None           # one unit's findings this close are one
    recurring_dates: int | None = field(default=None, metadata={"min": 1})  # dates of a pattern
    recurring_weeks: int | None = field(default=None, metadata={"min": 1})  # weeks of a pattern
    episode_floor: float | None = field(default=None, metadata={"min": 0.05, "max": 24})  # h/day
    episode_min_days: int | None = field(default=None, metadata={"min": 2})  # shortest episode
    min_disagreement: pd.Timedelta | None = None   # command/status disagreement = finding


@dataclass(frozen=True)
class Site:
    name: str
    timezone: str                 # IANA name
    path: Path                    # the site file
    readings: ReadingsSettings
    holidays: HolidaySettings
    schedule: ScheduleSettings    # site default
    energy: EnergySettings
    units: tuple[Unit, ...]
    run_state: RunStateSettings = RunStateSettings()
    findings: FindingSettings = FindingSettings()
    weather: WeatherSettings | None = None       # None: no weather file, no thermal cost
    heating: HeatingSettings = HeatingSettings()
    cooling: CoolingSettings = CoolingSettings()
    trends: TrendSettings | None = None          # None: no building-system trends

    @property
    def base_dir(self) -> Path:
        return self.path.parent

    @property
    def components(self) -> tuple[Component, ...]:
        return tuple(c for u in self.units for c in u.components)

    def unit(self, unit_id: str) -> Unit:
        for u in self.units:
            if u.id == unit_id:
                return u
        raise KeyError(unit_id)


# Column names of the readings, ours (a site file's readings.columns maps them to the files')
LEVEL_COLUMNS = ("x_rms", "y_rms", "z_rms", "x_peak", "y_peak", "z_peak")
#: optional: shaft rotation frequency some sensors estimate from the spectrum [Hz]
EXTRA_COLUMNS = ("rotation_hz",)
READING_COLUMNS = ("timestamp", "sensor") + LEVEL_COLUMNS
# Column names of a weather CSV, ours ([weather] columns maps them to the file's)
WEATHER_COLUMNS = ("timestamp", "temperature")
# Column names of a trend export, ours ([trends] columns maps them to the file's)
TREND_COLUMNS = ("timestamp", "point", "value")
