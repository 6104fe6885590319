"""Trend exports: mapped columns, naive local times, bad rows with file:line, missing points."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from schedcheck.errors import InputError
from schedcheck.inputs.trend_files import check_points, read_trends

EXPORT = """Time,Point,Value
2026-04-18 06:00:00,AHU1.SF.CMD,Active
2026-04-18 18:00:00,AHU1.SF.CMD,Inactive
2026-04-18 06:01:00,AHU1.SF.STS,ON
2026-04-18 06:01:00,AHU1.SF.STS,ON
2026-04-18 18:00:30,AHU1.SF.STS,0
2026-04-18 07:00:00,AHU2.SF.SPD,35.5 %
"""
COLS = {"timestamp": "Time", "point": "Point", "value": "Value"}


def test_a_mapped_export_with_local_times_is_read_per_point(tmp_path):
    (tmp_path / "bms.csv").write_text(EXPORT, encoding="utf-8")
    tr = read_trends(tmp_path, ("*.csv",), columns=COLS, naive_time="local",
                     tz="Europe/Oslo")
    t, v = tr.samples["AHU1.SF.CMD"]
    # 06:00 CEST = 04:00 UTC
    assert pd.Timestamp(int(t[0]), tz="UTC") == pd.Timestamp("2026-04-18T04:00Z")
    assert v.tolist() == [1.0, 0.0]
    assert tr.samples["AHU2.SF.SPD"][1].tolist() == [1.0]
    assert len(tr.samples["AHU1.SF.STS"][0]) == 3      # duplicates kept; the later one wins
    cov = {c["point"]: c for c in tr.coverage()}
    assert cov["AHU1.SF.CMD"]["longest_silence_h"] == pytest.approx(12.0)


def test_a_bad_value_names_file_and_line_unless_skipped(tmp_path):
    (tmp_path / "bms.csv").write_text(EXPORT.replace("Inactive", "maybe"), encoding="utf-8")
    with pytest.raises(InputError) as exc:
        read_trends(tmp_path, ("bms.csv",), columns=COLS, naive_time="local", tz="Europe/Oslo")
    assert str(exc.value).startswith(f"{tmp_path / 'bms.csv'}:3:") and "'maybe'" in str(exc.value)
    tr = read_trends(tmp_path, ("bms.csv",), columns=COLS, naive_time="local",
                     tz="Europe/Oslo", skip_bad_rows=True)
    assert tr.bad_rows == 1 and "line 3" in tr.warnings[0]


def test_naive_times_are_refused_without_naive_time(tmp_path):
    (tmp_path / "bms.csv").write_text(EXPORT, encoding="utf-8")
    with pytest.raises(InputError) as exc:
        read_trends(tmp_path, ("bms.csv",), columns=COLS, naive_time=None, tz="Europe/Oslo")
    assert ":2:" in str(exc.value) and "timestamp" in str(exc.value)


def test_a_missing_column_and_a_missing_point_are_named(tmp_path):
    (tmp_path / "bms.csv").write_text(EXPORT, encoding="utf-8")
    with pytest.raises(InputError) as exc:
        read_trends(tmp_path, ("bms.csv",), columns={**COLS, "point": "Pont"},
                    naive_time="local", tz="Europe/Oslo")
    assert "'Pont'" in str(exc.value)
    tr = read_trends(tmp_path, ("bms.csv",), columns=COLS, naive_time="local",
                     tz="Europe/Oslo")
    errs = check_points(tr, {"unit[AHU-1].component[supply].command": "AHU1.SF.CMND"})
    assert len(errs) == 1 and "AHU1.SF.CMD" in str(errs[0]) and "command" in str(errs[0])
    assert np.all(np.diff(tr.samples["AHU1.SF.CMD"][0]) > 0)
