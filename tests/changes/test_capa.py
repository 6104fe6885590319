"""CAPA on daily off-schedule hours: against skchange's CAPA (an independent implementation,
every parameter set explicitly) on seeded series with known episodes, and the targets of the
method on our own seeded series."""

from __future__ import annotations

import datetime as dt

import numpy as np
import pytest

from schedcheck.changes.capa import capa, chi2_penalty, daily_episodes, standardise

skchange = pytest.importorskip("skchange")   # a test extra (outside library)


def seeded(seed: int, n: int = 120, episodes=((40, 60, 3.0),), noise: float = 1.0,
           points=()) -> np.ndarray:
    rng = np.random.default_rng(seed)
    x = rng.normal(0.0, noise, n)
    for s, e, shift in episodes:
        x[s:e] += shift
    for t, jump in points:
        x[t] += jump
    return x


def skchange_capa(x: np.ndarray, beta: float, beta_point: float, min_length: int):
    from skchange.detectors import CAPA
    from skchange.interval_scorers import L2Saving

    det = CAPA(segment_saving=L2Saving(baseline_mean=0.0), point_saving=L2Saving(baseline_mean=0.0),
               segment_penalty=beta, point_penalty=beta_point, min_segment_length=min_length,
               max_segment_length=x.size)
    res = det.fit(x.reshape(-1, 1)).predict_all(x.reshape(-1, 1))
    return ([tuple(int(v) for v in row) for row in res["segment_anomalies"]],
            [int(v) for v in res["point_anomalies"]])


@pytest.mark.validation   # skchange 0.18 CAPA (Tveten et al.), every parameter explicit
@pytest.mark.parametrize("seed", range(12))
@pytest.mark.parametrize("min_length", [2, 7])
def test_same_anomalies_as_skchange(seed, min_length):
    rng = np.random.default_rng(1000 + seed)
    n = int(rng.integers(40, 200))
    s = int(rng.integers(10, n - 20))   # away from the start: see the test below
    e = s + int(rng.integers(5, 20))
    x = seeded(seed, n, episodes=((s, e, float(rng.choice([-2.5, 1.5, 3.0]))),),
               points=((int(rng.integers(10, n)), 6.0),))
    beta = chi2_penalty(n)
    ours = capa(x, beta=beta, beta_point=2 * beta, min_length=min_length)
    theirs = skchange_capa(x, beta, 2 * beta, min_length)
    assert (ours.collective, ours.points) == theirs


@pytest.mark.validation
def test_where_we_differ_from_skchange_a_point_in_the_first_days():
    # skchange's recursion starts at t = min_length - 1, so it never marks a point anomaly in
    # the first min_length - 1 days; the paper's recursion (and ours) considers every day.
    x = np.zeros(40)
    x[2] = 9.0
    beta = chi2_penalty(40)
    assert capa(x, beta=beta, beta_point=2 * beta, min_length=7).points == [2]
    assert skchange_capa(x, beta, 2 * beta, 7) == ([], [])
    assert skchange_capa(x, beta, 2 * beta, 2)[1] == [2]


# Targets on seeded Gaussian series (noise sd 1, 120 days, a two-week shift from day 50).
# Measured with the defaults: a 2 sd shift is found every time and its start dated within a
# day in 17 of 20 series; a 1 sd shift is at the edge of what the paper's penalty lets through
# (its expected saving, 14, is below the penalty, 15): found with its start within a day in
# about a third of series. These assertions hold the measured rates, not the target.
def test_a_two_week_shift_of_two_sd_is_found_and_dated_within_a_day():
    found = [capa(seeded(seed, 120, episodes=((50, 64, 2.0),))).collective
             for seed in range(40)]
    assert all(any(s < 64 and e > 50 for s, e in f) for f in found)
    assert sum(any(abs(s - 50) <= 1 for s, _ in f) for f in found) >= 32


def test_a_two_week_shift_of_one_sd_is_at_the_edge_of_detection():
    hits = sum(any(abs(s - 50) <= 1 for s, _ in capa(seeded(seed, 120,
               episodes=((50, 64, 1.0),))).collective) for seed in range(100))
    assert hits >= 25


def test_no_collective_episode_on_a_stationary_series_in_95_percent_of_trials():
    false = sum(bool(capa(seeded(seed, 120, episodes=())).collective) for seed in range(200))
    assert false <= 10


def test_a_healthy_unit_mostly_zero_has_no_episode_and_one_odd_day_is_a_point():
    dates = [dt.date(2026, 2, 16) + dt.timedelta(days=i) for i in range(90)]
    hours = np.zeros(90)
    hours[30] = 9.0                       # one night left running
    eps = daily_episodes(dates, hours)
    assert [(e.kind, e.start) for e in eps] == [("point", dates[30])]


def test_a_unit_wrong_most_of_the_window_is_measured_against_the_schedule():
    # 24/7 from day 20 of 90: the median is the fault, so the baseline is 0 h a day
    dates = [dt.date(2026, 2, 16) + dt.timedelta(days=i) for i in range(90)]
    hours = np.where(np.arange(90) >= 20, 14.0, 0.0)
    x, baseline, scale = standardise(hours)
    assert baseline == 0.0 and scale == 0.5
    eps = [e for e in daily_episodes(dates, hours) if e.kind == "collective"]
    assert [(e.start, e.end, e.mean_h_per_day) for e in eps] == [(dates[20], dates[89], 14.0)]


def test_the_one_sd_limit_is_the_noise_not_only_the_penalty():
    # Why the target (start within a day for 1 sd shifts) is unmet, measured: a lower
    # penalty (2 log n, the BIC's) finds the shift far more often but still dates its start
    # within a day in under half the series, and raises false collective episodes on
    # stationary series well above 5 %. The penalty buys the false-alarm target; the dating
    # is limited by the noise (a 1 sd step's start is uncertain by several days).
    n = 120
    low = 2 * np.log(n)
    found = sum(any(s < 64 and e > 50 for s, e in capa(
        seeded(k, n, episodes=((50, 64, 1.0),)), beta=low).collective) for k in range(100))
    dated = sum(any(abs(s - 50) <= 1 for s, _ in capa(
        seeded(k, n, episodes=((50, 64, 1.0),)), beta=low).collective) for k in range(100))
    false = sum(bool(capa(seeded(k, n, episodes=()), beta=low).collective) for k in range(200))
    assert found >= 85 and dated <= 50 and false >= 20


def test_a_fault_that_starts_in_the_evening_is_dated_from_its_first_evening():
    # a nightly setback from the evening of day 40: that day holds only 22:00-24:00 (2 h),
    # every later day 7 h; the episode starts on day 40, the first night, not day 41
    dates = [dt.date(2026, 3, 14) + dt.timedelta(days=i) for i in range(60)]
    hours = np.zeros(60)
    hours[40] = 2.0
    hours[41:] = 7.0
    eps = [ep for ep in daily_episodes(dates, hours) if ep.kind == "collective"]
    assert [(ep.start, ep.end) for ep in eps] == [(dates[40], dates[-1])]
    # an odd evening with a quiet day after it is no part of the later episode
    hours[40] = 0.0
    hours[39] = 2.0
    eps = [ep for ep in daily_episodes(dates, hours) if ep.kind == "collective"]
    assert [(ep.start, ep.end) for ep in eps] == [(dates[41], dates[-1])]
