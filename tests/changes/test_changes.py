"""changes.change_points: PELT mean-shift change points and the before/after comparison.

Validation values come from outside the project, named beside each check:
- ruptures (PyPI package, Truong, Oudre and Vayatis 2020), ``ruptures.Pelt`` with
  ``model="l2"`` (squared-error cost) and ``model="linear"`` (least squares on covariates),
  ``jump=1``, run on the same seeded series;
- scipy.stats.ttest_ind(equal_var=False).confidence_interval (Welch's t interval).
Other expectations are the true change points of seeded synthetic series.
"""

from __future__ import annotations

import datetime as dt
import itertools

import numpy as np
import pandas as pd
import pytest
import ruptures as rpt
from scipy import stats

from schedcheck.changes.change_points import (
    before_after,
    biweight_cost,
    mean_shift_penalty,
    pelt_mean_shift,
    robust_sigma,
    segment_means,
)
from schedcheck.errors import InputError


def step_series(n: int, points: list[int], means: list[float], noise: float, seed: int):
    """A piecewise-constant series with Gaussian noise, and its true change points."""
    rng = np.random.default_rng(seed)
    edges = [0, *points, n]
    y = np.concatenate(
        [np.full(e - s, m) for s, e, m in zip(edges[:-1], edges[1:], means, strict=True)]
    )
    return y + rng.normal(0.0, noise, n), points


def weekly_series(
    n_days: int,
    change: int,
    before: tuple[float, float],
    after: tuple[float, float],
    noise: float,
    seed: int,
):
    """Daily values with a weekday/weekend pattern (day 0 a Monday) and one change, plus labels."""
    rng = np.random.default_rng(seed)
    weekend = (np.arange(n_days) % 7) >= 5
    level = np.where(
        np.arange(n_days) < change,
        np.where(weekend, before[1], before[0]),
        np.where(weekend, after[1], after[0]),
    )
    return level + rng.normal(0.0, noise, n_days), np.where(weekend, "weekend", "weekday")


# --- PELT against ruptures --------------------------------------------------------------------


@pytest.mark.validation   # expected values from the outside source named in the comments
@pytest.mark.parametrize("seed", range(12))
def test_pelt_matches_ruptures_l2(seed):
    # Validation: ruptures.Pelt(model="l2", jump=1) minimises the same penalised squared error
    # (ruptures 1.1.x, detection/pelt.py and costs/costl2.py); segmentations must be identical.
    rng = np.random.default_rng(seed)
    n = int(rng.integers(30, 150))
    signal, _ = rpt.pw_constant(
        n, 1, int(rng.integers(0, 4)), noise_std=float(rng.uniform(0.3, 1.5)), seed=seed
    )
    y = signal[:, 0]
    min_size = int(rng.integers(1, 6))
    pen = float(rng.uniform(1.0, 15.0))
    ref = rpt.Pelt(model="l2", min_size=min_size, jump=1).fit(y).predict(pen=pen)[:-1]
    assert pelt_mean_shift(y, pen, min_size=min_size) == ref


@pytest.mark.validation   # expected values from the outside source named in the comments
@pytest.mark.parametrize("seed", range(6))
def test_pelt_with_day_types_matches_ruptures_linear(seed):
    # Validation: a separate mean per day type in each segment is least squares on one-hot
    # day-type covariates, which ruptures.Pelt(model="linear") fits (costs/costlinear.py).
    # min_size=7 keeps both types in every segment, where ruptures' lstsq residual is defined.
    y, types = weekly_series(84, 40 + seed, (0.5, 3.0), (6.0, 12.0), noise=0.8, seed=seed)
    onehot = np.column_stack([types == "weekday", types == "weekend"]).astype(float)
    pen = mean_shift_penalty(y, types)
    ref = (
        rpt.Pelt(model="linear", min_size=7, jump=1)
        .fit(np.column_stack([y, onehot]))
        .predict(pen=pen)[:-1]
    )
    assert pelt_mean_shift(y, pen, groups=types, min_size=7) == ref


# --- recovery of planted changes -----------------------------------------------------------


def test_noise_free_steps_are_recovered_exactly():
    y, truth = step_series(60, [17, 41], [0.0, 14.0, 2.0], noise=0.0, seed=0)
    pen = mean_shift_penalty(y, sigma_floor=0.25)
    assert robust_sigma(y) == 0.0
    assert pelt_mean_shift(y, pen) == truth
    assert segment_means(y, truth) == pytest.approx([0.0, 14.0, 2.0])


@pytest.mark.parametrize("seed", range(10))
def test_noisy_step_is_found_within_two_days(seed):
    y, truth = step_series(56, [28], [0.3, 4.0], noise=0.7, seed=seed)
    found = pelt_mean_shift(y, mean_shift_penalty(y), min_size=3)
    assert len(found) == 1 and abs(found[0] - truth[0]) <= 2


