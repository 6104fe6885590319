"""levels.csv.gz: written, read back exactly, and refused with a one-line error when damaged."""

from __future__ import annotations

import gzip

import pandas as pd
import pytest

from schedcheck.errors import InputError
from schedcheck.outputs.levels_file import read_levels, write_levels


def _levels() -> pd.DataFrame:
    # across the spring clock change in Oslo (29 Mar 2026, 01:00 UTC)
    t = pd.date_range("2026-03-29T00:58Z", periods=4, freq="min")
    return pd.DataFrame({"finding": ["3"] * 4, "component": ["AHU-1/supply"] * 4, "time": t,
                         "level": [0.05, 0.051, 1.9, 2.01234567]})


def test_round_trip_keeps_instants_and_levels(tmp_path):
    path = write_levels(_levels(), "Europe/Oslo", tmp_path / "levels.csv.gz")
    text = gzip.open(path, "rt", encoding="utf-8").read().splitlines()
    assert text[0] == "finding,component,time,level"
    assert text[1] == "3,AHU-1/supply,2026-03-29T01:58:00+01:00,0.05"
    assert text[3] == "3,AHU-1/supply,2026-03-29T03:00:00+02:00,1.9"
    back = read_levels(path)
    assert (back["time"] == _levels()["time"]).all()
    assert back["level"].tolist() == [0.05, 0.051, 1.9, 2.0123]
    # the same levels write the same bytes (no time stamp in the gzip header)
    again = write_levels(_levels(), "Europe/Oslo", tmp_path / "again.csv.gz")
    assert again.read_bytes() == path.read_bytes()


def test_a_folder_without_the_file_reads_as_none(tmp_path):
    assert read_levels(tmp_path / "levels.csv.gz") is None


@pytest.mark.parametrize("content, expect", [
    (b"not gzip at all", "levels.csv.gz: is not a gzip-compressed file"),
    (gzip.compress(b"finding,component,time\n1,A/s,2026-03-01T00:00:00Z\n"),
     "levels.csv.gz:1: header lacks column(s) level"),
    (gzip.compress(b"finding,component,time,level\n1,A/s,2026-03-01T00:00:00,0.1\n"),
     "levels.csv.gz:2: time: '2026-03-01T00:00:00' is not an ISO 8601 instant with an offset"),
    (gzip.compress(b"finding,component,time,level\n1,A/s,2026-03-01T00:00:00Z,-1\n"),
     "levels.csv.gz:2: level: '-1' is not a reading level (0 or more)"),
    (gzip.compress(b"finding,component,time,level\n1,A/s,2026-03-01T00:00:00Z,abc\n"),
     "levels.csv.gz:2: level: 'abc' is not a reading level (0 or more)"),
])
def test_damaged_file_gives_one_line_error_naming_it(tmp_path, content, expect):
    path = tmp_path / "levels.csv.gz"
    path.write_bytes(content)
    with pytest.raises(InputError) as e:
        read_levels(path)
    msg = str(e.value)
    assert "\n" not in msg and msg.endswith(expect.split(":", 1)[1].split(": ", 1)[-1])
    assert "levels.csv.gz" in msg
