"""Run-state classifier: recovery of the generator's true intervals (synth.py)."""

import numpy as np
import pandas as pd
import pytest

from schedcheck.demo import synth
from schedcheck.errors import InputError
from schedcheck.runstate import classify as runstate
from schedcheck.site import Component, RunStateSettings, ScheduleSettings, Unit

T0 = pd.Timestamp("2026-03-02T00:00Z")
GAP = pd.Timedelta("5min")
TZ = "Europe/Oslo"


def comp(cid="supply", sensor="S1", role="supply_fan", threshold=None):
    return Component(cid, "AHU-1", role, sensor, 5.0, 1.0, threshold)


def unit(*components):
    return Unit("AHU-1", "test unit", ScheduleSettings(), tuple(components))


def quiet(truth, rng, start, end, **kw):
    """Readings with no random scatter, no jitter, no losses: only the truth shows."""
    args = dict(sensor="S1", rng=rng, start=start, end=end, jitter="0s", packet_loss=0.0,
                duplicates=0.0, out_of_order=0.0, scatter=0.0)
    args.update(kw)
    return synth.readings_for_component(truth, **args)


def assert_covers(tab, start, end):
    assert tab["start"].iloc[0] == start and tab["end"].iloc[-1] == end
    assert (tab["start"].iloc[1:].to_numpy() == tab["end"].iloc[:-1].to_numpy()).all()
    assert (tab["state"].iloc[1:].to_numpy() != tab["state"].iloc[:-1].to_numpy()).all()
    assert set(tab["state"]) <= {"run", "off", "no_data"}


def test_exact_recovery_without_noise():
    # truth changes at hh:mm:30 and readings come on the minute, so the half-way rule puts
    # every boundary exactly on the truth's, including the edges of an outage
    end = T0 + pd.Timedelta("7D")
    half = pd.Timedelta("30s")
    runs = [(T0 + pd.Timedelta(days=d, hours=6) - half, T0 + pd.Timedelta(days=d, hours=18) - half)
            for d in range(5)]
    runs.append((T0 + pd.Timedelta(days=5, hours=9, minutes=17) - half,
                 T0 + pd.Timedelta(days=5, hours=9, minutes=29) - half))      # 12 min run
    truth = synth.truth_from_runs(runs, T0, end)
    outage = (T0 + pd.Timedelta(days=2, hours=10) - half,
              T0 + pd.Timedelta(days=2, hours=11) - half)
    r = quiet(truth, np.random.default_rng(0), T0, end, outages=[outage])
    cs = runstate.classify_component(comp(), r, T0, end, GAP)
    want = synth.truth_with_gaps(truth, [outage], T0, end)
    got = cs.intervals
    assert_covers(got, T0, end)
    pd.testing.assert_frame_equal(got[["start", "end", "state"]], want, check_dtype=False)
    assert cs.threshold.source == "learned"
    assert cs.starts == 6        # the outage falls inside a run: a run after it is no start
    assert got.loc[got.state == "run", "level"].to_numpy() == pytest.approx(1.0, rel=1e-3)
    assert np.isnan(got.loc[got.state == "no_data", "level"]).all()


