"""The fictional demo site: a building of our own, its calendars, true run intervals and faults.

Everything here is invented for demonstration and testing; no real building, person or
product is described. The site is *Lindeskar Learning House*, an office and teaching building
in the fictional town of Vellesund (time zone Europe/Oslo, so Norwegian public holidays apply).
The default window is the 13 weeks 2026-02-16 .. 2026-05-17, which spans the spring
daylight-saving change (2026-03-29) and Easter (5 April 2026).

``build_demo(seed, months)`` returns a :class:`DemoSite` held in memory: the site-file text, the
calendar texts, the true run/off intervals of every component (UTC, minute-exact plus seconds),
the data gaps, and the planted faults with kind, component, local dates and a sentence.
``demo_readings(demo)`` turns the truth into readings rows with :mod:`schedcheck.demo.synth`;
``observed_truth(demo)`` is the truth an audit should recover (``no_data`` over the gaps).
Writing files is done by :mod:`schedcheck.outputs.demo_files`.

Planted faults (each a :class:`PlantedFault`, one record per affected component):

* ``holiday``  AHU-1 runs on public holidays and the closure day (its controller never got the
  holiday calendar); AHU-2's graduation on Ascension Day is marked to apply on holidays, so
  running for it is correct;
* ``night``    AHU-2 runs 22:00-05:00 on four nights (an override left on);
* ``clock_offset`` AHU-3's controller keeps standard time (UTC+1) after 2026-03-29, so its
  starts and stops are one hour late in local time;
* ``missed``   AHU-4 trips on 2026-03-18 in occupied hours and is reset hours later;
* ``continuous`` AHU-4 runs without a stop from a controls change on 2026-04-20;
* AHU-5 (the library) is clean.

Data problems (not faults): a gateway outage of some hours for every sensor on gateway GW-N,
and one sensor silent for two days with a flat battery.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from schedcheck.demo import speed_units, synth
from schedcheck.demo.plan import (
    BATTERY_FLAT,
    CALENDARS,
    CONTROLS_CHANGE,
    DEFAULT_MONTHS,
    DEFAULT_SEED,
    EARLY_START,
    FIRST_DAY,
    GATEWAY_OUTAGE,
    LATE_STOP,
    MACHINES,
    MAX_MONTHS,
    NIGHT_OVERRIDE,
    READINGS_FILES,
    TRIP,
    TZ,
    UNITS,
    WHEEL_BELOW,
    Machine,
    UnitPlan,
    calendar_text,
    days_off,
    outdoor_temperature,
    site_toml,
)
from schedcheck.demo.trends import trend_site_toml
from schedcheck.demo.weather import weather_table
from schedcheck.durations import parse_duration
from schedcheck.errors import InputError
from schedcheck.intervals import NS_PER_S, Intervals, from_ns, to_ns
from schedcheck.window import day_window

_NS_MIN = 60 * NS_PER_S


# Side effects: a late clock also gives short missed mornings (up to about 55 min here) and
# late stops; a unit stuck running also runs through nights, weekends and holidays.
MAY_ALSO_SHOW = {"clock_offset": ("missed", "late_stop", "early_start"),
                 "continuous": ("night", "weekend", "holiday", "unscheduled_day")}


@dataclass(frozen=True)
class PlantedFault:
    """One planted fault on one component; ``episodes`` are the true UTC ``[start, end)``."""

    component: str
    kind: str
    dates: tuple[str, ...]
    episodes: tuple[tuple[pd.Timestamp, pd.Timestamp], ...]
    note: str
    kwh: float | None = None   # true off-schedule energy, where the speed sets it (setback...)

    @property
    def unit(self) -> str:
        return self.component.split("/")[0]

    @property
    def start(self) -> pd.Timestamp:
        return self.episodes[0][0]

    @property
    def end(self) -> pd.Timestamp:
        return self.episodes[-1][1]

    @property
    def hours(self) -> float:
        return sum((b - a).total_seconds() for a, b in self.episodes) / 3600.0

    @property
    def may_also_show(self) -> tuple[str, ...]:
        """Finding kinds this fault can also produce on some days (its side effects)."""
        return MAY_ALSO_SHOW.get(self.kind, ())


@dataclass
class DemoSite:
    """The demo site in memory (see the module docstring)."""

    seed: int
    first: dt.date
    last: dt.date
    start: pd.Timestamp
    end: pd.Timestamp
    site_toml: str
    calendars: dict[str, str]
    machines: tuple[Machine, ...]
    truth: dict[str, pd.DataFrame]          # component key -> start, end, state (run/off), UTC
    gaps: pd.DataFrame                      # sensor, component, start, end, cause (UTC)
    faults: list[PlantedFault]
    days_off: dict[dt.date, str] = field(default_factory=dict)
    speed: dict[str, pd.Series] = field(default_factory=dict)   # variable-speed drives
    # the true outdoor temperature (five-minute grid, UTC ns -> degC) and the weather file's
    # hourly readings made from it (demo/weather.py)
    outdoor: tuple[np.ndarray, np.ndarray] | None = None
    weather: pd.DataFrame | None = None

    @property
    def clean_components(self) -> list[str]:
        faulty = {f.component for f in self.faults}
        return [m.key for m in self.machines if m.key not in faulty]


# -- helpers -------------------------------------------------------------------------------------
def _at(day: dt.date, hhmm: str, tz: str = TZ) -> int:
    t = dt.time.fromisoformat(hhmm)
    ts = pd.Timestamp(dt.datetime.combine(day, t))
    return to_ns(ts.tz_localize(tz, nonexistent="shift_forward", ambiguous=True))


def _local(text: str) -> int:
    return to_ns(pd.Timestamp(text).tz_localize(TZ))


def _labelled(run: Intervals, s0: int, e0: int) -> pd.DataFrame:
    run = run.clip(s0, e0)
    off = run.complement(s0, e0)
    s = np.concatenate([run.starts, off.starts])
    e = np.concatenate([run.ends, off.ends])
    lab = np.array(["run"] * len(run) + ["off"] * len(off), dtype=object)
    order = np.argsort(s, kind="stable")
    return pd.DataFrame({"start": from_ns(s[order]), "end": from_ns(e[order]), "state": lab[order]})


def _pairs(iv: Intervals) -> tuple[tuple[pd.Timestamp, pd.Timestamp], ...]:
    s, e = from_ns(iv.starts), from_ns(iv.ends)
    return tuple(zip(s, e, strict=True))


# -- the true run intervals ----------------------------------------------------------------------
_GRID = 5 * _NS_MIN


def _dur(text: str) -> int:
    return parse_duration(text).value


_SupplyFault = tuple[str, tuple[str, ...], Intervals, str]   # kind, local dates, episodes, note


def _supply_runs(plan: UnitPlan, dates: list[dt.date], off: dict[dt.date, str], temp, rng,
                 s0: int, e0: int) -> tuple[Intervals, list[_SupplyFault]]:
    """True runs of a unit's supply fan and its planted faults ``(kind, dates, episodes, note)``."""
    early, late = _dur(plan.early_start or EARLY_START), _dur(LATE_STOP)
    purge_days = {r.first for r in CALENDARS["night-purge.ics"][1]}
    runs: list[tuple[int, int]] = []
    on_days_off: list[tuple[dt.date, int, int]] = []
    shifted: list[tuple[dt.date, int, int]] = []
    change = CONTROLS_CHANGE[1] if plan.id == CONTROLS_CHANGE[0] else None
    for d in dates:
        if change is not None and d > change:
            break
        rules = [r for r in CALENDARS[plan.calendar][1] if r.on(d)]
        if d in off and not plan.ignores_days_off:
            rules = [r for r in rules if r.on_holidays]
        periods = [(r.start, r.end) for r in rules]
        day_runs = []
        for a, b in periods:
            s, e = _at(d, a, plan.clock_tz), _at(d, b, plan.clock_tz)
            # optimal start: earlier on cold mornings, always inside the early-start allowance
            u = float(np.clip(0.35 + 0.05 * (3.0 - temp(s)) + rng.normal(0, 0.1), 0.08, 0.95))
            v = float(rng.uniform(0.1, 0.9))
            day_runs.append((s - int(early * u) // NS_PER_S * NS_PER_S,
                             e + int(late * v) // NS_PER_S * NS_PER_S))
        if plan.purge and d in purge_days:
            day_runs.append((_at(d, "01:00") + int(rng.integers(3 * 60, 15 * 60)) * NS_PER_S,
                             _at(d, "05:00") - int(rng.integers(15 * 60, 45 * 60)) * NS_PER_S))
        runs += day_runs
        if d in off and plan.ignores_days_off and day_runs:
            on_days_off += [(d, a, b) for a, b in day_runs]
        if plan.clock_tz != TZ and day_runs and _at(d, "12:00", plan.clock_tz) != _at(d, "12:00"):
            shifted += [(d, a, b) for a, b in day_runs]
    run = Intervals.from_arrays([a for a, _ in runs], [b for _, b in runs])
    faults: list[tuple[str, tuple[str, ...], Intervals, str]] = []

    def iv(items) -> Intervals:
        return Intervals.from_arrays([a for _, a, _ in items], [b for _, _, b in items])

    if on_days_off:
        names = sorted({f"{d} ({off[d]})" for d, _, _ in on_days_off})
        when = tuple(sorted({str(d) for d, _, _ in on_days_off}))
        faults.append(("holiday", when, iv(on_days_off),
                       "The controller never got the holiday calendar, so the unit ran its "
                       "working-day programme on " + ", ".join(names) + "."))
    if shifted:
        change_day = min(d for d in dates if _at(d, "12:00", plan.clock_tz) != _at(d, "12:00"))
        faults.append(("clock_offset", (str(change_day),), iv(shifted),
                       "The controller clock keeps standard time (UTC+1) and did not follow the "
                       f"change to summer time on {change_day}: from the next run on "
                       f"({shifted[0][0]}) every start and stop is one hour late in local time."))
    if plan.id == NIGHT_OVERRIDE[0]:
        nights = [(d, _at(d, NIGHT_OVERRIDE[2]), _at(d + dt.timedelta(days=1), NIGHT_OVERRIDE[3]))
                  for d in NIGHT_OVERRIDE[1] if d in dates]
        if nights:
            run = run | iv(nights)
            starts = ", ".join(str(d) for d, _, _ in nights)
            faults.append(("night", tuple(str(d) for d, _, _ in nights), iv(nights),
                           "A night override was left on: the unit ran from about 22:00 to 05:00 "
                           f"on the nights starting {starts}."))
    if plan.id == TRIP[0] and TRIP[1] in dates:
        trip = iv([(TRIP[1], _at(TRIP[1], TRIP[2]), _at(TRIP[1], TRIP[3]))])
        run = run - trip
        faults.append(("missed", (str(TRIP[1]),), trip,
                       f"The supply fan tripped on {TRIP[1]} at {TRIP[2][:5]} during occupied "
                       f"hours and was reset at {TRIP[3][:5]}; the exhaust fan stopped with it."))
    if change is not None and change in dates:
        t_change = _at(change, CONTROLS_CHANGE[2])
        k = int(np.searchsorted(run.ends, t_change, side="right"))
        begin = int(run.starts[k]) if k < len(run) and run.starts[k] <= t_change else t_change
        stuck = Intervals.from_arrays([begin], [e0])
        run = run | stuck
        faults.append(("continuous", (str(change),), stuck,
                       f"A controls change on {change} at {CONTROLS_CHANGE[2][:5]} left the unit "
                       "in occupied mode: it has run day and night without a stop since."))
    faults = [(k, d, e.clip(s0, e0), n) for k, d, e, n in faults]
    return run.clip(s0, e0), [f for f in faults if len(f[2])]


def _follow(run: Intervals, rng, lo: int, hi: int, stop_lo: int, stop_hi: int) -> Intervals:
    """An interlocked follower: starts ``lo..hi`` s and stops ``stop_lo..stop_hi`` s after."""
    n = len(run)
    d1 = rng.integers(lo, hi + 1, n) * NS_PER_S
    d2 = rng.integers(stop_lo, stop_hi + 1, n) * NS_PER_S
    return Intervals.from_arrays(run.starts + d1, np.maximum(run.ends + d2, run.starts + d1 + 1))


def _dependent_faults(key: str, role: str, runs: Intervals, supply_faults, s0: int, e0: int):
    out = []
    for kind, dates, episodes, note in supply_faults:
        wide = episodes.shift_ends(0, 3 * _NS_MIN)
        if kind == "missed":
            if role == "heat_wheel":
                continue   # a heat wheel is not required to run
            got = runs.complement(s0, e0) & wide
        else:
            got = runs & wide
        if len(got):
            out.append(PlantedFault(key, kind, dates, _pairs(got), note))
    return out


def window_dates(months: int = DEFAULT_MONTHS) -> tuple[dt.date, dt.date]:
    """Local first and last date of the demo: whole weeks from 2026-02-16, about ``months`` long."""
    if not 1 <= int(months) <= MAX_MONTHS:
        raise InputError(f"months must be 1 to {MAX_MONTHS}, not {months}", key="--months")
    weeks = round(int(months) * 52 / 12)
    return FIRST_DAY, FIRST_DAY + dt.timedelta(days=7 * weeks - 1)


def build_demo(seed: int = DEFAULT_SEED, months: int = DEFAULT_MONTHS) -> DemoSite:
    """Build the fictional site in memory: site file, calendars, true intervals, faults, gaps.

    Parameters
    ----------
    seed : int
        Seed of every random choice; the same seed gives the same site, byte for byte.
    months : int
        Length of the window in months (1 to 12), rounded to whole weeks from 2026-02-16. The
        full set of planted faults needs at least 3 (13 weeks, to 2026-05-17).
    """
    if not 0 <= int(seed) < 2**63:
        raise InputError(f"seed must be a whole number from 0 to 2**63 - 1, not {seed}",
                         key="--seed")
    first, last = window_dates(months)
    start, end = day_window(first, last, TZ)
    s0, e0 = to_ns(start), to_ns(end)
    rng = np.random.default_rng([int(seed), 0])
    grid = np.arange(s0 - 86400 * NS_PER_S, e0 + 86400 * NS_PER_S, _GRID, dtype=np.int64)
    temps = outdoor_temperature(grid, rng)

    def temp(t_ns: int) -> float:
        return float(temps[np.clip((t_ns - grid[0]) // _GRID, 0, grid.size - 1)])

    dates = [first + dt.timedelta(days=i) for i in range((last - first).days + 1)]
    off = days_off(first, last)
    truth: dict[str, pd.DataFrame] = {}
    faults: list[PlantedFault] = []
    speed: dict[str, pd.Series] = {}
    cold = Intervals.from_arrays(grid[temps < WHEEL_BELOW], grid[temps < WHEEL_BELOW] + _GRID)
    for plan in UNITS:
        if plan.reduced_speed:   # own random streams: nothing above moves (demo/speed_units.py)
            _speed_unit(plan, dates, off, temp, seed, s0, e0, truth, speed, faults)
            continue
        sup, sup_faults = _supply_runs(plan, dates, off, temp, rng, s0, e0)
        for m in (m for m in MACHINES if m.unit == plan.id):
            if m.role == "supply_fan":
                runs = sup
                faults += [PlantedFault(m.key, k, d, _pairs(e), n) for k, d, e, n in sup_faults]
            elif m.role == "heat_wheel":
                wheel = (_follow(sup, rng, 60, 120, 0, 0) & cold).clip(s0, e0)
                runs = Intervals.from_arrays(wheel.starts[wheel.lengths >= 15 * _NS_MIN],
                                             wheel.ends[wheel.lengths >= 15 * _NS_MIN])
                faults += _dependent_faults(m.key, m.role, runs, sup_faults, s0, e0)
            else:
                runs = _follow(sup, rng, 20, 60, 5, 40).clip(s0, e0)
                faults += _dependent_faults(m.key, m.role, runs, sup_faults, s0, e0)
            truth[m.key] = _labelled(runs, s0, e0)
            if m.variable_speed:
                hour = from_ns(grid[::3]).tz_convert(TZ).hour.to_numpy()
                val = 0.70 + 0.18 * np.exp(-(((hour - 11.5) / 3.0) ** 2))
                val = val + rng.normal(0, 0.03, hour.size)
                speed[m.key] = pd.Series(np.clip(val, 0.6, 0.95).round(3), index=from_ns(grid[::3]))
    return DemoSite(seed=int(seed), first=first, last=last, start=start, end=end,
                    site_toml=trend_site_toml(site_toml()),
                    calendars={n: calendar_text(n) for n in CALENDARS},
                    machines=MACHINES, truth=truth, gaps=_gaps(s0, e0), faults=faults,
                    days_off=off, speed=speed, outdoor=(grid, temps),
                    weather=weather_table(grid, temps, TZ))


def _speed_unit(plan: UnitPlan, dates, off, temp, seed: int, s0: int, e0: int, truth: dict,
                speed: dict, faults: list) -> None:
    """True runs, speed steps and faults of a reduced-speed unit (AHU-6, AHU-7)."""
    rng = np.random.default_rng([int(seed), speed_units.SPEED_STREAM + 10 + UNITS.index(plan)])
    day, _ = _supply_runs(plan, dates, off, temp, rng, s0, e0)
    purge = Intervals.from_arrays(
        [_at(r.first, r.start) for r in CALENDARS["night-purge.ics"][1]],
        [_at(r.first, r.end) for r in CALENDARS["night-purge.ics"][1]])
    runs, found = speed_units.speed_unit_truth(
        plan, day, dates, _at, purge, seed, s0, e0,
        lambda run, r: _follow(run, r, 20, 60, 5, 40), TZ)
    for m in (m for m in MACHINES if m.unit == plan.id):
        truth[m.key] = _labelled(runs[m.role][0], s0, e0)
        speed[m.key] = runs[m.role][1]
        faults += [PlantedFault(m.key, k, d, _pairs(e), n, round(kwh, 4))
                   for role, k, d, e, kwh, n in found if role == m.role]


def _gaps(s0: int, e0: int) -> pd.DataFrame:
    rows = []
    gw, a, b = GATEWAY_OUTAGE
    for m in (m for m in MACHINES if m.gateway == gw):
        rows.append((m.sensor, m.key, _local(a), _local(b), f"gateway {gw} offline"))
    sensor, a, b = BATTERY_FLAT
    m = next(m for m in MACHINES if m.sensor == sensor)
    rows.append((sensor, m.key, _local(a), _local(b), "sensor battery flat until replaced"))
    rows = [(s, k, max(a, s0), min(b, e0), c) for s, k, a, b, c in rows if min(b, e0) > max(a, s0)]
    return pd.DataFrame({
        "sensor": [r[0] for r in rows], "component": [r[1] for r in rows],
        "start": from_ns([r[2] for r in rows]), "end": from_ns([r[3] for r in rows]),
        "cause": [r[4] for r in rows]})


def _outages(demo: DemoSite, sensor: str) -> list[tuple[pd.Timestamp, pd.Timestamp]]:
    g = demo.gaps[demo.gaps["sensor"] == sensor]
    return list(zip(g["start"], g["end"], strict=True))


def observed_truth(demo: DemoSite) -> pd.DataFrame:
    """What an audit should recover: ``component, state, start, end`` (UTC), state ``run``,
    ``off`` or ``no_data`` (over the data gaps); each component's rows cover the window."""
    parts = []
    for m in demo.machines:
        t = synth.truth_with_gaps(demo.truth[m.key], _outages(demo, m.sensor), demo.start, demo.end)
        parts.append(t.assign(component=m.key)[["component", "state", "start", "end"]])
    return pd.concat(parts, ignore_index=True)


def machine_truth(demo: DemoSite) -> pd.DataFrame:
    """What the machines really did: ``component, state, start, end`` (UTC, run/off only)."""
    cols = ["component", "state", "start", "end"]
    return pd.concat([demo.truth[m.key].assign(component=m.key)[cols] for m in demo.machines],
                     ignore_index=True)


def _two_digits(v: np.ndarray) -> np.ndarray:
    dec = np.where(v < 0.1, 3, np.where(v < 1.0, 2, 1))
    return np.round(v * 10.0**dec) / 10.0**dec


def demo_readings(demo: DemoSite) -> dict[str, pd.DataFrame]:
    """Readings rows per readings file (gateway export), made by :mod:`schedcheck.demo.synth`.

    Rows are in file order: sensors interleaved by time, with synth's duplicates, out-of-order
    rows and lost packets. Timestamps are whole seconds. Each sensor reports RMS on its axes
    and a peak on its last axis; levels keep two significant digits (0.001 mm/s below 0.1,
    0.01 below 1, 0.1 above: about a sensor's resolution, and it keeps the files small).
    """
    files: dict[str, list[pd.DataFrame]] = {}
    for i, m in enumerate(demo.machines, start=1):
        rng = np.random.default_rng([demo.seed, i])
        carried = demo.truth[f"{m.unit}/{m.carried_from}"] if m.carried_from else None
        frame = synth.readings_for_component(
            demo.truth[m.key], sensor=m.sensor, rng=rng, start=demo.start, end=demo.end,
            noise_floor=m.noise_floor, running_level=m.running_level, level_drift=m.drift,
            speed=demo.speed.get(m.key), carried=carried, carried_level=m.carried_level,
            transient_factor=float(rng.uniform(2.0, 4.0)), packet_loss=0.012,
            outages=_outages(demo, m.sensor), axes=m.axes, design_rpm=m.design_rpm)
        frame["timestamp"] = frame["timestamp"].dt.floor("s")
        levels = [f"{a}_rms" for a in m.axes] + [f"{m.axes[-1]}_peak"]
        frame = frame[["timestamp", "sensor", *levels]
                      + (["rotation_hz"] if m.design_rpm else [])]
        for c in levels:
            frame[c] = _two_digits(frame[c].to_numpy())
        if m.design_rpm:   # a spectral estimate to 0.01 Hz, blank while stopped
            frame["rotation_hz"] = frame["rotation_hz"].round(2)
        # file position: the i-th row sits where the i-th earliest reading would
        frame["_pos"] = np.sort(to_ns(frame["timestamp"]))
        files.setdefault(READINGS_FILES[m.gateway], []).append(frame)
    out = {}
    for name, frames in files.items():
        f = pd.concat(frames, ignore_index=True).sort_values("_pos", kind="stable")
        out[name] = f.drop(columns="_pos").reset_index(drop=True)
    return out
