"""The look-back (runstate/lookback.py) and the running-spread rule (runstate/onofflevel.py)."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pandas as pd
import pytest

from schedcheck.demo import synth
from schedcheck.runstate import classify as runstate
from schedcheck.runstate.lookback import (
    LOOKBACK,
    classify_with_lookback,
    learns_from_all,
    lookback_dates,
    window_states,
)
from schedcheck.runstate.onofflevel import RUNNING_SPREAD
from schedcheck.site import Component, RunStateSettings, ScheduleSettings, Unit

T0 = pd.Timestamp("2026-03-02T00:00Z")
GAP = pd.Timedelta("5min")
TZ = "Europe/Oslo"
FAN = Component("supply", "AHU-1", "supply_fan", "S1", 5.0, 1.0)


def test_lookback_dates_default_setting_and_clock_reach():
    assert LOOKBACK == pd.Timedelta("56D")
    # 56 days before 1 April reach 4 February, before the spring change's 21 days (8 March)
    assert lookback_dates(dt.date(2026, 4, 1), TZ, None) == dt.date(2026, 2, 4)
    # in June the clock's reference days reach further: three weeks before 29 March
    assert lookback_dates(dt.date(2026, 6, 1), TZ, None) == dt.date(2026, 3, 8)
    # in October the clock's reference days reach back to three weeks before 29 March
    assert lookback_dates(dt.date(2026, 10, 1), TZ, None) == dt.date(2026, 3, 8)
    assert lookback_dates(dt.date(2026, 10, 1), "Asia/Tokyo", None) == dt.date(2026, 8, 6)
    none = RunStateSettings(lookback=pd.Timedelta(0))
    assert lookback_dates(dt.date(2026, 10, 1), TZ, none) == dt.date(2026, 10, 1)
    assert learns_from_all(None) and not learns_from_all(none)
    assert not learns_from_all(RunStateSettings(learn_from_all=False))


def test_window_states_are_the_longer_classification_cut_to_the_window():
    rng = np.random.default_rng(3)
    end = T0 + pd.Timedelta("28D")
    truth = synth.weekday_truth(T0, end, TZ, rng)
    # a long outage in the look-back only: the window's warnings must not mention it
    outage = [(T0 + pd.Timedelta("2D"), T0 + pd.Timedelta("4D"))]
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0, end=end,
                                     outages=outage)
    u = Unit("AHU-1", "test unit", ScheduleSettings(), (FAN,))
    ws = T0 + pd.Timedelta("14D")
    window, whole = classify_with_lookback([u], {"S1": r}, T0, ws, end, GAP)
    cs, full = window["AHU-1/supply"], whole["AHU-1/supply"]
    assert cs.intervals["start"].iloc[0] == ws and cs.intervals["end"].iloc[-1] == end
    cut = full.sets.run.clip(int(ws.value), int(end.value))
    assert cs.sets.run == cut
    assert cs.sets.run.duration_ns() + cs.sets.off.duration_ns() + \
        cs.sets.no_data.duration_ns() == int((end - ws).value)
    assert cs.threshold is full.threshold
    assert any("without readings" in w for w in full.warnings)
    assert not any("without readings" in w for w in cs.warnings)
    # starts counted in the window: a run that opens it was not seen to start
    runs = full.intervals
    inside = runs[(runs["start"] > ws) & (runs["state"] == "run")]
    prev = runs["state"].shift(1)[inside.index]
    assert cs.starts == int((prev == "off").sum())
    assert window_states(full, T0, end).sets.run == full.sets.run


@pytest.mark.parametrize("spread", [1.0, 0.35])
def test_two_close_speeds_of_a_quiet_fan_across_the_floor_run_throughout(spread):
    # a quiet fan that never stops, alternating two close speeds every 12 h (ratio of levels
    # 1.45 < RUNNING_SPREAD), the slower one below the 0.2 mm/s floor: running noise, not a
    # stop (planted truth: running the whole time)
    rng = np.random.default_rng(5)
    end = T0 + pd.Timedelta("14D")
    truth = synth.truth_from_runs([(T0, end)], T0, end)
    idx = pd.date_range(T0, end, freq="12h")
    speed = pd.Series(np.resize([1.0, 0.83], idx.size), index=idx)
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0, end=end,
                                     running_level=0.24, speed=speed, scatter=spread,
                                     noise_floor=0.01)
    cs = runstate.classify_component(FAN, r, T0, end, GAP)
    groups = cs.threshold.groups
    # the levels do split (Otsu, D >= 2, a valley): without the rule half the time was "off"
    assert len(groups) == 2 and max(groups) / min(groups) < RUNNING_SPREAD
    assert min(groups) < cs.threshold.floor < max(groups)
    assert "spread of one running level" in cs.threshold.reason
    assert set(cs.intervals["state"]) == {"run"} and cs.starts == 0, cs.threshold.reason


def test_a_real_stop_still_splits_from_the_running_level():
    rng = np.random.default_rng(6)
    end = T0 + pd.Timedelta("14D")
    truth = synth.weekday_truth(T0, end, TZ, rng)
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0, end=end,
                                     running_level=0.5)
    cs = runstate.classify_component(FAN, r, T0, end, GAP)
    assert cs.threshold.source == "learned"
    score = synth.score_states(truth, cs.intervals, T0, end, tolerance="3min")
    assert score["known_share_correct"] >= 0.99