def test_realistic_unit_meets_targets():
    # noise, slow drift, lost packets, jitter, duplicates, out-of-order rows, start transients,
    # a variable-speed supply fan, and a heat wheel shaken by the fans (three level groups)
    rng = np.random.default_rng(42)
    end = T0 + pd.Timedelta("42D")
    truth = synth.weekday_truth(T0, end, TZ, rng, extra_runs=[
        (pd.Timestamp("2026-03-14T20:00Z"), pd.Timestamp("2026-03-15T02:00Z"))])
    wheel = synth.truth_from_runs(
        [(a, a + pd.Timedelta("150min")) for a in truth.loc[truth.state == "run", "start"]],
        T0, end)
    outages = [(pd.Timestamp("2026-03-20T04:00Z"), pd.Timestamp("2026-03-20T11:00Z"))]
    idx = pd.date_range(T0, end, freq="15min")
    speed = pd.Series(rng.uniform(0.55, 1.0, idx.size), index=idx)
    kw = dict(start=T0, end=end, rng=rng, level_drift=0.08, packet_loss=0.03)
    readings = {
        "S1": synth.readings_for_component(truth, sensor="S1", speed=speed, outages=outages,
                                           running_level=2.5, **kw),
        "S2": synth.readings_for_component(truth, sensor="S2", running_level=1.2, carried=truth,
                                           carried_level=0.1, **kw),
        "S3": synth.readings_for_component(wheel, sensor="S3", running_level=0.8, carried=truth,
                                           carried_level=0.25, **kw),
    }
    u = unit(comp(), comp("exhaust", "S2", "exhaust_fan"), comp("wheel", "S3", "heat_wheel"))
    res = runstate.classify_unit(u, readings, T0, end, GAP, RunStateSettings())
    truths = {"supply": synth.truth_with_gaps(truth, outages, T0, end), "exhaust": truth,
              "wheel": wheel}
    for cid, want in truths.items():
        cs = res[f"AHU-1/{cid}"]
        assert_covers(cs.intervals, T0, end)
        score = synth.score_states(want, cs.intervals, T0, end)
        assert score["known_share_correct"] >= 0.995, (cid, score)
        assert score["unmatched"] == [], (cid, score)
        assert score["max_error"] <= pd.Timedelta("2min")
        assert cs.threshold.source == "learned"
    th = res["AHU-1/wheel"].threshold
    assert len(th.groups) == 3 and "carried" in th.reason
    assert th.level > 0.25           # above the carried group, below the wheel's own running
    # the outage shows as no data, about where it was
    nd = res["AHU-1/supply"].intervals.query("state == 'no_data'")
    assert len(nd) == 1
    assert abs(nd["start"].iloc[0] - outages[0][0]) <= pd.Timedelta("2min")


@pytest.mark.parametrize("vfd", [False, True])
def test_never_stopping_unit_is_100_percent_running(vfd):
    rng = np.random.default_rng(7)
    end = T0 + pd.Timedelta("21D")
    truth = synth.truth_from_runs([(T0, end)], T0, end)
    speed = None
    if vfd:   # day speed 100 %, night speed 60 %: two level groups, both running
        idx = pd.date_range(T0, end, freq="12h")
        speed = pd.Series(np.tile([1.0, 0.6], idx.size // 2 + 1)[: idx.size], index=idx)
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0, end=end, speed=speed)
    cs = runstate.classify_component(comp(), r, T0, end, GAP)
    assert cs.threshold.source == "floor"
    assert cs.run_share == 1.0 and cs.starts == 0
    assert set(cs.intervals["state"]) == {"run"}
    if vfd:
        assert "two running levels" in cs.threshold.reason and cs.threshold.warnings


def test_never_starting_unit_is_0_percent_running():
    rng = np.random.default_rng(8)
    end = T0 + pd.Timedelta("14D")
    truth = synth.truth_from_runs([], T0, end)
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0, end=end)
    cs = runstate.classify_component(comp(), r, T0, end, GAP)
    assert cs.threshold.source == "floor" and cs.run_share == 0.0 and cs.starts == 0


def test_short_real_stop_of_a_continuous_fan_is_found_against_the_floor():
    rng = np.random.default_rng(9)
    end = T0 + pd.Timedelta("60D")
    stop = (T0 + pd.Timedelta("20D 10h"), T0 + pd.Timedelta("20D 10h40min"))
    truth = synth.truth_from_runs([(T0, stop[0]), (stop[1], end)], T0, end)
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0, end=end)
    cs = runstate.classify_component(comp(), r, T0, end, GAP)
    assert cs.threshold.source == "floor"        # 40 of 86,400 minutes: not a level group
    off = cs.intervals.query("state == 'off'")
    assert len(off) == 1 and cs.starts == 1
    assert abs(off["start"].iloc[0] - stop[0]) <= pd.Timedelta("2min")
    assert abs(off["end"].iloc[0] - stop[1]) <= pd.Timedelta("2min")


