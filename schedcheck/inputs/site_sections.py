"""The site file's sections: [site], [readings], [holidays], [schedule], [energy], [[unit]],
[[unit.component]] and the tables derived from settings dataclasses ([run_state], [findings]).

Keys in error messages: dotted TOML keys (``readings.max_gap``, ``holidays.closed[2]``); units
and components are named by id where the id is known (``unit[AHU-1].component[supply].power_kw``)
and by 1-based position otherwise (``unit[#2].component[#1].id``).
"""

from __future__ import annotations

import dataclasses
import typing
import zoneinfo
from pathlib import Path

import pandas as pd

from schedcheck.audit.energy import EXPONENT_RANGE
from schedcheck.errors import excerpt
from schedcheck.inputs.file_limits import pattern_problem
from schedcheck.inputs.file_patterns import resolve_patterns
from schedcheck.inputs.site_holidays import HolidaySections
from schedcheck.inputs.site_ids import MAX_CO2_PER_KWH, MAX_PRICE, MAX_UNITS, timezone_problem
from schedcheck.inputs.site_outdoor import (
    cooling_settings,
    heating_settings,
    outdoor_air,
    weather_settings,
)
from schedcheck.inputs.site_rules import (
    _ALLOWED_ITEM,
    _COMPONENT,
    _ENERGY,
    _HOLIDAYS,
    _READINGS,
    _SCHEDULE,
    _SITE,
    _TOP,
    _UNIT,
    MAX_ALLOWANCE,
    MAX_GAP_LIMIT,
    MAX_POWER_KW,
    MAX_RPM,
    MAX_THRESHOLD,
    SPEED_RANGE,
    YEARS_LIMIT,
)
from schedcheck.inputs.site_trends import check_trend_keys, component_points, trend_settings
from schedcheck.inputs.site_values import ValueReader, hint  # noqa: F401
from schedcheck.site import (
    EXTRA_COLUMNS,
    READING_COLUMNS,
    ROLES,
    Component,
    EnergySettings,
    FindingSettings,
    ReadingsSettings,
    RunStateSettings,
    ScheduleSettings,
    Site,
    Unit,
)


