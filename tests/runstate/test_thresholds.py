"""Published grouping methods, checked against reference implementations and closed forms."""

import numpy as np
import pytest
from skimage.filters import threshold_multiotsu, threshold_otsu

from schedcheck.runstate import thresholds as th


def _mix(rng, parts):
    return np.concatenate([rng.normal(m, s, n) for m, s, n in parts])


@pytest.mark.parametrize("seed", [0, 1, 2])
@pytest.mark.parametrize("parts", [
    [(-1.5, 0.1, 5000), (0.0, 0.05, 2000)],
    [(-1.5, 0.2, 300), (0.1, 0.1, 9000)],
    [(0.0, 1.0, 4000)],
])
@pytest.mark.validation   # expected values from the outside source named in the comments
def test_otsu_equals_scikit_image(seed, parts):
    # validation: scikit-image's threshold_otsu (skimage.filters, 256 bins) on the same values
    v = _mix(np.random.default_rng(seed), parts)
    assert th.otsu_threshold(v) == threshold_otsu(v)


def test_otsu_single_value_returns_it():
    # same convention as scikit-image's threshold_otsu for a constant image
    assert th.otsu_threshold(np.full(10, 0.3)) == 0.3 == threshold_otsu(np.full(10, 0.3))


@pytest.mark.validation   # expected values from the outside source named in the comments
def test_multi_otsu_equals_scikit_image():
    # validation: scikit-image's threshold_multiotsu(classes=3) on the same values
    v = _mix(np.random.default_rng(5), [(-1.5, 0.1, 5000), (-0.7, 0.05, 1500), (0, 0.05, 2000)])
    ours = th.multi_otsu_thresholds(v)
    ref = threshold_multiotsu(v, classes=3)
    assert ours == pytest.approx(tuple(ref), abs=1e-12)


def test_ashman_d_closed_form():
    # Ashman, Bird & Zepf (1994): D = sqrt(2)|mu1 - mu2| / sqrt(s1^2 + s2^2); two groups with
    # exact means 0 and 4 and population variances 1 and 1 give D = sqrt(2) * 4 / sqrt(2) = 4
    a = np.array([-1.0, 1.0])
    b = np.array([3.0, 5.0])
    assert th.ashman_d(a, b) == pytest.approx(4.0)
    assert np.isnan(th.ashman_d(a, np.array([])))


def test_effectiveness_bounds_and_value():
    # Otsu (1979): eta = between-class / total variance; two point masses -> 1
    v = np.array([0.0] * 5 + [1.0] * 5)
    assert th.otsu_effectiveness(v, 0.5) == pytest.approx(1.0)
    # 0,1 | 2,3: total var 1.25, class means 0.5 and 2.5, between var 1.0 -> 0.8 (hand-computed)
    assert th.otsu_effectiveness(np.array([0.0, 1, 2, 3]), 1.5) == pytest.approx(0.8)


def test_groups_one_two_three():
    rng = np.random.default_rng(3)
    one = th.level_groups(rng.normal(0, 0.1, 20000))
    assert one.count == 1 and "one group" in one.reason
    two = th.level_groups(_mix(rng, [(-1.5, 0.1, 8000), (0, 0.08, 4000)]))
    assert two.count == 2 and two.separations[0] > 10
    three = th.level_groups(_mix(rng, [(-1.5, 0.1, 8000), (-0.6, 0.05, 2000), (0, 0.05, 3000)]))
    assert three.count == 3
    assert three.medians == pytest.approx((-1.5, -0.6, 0.0), abs=0.03)


def test_single_group_is_not_cut_in_half():
    # Ashman's D of the two halves of ONE normal group cut at its mean is about 2.65 (above 2),
    # so D alone would split it; the valley test must refuse.
    rng = np.random.default_rng(4)
    for v in (rng.normal(0, 1, 50000), rng.uniform(-0.4, 0, 50000)):
        g = th.level_groups(v)
        assert g.count == 1
        assert g.two_way[1] > 2          # D alone would have accepted the split


def test_tiny_group_is_not_a_group():
    rng = np.random.default_rng(6)
    v = _mix(rng, [(0.0, 0.05, 100000), (-1.5, 0.1, 40)])   # 0.04 % of readings
    g = th.level_groups(v)
    assert g.count == 1          # Otsu cuts the big group; D and the valley refuse it


def test_valley_ratio():
    rng = np.random.default_rng(7)
    gap = _mix(rng, [(-1.5, 0.1, 5000), (0, 0.1, 5000)])
    assert th.valley_ratio(gap, -0.75, -1.5, 0.0) < 0.05
    flat = rng.uniform(0, 1, 20000)
    assert th.valley_ratio(flat, 0.5, 0.25, 0.75) > 0.7


def test_valley_level_finds_the_lowest_point_between_groups():
    rng = np.random.default_rng(8)
    # an empty gap between 0.3 and 0.7: its middle
    v = np.concatenate([rng.uniform(0.0, 0.3, 5000), rng.uniform(0.7, 1.0, 5000)])
    assert th.valley_level(v, 0.15, 0.85) == pytest.approx(0.5, abs=0.01)
    # no empty stretch: the sparsest place (a normal dip at 0.6 between two bumps)
    w = _mix(rng, [(0.0, 0.2, 20000), (1.0, 0.2, 20000)])
    assert th.valley_level(w, 0.0, 1.0) == pytest.approx(0.5, abs=0.05)


@pytest.mark.parametrize("seed", range(20))
def test_one_normal_group_of_a_day_of_readings_is_not_split(seed):
    # 1,400 draws of one normal group (a day of one-a-minute levels): before, thinly filled
    # 128-bin histograms let about half of such samples pass the valley test
    v = np.random.default_rng(seed).normal(0.0, 0.1, 1400)
    assert th.level_groups(v).count == 1


def test_a_falling_tail_is_no_valley():
    # cut a normal group far out in its upper tail: the tail falls steadily to the far median,
    # which is the lowest point between the medians but no dip (ratio 1, not a small number)
    v = np.random.default_rng(0).normal(0.0, 1.0, 200_000)
    b = 1.5
    left, right = float(np.median(v[v <= b])), float(np.median(v[v > b]))
    assert th.valley_ratio(v, b, left, right) > th.MAX_VALLEY
