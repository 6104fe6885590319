"""Core readings rules: timestamps to UTC (daylight saving), autumn fold, duplicates, health."""

import numpy as np
import pandas as pd
import pytest

from schedcheck.readings import cleaning as rd


def utc(text: str) -> int:
    return pd.Timestamp(text, tz="UTC").as_unit("ns").value


def parse(values, naive_time=None, tz="Europe/Oslo"):
    return rd.parse_timestamps(pd.Series(values), naive_time=naive_time, tz=tz)


# ---------------------------------------------------------------------------------------------
# Timestamps
# ---------------------------------------------------------------------------------------------

def test_z_and_offsets_and_fractions_all_become_utc():
    tp = parse(["2026-03-02T06:01:17Z", "2026-03-02T07:01:17+01:00", "2026-03-02 02:01:17-0400",
                "2026-03-02T06:01:17.250Z", "2026-03-02T06:01:17+00"])
    assert (tp.status == rd.OK).all()
    assert list(tp.utc[:3]) == [utc("2026-03-02 06:01:17")] * 3
    assert tp.utc[3] == utc("2026-03-02 06:01:17.25")


def test_epoch_seconds_as_numbers_and_as_text():
    # 1772431277 s after 1970-01-01T00:00Z is 2026-03-02T06:01:17Z (computed: 20514 days
    # to 2026-03-02, plus 6 h 1 min 17 s)
    assert (20514 * 86400 + 6 * 3600 + 77) == 1772431277
    a = rd.parse_timestamps(pd.Series([1772431277, 1772431277.5]), naive_time=None, tz="UTC")
    b = parse(["1772431277", " 1772431277 "])
    assert a.utc[0] == b.utc[0] == b.utc[1] == utc("2026-03-02 06:01:17")
    assert a.utc[1] == utc("2026-03-02 06:01:17.5")


def test_epoch_milliseconds_are_refused_with_a_hint():
    tp = parse(["1772431277000"])
    assert tp.status[0] == rd.EPOCH_RANGE_BAD
    assert "milliseconds" in rd.describe_time("1772431277000", int(tp.status[0]), "UTC")


def test_naive_timestamps_are_refused_unless_naive_time_is_set():
    tp = parse(["2026-03-02T06:01:17", "2026-03-02T06:01:17Z"])
    assert list(tp.status) == [rd.NAIVE, rd.OK]
    tp = parse(["2026-03-02T06:01:17"], naive_time="utc")
    assert tp.utc[0] == utc("2026-03-02 06:01:17")
    tp = parse(["2026-03-02T06:01:17"], naive_time="local")
    assert tp.utc[0] == utc("2026-03-02 05:01:17")   # Oslo is UTC+1 in winter


def test_empty_and_garbage_timestamps():
    tp = parse(["", None, "yesterday", "2026-02-30T10:00:00Z", "2026-03-02"])
    assert list(tp.status[:4]) == [rd.EMPTY, rd.EMPTY, rd.UNPARSEABLE, rd.UNPARSEABLE]
    assert tp.status[4] == rd.NAIVE   # a bare date has no offset either
    assert "not a date and time" in rd.describe_time("yesterday", rd.UNPARSEABLE, "UTC")


def test_typed_timestamps_aware_and_naive():
    aware = pd.Series(pd.to_datetime(["2026-03-02 07:00"]).tz_localize("Europe/Oslo"))
    assert rd.parse_timestamps(aware, naive_time=None, tz="UTC").utc[0] == utc("2026-03-02 06:00")
    naive = pd.Series(pd.to_datetime(["2026-03-02 07:00"]))
    assert rd.parse_timestamps(naive, naive_time=None, tz="UTC").status[0] == rd.NAIVE
    tp = rd.parse_timestamps(naive, naive_time="local", tz="Europe/Oslo")
    assert tp.utc[0] == utc("2026-03-02 06:00")


