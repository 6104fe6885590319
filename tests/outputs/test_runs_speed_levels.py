"""runs.csv: a run interval split where the speed changes carries its own level (the median of
the readings inside that row), not the level of the whole run it was cut from."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from schedcheck.audit.run import run_audit
from schedcheck.outputs.files import runs_frame
from schedcheck.runstate.classify import classify_unit
from schedcheck.runstate.levels import reading_levels
from schedcheck.schedule.intended import UnitSchedule
from schedcheck.site import (
    EnergySettings,
    HolidaySettings,
    ReadingsSettings,
    ScheduleSettings,
    Site,
    Unit,
)
from tests.audit.test_speed_energy import END, RUNS, T0, seeded, speed_series


def test_each_split_run_row_carries_the_median_level_of_its_own_readings():
    # runs Mon-Fri without a stop: 85 % by day, set back to 30 % at night; one classifier run
    # piece per week, cut into day and night rows by speed
    comp, _, r = seeded(speed_series(0.85, 0.3), RUNS, seed=31, speeds=(0.3, 0.85))
    unit = Unit("AHU-7", "Test unit", ScheduleSettings(), (comp,))
    site = Site("Harbour Test Rooms", "UTC", Path("site.toml"), ReadingsSettings(("r.csv",)),
                HolidaySettings(), ScheduleSettings(), EnergySettings(exponent=3.0), (unit,))
    states = classify_unit(unit, {"S1": r}, T0, END, pd.Timedelta("5min"))
    sched = UnitSchedule("AHU-7", pd.DataFrame(columns=["start", "end", "kind", "source"]),
                         pd.DataFrame(columns=["date", "name", "kind"]))
    rows = runs_frame(run_audit(site, states, {"AHU-7": sched}, T0, END))
    run = rows[rows["state"] == "run"].reset_index(drop=True)
    assert set(run["speed"]) == {0.3, 0.85} and len(run) > 20
    t, lv, _ = reading_levels(r, name="S1")
    order = np.argsort(t, kind="stable")
    t, lv = t[order], lv[order]
    for row in run.itertuples():
        a = pd.Timestamp(row.start).tz_convert("UTC").value
        b = pd.Timestamp(row.end).tz_convert("UTC").value
        inside = lv[(t >= a) & (t < b)]
        assert row.level == pytest.approx(np.median(inside), abs=1e-4), row
    # the level follows the speed: the generator's level is 2.0 x speed^2 (synth's default)
    by_speed = run.groupby("speed")["level"].median()
    assert by_speed[0.3] == pytest.approx(2.0 * 0.3**2, rel=0.1)
    assert by_speed[0.85] == pytest.approx(2.0 * 0.85**2, rel=0.1)