def test_gap_is_no_data_and_state_is_not_carried_across():
    end = T0 + pd.Timedelta("3D")
    rng = np.random.default_rng(10)
    truth = synth.weekday_truth(T0, end, TZ, rng, scatter="0min")
    r = quiet(truth, rng, T0, end)
    r = r.set_index("timestamp")
    # a 20-minute silence while running, and after it readings just below the learned level
    # but above the off level would have kept "run" had the state been carried across
    g0, g1 = pd.Timestamp("2026-03-03T10:00Z"), pd.Timestamp("2026-03-03T10:20Z")
    r = r[(r.index < g0) | (r.index >= g1)].copy()
    first = runstate.classify_component(comp(), r.reset_index(), T0, end, GAP).threshold
    lvl = (first.level * 0.97) / np.sqrt(3)           # between off_level and level
    after = (r.index >= g1) & (r.index < g1 + pd.Timedelta("10min"))
    r.loc[after, ["x_rms", "y_rms", "z_rms"]] = lvl
    r.loc[after, ["x_peak", "y_peak", "z_peak"]] = 1.5 * lvl      # no start transient either
    cs = runstate.classify_component(comp(), r.reset_index(), T0, end, GAP)
    tab = cs.intervals
    nd = tab.query("state == 'no_data'")
    assert len(nd) == 1
    assert nd["start"].iloc[0] == g0 - pd.Timedelta("30s")     # half a period after the last
    assert nd["end"].iloc[0] == g1 - pd.Timedelta("30s")       # half a period before the next
    nxt = tab.iloc[nd.index[0] + 1]
    assert nxt["state"] == "off"                                # judged on its own level
    assert first.off_level < first.level * 0.97 < first.on_level


def test_short_gap_is_bridged():
    end = T0 + pd.Timedelta("2D")
    rng = np.random.default_rng(11)
    truth = synth.weekday_truth(T0, end, TZ, rng)
    r = quiet(truth, rng, T0, end)
    ts = r["timestamp"]
    r = r[~((ts >= pd.Timestamp("2026-03-02T11:00Z")) & (ts < pd.Timestamp("2026-03-02T11:04Z")))]
    cs = runstate.classify_component(comp(), r, T0, end, GAP)
    assert "no_data" not in set(cs.intervals["state"])


def test_single_odd_readings_neither_start_nor_stop_a_fan():
    end = T0 + pd.Timedelta("7D")
    rng = np.random.default_rng(12)
    truth = synth.weekday_truth(T0, end, TZ, rng)
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0, end=end)
    base = runstate.classify_component(comp(), r, T0, end, GAP)
    r = r.sort_values("timestamp").reset_index(drop=True)
    cols = ["x_rms", "y_rms", "z_rms"]
    state = synth._state_at(truth, synth.to_ns(r["timestamp"]))
    night = np.flatnonzero(state == "off")[500:5000:700]
    day = np.flatnonzero(state == "run")[300:3000:500]
    r.loc[night, cols] = 3.0                      # a door slam at night
    r.loc[night[:3] + 1, cols] = 3.0              # ... some two readings long
    r.loc[day, cols] = 0.01                       # a dropped reading value by day
    cs = runstate.classify_component(comp(), r, T0, end, GAP)
    assert cs.starts == base.starts
    assert cs.run_share == pytest.approx(base.run_share, abs=1e-3)


def test_short_cycling_runs_are_kept():
    # 10-minute runs every hour are real (a fault to report), not noise
    end = T0 + pd.Timedelta("3D")
    runs = [(T0 + pd.Timedelta(hours=h), T0 + pd.Timedelta(hours=h, minutes=10))
            for h in range(72)]
    truth = synth.truth_from_runs(runs, T0, end)
    r = synth.readings_for_component(truth, sensor="S1", rng=np.random.default_rng(13),
                                     start=T0, end=end)
    cs = runstate.classify_component(comp(), r, T0, end, GAP)
    assert cs.starts == 71
    # (the share of minutes right is not the figure here: with one reading a minute each of
    # the 143 changes is placed within half a minute, about 1 % of these 4,320 minutes)
    score = synth.score_states(truth, cs.intervals, T0, end)
    assert score["unmatched"] == [] and score["max_error"] <= pd.Timedelta("2min")


