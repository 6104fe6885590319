"""The demo's two reduced-speed units: their true runs, speeds and planted faults.

Everything here is invented for demonstration and testing. Both units keep their own seeded
random streams (``[seed, SPEED_STREAM + k]``), so adding them moved nothing in AHU-1 to AHU-5.

* **AHU-6**, West office wing, on variable-speed drives at 85 % by day. From the night starting
  :data:`SETBACK_FROM` its controller sets it back to 30 % from 22:00 to 05:00 every night
  instead of stopping it (fault ``setback``). The supply fan's sensor estimates the shaft
  frequency (``rotation_hz``, design 1,450 rpm: a *measured* speed); the exhaust fan's has no
  such estimate (an *estimated* speed, from its level groups).
* **AHU-7**, Craft workshops, with two-speed fans (50 % and 100 %, given as ``speeds``): full
  speed in occupied hours, and low-speed ventilation on Saturdays and Sundays 09:00-15:00 that
  the owner allows (an allowed window with ``max_speed = 0.5``). On :data:`HIGH_WEEKENDS` the
  speed switch was left at high for the weekend ventilation (fault ``over_speed``: only the
  energy above what half speed would have used counts).

The true speeds are steps (a value per run, held until the next), saved as
``truth/speeds.csv``; each fault's true off-schedule energy at the site's affinity exponent is
its ``kwh`` in ``truth/faults.json``.
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd

from schedcheck.intervals import NS_PER_S, Intervals, from_ns

SPEED_STREAM = 7000                # seeds [seed, 7000 + k] for the k-th of these units
EXPONENT = 3.0                     # the site file's affinity exponent (plan.site_toml)
DAY_SPEED, SETBACK_SPEED = 0.85, 0.30
LOW, HIGH = 0.5, 1.0               # AHU-7's two speeds [-]
SETBACK_FROM = dt.date(2026, 4, 13)
SETBACK_HOURS = ("22:00", "05:00")
VENTILATION_HOURS = ("09:00", "15:00")
HIGH_WEEKENDS = (dt.date(2026, 3, 21), dt.date(2026, 3, 22), dt.date(2026, 4, 25))


def _night_runs(dates, at, purge: Intervals, rng) -> tuple[Intervals, Intervals]:
    """Setback runs 22:00-05:00 from SETBACK_FROM (a few seconds after and before the hour),
    and the part of them that should not have happened (outside the night-cooling windows)."""
    nights = [d for d in [dates[0] - dt.timedelta(days=1), *dates] if d >= SETBACK_FROM]
    a, b = SETBACK_HOURS
    s = [at(d, a) + int(rng.integers(5, 50)) * NS_PER_S for d in nights]
    e = [at(d + dt.timedelta(days=1), b) - int(rng.integers(5, 50)) * NS_PER_S for d in nights]
    run = Intervals.from_arrays(s, e) if nights else Intervals.empty()
    return run, run - purge


def _weekend_runs(dates, at, rng) -> tuple[Intervals, Intervals]:
    """Weekend ventilation inside 09:00-15:00, and the days of it run at high speed."""
    a, b = VENTILATION_HOURS
    days = [d for d in dates if d.weekday() >= 5]
    s = [at(d, a) + int(rng.integers(60, 300)) * NS_PER_S for d in days]
    e = [at(d, b) - int(rng.integers(60, 300)) * NS_PER_S for d in days]
    run = Intervals.from_arrays(s, e) if days else Intervals.empty()
    hi = [(x, y) for d, x, y in zip(days, s, e, strict=True) if d in HIGH_WEEKENDS]
    high = Intervals.from_arrays([x for x, _ in hi], [y for _, y in hi]) if hi else \
        Intervals.empty()
    return run, high


def _machine_power(plan_id: str, role: str) -> float:
    from schedcheck.demo.plan import MACHINES

    return next(m.power_kw for m in MACHINES if m.unit == plan_id and m.role == role)


def speed_unit_truth(plan, day_runs: Intervals, dates, at, purge: Intervals, seed: int,
                     s0: int, e0: int, follow, tz: str):
    """True runs, speeds and faults of one reduced-speed unit's supply and exhaust fans.

    ``day_runs``: the occupied-day runs (optimal start, late stop) made like every other
    unit's; ``at(day, "HH:MM")``: a local instant [ns]; ``purge``: the allowed night-cooling
    windows [ns]; ``follow(run, rng)``: an interlocked follower's runs.

    Returns
    -------
    runs : dict
        role (``supply_fan``, ``exhaust_fan``) -> (true runs, speed steps: a Series of speeds
        [-] indexed by the UTC start of each run, held to the next).
    faults : list
        ``(role, kind, local dates, episodes, kwh, note)``; ``kwh`` the true off-schedule
        energy at the site's exponent [kWh].
    """
    k = 1 if plan.id == "AHU-6" else 2
    rng = np.random.default_rng([int(seed), SPEED_STREAM + k])
    if plan.id == "AHU-6":
        slow, bad = _night_runs(dates, at, purge, rng)
        sup = (day_runs | slow).clip(s0, e0)
        slow_speed, fast_speed = SETBACK_SPEED, DAY_SPEED
        kind, per_kw = "setback", SETBACK_SPEED ** EXPONENT
        note = (f"From the night starting {SETBACK_FROM} the controller sets the unit back to "
                f"{SETBACK_SPEED:.0%} speed from {SETBACK_HOURS[0]} to {SETBACK_HOURS[1]} every "
                "night instead of stopping it (a night mode meant for another building).")
    else:
        wk, bad = _weekend_runs(dates, at, rng)
        slow = wk - bad
        sup = (day_runs | wk).clip(s0, e0)
        slow_speed, fast_speed = LOW, HIGH
        kind, per_kw = "over_speed", HIGH ** EXPONENT - LOW ** EXPONENT
        when = ", ".join(str(d) for d in HIGH_WEEKENDS)
        note = ("Weekend ventilation at low speed is allowed (09:00-15:00, up to 50 %), but on "
                f"{when} the speed switch was left at high: only the energy above what half "
                "speed would have used is a fault.")
    steps = _steps(sup, slow, slow_speed, fast_speed)
    ex = follow(sup, rng).clip(s0, e0)
    ex_steps = pd.Series(steps.to_numpy()[_owner(sup, ex.starts)] if len(sup) else [],
                         index=from_ns(ex.starts), dtype=float)
    bad = bad.clip(s0, e0)
    ex_bad = (ex & bad.shift_ends(0, 180 * NS_PER_S)) - purge
    faults = []
    for role, ep in (("supply_fan", bad), ("exhaust_fan", ex_bad)):
        if len(ep):
            starts = from_ns(ep.starts).tz_convert(tz)
            days = tuple(sorted({str(d) for d in starts.date}))
            kwh = _machine_power(plan.id, role) * per_kw * ep.hours()
            faults.append((role, kind, days, ep, kwh, note))
    return {"supply_fan": (sup, steps), "exhaust_fan": (ex, ex_steps)}, faults


def _steps(run: Intervals, slow: Intervals, slow_speed: float, fast_speed: float) -> pd.Series:
    """A speed per run (``slow_speed`` for the runs that start inside ``slow``), held from
    each run's start [-]."""
    return pd.Series(np.where(slow.contains(run.starts), slow_speed, fast_speed),
                     index=from_ns(run.starts), dtype=float)


def _owner(sup: Intervals, t: np.ndarray) -> np.ndarray:
    """Index of the supply run each follower start belongs to (the last one started)."""
    return np.clip(np.searchsorted(sup.starts, t, side="right") - 1, 0, None)