class SiteValidator(HolidaySections):
    """Walks the parsed TOML section by section, collecting every problem."""

    def __init__(self, path: Path, text: str | None = None, *,
                 require_readings: bool = True) -> None:
        super().__init__(path, text)
        self.require_readings = require_readings
        self.base = path.parent
        self.keys: dict[str, str] = {}    # component key -> its site-file key

    # -- tables --------------------------------------------------------------------------------
    def site(self, data: dict) -> Site | None:
        self.unknown(data, "", _TOP)
        s = self.table(data, "site", "site", _SITE, required=True)
        name = self.string(s, "name", "site.name", default=self.base.name or self.path.stem)
        tz = self.timezone(s)
        readings = self.readings(self.table(data, "readings", "readings", _READINGS, True))
        hol = self.holidays(self.table(data, "holidays", "holidays", _HOLIDAYS))
        sched_t = self.table(data, "schedule", "schedule", _SCHEDULE)
        default_sched = self.schedule(sched_t, {}, "schedule")
        energy = self.energy(self.table(data, "energy", "energy", _ENERGY))
        units = self.units(data, sched_t)
        run_state = self.derived(data, "run_state", RunStateSettings)
        findings = self.derived(data, "findings", FindingSettings)
        weather = weather_settings(self, data, self.base)
        heating, cooling = heating_settings(self, data), cooling_settings(self, data)
        trends = trend_settings(self, data, self.base, require_files=self.require_readings)
        check_trend_keys(self, data, tuple(c for u in units for c in u.components), self.keys)
        if "weather" not in data:
            for i, u in enumerate(units, 1):
                if u.outdoor_air is not None:
                    self.err(f"unit[{u.id or '#' + str(i)}].outdoor_air", "needs a [weather] "
                             "table with the outdoor temperature file")
        if self.problems:
            return None
        return Site(name=name, timezone=tz, path=self.path, readings=readings, holidays=hol,
                    schedule=default_sched, energy=energy, units=units,
                    run_state=run_state, findings=findings, weather=weather,
                    heating=heating, cooling=cooling, trends=trends)

    def timezone(self, s: dict) -> str:
        tz = self.string(s, "timezone", "site.timezone", required=True)
        if tz is None:
            return "UTC"
        if problem := timezone_problem(tz):
            self.err("site.timezone", problem)
            return "UTC"
        try:
            zoneinfo.ZoneInfo(tz)
        except (zoneinfo.ZoneInfoNotFoundError, ValueError, OSError):
            names = sorted(zoneinfo.available_timezones())
            self.err("site.timezone", f"{tz!r} is not an IANA time zone name (such as "
                     f"'Europe/Oslo')" + hint(tz, names).replace("; allowed:", "; e.g.")[:120])
        return tz

    def readings(self, r: dict) -> ReadingsSettings:
        key = "readings.files"
        files = self.strings(r, "files", key)
        if "files" not in r:
            self.err(key, "missing (required): the readings files or glob patterns")
        if files is not None:
            if not files:
                self.err(key, "is empty: give at least one file or glob pattern")
            for i, (pat, hits) in enumerate(resolve_patterns(self.base, tuple(files)), 1):
                k = key if len(files) == 1 else f"{key}[{i}]"
                if problem := pattern_problem(self.base, pat):
                    self.err(k, problem)
                elif not hits and self.require_readings:
                    where = Path(pat).expanduser()
                    where = where if where.is_absolute() else self.base / where
                    if where.is_dir():
                        self.err(k, f"{pat!r} is a folder; name the files in it, e.g. "
                                 f"\"{pat.rstrip('/')}/*.csv\" or \"{pat.rstrip('/')}/*.parquet\"")
                    else:
                        self.err(k, f"{pat!r} matches no file (relative to "
                                 f"{self.base.resolve()})")
        unit = self.string(r, "unit", "readings.unit", default=ReadingsSettings.unit)
        naive = self.string(r, "naive_time", "readings.naive_time", choices=("local", "utc"))
        max_gap = self.duration(r, "max_gap", "readings.max_gap", ReadingsSettings.max_gap, True,
                                most=MAX_GAP_LIMIT)
        columns: dict[str, str | tuple[str, ...]] = {}
        cols = r.get("columns", {})
        if not isinstance(cols, dict):
            self.err("readings.columns", "must be a table such as { timestamp = \"Time\" }")
        else:
            seen: dict[str, str] = {}
            for ours, theirs in cols.items():
                k = f"readings.columns.{ours}"
                # one name, or a list of names tried in order (files from different exports)
                names = theirs if isinstance(theirs, list) and theirs else [theirs]
                if ours not in READING_COLUMNS + EXTRA_COLUMNS:
                    self.err(k, "unknown column" + hint(ours, READING_COLUMNS + EXTRA_COLUMNS))
                elif not all(isinstance(t, str) and t.strip() for t in names):
                    self.err(k, "must be the column name in the file, or a list of names, not "
                             f"{theirs!r}")
                elif any(t in seen for t in names) or len(set(names)) < len(names):
                    t = next((t for t in names if t in seen), None)
                    self.err(k, f"column {t!r} is already used for {seen[t]}" if t else
                             "a name is listed twice")
                else:
                    seen.update((t, ours) for t in names)
                    columns[ours] = theirs if isinstance(theirs, str) else tuple(names)
        skip = self.boolean(r, "skip_bad_rows", "readings.skip_bad_rows")
        return ReadingsSettings(files=tuple(files or ()), unit=unit, naive_time=naive,
                                max_gap=max_gap, columns=columns, skip_bad_rows=skip,
                                years=self.year_range(r))

    def year_range(self, r: dict) -> tuple[int, int]:
        """``[readings] years = [first, last]`` (inclusive) as ``(first, last + 1)``."""
        default = ReadingsSettings.years
        if "years" not in r:
            return default
        v, lo, hi = r["years"], *YEARS_LIMIT
        if (not isinstance(v, list) or len(v) != 2
                or not all(isinstance(x, int) and not isinstance(x, bool) for x in v)):
            self.err("readings.years", f"must be two whole years [first, last], such as "
                     f"[{default[0]}, {default[1] - 1}], not {excerpt(v)}")
            return default
        if not lo <= v[0] <= v[1] <= hi:
            self.err("readings.years", f"{v} must be two years from {lo} to {hi}, the first "
                     "not after the last")
            return default
        return (v[0], v[1] + 1)

    def calendars(self, t: dict, name: str, key: str) -> tuple[Path, ...] | None:
        files = self.strings(t, name, key)
        if files is None:
            return None
        out = []
        for i, f in enumerate(files, 1):
            p = Path(f).expanduser()
            p = (p if p.is_absolute() else self.base / p).resolve()
            if p.is_dir():
                k = key if len(files) == 1 else f"{key}[{i}]"
                self.err(k, f"{f!r} is a folder; name the calendar file (.ics) in it")
            elif p.exists() and not p.is_file():
                k = key if len(files) == 1 else f"{key}[{i}]"
                self.err(k, f"calendar file {excerpt(f)} is not a regular file (a device, pipe "
                         "or socket); name the calendar file (.ics) itself")
            elif not p.is_file():
                k = key if len(files) == 1 else f"{key}[{i}]"
                self.err(k, f"calendar file {f!r} does not exist (relative to "
                         f"{self.base.resolve()})")
            out.append(p)
        return tuple(out)

    def schedule(self, t: dict, base: dict, key: str) -> ScheduleSettings:
        """Schedule from table ``t`` where given, else from ``base`` (already validated)."""
        occ = self.calendars(t, "occupied", f"{key}.occupied")
        allowed, limits = self.allowed_windows(t, f"{key}.allowed")
        early = self.duration(t, "early_start", f"{key}.early_start", most=MAX_ALLOWANCE)
        late = self.duration(t, "late_stop", f"{key}.late_stop", most=MAX_ALLOWANCE)
        lo, hi = SPEED_RANGE
        standby = self.number(t, "standby_speed", f"{key}.standby_speed", lo=lo, hi=hi,
                              lo_open=True)
        given = {"occupied": occ, "allowed": allowed, "early_start": early, "late_stop": late,
                 "allowed_limits": limits, "standby_speed": standby}
        return dataclasses.replace(ScheduleSettings(**base),
                                   **{k: v for k, v in given.items() if v is not None})

    def allowed_windows(self, t: dict, key: str
                        ) -> tuple[tuple[Path, ...] | None, tuple[float | None, ...] | None]:
        """``allowed``: file names, or tables ``{ file = "x.ics", max_speed = 0.5 }``."""
        if "allowed" not in t:
            return None, None
        raw = t["allowed"]
        items = raw if isinstance(raw, list) else [raw]
        names, limits = [], []
        for i, item in enumerate(items, 1):
            k = key if len(items) == 1 else f"{key}[{i}]"
            if isinstance(item, dict):
                self.unknown(item, k, _ALLOWED_ITEM)
                lo, hi = SPEED_RANGE
                limits.append(self.number(item, "max_speed", f"{k}.max_speed", lo=lo, hi=hi,
                                          lo_open=True))
                item = item.get("file")
                if not isinstance(item, str) or not item.strip():
                    self.err(f"{k}.file", "missing: name the calendar file (.ics)")
                    continue
            else:
                limits.append(None)
            names.append(item)
        if len(names) < len(limits):
            return None, None
        files = self.calendars({"allowed": names}, "allowed", key)
        return files, (tuple(limits) if files is not None else None)

    def energy(self, e: dict) -> EnergySettings:
        lo, hi = EXPONENT_RANGE
        return EnergySettings(
            price=self.number(e, "price", "energy.price", EnergySettings.price, lo=0.0,
                              hi=MAX_PRICE),
            currency=self.string(e, "currency", "energy.currency",
                                 default=EnergySettings.currency) or "",
            co2_per_kwh=self.number(e, "co2_per_kwh", "energy.co2_per_kwh",
                                    EnergySettings.co2_per_kwh, lo=0.0, hi=MAX_CO2_PER_KWH),
            exponent=self.number(e, "exponent", "energy.exponent", EnergySettings.exponent,
                                 lo=lo, hi=hi),
        )

    def units(self, data: dict, sched_t: dict) -> tuple[Unit, ...]:
        raw = data.get("unit")
        if raw is None:
            self.err("unit", "no [[unit]] in the site file: describe at least one unit")
            return ()
        if not isinstance(raw, list) or not all(isinstance(u, dict) for u in raw):
            self.err("unit", "must be written as [[unit]] tables")
            return ()
        if len(raw) > MAX_UNITS:
            self.err("unit", f"{len(raw):,} units; one site file holds at most {MAX_UNITS:,}: "
                     "split the site into several site files and audit them with "
                     "`schedcheck portfolio`")
            return ()
        # the site default, validated once (its problems are reported under [schedule])
        quiet = SiteValidator(self.path)
        d = quiet.schedule(sched_t, {}, "schedule")
        base = {k: getattr(d, k) for k in _SCHEDULE if k in sched_t}
        if "allowed" in sched_t:
            base["allowed_limits"] = d.allowed_limits
        units, unit_ids, sensors = [], set(), {}
        for i, u in enumerate(raw, 1):
            uid = u.get("id") if isinstance(u.get("id"), str) and u.get("id").strip() else None
            ukey = f"unit[{uid}]" if uid else f"unit[#{i}]"
            self.prefixes[ukey] = ("unit", i)
            self.unknown(u, ukey, _UNIT)
            uid = self.string(u, "id", f"{ukey}.id", required=True)
            if uid is not None:
                if uid in unit_ids:
                    self.err(f"{ukey}.id", f"unit id {uid!r} is used twice")
                unit_ids.add(uid)
            name = self.string(u, "name", f"{ukey}.name", default=uid or "")
            override = u.get("schedule", {})
            if not isinstance(override, dict):
                self.err(f"{ukey}.schedule", "must be a table such as { occupied = \"x.ics\" }")
                override = {}
            self.unknown(override, f"{ukey}.schedule", _SCHEDULE)
            sched = self.schedule(override, base, f"{ukey}.schedule")
            if not sched.occupied:
                self.err(f"{ukey}.schedule.occupied", "no occupied calendar: set occupied in "
                         "[schedule] or in this unit's schedule")
            comps = self.components(u, uid or f"#{i}", ukey, sensors)
            air = outdoor_air(self, u, ukey)
            units.append(Unit(id=uid or "", name=name or "", schedule=sched, components=comps,
                              outdoor_air=air))
        return tuple(units)

    def components(self, u: dict, uid: str, ukey: str, sensors: dict) -> tuple[Component, ...]:
        raw = u.get("component")
        if not isinstance(raw, list) or not raw or not all(isinstance(c, dict) for c in raw):
            self.err(f"{ukey}.component", "needs at least one [[unit.component]] table")
            return ()
        out, ids = [], set()
        lo, hi = SPEED_RANGE
        for j, c in enumerate(raw, 1):
            cid = c.get("id") if isinstance(c.get("id"), str) and c.get("id").strip() else None
            k = f"{ukey}.component[{cid}]" if cid else f"{ukey}.component[#{j}]"
            self.prefixes[k] = self.prefixes.get(ukey, ()) + ("component", j)
            self.unknown(c, k, _COMPONENT)
            cid = self.string(c, "id", f"{k}.id", required=True)
            if cid is not None:
                if cid in ids:
                    self.err(f"{k}.id", f"component id {cid!r} is used twice in unit {uid}")
                ids.add(cid)
            role = self.string(c, "role", f"{k}.role", required=True, choices=ROLES)
            sensor = self.string(c, "sensor", f"{k}.sensor", required=True)
            if sensor is not None:
                if sensor in sensors:
                    self.err(f"{k}.sensor", f"sensor {sensor!r} is already mapped to "
                             f"{sensors[sensor]}; one sensor watches one component")
                else:
                    sensors[sensor] = f"{uid}/{cid}"
            power = self.number(c, "power_kw", f"{k}.power_kw", required=True, lo=0.0,
                                lo_open=True, hi=MAX_POWER_KW)
            speed = self.number(c, "speed", f"{k}.speed", required=True, lo=lo, hi=hi,
                                lo_open=True)
            thr = self.number(c, "threshold", f"{k}.threshold", lo=0.0, lo_open=True,
                              hi=MAX_THRESHOLD)
            speeds = self.speed_list(c, f"{k}.speeds")
            rpm = self.number(c, "design_rpm", f"{k}.design_rpm", lo=0.0, lo_open=True,
                              hi=MAX_RPM)
            command, status = component_points(self, c, k)
            self.keys[f"{uid}/{cid}"] = k
            out.append(Component(id=cid or "", unit=uid, role=role or "other",
                                 sensor=sensor or "", power_kw=power or 0.0,
                                 speed=speed or 0.0, threshold=thr, speeds=speeds,
                                 design_rpm=rpm, command=command, status=status))
        return tuple(out)

    def speed_list(self, c: dict, key: str) -> tuple[float, ...]:
        """``speeds``: fractions of design speed, 0 < s <= 1.2, strictly ascending."""
        if "speeds" not in c:
            return ()
        x = c["speeds"]
        lo, hi = SPEED_RANGE
        ok = (isinstance(x, list) and x and all(isinstance(v, (int, float))
                                                 and not isinstance(v, bool) for v in x))
        if not ok:
            self.err(key, f"must be a list of speeds such as [0.45, 1.0], not {x!r}")
            return ()
        if any(not (lo < v <= hi) for v in x):
            self.err(key, f"{x!r} is out of range: every speed must be > {lo:g} and <= {hi:g}")
            return ()
        if any(b <= a for a, b in zip(x, x[1:], strict=False)):
            self.err(key, f"{x!r} must be ascending (lowest speed first), each speed once")
            return ()
        return tuple(float(v) for v in x)

    def derived(self, data: dict, name: str, cls):
        """A table whose keys and types come from the fields of dataclass ``cls``."""
        hints = typing.get_type_hints(cls)
        fields = [f.name for f in dataclasses.fields(cls)]
        lows = {f.name: f.metadata.get("min", 0) for f in dataclasses.fields(cls)}
        highs = {f.name: f.metadata.get("max") for f in dataclasses.fields(cls)}
        t = self.table(data, name, name, fields)
        values = {}
        for f in fields:
            if f not in t:
                continue
            kinds = [a for a in typing.get_args(hints[f]) if a is not type(None)] or [hints[f]]
            kind, key = kinds[0], f"{name}.{f}"
            if kind is pd.Timedelta:
                val = self.duration(t, f, key)
            elif kind is bool:
                val = self.boolean(t, f, key, None)
            elif kind is int:
                val = self.number(t, f, key, lo=int(lows[f]), integer=True)
            elif kind is float:
                val = self.number(t, f, key, lo=float(lows[f]), hi=highs[f])
            elif kind is str:
                val = self.string(t, f, key)
            else:  # pragma: no cover - a field type the validator does not know yet
                val = t[f]
            if val is not None:
                values[f] = val
        return cls(**values)
