"""Interval algebra: exact cases and hypothesis properties (nothing lost, nothing counted twice)."""

from __future__ import annotations

import numpy as np
import pandas as pd
from hypothesis import given, settings
from hypothesis import strategies as st

from schedcheck.intervals import NS_PER_H, Intervals, from_ns, to_ns, union_all
from tests.helpers import assert_intervals_equal

H = NS_PER_H


def iv(*pairs):
    return Intervals.from_arrays(
        np.array([a for a, _ in pairs], np.int64), np.array([b for _, b in pairs], np.int64)
    )


def test_normalise_merges_overlapping_and_touching_and_drops_empty():
    got = iv((5, 7), (0, 5), (10, 20), (12, 15), (30, 30), (40, 35))
    assert got.starts.tolist() == [0, 10] and got.ends.tolist() == [7, 20]


def test_half_open_touching_sets_do_not_intersect():
    assert len(iv((0, 10)) & iv((10, 20))) == 0
    assert (iv((0, 10)) | iv((10, 20))) == iv((0, 20))


def test_difference_and_intersection_exact():
    a, b = iv((0, 10), (20, 30)), iv((5, 25))
    assert (a & b) == iv((5, 10), (20, 25))
    assert (a - b) == iv((0, 5), (25, 30))
    assert (b - a) == iv((10, 20))


def test_complement_clip_and_bins():
    a = iv((2 * H, 5 * H))
    assert a.complement(0, 8 * H) == iv((0, 2 * H), (5 * H, 8 * H))
    assert a.clip(3 * H, 10 * H) == iv((3 * H, 5 * H))
    assert a.ns_per_bin([0, 3 * H, 4 * H, 8 * H]).tolist() == [H, H, H]


def test_contains_is_half_open():
    a = iv((10, 20))
    assert a.contains([9, 10, 19, 20]).tolist() == [False, True, True, False]


def test_frames_round_trip_with_timezones():
    f = pd.DataFrame(
        {
            "start": pd.to_datetime(["2026-03-29T00:30:00+01:00"]),
            "end": pd.to_datetime(["2026-03-29T03:30:00+02:00"]),
        }
    )
    a = Intervals.from_frame(f)
    assert a.hours() == 2.0  # 23:30Z .. 01:30Z across the EU spring change (01:00 UTC)
    back = a.to_frame("Europe/Oslo")
    assert str(back["start"][0]) == "2026-03-29 00:30:00+01:00"
    assert to_ns(from_ns(a.starts)).tolist() == a.starts.tolist()


def test_naive_instants_are_refused():
    import pytest

    with pytest.raises(ValueError):
        to_ns(pd.Timestamp("2026-01-01 00:00"))


# -- properties -------------------------------------------------------------------------------

pairs = st.lists(st.tuples(st.integers(0, 200), st.integers(0, 200)), max_size=12)


def make(p):
    return Intervals.from_arrays(
        np.array([a for a, _ in p], np.int64), np.array([b for _, b in p], np.int64)
    )


def as_mask(s: Intervals, n=201):
    m = np.zeros(n, bool)
    for a, b in s:
        m[a:b] = True
    return m


@settings(max_examples=300, deadline=None)
@given(pairs, pairs)
def test_algebra_matches_pointwise_sets(p, q):
    a, b = make(p), make(q)
    ma, mb = as_mask(a), as_mask(b)
    assert (as_mask(a | b) == (ma | mb)).all()
    assert (as_mask(a & b) == (ma & mb)).all()
    assert (as_mask(a - b) == (ma & ~mb)).all()
    # normalised: sorted, disjoint, not touching, non-empty
    for s in (a | b, a & b, a - b):
        assert (s.ends > s.starts).all()
        assert (s.starts[1:] > s.ends[:-1]).all()


@settings(max_examples=200, deadline=None)
@given(pairs, pairs)
def test_nothing_lost_nothing_counted_twice(p, q):
    a, b = make(p), make(q)
    # |a| = |a & b| + |a - b|, and the two parts do not overlap
    assert a.duration_ns() == (a & b).duration_ns() + (a - b).duration_ns()
    assert len((a & b) & (a - b)) == 0
    assert (a | b).duration_ns() == a.duration_ns() + b.duration_ns() - (a & b).duration_ns()


@settings(max_examples=200, deadline=None)
@given(pairs, st.lists(st.integers(0, 210), min_size=2, max_size=8, unique=True))
def test_bins_add_up(p, edges):
    a = make(p)
    edges = sorted(edges)
    per_bin = a.ns_per_bin(edges)
    assert (
        per_bin.sum() == a.clip(edges[0], edges[-1]).duration_ns() if edges[0] < edges[-1] else True
    )
    mask = as_mask(a, 211)
    for i in range(len(edges) - 1):
        assert per_bin[i] == mask[edges[i] : edges[i + 1]].sum()


def test_union_all():
    assert union_all([iv((0, 1)), iv((1, 3)), iv((5, 6))]) == iv((0, 3), (5, 6))
    assert len(union_all([])) == 0
    assert_intervals_equal(
        union_all([iv((0, H))]), Intervals.from_arrays(np.array([0]), np.array([H]))
    )