@pytest.mark.parametrize("seed", range(10))
def test_flat_noisy_series_has_no_change(seed):
    y, _ = step_series(56, [], [1.5], noise=0.5, seed=seed)
    assert pelt_mean_shift(y, mean_shift_penalty(y), min_size=3) == []


@pytest.mark.parametrize("seed", range(6))
def test_weekly_pattern_is_not_a_change_but_a_real_shift_is(seed):
    # A unit with weekend running 4 h/day more than weekdays: the week alone is no change ...
    flat, types = weekly_series(56, 56, (1.0, 5.0), (1.0, 5.0), noise=0.3, seed=seed)
    assert pelt_mean_shift(flat, mean_shift_penalty(flat, types), groups=types, min_size=3) == []
    # ... while a plain mean-change model mistakes the weekends for changes.
    assert len(pelt_mean_shift(flat, mean_shift_penalty(flat), min_size=1)) > 2
    # A unit that goes 24/7 on day 31 (a Thursday): found on that day.
    y, types = weekly_series(56, 31, (0.2, 0.0), (14.0, 24.0), noise=0.3, seed=seed)
    assert pelt_mean_shift(y, mean_shift_penalty(y, types), groups=types, min_size=3) == [31]


# --- the capped (biweight) cost: one odd day is not a change --------------------------------


@pytest.mark.parametrize("seed", range(5))
def test_biweight_cost_is_the_minimum_over_a_dense_grid(seed):
    # Check by brute force: the capped cost evaluated on 20001 levels between the extremes.
    rng = np.random.default_rng(seed)
    v = np.r_[rng.normal(0.0, 2.0, 12), [9.0, 11.0]]
    cap = 1.5
    grid = np.linspace(v.min() - 1, v.max() + 1, 20001)
    ref = np.minimum((v[None, :] - grid[:, None]) ** 2, cap**2).sum(axis=1).min()
    assert biweight_cost(v, cap) == pytest.approx(ref, abs=1e-3)
    assert biweight_cost(v, 1e6) == pytest.approx(((v - v.mean()) ** 2).sum())


def test_batched_suffix_costs_equal_one_by_one():
    from schedcheck.changes.change_points import _biweight_suffixes

    rng = np.random.default_rng(9)
    z = np.r_[rng.normal(0.0, 1.0, 25), [8.0, 9.5]]
    rng.shuffle(z)
    first = np.arange(z.size + 1)
    one_by_one = [biweight_cost(z[j:], 1.2) for j in first]
    assert _biweight_suffixes(z, first, 1.2) == pytest.approx(one_by_one, abs=1e-9)


def _best_partition_by_enumeration(y, pen, groups, min_size, cap):
    n, best = len(y), (np.inf, None)
    for r in range(n):
        for pts in itertools.combinations(range(1, n), r):
            e = [0, *pts, n]
            if min(np.diff(e)) < min_size:
                continue
            c = pen * r + sum(
                biweight_cost(y[a:b][groups[a:b] == g], cap)
                for a, b in zip(e[:-1], e[1:], strict=True)
                for g in set(groups)
            )
            if c < best[0] - 1e-12:
                best = (c, list(pts))
    return best[1]


@pytest.mark.parametrize("seed", range(8))
def test_capped_pelt_finds_the_optimal_partition(seed):
    # Check against enumerating every segmentation of a short series (PELT must be exact).
    rng = np.random.default_rng(seed)
    n = 9
    y = rng.normal(0.0, 1.0, n) + np.r_[np.zeros(4), np.full(5, 3.0)]
    groups = rng.integers(0, 2, n)
    got = pelt_mean_shift(y, 2.0, groups=groups, min_size=2, cap=1.5)
    assert got == _best_partition_by_enumeration(y, 2.0, groups, 2, 1.5)


@pytest.mark.parametrize("seed", range(2))
def test_single_odd_days_are_not_changes_with_the_cap(seed):
    # A clean unit that ran on a few holidays and one night: days, not a new pattern.
    rng = np.random.default_rng(seed)
    y = np.abs(rng.normal(0.0, 0.1, 56))
    y[[10, 25, 26, 40]] = [7.0, 11.0, 10.0, 7.0]
    types = np.where(np.arange(56) % 7 >= 5, "weekend", "weekday")
    sigma = max(robust_sigma(y, types), 0.25)
    pen = mean_shift_penalty(y, types, sigma_floor=0.25)
    assert pelt_mean_shift(y, pen, groups=types, min_size=3, cap=3 * sigma) == []
    assert pelt_mean_shift(y, pen, groups=types, min_size=3) != []  # the plain cost bites
    y[33:] += 12.0  # ... while a lasting change is still found
    assert pelt_mean_shift(y, pen, groups=types, min_size=3, cap=3 * sigma) == [33]


def test_robust_sigma_of_gaussian_noise_is_near_its_standard_deviation():
    y, _ = step_series(4000, [1000, 3000], [0.0, 10.0, -5.0], noise=2.0, seed=3)
    assert robust_sigma(y) == pytest.approx(2.0, rel=0.06)


