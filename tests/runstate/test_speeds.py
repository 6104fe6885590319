"""Speeds of run pieces and the heat-wheel purge case, against the seeded generator's truth."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from schedcheck.demo import synth
from schedcheck.errors import InputError
from schedcheck.runstate.classify import classify_component, classify_unit
from schedcheck.runstate.speeds import SPEED_EXPONENT, SPEED_EXPONENT_RANGE
from schedcheck.site import Component, ScheduleSettings, Unit

T0 = pd.Timestamp("2026-03-02", tz="UTC")
END = T0 + pd.Timedelta("14D")
GAP = pd.Timedelta("5min")


def hours(truth: pd.DataFrame) -> float:
    return synth._run_set(truth).hours()


def test_purge_at_reduced_speed_is_running_though_the_heat_wheel_picks_it_up():
    # the supply fan purges at 45 % from 01:00 to 04:00 every night and runs at 85 % by day;
    # its heat wheel turns by day and picks up the supply fan's vibration whenever it runs.
    # The wheel's raised level at night is caused by the supply fan itself, so the supply
    # fan's purge is running, and the wheel's carried level is off.
    rng = np.random.default_rng(31)
    days = [T0 + pd.Timedelta(days=d) for d in range(14)]
    day_runs = [(d + pd.Timedelta("6h"), d + pd.Timedelta("18h")) for d in days]
    purge = [(d + pd.Timedelta("1h"), d + pd.Timedelta("4h")) for d in days]
    supply_truth = synth.truth_from_runs(sorted(day_runs + purge), T0, END)
    speed = pd.Series([0.45, 0.85] * 14, index=pd.DatetimeIndex(
        [t for a, b in zip(purge, day_runs, strict=True) for t in (a[0], b[0])]))
    wheel_truth = synth.truth_from_runs([(a + pd.Timedelta("1h"), b - pd.Timedelta("1h"))
                                         for a, b in day_runs], T0, END)
    sup = synth.readings_for_component(supply_truth, sensor="S1", rng=rng, start=T0, end=END,
                                       running_level=2.0, speed=speed)
    whl = synth.readings_for_component(wheel_truth, sensor="S2", rng=rng, start=T0, end=END,
                                       running_level=0.75, carried=supply_truth,
                                       carried_level=0.25)
    unit = Unit("AHU-3", "Test", ScheduleSettings(), (
        Component("supply", "AHU-3", "supply_fan", "S1", 5.0, 0.85),
        Component("wheel", "AHU-3", "heat_wheel", "S2", 0.4, 1.0)))
    st = classify_unit(unit, {"S1": sup, "S2": whl}, T0, END, GAP)
    s, w = st["AHU-3/supply"], st["AHU-3/wheel"]
    assert s.sets.run.hours() == pytest.approx(hours(supply_truth), rel=0.01)
    assert w.sets.run.hours() == pytest.approx(hours(wheel_truth), rel=0.01)
    assert synth.score_states(supply_truth, s.intervals, T0, END)["known_share_correct"] > 0.99
    assert synth.score_states(wheel_truth, w.intervals, T0, END)["known_share_correct"] > 0.99
    # the purge pieces carry an estimated speed near 45 %, within their stated range
    low = s.speeds.levels[0]
    assert low.source == "estimated" and low.low < 0.45 < low.high
    assert low.speed == pytest.approx(0.45, abs=0.03)


def test_exponent_default_lies_in_its_sourced_range():
    lo, hi = SPEED_EXPONENT_RANGE
    assert lo < SPEED_EXPONENT < hi


def test_rotation_without_design_rpm_names_the_component():
    rng = np.random.default_rng(32)
    truth = synth.truth_from_runs([(T0 + pd.Timedelta("6h"), T0 + pd.Timedelta("18h"))], T0,
                                  T0 + pd.Timedelta("1D"))
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0,
                                     end=T0 + pd.Timedelta("1D"), design_rpm=1450)
    comp = Component("supply", "AHU-1", "supply_fan", "S1", 5.0, 0.85)
    with pytest.raises(InputError, match="design_rpm") as e:
        classify_component(comp, r, T0, T0 + pd.Timedelta("1D"), GAP)
    assert "AHU-1/supply" in str(e.value)


def test_speed_pieces_tile_the_run_set_and_split_at_speed_changes():
    rng = np.random.default_rng(33)
    truth = synth.truth_from_runs([(T0, END)], T0, END)
    idx = [T0 + pd.Timedelta(hours=h) for h in range(0, 14 * 24, 12)]
    speed = pd.Series([0.5, 1.0] * (len(idx) // 2), index=pd.DatetimeIndex(idx))
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0, end=END,
                                     running_level=3.0, speed=speed)
    comp = Component("supply", "AHU-1", "supply_fan", "S1", 5.0, 1.0, speeds=(0.5, 1.0))
    cs = classify_component(comp, r, T0, END, GAP)
    sp = cs.speed_pieces
    assert (sp.ends > sp.starts).all() and (sp.starts[1:] == sp.ends[:-1]).all()
    assert sp.starts[0] == cs.sets.run.starts[0] and sp.ends[-1] == cs.sets.run.ends[-1]
    assert len(sp.starts) == len(idx)
    assert sp.at_speed(0.5).hours() == pytest.approx(14 * 12, rel=0.01)


def test_the_running_median_of_five_agrees_with_numpys_median_on_every_order():
    # the sorting network against numpy.median over each window: every ordering of five
    # values (all 120 permutations in a row), ties, and noise
    import itertools

    from schedcheck.runstate.speeds import _smoothed

    rng = np.random.default_rng(5)
    perms = np.array(list(itertools.chain(*itertools.permutations(range(5)))), float)
    for x in (perms, rng.integers(0, 3, 2000).astype(float), rng.normal(size=2000)):
        want = x.copy()
        want[2:-2] = np.median(np.lib.stride_tricks.sliding_window_view(x, 5), axis=1)
        assert np.array_equal(_smoothed(x), want)