# EU: summer time starts and ends at 01:00 UTC on the last Sunday of March and of October
# (Directive 2000/84/EC, articles 2 and 3): in 2026 on 29 March and 25 October.
# US: daylight saving time starts on the second Sunday of March and ends on the first Sunday of
# November at 2:00 a.m. local time (Energy Policy Act of 2005, section 110): in 2026 on 8 March
# and 1 November.
@pytest.mark.parametrize("tz,local,expected", [
    ("Europe/Oslo", "2026-03-29 01:59:00", "2026-03-29 00:59:00"),
    ("Europe/Oslo", "2026-03-29 03:00:00", "2026-03-29 01:00:00"),
    ("Europe/Berlin", "2026-10-25 01:59:00", "2026-10-24 23:59:00"),
    ("Europe/Berlin", "2026-10-25 03:00:00", "2026-10-25 02:00:00"),
    ("Europe/Lisbon", "2026-03-29 00:59:00", "2026-03-29 00:59:00"),   # WET: change at 01:00 local
    ("Europe/Lisbon", "2026-03-29 02:00:00", "2026-03-29 01:00:00"),
    ("America/New_York", "2026-03-08 01:59:00", "2026-03-08 06:59:00"),
    ("America/New_York", "2026-03-08 03:00:00", "2026-03-08 07:00:00"),
    ("America/New_York", "2026-11-01 00:59:00", "2026-11-01 04:59:00"),
    ("America/New_York", "2026-11-01 02:00:00", "2026-11-01 07:00:00"),
    ("America/Chicago", "2026-03-08 03:00:00", "2026-03-08 08:00:00"),
])
def test_naive_local_time_across_the_2026_changes(tz, local, expected):
    tp = parse([local], naive_time="local", tz=tz)
    assert tp.status[0] == rd.OK and tp.utc[0] == utc(expected)


@pytest.mark.parametrize("tz,local", [("Europe/Oslo", "2026-03-29 02:30:00"),
                                      ("Europe/Lisbon", "2026-03-29 01:30:00"),
                                      ("America/New_York", "2026-03-08 02:00:00")])
def test_spring_gap_time_is_a_bad_row(tz, local):
    tp = parse([local], naive_time="local", tz=tz)
    assert tp.status[0] == rd.NONEXISTENT
    assert "does not exist" in rd.describe_time(local, rd.NONEXISTENT, tz)


@pytest.mark.parametrize("tz,local,first,second", [
    ("Europe/Oslo", "2026-10-25 02:30:00", "2026-10-25 00:30:00", "2026-10-25 01:30:00"),
    ("America/New_York", "2026-11-01 01:30:00", "2026-11-01 05:30:00", "2026-11-01 06:30:00"),
])
def test_autumn_repeated_hour_has_two_candidates(tz, local, first, second):
    tp = parse([local], naive_time="local", tz=tz)
    assert tp.status[0] == rd.AMBIGUOUS and tp.utc[0] == rd.NAT
    assert tp.early[0] == utc(first) and tp.late[0] == utc(second)


# ---------------------------------------------------------------------------------------------
# Autumn fold resolved by order, one sensor at a time
# ---------------------------------------------------------------------------------------------

def fold_parts(local_strings, tz="Europe/Oslo"):
    tp = parse(local_strings, naive_time="local", tz=tz)
    n = len(local_strings)
    return pd.DataFrame({"order": np.arange(n), "utc": tp.utc, "early": tp.early,
                         "late": tp.late, "wall": tp.wall, "x_rms": np.ones(n)})


@pytest.mark.parametrize("tz,day", [("Europe/Oslo", "2026-10-25"),
                                    ("America/New_York", "2026-11-01")])
def test_rows_in_time_order_through_the_fold_are_placed_exactly(tz, day):
    truth = pd.date_range(pd.Timestamp(day, tz=tz) + pd.Timedelta("1h"), periods=240,
                          freq="1min")   # 01:00 local, four hours of one-a-minute readings
    local = truth.strftime("%Y-%m-%d %H:%M:%S").tolist()
    frame, health, warnings = rd.clean_sensor(fold_parts(local, tz), sensor="S", columns=("x_rms",),
                                              start=None, end=None, max_gap=pd.Timedelta("5min"))
    assert len(set(local)) == 180   # one wall-clock hour was read twice
    assert frame["timestamp"].tolist() == truth.tz_convert("UTC").tolist()
    assert health.ambiguous_dropped == 0 and health.gaps == 0 and not warnings


def test_fold_rows_out_of_order_become_no_data_with_a_warning():
    truth = pd.date_range(pd.Timestamp("2026-10-25 01:00", tz="Europe/Oslo"), periods=240,
                          freq="1min")
    local = truth.strftime("%Y-%m-%d %H:%M:%S").tolist()
    rng = np.random.default_rng(7)
    amb = [i for i, s in enumerate(local) if s[11:13] == "02"]
    shuffled = list(local)
    for i, j in zip(amb, rng.permutation(amb), strict=True):
        shuffled[i] = local[j]
    frame, health, warnings = rd.clean_sensor(fold_parts(shuffled), sensor="S",
                                              columns=("x_rms",), start=None, end=None,
                                              max_gap=pd.Timedelta("5min"))
    assert health.ambiguous_dropped == 120 and len(frame) == 120
    assert len(warnings) == 1 and "cannot be placed" in warnings[0]
    assert warnings[0].endswith("both passes of that hour are counted as no data")
    # the lost two hours show as one silence (no data), not as made-up readings
    assert health.gaps == 1 and health.gap_hours == pytest.approx(2 + 1 / 60)