def test_bad_arguments_are_input_errors():
    with pytest.raises(InputError, match="penalty"):
        pelt_mean_shift([1.0, 2.0, 3.0], 0.0)
    with pytest.raises(InputError, match="missing"):
        pelt_mean_shift([1.0, float("nan"), 3.0], 1.0)
    with pytest.raises(InputError, match="min_size"):
        pelt_mean_shift([1.0, 2.0, 3.0], 1.0, min_size=0)
    assert pelt_mean_shift([5.0], 1.0) == []


# --- before / after ------------------------------------------------------------------------

MONDAY = dt.date(2026, 3, 2)


def daily(values, first=MONDAY) -> pd.Series:
    return pd.Series(values, index=[first + dt.timedelta(days=i) for i in range(len(values))])


@pytest.mark.validation   # expected values from the outside source named in the comments
def test_single_day_type_matches_scipy_welch_interval():
    rng = np.random.default_rng(11)
    b, a = rng.normal(2.0, 1.0, 20), rng.normal(5.0, 2.5, 20)
    s = daily(np.r_[b, a])
    change = MONDAY + dt.timedelta(days=20)
    res = before_after(s, change, 20, 20, day_types=pd.Series("all", index=s.index))
    # Validation: scipy.stats.ttest_ind(equal_var=False) gives Welch's interval for a - b.
    ci = stats.ttest_ind(a, b, equal_var=False).confidence_interval(0.95)
    assert res.difference == pytest.approx(a.mean() - b.mean())
    assert res.ci95 == pytest.approx((ci.low, ci.high))
    assert (res.n_before, res.n_after) == (20, 20)


def test_weekday_weekend_mix_is_compared_like_with_like():
    # Same behaviour before and after (2 h weekdays, 10 h weekends), but the after period is
    # cut to start on a Saturday, so it holds a larger share of weekend days.
    vals = np.array(
        [10.0 if (MONDAY + dt.timedelta(days=i)).weekday() >= 5 else 2.0 for i in range(40)]
    )
    vals += np.random.default_rng(5).normal(0.0, 0.2, 40)
    s = daily(vals)
    change = MONDAY + dt.timedelta(days=26)  # a Saturday
    res = before_after(s, change, 26, 9)
    assert abs(res.difference) < 0.3
    assert res.ci95[0] < 0 < res.ci95[1]
    naive = s[s.index >= change].iloc[:9].mean() - s[s.index < change].mean()
    assert naive > 1.0  # what an unstratified comparison would wrongly report
    assert res.after_mean - res.before_mean == pytest.approx(res.difference)


def test_24_7_after_change_gives_a_clear_positive_difference():
    vals = [
        0.2 if i < 28 else (24.0 if (MONDAY + dt.timedelta(days=i)).weekday() >= 5 else 14.0)
        for i in range(56)
    ]
    vals = np.array(vals) + np.random.default_rng(2).normal(0.0, 0.1, 56)
    res = before_after(daily(vals), MONDAY + dt.timedelta(days=28), 28, 28)
    assert res.difference == pytest.approx(5 / 7 * 14.0 + 2 / 7 * 24.0 - 0.2, abs=0.1)
    assert res.ci95[0] > 15.0 and res.ci95[1] < 18.5


def test_missing_days_are_left_out_and_counted():
    vals = np.ones(56)
    vals[[3, 30, 31]] = np.nan
    res = before_after(daily(vals), MONDAY + dt.timedelta(days=28), 28, 28)
    assert (res.n_before, res.n_after) == (27, 26)
    assert res.ci95 == (0.0, 0.0) and res.notes


def test_too_few_days_is_an_input_error():
    with pytest.raises(InputError, match="too few days"):
        before_after(daily(np.ones(10)), MONDAY + dt.timedelta(days=30), 5, 5)


def test_stratified_interval_covers_the_true_difference_about_95_percent_of_the_time():
    # Check by simulation (seeded): weekdays and weekends with different levels, spreads and
    # a different true change each; the interval should hold the true weighted difference in
    # about 95% of trials (400 trials: the binomial 99% band is roughly 91.5% .. 98.5%).
    rng = np.random.default_rng(2024)
    idx = [MONDAY + dt.timedelta(days=i) for i in range(56)]
    weekend = np.array([d.weekday() >= 5 for d in idx])
    after = np.arange(56) >= 28
    true_diff = 5 / 7 * 1.0 + 2 / 7 * 3.0
    hits = 0
    for _ in range(400):
        v = np.where(weekend, 4.0 + rng.normal(0.0, 1.5, 56), 1.0 + rng.normal(0.0, 0.5, 56))
        v = v + np.where(after, np.where(weekend, 3.0, 1.0), 0.0)
        res = before_after(pd.Series(v, index=idx), MONDAY + dt.timedelta(days=28), 28, 28)
        hits += res.ci95[0] <= true_diff <= res.ci95[1]
    assert 0.915 <= hits / 400 <= 0.985
