"""Reading readings files: CSV, CSV.gz, Parquet (per-sensor filters), globs, mapping, bad rows."""

import datetime as dt
import gzip
import re
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq
import pytest

from schedcheck.errors import InputError, InputProblems
from schedcheck.inputs import readings_files as rf
from schedcheck.inputs.site_file import load_site
from schedcheck.jobs.common import data_time_range, load_readings


@pytest.fixture(autouse=True)
def _readings_folder(tmp_path):
    (tmp_path / "readings").mkdir()


CAL = "BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//test//EN\r\nEND:VCALENDAR\r\n"


def site_file(tmp_path: Path, files='["readings/*"]', tz="Europe/Oslo", extra="",
              sensors=("S1", "S2")) -> Path:
    units = "".join(
        f'[[unit]]\nid = "AHU-{i}"\n[[unit.component]]\nid = "supply"\nrole = "supply_fan"\n'
        f'sensor = "{s}"\npower_kw = 3.0\nspeed = 0.8\n' for i, s in enumerate(sensors, 1))
    (tmp_path / "occ.ics").write_text(CAL)
    (tmp_path / "readings").mkdir(exist_ok=True)
    p = tmp_path / "site.toml"
    p.write_text(f'[site]\nname = "Quay Street Test Offices"\ntimezone = "{tz}"\n'
                 f'[readings]\nfiles = {files}\n{extra}\n[schedule]\noccupied = "occ.ics"\n'
                 + units)
    return p


def minutes(sensor: str, start="2026-03-02T00:00:00Z", n=60, seed=0) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    t = pd.date_range(start, periods=n, freq="1min")
    return pd.DataFrame({"timestamp": t.strftime("%Y-%m-%dT%H:%M:%SZ"), "sensor": sensor,
                         "x_rms": rng.uniform(0.1, 3, n).round(3),
                         "y_rms": rng.uniform(0.1, 3, n).round(3)})


def both(**kw) -> pd.DataFrame:
    return pd.concat([minutes("S1", **kw), minutes("S2", seed=1, **kw)], ignore_index=True)


def errors_of(exc: InputProblems) -> list[str]:
    return [str(e) for e in exc.problems]


def test_csv_gzip_and_glob_give_the_same_readings(tmp_path):
    data = both()
    data.iloc[:70].to_csv(tmp_path / "readings" / "part1.csv", index=False)
    with gzip.open(tmp_path / "readings" / "part2.csv.gz", "wt") as f:
        data.iloc[70:].to_csv(f, index=False)
    r = load_readings(load_site(site_file(tmp_path)))
    assert len(r.files) == 2 and set(r.by_sensor) == {"S1", "S2"}
    s1 = r.by_sensor["S1"]
    assert list(s1.columns) == ["timestamp", "x_rms", "y_rms"]
    assert str(s1["timestamp"].dtype) == "datetime64[ns, UTC]" and s1["x_rms"].dtype == "float64"
    exp = minutes("S1")
    assert s1["x_rms"].tolist() == exp["x_rms"].tolist()
    assert s1["timestamp"].tolist() == pd.to_datetime(exp["timestamp"], utc=True).tolist()
    assert r.health["S1"].count == 60 and r.health["S2"].count == 60
    assert r.health["S1"].median_interval == pd.Timedelta("1min")