def test_a_late_packet_inside_one_pass_is_not_taken_for_the_clock_going_back():
    # one-a-minute readings with jitter through the Oslo fold, one packet of the first pass
    # arriving 20 rows late; the rest in time order
    rng = np.random.default_rng(11)
    truth = (pd.date_range(pd.Timestamp("2026-10-25 01:00", tz="Europe/Oslo"), periods=240,
                           freq="1min") + pd.to_timedelta(rng.integers(0, 20, 240), unit="s"))
    order = list(range(240))
    late = order.pop(70)            # 02:10 first pass (00:10 UTC)
    order.insert(90, late)
    local = truth[order].strftime("%Y-%m-%d %H:%M:%S").tolist()
    frame, health, _ = rd.clean_sensor(fold_parts(local), sensor="S", columns=("x_rms",),
                                       start=None, end=None, max_gap=pd.Timedelta("5min"))
    assert health.ambiguous_dropped == 0 and health.out_of_order == 1
    assert frame["timestamp"].tolist() == truth.tz_convert("UTC").tolist()


def test_fold_rows_seen_once_only_cannot_be_placed():
    local = ["2026-10-25 01:58:00", "2026-10-25 01:59:00", "2026-10-25 02:10:00",
             "2026-10-25 02:20:00", "2026-10-25 03:00:00"]
    frame, health, _ = rd.clean_sensor(fold_parts(local), sensor="S", columns=("x_rms",),
                                       start=None, end=None, max_gap=pd.Timedelta("5min"))
    assert health.ambiguous_dropped == 2 and len(frame) == 3


# ---------------------------------------------------------------------------------------------
# Duplicates, order, gaps
# ---------------------------------------------------------------------------------------------

def parts(times, levels):
    return pd.DataFrame({"order": np.arange(len(times)), "utc": [utc(t) for t in times],
                         "early": rd.NAT, "late": rd.NAT, "wall": rd.NAT,
                         "x_rms": np.asarray(levels, float)})


def test_duplicates_exact_dropped_and_conflicting_averaged_and_counted():
    times = ["2026-03-02 00:00", "2026-03-02 00:01", "2026-03-02 00:01", "2026-03-02 00:02",
             "2026-03-02 00:02", "2026-03-02 00:02"]
    frame, h, _ = rd.clean_sensor(parts(times, [1, 2, 2, 3, 5, 5]), sensor="S",
                                  columns=("x_rms",), start=None, end=None,
                                  max_gap=pd.Timedelta("5min"))
    assert frame["x_rms"].tolist() == [1.0, 2.0, 4.0]   # 3 and 5 (once) averaged
    assert h.duplicates_exact == 2 and h.duplicates_conflicting == 1 and h.count == 3
    assert frame["timestamp"].dt.tz is not None and frame["timestamp"].is_unique


def test_rows_out_of_order_are_counted_and_sorted():
    times = ["2026-03-02 00:00", "2026-03-02 00:03", "2026-03-02 00:01", "2026-03-02 00:02",
             "2026-03-02 00:04"]
    frame, h, _ = rd.clean_sensor(parts(times, [1, 2, 3, 4, 5]), sensor="S",
                                  columns=("x_rms",), start=None, end=None,
                                  max_gap=pd.Timedelta("5min"))
    assert h.out_of_order == 2
    assert frame["x_rms"].tolist() == [1.0, 3.0, 4.0, 2.0, 5.0]
    assert frame["timestamp"].is_monotonic_increasing


def test_gaps_median_interval_and_window_edges():
    times = ["2026-03-02 00:00", "2026-03-02 00:01", "2026-03-02 00:02", "2026-03-02 00:32",
             "2026-03-02 00:33", "2026-03-02 00:40"]
    start, end = pd.Timestamp("2026-03-01 23:50", tz="UTC"), pd.Timestamp("2026-03-02 01:00",
                                                                          tz="UTC")
    frame, h, _ = rd.clean_sensor(parts(times + ["2026-03-02 01:00"], range(7)), sensor="S",
                                  columns=("x_rms",), start=start, end=end,
                                  max_gap=pd.Timedelta("5min"))
    assert h.count == 6   # the reading at the window's end is outside [start, end)
    assert h.median_interval == pd.Timedelta("1min")
    # silences: 23:50-00:00 (10 min, window start), 00:02-00:32 (30), 00:33-00:40 (7),
    # 00:40-01:00 (20, window end)
    assert h.gaps == 4 and h.gap_hours == pytest.approx(67 / 60)
    assert h.first == pd.Timestamp("2026-03-02 00:00", tz="UTC")
    assert h.last == pd.Timestamp("2026-03-02 00:40", tz="UTC")