def test_configured_threshold_wins():
    end = T0 + pd.Timedelta("7D")
    rng = np.random.default_rng(14)
    truth = synth.weekday_truth(T0, end, TZ, rng)
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0, end=end)
    cs = runstate.classify_component(comp(threshold=5.0), r, T0, end, GAP)
    assert cs.threshold.source == "configured" and cs.threshold.level == 5.0
    assert cs.run_share == 0.0            # every running level (about 1.0) is below 5
    cs = runstate.classify_component(comp(threshold=0.3), r, T0, end, GAP)
    assert cs.threshold.source == "configured" and cs.threshold.separation > 10
    assert synth.score_states(truth, cs.intervals, T0, end)["known_share_correct"] > 0.995


def test_configured_threshold_outside_the_level_groups_warns():
    # a level typed below the stopped machine's noise (or above its running level) silently
    # turned every stopped minute into running (or every running one into off)
    end = T0 + pd.Timedelta("7D")
    rng = np.random.default_rng(14)
    truth = synth.weekday_truth(T0, end, TZ, rng)
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0, end=end)
    low = runstate.classify_component(comp(threshold=0.0001), r, T0, end, GAP)
    assert low.run_share > 0.9
    assert len(low.threshold.warnings) == 1
    assert "below the lowest level group" in low.threshold.warnings[0]
    high = runstate.classify_component(comp(threshold=5.0), r, T0, end, GAP)
    assert high.run_share == 0.0
    assert "above the highest level group" in high.threshold.warnings[0]
    good = runstate.classify_component(comp(threshold=0.3), r, T0, end, GAP)
    assert good.threshold.warnings == ()


def test_three_groups_without_siblings_warns_and_points_at_threshold():
    rng = np.random.default_rng(15)
    end = T0 + pd.Timedelta("14D")
    truth = synth.weekday_truth(T0, end, TZ, rng)
    wheel = synth.truth_from_runs(
        [(a, a + pd.Timedelta("3h")) for a in truth.loc[truth.state == "run", "start"]], T0, end)
    r = synth.readings_for_component(wheel, sensor="S3", rng=rng, start=T0, end=end,
                                     running_level=0.8, carried=truth, carried_level=0.25)
    res = runstate.classify_unit(unit(comp("wheel", "S3", "heat_wheel")), {"S3": r}, T0, end, GAP)
    th = res["AHU-1/wheel"].threshold
    assert len(th.groups) == 3
    assert any("`threshold`" in w for w in th.warnings)


def test_missing_sensor_is_all_no_data_and_bad_columns_are_refused():
    end = T0 + pd.Timedelta("1D")
    res = runstate.classify_unit(unit(comp()), {}, T0, end, GAP)
    cs = res["AHU-1/supply"]
    assert list(cs.intervals["state"]) == ["no_data"] and np.isnan(cs.run_share)
    assert any("no readings" in w for w in cs.warnings)
    bad = pd.DataFrame({"timestamp": [T0], "temperature": [20.0]})
    with pytest.raises(InputError, match="S1.*RMS"):
        runstate.classify_unit(unit(comp()), {"S1": bad}, T0, end, GAP)
    neg = pd.DataFrame({"timestamp": [T0], "x_rms": [0.1], "y_rms": [-0.2]})
    with pytest.raises(InputError, match="^S1: negative vibration level in column y_rms$"):
        runstate.classify_unit(unit(comp()), {"S1": neg}, T0, end, GAP)


def test_floor_default_follows_the_reading_unit():
    assert runstate.default_floor(RunStateSettings(), "mm/s") == (0.2, [])
    assert runstate.default_floor(RunStateSettings(floor=0.5), "g") == (0.5, [])
    value, warnings = runstate.default_floor(RunStateSettings(), "furlongs")
    assert value == 0.2 and "floor" in warnings[0]


def test_hysteresis_switching_holds_state_in_the_band_and_resets_per_segment():
    L = np.array([-2.0, 0.1, -0.05, 0.05, -0.2, -0.05, 0.02, -0.05, 0.05])
    seg = np.array([0, 0, 0, 0, 0, 0, 1, 1, 1])
    # on at >= 0.1, off at <= -0.1 (log10); in between the state holds. Segment 1 (after a
    # gap) has no decisive reading: each reading is judged against the middle of the band (0)
    got = runstate.hysteresis_states(L, 0.1, -0.1, seg)
    assert got.tolist() == [False, True, True, True, False, False, True, False, True]