def test_gzip_file_cut_short_is_one_plain_error(tmp_path):
    data = both(n=20_000)
    whole = gzip.compress(data.to_csv(index=False).encode())
    (tmp_path / "readings" / "cut.csv.gz").write_bytes(whole[: len(whole) // 2])
    with pytest.raises(InputProblems) as exc:
        load_readings(load_site(site_file(tmp_path)))
    (msg,) = errors_of(exc.value)
    head = (f"{tmp_path / 'readings' / 'cut.csv.gz'}: the compressed data ends early: the "
            "file is cut short")
    m = re.fullmatch(re.escape(head) + r" \(after [0-9.]+ MiB of text, near line (\d+)\); "
                     "copy or download the file again", msg)
    assert m, msg
    # the text that could be unpacked ends inside the file's lines (header + 40,000 rows)
    assert 1 < int(m.group(1)) <= 40_001


def test_every_row_bad_names_the_bad_rows_not_only_the_missing_sensors(tmp_path):
    # epoch milliseconds: every row is bad; the commands that first find the data's range
    # (states, check, schedule) skip bad rows and said only "no readings for any sensor"
    d = both()
    d["timestamp"] = pd.to_datetime(d["timestamp"]).dt.as_unit("ms").astype("int64")
    d.to_csv(tmp_path / "readings" / "ms.csv", index=False)
    site = load_site(site_file(tmp_path))
    with pytest.raises(InputProblems) as exc:
        data_time_range(site)
    (msg,) = errors_of(exc.value)
    assert "no readings for any configured sensor (S1, S2); 120 bad rows were skipped, the " \
           f"first: {tmp_path / 'readings' / 'ms.csv'}:2: timestamp '1772409600000'" in msg
    assert "milliseconds?" in msg


def test_a_level_column_named_twice_in_the_header_is_refused(tmp_path):
    # pandas reads the first and renames the second 'x_rms.1': one of them was dropped silently
    d = both()
    d["z_rms"] = d["y_rms"]
    d.to_csv(tmp_path / "readings" / "r.csv", index=False)
    text = (tmp_path / "readings" / "r.csv").read_text().replace("z_rms", "x_rms", 1)
    (tmp_path / "readings" / "r.csv").write_text(text)
    with pytest.raises(InputProblems) as exc:
        load_readings(load_site(site_file(tmp_path)))
    assert errors_of(exc.value) == [f"{tmp_path / 'readings' / 'r.csv'}:1: column 'x_rms' "
                                    "appears 2 times in the header (columns 3, 5); rename the "
                                    "one not meant"]
    # a repeated column we do not read is no concern
    d = both()[["timestamp", "sensor", "x_rms"]].assign(a="", b="")
    d.to_csv(tmp_path / "readings" / "r.csv", index=False, header=False)
    text = (tmp_path / "readings" / "r.csv").read_text()
    (tmp_path / "readings" / "r.csv").write_text("timestamp,sensor,x_rms,note,note\n" + text)
    assert load_readings(load_site(site_file(tmp_path))).health["S1"].count == 60


def test_sensor_id_differing_only_in_case_gets_a_hint(tmp_path):
    d = both()
    d["sensor"] = d["sensor"].replace({"S1": "s1"})
    d.to_csv(tmp_path / "readings" / "r.csv", index=False)
    r = load_readings(load_site(site_file(tmp_path)))
    assert r.health["S1"].count == 0
    assert any(w.startswith("sensor S1 (AHU-1/supply) has no readings") and
               "the files have sensor 's1' (ids must match exactly, case included)" in w
               for w in r.warnings)


def test_csv_not_in_utf8_names_the_line_or_the_utf16_export(tmp_path):
    # both said "cannot read the file (UnicodeDecodeError: 'utf-8' codec can't decode ...)"
    text = both().to_csv(index=False)
    lines = text.splitlines(keepends=True)
    f = tmp_path / "readings" / "r.csv"
    f.write_bytes("".join(lines[:4]).encode() + "Caf\u00e9\n".encode("latin-1")
                  + "".join(lines[4:]).encode())
    with pytest.raises(InputProblems) as exc:
        load_readings(load_site(site_file(tmp_path)))
    assert errors_of(exc.value) == [f"{f}:5: not UTF-8 text (byte 0xe9); save or export the "
                                    "file as UTF-8"]
    f.write_bytes(text.encode("utf-16"))
    with pytest.raises(InputProblems) as exc:
        load_readings(load_site(site_file(tmp_path)))
    assert errors_of(exc.value) == [f"{f}: is UTF-16 text; save or export it as UTF-8 CSV"]


def test_column_mapping_semicolons_and_decimal_commas(tmp_path):
    d = minutes("S1")
    export = pd.DataFrame({"Time": d["timestamp"], "Device": d["sensor"],
                           "VelX": d["x_rms"].map(lambda v: f"{v}".replace(".", ",")),
                           "Battery": 3.6})
    export.to_csv(tmp_path / "readings" / "export.csv", sep=";", index=False)
    p = site_file(tmp_path, sensors=("S1",),
                  extra='columns = { timestamp = "Time", sensor = "Device", x_rms = "VelX" }')
    r = load_readings(load_site(p))
    assert r.by_sensor["S1"]["x_rms"].tolist() == d["x_rms"].tolist()
    assert r.health["S1"].columns == ("x_rms",)


def test_missing_column_names_the_file_and_the_mapping(tmp_path):
    minutes("S1").to_csv(tmp_path / "readings" / "r.csv", index=False)
    p = site_file(tmp_path, extra='columns = { timestamp = "Time" }')
    with pytest.raises(InputProblems) as exc:
        load_readings(load_site(p))
    msg = errors_of(exc.value)[0]
    assert msg.startswith(f"{tmp_path / 'readings' / 'r.csv'}:1: no column 'Time'")
    assert "mapped from timestamp" in msg and "timestamp, sensor, x_rms, y_rms" in msg


def test_no_rms_column_is_an_error(tmp_path):
    minutes("S1").rename(columns={"x_rms": "x_peak", "y_rms": "y_peak"}).to_csv(
        tmp_path / "readings" / "r.csv", index=False)
    with pytest.raises(InputProblems, match="no level column"):
        load_readings(load_site(site_file(tmp_path)))


def test_epoch_seconds_column(tmp_path):
    d = minutes("S1")
    d["timestamp"] = ((pd.to_datetime(d["timestamp"]) - pd.Timestamp("1970-01-01", tz="UTC"))
                      // pd.Timedelta("1s"))
    d.to_csv(tmp_path / "readings" / "r.csv", index=False)
    r = load_readings(load_site(site_file(tmp_path, sensors=("S1",))))
    assert r.health["S1"].first == pd.Timestamp("2026-03-02T00:00:00Z")
    assert r.health["S1"].count == 60


def test_naive_timestamps_refused_naming_file_and_line(tmp_path):
    d = minutes("S1")
    d["timestamp"] = d["timestamp"].str.rstrip("Z")
    d.to_csv(tmp_path / "readings" / "r.csv", index=False)
    with pytest.raises(InputProblems) as exc:
        load_readings(load_site(site_file(tmp_path)))
    (msg,) = errors_of(exc.value)
    assert msg.startswith(f"{tmp_path / 'readings' / 'r.csv'}:2: timestamp "
                          "'2026-03-02T00:00:00' has no UTC offset (59 more rows like it)")
    assert 'naive_time = "local"' in msg
    # large counts are written with thousands separators, like the other row counts
    minutes("S1", n=1500).assign(timestamp=lambda f: f["timestamp"].str.rstrip("Z")).to_csv(
        tmp_path / "readings" / "r.csv", index=False)
    with pytest.raises(InputProblems) as exc:
        load_readings(load_site(site_file(tmp_path)))
    assert "(1,499 more rows like it)" in errors_of(exc.value)[0]


def test_naive_local_time_through_the_autumn_fold_in_a_file(tmp_path):
    # EU summer time ends 2026-10-25 at 01:00 UTC (Directive 2000/84/EC, article 3)
    truth = pd.date_range("2026-10-24T23:00:00Z", "2026-10-25T03:00:00Z", freq="1min",
                          inclusive="left")
    d = pd.DataFrame({"timestamp": truth.tz_convert("Europe/Oslo").strftime("%Y-%m-%d %H:%M:%S"),
                      "sensor": "S1", "x_rms": 1.0})
    d.to_csv(tmp_path / "readings" / "r.csv", index=False)
    p = site_file(tmp_path, sensors=("S1",), extra='naive_time = "local"')
    r = load_readings(load_site(p))
    assert r.by_sensor["S1"]["timestamp"].tolist() == truth.tolist()
    assert r.health["S1"].ambiguous_dropped == 0 and not r.warnings


def test_spring_gap_row_is_an_error_naming_the_line(tmp_path):
    # EU summer time starts 2026-03-29 at 01:00 UTC: Oslo clocks go 02:00 -> 03:00
    lines = ["timestamp,sensor,x_rms", "2026-03-29 01:58:00,S1,1", "2026-03-29 01:59:00,S1,1",
             "2026-03-29 02:00:00,S1,1", "2026-03-29 03:00:00,S1,1"]
    (tmp_path / "readings" / "r.csv").write_text("\n".join(lines) + "\n")
    p = site_file(tmp_path, sensors=("S1",), extra='naive_time = "local"')
    with pytest.raises(InputProblems) as exc:
        load_readings(load_site(p))
    (msg,) = errors_of(exc.value)
    assert msg.startswith(f"{tmp_path / 'readings' / 'r.csv'}:4: local time "
                          "'2026-03-29 02:00:00' does not exist in Europe/Oslo")


BROKEN = """timestamp,sensor,x_rms
2026-03-02T00:00:00Z,S1,0.5
2026-03-02T00:01:00Z,S1,abc
2026-03-02T00:02:00Z,S1,0.5

2026-03-02T00:03:00Z,S1,-2
not a time,S1,0.5
2026-03-02T00:05:00Z,S1,nan
2026-03-02T00:06:00Z,S1,inf
2026-03-02T00:07:00Z,S1,
2026-03-02T00:08:00Z,S2,0.7
2026-03-02T00:09:00Z,XX,junk
"""


def test_bad_rows_are_one_error_naming_file_line_and_count(tmp_path):
    (tmp_path / "readings" / "r.csv").write_text(BROKEN)
    with pytest.raises(InputProblems) as exc:
        load_readings(load_site(site_file(tmp_path)))
    (msg,) = errors_of(exc.value)
    f = tmp_path / "readings" / "r.csv"
    assert msg == (f"{f}:3: level x_rms is 'abc', not a number (and 5 more bad rows: lines 6, "
                   "7, 8, 9 and 1 more; pass --skip-bad-rows to drop them)")


def test_bad_rows_skipped_on_request_are_counted_and_named(tmp_path):
    (tmp_path / "readings" / "r.csv").write_text(BROKEN)
    site = load_site(site_file(tmp_path))
    r = load_readings(site, skip_bad_rows=True)
    f = tmp_path / "readings" / "r.csv"
    assert r.bad_rows_count == 6 and r.health["S1"].bad_rows == 6 and r.health["S2"].bad_rows == 0
    assert r.bad_rows_examples[:3] == [f"{f}:3: level x_rms is 'abc', not a number",
                                       f"{f}:6: level x_rms is negative (-2)",
                                       f"{f}:7: timestamp 'not a time' is not a date and time "
                                       "(ISO 8601 with Z or an offset, or epoch seconds)"]
    assert r.health["S1"].count == 2 and r.health["S2"].count == 1
    assert r.unconfigured == {"XX": 1}     # an unmapped sensor's rows are listed, not checked
    assert any(w.startswith("skipped 6 bad rows") for w in r.warnings)
    # the same through the site file setting
    site2 = load_site(site_file(tmp_path, extra="skip_bad_rows = true"))
    assert load_readings(site2).bad_rows_count == 6


def parquet_fixture(tmp_path, by_sensor: bool):
    d = both()
    table = pd.DataFrame({"timestamp": pd.to_datetime(d["timestamp"], utc=True),
                          "sensor": d["sensor"], "x_rms": d["x_rms"], "y_rms": d["y_rms"],
                          "firmware": "1.2.3", "S3_unused": 0})
    extra = pd.DataFrame({"timestamp": table["timestamp"][:5], "sensor": "S9", "x_rms": 1.0,
                          "y_rms": 1.0, "firmware": "x", "S3_unused": 0})
    table = pd.concat([table, extra], ignore_index=True)
    table = table.sort_values(["sensor", "timestamp"] if by_sensor else ["timestamp"],
                              kind="stable")
    pq.write_table(pa.Table.from_pandas(table, preserve_index=False),
                   tmp_path / "readings" / "r.parquet", row_group_size=30)


def spy_reads(monkeypatch):
    calls = []
    real_read, real_iter = pq.read_table, pq.ParquetFile.iter_batches

    def read(path, columns=None, filters=None, **kw):
        calls.append(("read_table", columns, filters))
        return real_read(path, columns=columns, filters=filters, **kw)

    def batches(self, batch_size=65536, columns=None, **kw):
        calls.append(("iter_batches", columns, None))
        return real_iter(self, batch_size=batch_size, columns=columns, **kw)

    monkeypatch.setattr(pq, "read_table", read)
    monkeypatch.setattr(pq.ParquetFile, "iter_batches", batches)
    return calls


def test_parquet_sorted_by_sensor_is_read_per_sensor_with_filters(tmp_path, monkeypatch):
    parquet_fixture(tmp_path, by_sensor=True)
    calls = spy_reads(monkeypatch)
    r = load_readings(load_site(site_file(tmp_path)))
    reads = [c for c in calls if c[2] is not None]
    assert sorted(f[0][2] for _, _, f in reads) == ["S1", "S2"]
    for _, cols, _ in reads:   # only the needed columns
        assert sorted(cols) == ["sensor", "timestamp", "x_rms", "y_rms"]
    assert ("read_table", ["sensor"], None) in calls   # the census of sensors in the file
    assert not [c for c in calls if c[0] == "iter_batches"]
    assert r.by_sensor["S2"]["x_rms"].tolist() == minutes("S2", seed=1)["x_rms"].tolist()
    assert r.unconfigured == {"S9": 5}


def test_parquet_with_sensors_mixed_is_streamed_in_batches(tmp_path, monkeypatch):
    parquet_fixture(tmp_path, by_sensor=False)
    calls = spy_reads(monkeypatch)
    r = load_readings(load_site(site_file(tmp_path)))
    assert [c[0] for c in calls] == ["iter_batches"]
    assert sorted(calls[0][1]) == ["sensor", "timestamp", "x_rms", "y_rms"]
    assert r.by_sensor["S1"]["x_rms"].tolist() == minutes("S1")["x_rms"].tolist()
    assert r.by_sensor["S2"]["x_rms"].tolist() == minutes("S2", seed=1)["x_rms"].tolist()
    assert r.unconfigured == {"S9": 5}


def test_parquet_naive_timestamps_and_integer_sensor_ids(tmp_path):
    t = pd.date_range("2026-03-29 00:30", "2026-03-29 04:00", freq="1min")   # local wall time
    t = t[(t.hour != 2)]     # valid data has no readings in the spring gap
    df = pd.DataFrame({"timestamp": t, "sensor": 417, "x_rms": 1.0})
    pq.write_table(pa.Table.from_pandas(df, preserve_index=False),
                   tmp_path / "readings" / "r.parquet")
    p = site_file(tmp_path, sensors=("417",), extra='naive_time = "local"')
    r = load_readings(load_site(p))
    ts = r.by_sensor["417"]["timestamp"]
    # Oslo: 01:59 CET = 00:59 UTC, then 03:00 CEST = 01:00 UTC (Directive 2000/84/EC)
    assert ts.iloc[89] == pd.Timestamp("2026-03-29T00:59:00Z")
    assert ts.iloc[90] == pd.Timestamp("2026-03-29T01:00:00Z")
    assert r.health["417"].gaps == 0


def test_parquet_bad_level_names_the_sensor_and_time(tmp_path):
    df = pd.DataFrame({"timestamp": pd.date_range("2026-03-02", periods=3, freq="1min",
                                                  tz="UTC"), "sensor": "S1",
                       "x_rms": [1.0, float("nan"), 1.0]})
    pq.write_table(pa.Table.from_pandas(df, preserve_index=False),
                   tmp_path / "readings" / "r.parquet")
    with pytest.raises(InputProblems) as exc:
        load_readings(load_site(site_file(tmp_path, sensors=("S1",))))
    (msg,) = errors_of(exc.value)
    assert msg.startswith(f"{tmp_path / 'readings' / 'r.parquet'}: sensor S1 at "
                          "2026-03-02 00:01:00+00:00: level x_rms is missing or NaN")


def test_window_keeps_only_readings_inside_it(tmp_path):
    both(n=180).to_csv(tmp_path / "readings" / "r.csv", index=False)
    site = load_site(site_file(tmp_path))
    start, end = pd.Timestamp("2026-03-02T01:00Z"), pd.Timestamp("2026-03-02T02:00Z")
    r = load_readings(site, start, end)
    ts = r.by_sensor["S1"]["timestamp"]
    assert ts.min() == start and ts.max() == end - pd.Timedelta("1min") and len(ts) == 60
    assert r.start == start and r.end == end


def test_no_readings_for_any_sensor_is_an_error_one_missing_sensor_a_warning(tmp_path):
    minutes("S1").to_csv(tmp_path / "readings" / "r.csv", index=False)
    site = load_site(site_file(tmp_path))
    r = load_readings(site)
    assert r.health["S2"].count == 0 and len(r.by_sensor["S2"]) == 0
    assert any("sensor S2 (AHU-2/supply) has no readings" in w for w in r.warnings)
    from schedcheck.inputs.readings_files import read_readings

    window = pd.Timestamp("2026-04-01T00:00Z"), pd.Timestamp("2026-04-02T00:00Z")
    with pytest.raises(InputProblems) as exc:
        read_readings(site, *window)
    (msg,) = errors_of(exc.value)
    assert msg.startswith(f"{tmp_path / 'site.toml'}: readings.files: no readings for any "
                          "configured sensor (S1, S2) between 2026-04-01 00:00Z")
    # the commands' loader points at the dates the user gave (local), not the files
    with pytest.raises(InputError) as exc:
        load_readings(site, *window)
    # (00:00Z to 00:00Z is 02:00 to 02:00 in the site's summer time: two local dates)
    assert str(exc.value).startswith("--from/--to: no readings for any configured sensor on "
                                     "2026-04-01 to 2026-04-02 (local dates)")


def test_unknown_format_and_empty_file(tmp_path):
    (tmp_path / "readings" / "r.xlsx").write_text("x")
    (tmp_path / "readings" / "s.csv").write_text("")
    with pytest.raises(InputProblems) as exc:
        load_readings(load_site(site_file(tmp_path)))
    msgs = errors_of(exc.value)
    assert len(msgs) == 2
    assert msgs[0].startswith(f"{tmp_path / 'readings' / 'r.xlsx'}: unknown readings format")
    assert msgs[1].startswith(f"{tmp_path / 'readings' / 's.csv'}: the file is empty")


def test_data_time_range_is_the_whole_local_days_covered(tmp_path):
    # from 2026-03-01 23:00Z (= 00:00 Oslo, 2 March) for 3 days less 30 minutes
    both(start="2026-03-01T23:00:00Z", n=3 * 1440 - 30).to_csv(tmp_path / "readings" / "r.csv",
                                                                 index=False)
    first, last = data_time_range(load_site(site_file(tmp_path)))
    assert (first, last) == (dt.date(2026, 3, 2), dt.date(2026, 3, 3))


def test_readings_files_pattern_matching_nothing_after_validation(tmp_path):
    minutes("S1").to_csv(tmp_path / "readings" / "r.csv", index=False)
    site = load_site(site_file(tmp_path))
    (tmp_path / "readings" / "r.csv").unlink()
    with pytest.raises(InputError, match="matches no file"):
        rf.readings_files(site)


def test_a_whole_read_is_reused_for_the_next_window_and_changes_are_seen(tmp_path, monkeypatch):
    both(n=180).to_csv(tmp_path / "readings" / "r.csv", index=False)
    site = load_site(site_file(tmp_path))
    reads = []
    real = rf._read_csv
    monkeypatch.setattr(rf, "_read_csv", lambda *a: reads.append(1) or real(*a))
    source = rf.ReadingsSource(site)   # the command's readings, passed to every read
    whole = source.read(keep=True)
    start, end = pd.Timestamp("2026-03-02T01:00Z"), pd.Timestamp("2026-03-02T02:00Z")
    part = load_readings(site, start, end, source=source)
    assert len(reads) == 1     # the window came from the kept whole read
    assert whole.health["S1"].count == 180 and part.health["S1"].count == 60
    assert part.by_sensor["S1"]["timestamp"].min() == start
    load_readings(site, start, end, source=source)
    assert len(reads) == 2     # kept for one window only
    assert data_time_range(site, source=source) == (dt.date(2026, 3, 2), dt.date(2026, 3, 2))
    assert load_readings(site, start, end, source=source).health["S1"].count == 60 \
        and len(reads) == 3
    load_readings(site, source=source)
    load_readings(site, source=source)
    assert len(reads) == 5     # without keep=True nothing is kept
    both(n=120).to_csv(tmp_path / "readings" / "r.csv", index=False)
    source.read(keep=True)
    assert len(reads) == 6 and source.read().health["S1"].count == 120   # changed


def test_parquet_epoch_seconds_and_text_timestamps(tmp_path):
    t = pd.date_range("2026-03-02T00:00:00Z", periods=30, freq="1min")
    epoch = (t - pd.Timestamp("1970-01-01", tz="UTC")) // pd.Timedelta("1s")
    pq.write_table(pa.table({"timestamp": pa.array(np.asarray(epoch), pa.int64()),
                             "sensor": ["S1"] * 30, "x_rms": [1.0] * 30}),
                   tmp_path / "readings" / "a.parquet")
    text = t.tz_convert("Europe/Oslo").strftime("%Y-%m-%dT%H:%M:%S%z")   # "+0100" offsets
    pq.write_table(pa.table({"timestamp": list(text), "sensor": ["S2"] * 30, "x_rms": [2.0] * 30}),
                   tmp_path / "readings" / "b.parquet")
    r = load_readings(load_site(site_file(tmp_path)))
    for s in ("S1", "S2"):
        assert r.by_sensor[s]["timestamp"].tolist() == list(t), s


def test_a_single_axis_sensor_in_a_shared_file_leaves_its_other_columns_empty(tmp_path):
    # a gateway export with a three-axis and a one-axis sensor in one file writes empty cells
    # for the axes the second does not have: absent for it, not bad rows
    s1 = minutes("S1")
    s2 = minutes("S2", seed=1).assign(x_rms="", y_rms="", z_rms=0.7)
    s1["z_rms"] = 0.5
    pd.concat([s1, s2]).sort_values("timestamp", kind="stable").to_csv(
        tmp_path / "readings" / "r.csv", index=False)
    r = load_readings(load_site(site_file(tmp_path)))
    assert list(r.by_sensor["S2"].columns) == ["timestamp", "z_rms"]
    assert list(r.by_sensor["S1"].columns) == ["timestamp", "x_rms", "y_rms", "z_rms"]
    assert len(r.by_sensor["S2"]) == 60 and r.bad_rows_count == 0 and not r.warnings
    # a blank cell of a sensor that does report the axis is still a bad row, named by line
    s1 = s1.astype({"x_rms": object})
    s1.loc[5, "x_rms"] = ""
    pd.concat([s1, s2]).to_csv(tmp_path / "readings" / "r.csv", index=False)
    with pytest.raises(InputProblems) as exc:
        load_readings(load_site(site_file(tmp_path)))
    (msg,) = errors_of(exc.value)
    assert msg.startswith(f"{tmp_path / 'readings' / 'r.csv'}:7: level x_rms is missing")


def test_a_window_far_from_the_autumn_fold_neither_reads_nor_warns_about_it(tmp_path):
    # EU summer time ends 2026-10-25 at 01:00 UTC (Directive 2000/84/EC, article 3). A read of
    # a window in September kept the fold's rows (no single instant to judge them by), could
    # not place them without neighbours and warned that 120 readings of the hour were lost.
    sept = pd.date_range("2026-09-01T00:00:00Z", periods=600, freq="1min")
    fold = pd.date_range("2026-10-24T23:00:00Z", "2026-10-25T03:00:00Z", freq="1min",
                         inclusive="left")
    truth = sept.append(fold)
    d = pd.DataFrame({"timestamp": truth.tz_convert("Europe/Oslo").strftime("%Y-%m-%d %H:%M:%S"),
                      "sensor": "S1", "x_rms": 1.0})
    d.to_csv(tmp_path / "readings" / "r.csv", index=False)
    site = load_site(site_file(tmp_path, sensors=("S1",), extra='naive_time = "local"'))
    r = load_readings(site, pd.Timestamp("2026-09-01T00:00Z"), pd.Timestamp("2026-09-02T00:00Z"))
    assert r.by_sensor["S1"]["timestamp"].tolist() == sept.tolist()
    assert r.health["S1"].ambiguous_dropped == 0 and not r.warnings
    # a window holding the fold still places every row
    r = load_readings(site, pd.Timestamp("2026-10-24T22:00Z"), pd.Timestamp("2026-10-25T23:00Z"))
    assert r.by_sensor["S1"]["timestamp"].tolist() == fold.tolist()
    assert r.health["S1"].ambiguous_dropped == 0


def test_column_names_listed_in_order_read_two_exports_with_different_names(tmp_path):
    # a CSV gateway writes Time/Device/VelX; a second one Parquet with ts_utc/node/vx
    a = minutes("S1").rename(columns={"timestamp": "Time", "sensor": "Device", "x_rms": "VelX"})
    a.drop(columns="y_rms").to_csv(tmp_path / "readings" / "east.csv", index=False)
    b = minutes("S2", seed=1)
    b = pd.DataFrame({"ts_utc": pd.to_datetime(b["timestamp"], utc=True), "node": b["sensor"],
                      "vx": b["x_rms"]})
    pq.write_table(pa.Table.from_pandas(b, preserve_index=False),
                   tmp_path / "readings" / "hall.parquet")
    cols = ('columns = { timestamp = ["Time", "ts_utc"], sensor = ["Device", "node"], '
            'x_rms = ["VelX", "vx"] }')
    r = load_readings(load_site(site_file(tmp_path, extra=cols)))
    assert r.by_sensor["S1"]["x_rms"].tolist() == a["VelX"].tolist()
    assert r.by_sensor["S2"]["x_rms"].tolist() == b["vx"].tolist()
    # a file with none of the names is refused, naming them all
    a.rename(columns={"Time": "When"}).to_csv(tmp_path / "readings" / "east.csv", index=False)
    with pytest.raises(InputProblems) as exc:
        load_readings(load_site(site_file(tmp_path, extra=cols)))
    (msg,) = errors_of(exc.value)
    assert "east.csv:1: no column 'Time' or 'ts_utc' (mapped from timestamp" in msg


def test_an_axis_left_empty_in_one_file_only_is_dropped_with_a_warning(tmp_path):
    # S1 reports x and y in the first file; in the second its x cells are all empty (the axis
    # failed): x is not used for S1 at all, and the warning says why
    first = minutes("S1")
    second = minutes("S1", start="2026-03-02T01:00:00Z").astype({"x_rms": object})
    second["x_rms"] = ""
    first.to_csv(tmp_path / "readings" / "a.csv", index=False)
    second.to_csv(tmp_path / "readings" / "b.csv", index=False)
    r = load_readings(load_site(site_file(tmp_path, sensors=("S1",))))
    assert list(r.by_sensor["S1"].columns) == ["timestamp", "y_rms"]
    assert len(r.by_sensor["S1"]) == 120 and r.bad_rows_count == 0
    assert any("sensor S1: level columns x_rms are missing from, or left empty in, some files"
               in w for w in r.warnings)
