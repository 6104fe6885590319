"""The seeded readings generator: same seed, same rows; the truth it is built from shows in them."""

import numpy as np
import pandas as pd
import pytest

from schedcheck.demo import synth

T0 = pd.Timestamp("2026-03-02T00:00Z")
T1 = pd.Timestamp("2026-03-09T00:00Z")


def _truth(rng):
    return synth.weekday_truth(T0, T1, "Europe/Oslo", rng)


def test_truth_covers_window_contiguously():
    truth = _truth(np.random.default_rng(1))
    assert truth["start"].iloc[0] == T0 and truth["end"].iloc[-1] == T1
    assert (truth["start"].iloc[1:].to_numpy() == truth["end"].iloc[:-1].to_numpy()).all()
    assert (truth["state"].iloc[1:].to_numpy() != truth["state"].iloc[:-1].to_numpy()).all()
    # 5 weekdays with one run each
    assert (truth["state"] == "run").sum() == 5


def test_same_seed_same_rows_and_file_shape():
    a = synth.readings_for_component(_truth(np.random.default_rng(1)), sensor="S1",
                                     rng=np.random.default_rng(7), start=T0, end=T1)
    b = synth.readings_for_component(_truth(np.random.default_rng(1)), sensor="S1",
                                     rng=np.random.default_rng(7), start=T0, end=T1)
    pd.testing.assert_frame_equal(a, b)
    assert list(a.columns) == list(synth.READING_COLUMNS)
    n_due = 7 * 1440
    # about 1 % lost, 0.2 % duplicated
    assert 0.97 * n_due < len(a) < 1.0 * n_due
    assert a["timestamp"].duplicated().sum() > 0
    assert not a["timestamp"].is_monotonic_increasing       # out-of-order rows present
    assert str(a["timestamp"].dt.tz) == "UTC"


def test_levels_follow_truth_and_outages_are_empty():
    rng = np.random.default_rng(3)
    truth = _truth(rng)
    outage = (pd.Timestamp("2026-03-04T10:00Z"), pd.Timestamp("2026-03-04T13:00Z"))
    r = synth.readings_for_component(truth, sensor="S", rng=rng, start=T0, end=T1,
                                     outages=[outage], noise_floor=0.03, running_level=2.0)
    mag = np.sqrt(r["x_rms"] ** 2 + r["y_rms"] ** 2 + r["z_rms"] ** 2)
    state = synth._state_at(truth, synth.to_ns(r["timestamp"]))
    assert np.median(mag[state == "run"]) == pytest.approx(2.0, rel=0.1)
    assert np.median(mag[state == "off"]) == pytest.approx(0.03, rel=0.3)
    ts = r["timestamp"]
    assert not ((ts >= outage[0]) & (ts < outage[1])).any()
    gaps = synth.truth_with_gaps(truth, [outage], T0, T1)
    nd = gaps[gaps["state"] == "no_data"]
    assert len(nd) == 1 and nd["start"].iloc[0] == outage[0] and nd["end"].iloc[0] == outage[1]


def test_speed_carried_and_transients():
    rng = np.random.default_rng(4)
    truth = synth.truth_from_runs([(T0 + pd.Timedelta("1h"), T0 + pd.Timedelta("5h"))], T0,
                                  T0 + pd.Timedelta("1D"))
    sib = synth.truth_from_runs([(T0 + pd.Timedelta("10h"), T0 + pd.Timedelta("12h"))], T0,
                                T0 + pd.Timedelta("1D"))
    speed = pd.Series([0.5, 1.0], index=pd.DatetimeIndex([T0, T0 + pd.Timedelta("3h")]))
    r = synth.readings_for_component(truth, sensor="S", rng=rng, start=T0,
                                     end=T0 + pd.Timedelta("1D"), jitter="0s", packet_loss=0,
                                     duplicates=0, out_of_order=0, speed=speed, carried=sib,
                                     carried_level=0.2)
    mag = np.sqrt(r["x_rms"] ** 2 + r["y_rms"] ** 2 + r["z_rms"] ** 2).to_numpy()
    h = lambda a, b: mag[a * 60:b * 60]  # noqa: E731 - minute slices by hour
    assert np.median(h(1, 3)) == pytest.approx(0.25, rel=0.1)    # 0.5 ** 2
    assert np.median(h(3, 5)) == pytest.approx(1.0, rel=0.1)
    assert np.median(h(10, 12)) == pytest.approx(0.2, rel=0.15)   # carried only
    crest = (r["x_peak"] / r["x_rms"]).to_numpy()
    assert crest[60] > 3 and crest[61] > 3 and np.median(crest) < 2


def test_score_states_counts_errors():
    truth = synth.truth_from_runs([(T0 + pd.Timedelta("1h"), T0 + pd.Timedelta("5h"))], T0,
                                  T0 + pd.Timedelta("1D"))
    found = synth.truth_from_runs([(T0 + pd.Timedelta("63min"), T0 + pd.Timedelta("5h"))], T0,
                                  T0 + pd.Timedelta("1D"))
    s = synth.score_states(truth, found, T0, T0 + pd.Timedelta("1D"))
    assert s["known"] == 1440 and s["known_share_correct"] == pytest.approx(1 - 3 / 1440)
    assert s["transitions"] == 2 and s["max_error"] == pd.Timedelta("3min")
    assert s["unmatched"] == [T0 + pd.Timedelta("1h")]