def test_a_start_transient_decides_an_in_between_reading():
    L = np.array([-2.0, -0.05, -0.05, 0.2])
    seg = np.zeros(4, int)
    plain = runstate.hysteresis_states(L, 0.1, -0.1, seg)
    spike = runstate.hysteresis_states(L, 0.1, -0.1, seg,
                                       np.array([False, True, False, False]))
    assert plain.tolist() == [False, False, False, True]
    assert spike.tolist() == [False, True, True, True]


def test_min_dwell_absorbs_short_inner_pieces_only():
    m = 60_000_000_000
    starts = np.array([0, 10, 11, 30, 31, 50]) * m
    ends = np.array([10, 11, 30, 31, 50, 51]) * m
    run = np.array([False, True, False, True, False, True])
    seg = np.zeros(6, int)
    s, e, r, _ = runstate.min_dwell(starts, ends, run, seg, 3 * m, 3 * m)
    # the 1-minute runs inside are absorbed; the 1-minute run at the end is kept (edge)
    assert (s // m).tolist() == [0, 50] and (e // m).tolist() == [50, 51]
    assert r.tolist() == [False, True]


def test_single_axis_sparse_readings_and_zero_levels():
    # one axis, a reading every 5 minutes, the sensor reports exactly 0 when the fan stops
    end = T0 + pd.Timedelta("14D")
    rng = np.random.default_rng(16)
    truth = synth.weekday_truth(T0, end, TZ, rng)
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0, end=end,
                                     period="5min", jitter="20s", axes="z")
    state = synth._state_at(truth, synth.to_ns(r["timestamp"]))
    r.loc[state == "off", ["z_rms", "z_peak"]] = 0.0
    r.loc[r.index[100:3000:400], ["z_rms", "z_peak"]] = [4.0, 6.0]    # odd readings
    cs = runstate.classify_component(comp(), r, T0, end, pd.Timedelta("15min"))
    score = synth.score_states(truth, cs.intervals, T0, end, tolerance="5min")
    assert score["unmatched"] == [] and score["known_share_correct"] > 0.99
    assert cs.starts == 10 and "no_data" not in set(cs.intervals["state"])


def test_middle_group_below_the_floor_is_off():
    # a sensor that sometimes reports 0 and otherwise its noise: three groups (zeros, noise,
    # running); the noise group lies below the floor, so it is off whatever the siblings do
    end = T0 + pd.Timedelta("14D")
    rng = np.random.default_rng(17)
    truth = synth.weekday_truth(T0, end, TZ, rng)
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0, end=end)
    state = synth._state_at(truth, synth.to_ns(r["timestamp"]))
    zero = (state == "off") & (rng.random(len(r)) < 0.4)
    r.loc[zero, ["x_rms", "y_rms", "z_rms", "x_peak", "y_peak", "z_peak"]] = 0.0
    cs = runstate.classify_component(comp(), r, T0, end, GAP)
    assert len(cs.threshold.groups) == 3 and "below the floor" in cs.threshold.reason
    assert synth.score_states(truth, cs.intervals, T0, end)["known_share_correct"] > 0.995


def test_transitions_agree_with_ruptures_pelt():
    # validation against a reference library: ruptures' KernelCPD with a linear kernel (the L2
    # cost) and a penalty, i.e. a PELT search (Killick et al. 2012), finds the level changes in
    # the same log levels; ours must sit within 2 readings of them
    import ruptures

    end = T0 + pd.Timedelta("4D")
    rng = np.random.default_rng(18)
    night = (T0 + pd.Timedelta("2D 22h"), T0 + pd.Timedelta("3D 1h"))
    truth = synth.weekday_truth(T0, end, TZ, rng, extra_runs=[night])
    r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0, end=end,
                                     packet_loss=0, duplicates=0, out_of_order=0)
    cs = runstate.classify_component(comp(), r, T0, end, GAP)
    t, lv, _ = runstate.reading_levels(r)
    signal = np.log10(lv).reshape(-1, 1)
    bkps = ruptures.KernelCPD(kernel="linear", min_size=3).fit(signal).predict(pen=5.0)[:-1]
    theirs = t[np.array(bkps)] - 30_000_000_000       # half-way to the reading before
    ours = synth.to_ns(cs.intervals["start"].iloc[1:])
    assert len(ours) == len(theirs) == len(truth) - 1
    assert np.abs(np.sort(ours) - np.sort(theirs)).max() <= 2 * 60_000_000_000