def test_level_checks_and_their_reasons():
    raw = pd.DataFrame({"x_rms": ["0.5", "abc", "-1", "nan", "inf", "", "0"]})
    lv, bad = rd.level_values(raw, ("x_rms",))
    assert bad.tolist() == [False, True, True, True, True, True, False]
    reasons = [rd.describe_level(v, "x_rms") for v in raw["x_rms"]]
    assert reasons[0] is None and reasons[6] is None
    assert "'abc', not a number" in reasons[1] and "negative" in reasons[2]
    assert "NaN" in reasons[3] and "not a finite number" in reasons[4]
    assert "missing" in reasons[5]


def test_warnings_for_conflicts_and_for_a_max_gap_shorter_than_the_reporting_step():
    times = [f"2026-03-02 00:{m:02d}" for m in range(0, 60, 10)]
    frame, h, warnings = rd.clean_sensor(parts(times + times[:1], [1, 1, 1, 1, 1, 1, 2]),
                                         sensor="S", columns=("x_rms",), start=None, end=None,
                                         max_gap=pd.Timedelta("5min"))
    assert h.duplicates_conflicting == 1 and h.gaps == 5
    assert any("two devices may report under one sensor id" in w for w in warnings)
    assert any("reports every 10min (median) but max_gap is 5min" in w
               and "max_gap to about 30min" in w for w in warnings)


@pytest.mark.parametrize("seed", range(60))
def test_fold_placing_is_exact_or_no_data_never_wrong(seed):
    """Seeded sweep: jitter, lost packets, a silence, late packets; both 2026 fall-back days.

    Rows are either placed at their true instant or left as no data; readings in time order
    with at most 1 % lost and no late packets are always placed exactly.
    """
    rng = np.random.default_rng(seed)
    tz, day = [("Europe/Oslo", "2026-10-25"), ("America/New_York", "2026-11-01")][seed % 2]
    step = [1, 2, 5][seed % 3]
    n = 240 // step
    truth = (pd.date_range(pd.Timestamp(day, tz=tz), periods=n, freq=f"{step}min")
             + pd.to_timedelta(rng.integers(0, 20, n), unit="s"))
    loss = [0, 0.01, 0.05, 0.3][seed % 4]
    truth = truth[rng.random(n) > loss]
    order = list(range(len(truth)))
    moved = seed % 5 >= 3
    for _ in range(rng.integers(1, 3) if moved else 0):
        i = int(rng.integers(0, len(order)))
        order.insert(min(len(order) - 1, i + int(rng.integers(1, 20))), order.pop(i))
    local = truth[order].strftime("%Y-%m-%d %H:%M:%S").tolist()
    frame, h, _ = rd.clean_sensor(fold_parts(local, tz), sensor="S", columns=("x_rms",),
                                  start=None, end=None, max_gap=pd.Timedelta("5min"))
    got, want = set(frame["timestamp"]), set(truth.tz_convert("UTC"))
    assert got <= want and len(want - got) == h.ambiguous_dropped
    if not moved and loss <= 0.01:
        assert got == want


def test_a_fold_reading_sent_twice_is_a_duplicate_not_a_lost_pair():
    # New York fall-back 2026-11-01 (01:00-02:00 EDT then EST; IANA tz database): a gateway
    # that sends one second-pass reading twice in a row. Before: both copies were dropped as
    # "late packets" with a warning that the hour was no data.
    truth = pd.date_range(pd.Timestamp("2026-11-01 00:00", tz="America/New_York"),
                          periods=240, freq="1min")
    local = truth.strftime("%Y-%m-%d %H:%M:%S").tolist()
    parts = fold_parts(local, tz="America/New_York")
    parts["x_rms"] = np.linspace(0.1, 0.5, len(parts))
    dup = local.index("2026-11-01 01:55:00", 150)          # second pass (index 175)
    parts = pd.concat([parts.iloc[:dup + 1], parts.iloc[[dup]], parts.iloc[dup + 1:]])
    parts["order"] = np.arange(len(parts))
    frame, health, warnings = rd.clean_sensor(parts, sensor="S", columns=("x_rms",), start=None,
                                              end=None, max_gap=pd.Timedelta("5min"))
    assert frame["timestamp"].tolist() == truth.tz_convert("UTC").tolist()
    assert health.ambiguous_dropped == 0 and health.duplicates_exact == 1 and not warnings