@pytest.fixture(scope="module")
def week_readings():
    end = T0 + pd.Timedelta("7D")
    rng = np.random.default_rng(19)
    truth = synth.weekday_truth(T0, end, TZ, rng)
    outs = [(T0 + pd.Timedelta("2D 3h"), T0 + pd.Timedelta("2D 9h")),
            (T0 + pd.Timedelta("4D 12h"), T0 + pd.Timedelta("4D 12h 20min"))]
    return synth.readings_for_component(truth, sensor="S1", rng=rng, start=T0, end=end,
                                        outages=outs)


@pytest.mark.parametrize("a, b", [("-1D", "8D"), ("0s", "7D"), ("2D 5h 17min 3s", "2D 11h"),
                                  ("4D 12h 5min", "4D 12h 10min"), ("6D 23h 59min", "9D")])
def test_any_window_is_covered_exactly(week_readings, a, b):
    start, end = T0 + pd.Timedelta(a), T0 + pd.Timedelta(b)
    cs = runstate.classify_component(comp(), week_readings, start, end, GAP)
    tab = cs.intervals
    assert_covers(tab, start, end)
    assert str(tab["start"].dtype) == "datetime64[ns, UTC]" == str(tab["end"].dtype)
    assert ((tab["end"] - tab["start"]) > pd.Timedelta(0)).all()
    assert tab["level"].isna().tolist() == (tab["state"] == "no_data").tolist()


def test_a_stuck_sensor_is_named():
    end = T0 + pd.Timedelta("1D")
    ts = pd.date_range(T0, end, freq="60s", inclusive="left")
    r = pd.DataFrame({"timestamp": ts, "z_rms": 0.0})
    cs = runstate.classify_component(comp(), r, T0, end, GAP)
    assert cs.run_share == 0.0 and any("stuck" in w for w in cs.threshold.warnings)
    # the zeros are named as zeros, not as the stand-in level they are raised to for log10
    assert any(w.startswith("every reading has the same level (0):")
               for w in cs.threshold.warnings), cs.threshold.warnings
    cs = runstate.classify_component(comp(), r.assign(z_rms=0.7), T0, end, GAP)
    assert any(w.startswith("every reading has the same level (0.7):")
               for w in cs.threshold.warnings)


def test_three_level_groups_all_below_the_floor_are_never_running():
    # three groups of background levels, all far below the 0.2 mm/s floor (a stopped machine
    # whose sensor steps between ranges): before, the level went between the top two groups
    # and the top background group counted as running
    from schedcheck.runstate.onofflevel import choose_threshold

    rng = np.random.default_rng(3)
    L = np.concatenate([rng.normal(np.log10(m), 0.01, 500) for m in (0.02, 0.03, 0.04)])
    t = choose_threshold(L, configured=None, floor=0.2)
    assert len(t.groups) == 3 and t.source == "floor" and t.level == pytest.approx(0.2)
    assert "never running" in t.reason


@pytest.mark.parametrize("seed", range(12))
def test_one_day_of_running_or_stopped_stays_one_group(seed):
    # one day (New York spring change, 23 h, about 1,380 readings) of a single-axis sensor:
    # sampling noise in 128 histogram bins made dips as deep as a real valley, so a fan that
    # ran all day was cut into two or three groups and shown stopping for 3 to 7 hours
    t0 = pd.Timestamp("2026-03-08 00:00", tz="America/New_York").tz_convert("UTC")
    end = pd.Timestamp("2026-03-09 00:00", tz="America/New_York").tz_convert("UTC")
    for runs, state in (([(t0, end)], "run"), ([], "off")):
        rng = np.random.default_rng(seed)
        truth = synth.truth_from_runs(runs, t0, end)
        r = synth.readings_for_component(truth, sensor="S1", rng=rng, start=t0, end=end,
                                         axes="z", peaks=False)
        cs = runstate.classify_component(comp(role="return_fan"), r, t0, end, GAP)
        assert len(cs.threshold.groups) == 1 and cs.threshold.source == "floor"
        assert set(cs.intervals["state"]) == {state}
