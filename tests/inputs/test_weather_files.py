"""Weather files: CSV and EnergyPlus weather files (inputs/weather_files.py)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from schedcheck.errors import InputProblems
from schedcheck.inputs.weather_files import parse_epw, parse_weather_csv, read_weather
from schedcheck.site import WeatherSettings

DATA = Path(__file__).parent.parent / "data"
EPW = DATA / "pvgis_tmy_45n_8e_excerpt.epw"


def _problems(exc: pytest.ExceptionInfo) -> list[str]:
    return [str(p) for p in exc.value.problems]


@pytest.mark.validation
def test_epw_reader_agrees_with_pvlib_on_a_real_file():
    # pvlib.iotools.read_epw (the reference reader) on a real PVGIS typical-year file (an
    # excerpt, tests/data/README.md). pvlib labels each hour-ending record at the start of its
    # hour; the dry bulb is the value at the hour's end, so our instants are pvlib's + 1 h.
    iotools = pytest.importorskip("pvlib.iotools")
    ref, meta = iotools.read_epw(str(EPW))
    ours = parse_epw(EPW.read_text(), EPW)
    assert meta["TZ"] == 1.0
    expected = (ref.index + pd.Timedelta("1h")).tz_convert("UTC").as_unit("ns").asi8
    np.testing.assert_array_equal(ours.ns, expected)
    np.testing.assert_allclose(ours.degc, ref["temp_air"].to_numpy(float))
    # hour 24 of 1 January 2009 is midnight local standard time (UTC+1): 23:00 UTC
    assert pd.Timestamp(ours.ns[23], tz="UTC") == pd.Timestamp("2009-01-01T23:00Z")


def test_typical_year_is_laid_on_the_audit_years(tmp_path):
    w = read_weather(WeatherSettings(file=EPW, typical_year=True), "Europe/Rome",
                     years=(2026, 2027))
    assert len(w.ns) == 2 * 30
    assert pd.Timestamp(w.ns[0], tz="UTC") == pd.Timestamp("2026-01-01T00:00Z")
    assert pd.Timestamp(w.ns[30], tz="UTC") == pd.Timestamp("2027-01-01T00:00Z")


def test_epw_errors_name_the_line(tmp_path):
    rows = EPW.read_text().splitlines()
    bad = rows[:10] + ["2009,1,1,3,0,x,not-a-number"] + rows[11:12] + [
        rows[12].replace(",1.52,", ",71.0,", 1)]
    p = tmp_path / "bad.epw"
    p.write_text("\n".join(bad) + "\n")
    with pytest.raises(InputProblems) as e:
        read_weather(WeatherSettings(file=p), "UTC")
    assert _problems(e) == [f"{p}:11: not an EPW data record (year, month, day, hour 1-24, "
                            "minute, flags, dry bulb [degC], ...)"]
    bad[10] = rows[10]
    p.write_text("\n".join(bad) + "\n")
    with pytest.raises(InputProblems) as e:
        read_weather(WeatherSettings(file=p), "UTC")
    assert _problems(e)[0].startswith(f"{p}:13: temperature 71 degC is outside -60 .. 60 degC")
    p.write_text("LOCATION,x,-,x,x,x,45,8,not-a-zone,250\n")
    with pytest.raises(InputProblems, match=r"bad.epw:1: LOCATION line: the ninth field"):
        read_weather(WeatherSettings(file=p), "UTC")
    p.write_text("time,temp\n")
    with pytest.raises(InputProblems, match=r"bad.epw:1: not an EnergyPlus weather file"):
        read_weather(WeatherSettings(file=p), "UTC")


def test_epw_missing_value_code_is_a_gap():
    rows = EPW.read_text().splitlines()
    rows[9] = rows[9].replace(",2.10,", ",99.9,", 1)
    w = parse_epw("\n".join(rows), EPW)
    assert len(w.ns) == 29


def test_csv_with_column_names_offsets_and_gaps(tmp_path):
    text = "time,t_out\n" + (
        "2026-02-02T00:00:00+01:00,-3.5\n"
        "2026-02-02T01:00:00+01:00,\n"                 # empty: a gap
        "2026-02-02T02:00:00+01:00,\"-2,5\"\n"          # decimal comma
        "\n"
        "2026-02-02T03:00:00+01:00,-1.0\n")
    w = parse_weather_csv(text, tmp_path / "w.csv", "Europe/Stockholm",
                          columns={"timestamp": "time", "temperature": "t_out"})
    assert w.degc.tolist() == [-3.5, -2.5, -1.0]
    assert pd.Timestamp(w.ns[0], tz="UTC") == pd.Timestamp("2026-02-01T23:00Z")


def test_csv_naive_times_follow_the_readings_rules(tmp_path):
    text = "timestamp,temperature\n2026-02-02 00:00,1.0\n2026-03-29 02:30,2.0\n"
    p = tmp_path / "w.csv"
    with pytest.raises(InputProblems) as e:
        parse_weather_csv(text, p, "Europe/Stockholm")
    assert _problems(e)[0] == (f"{p}:2: timestamp '2026-02-02 00:00' has no UTC offset; set "
                               "[weather] naive_time to \"local\" or \"utc\"")
    with pytest.raises(InputProblems) as e:
        parse_weather_csv(text, p, "Europe/Stockholm", naive_time="local")
    assert _problems(e) == [f"{p}:3: local time '2026-03-29 02:30' does not exist in "
                            "Europe/Stockholm (the clocks skip that hour in spring), so this row "
                            "cannot be right"]
    w = parse_weather_csv(text, p, "Europe/Stockholm", naive_time="utc")
    assert pd.Timestamp(w.ns[0], tz="UTC") == pd.Timestamp("2026-02-02T00:00Z")


def test_csv_errors_name_file_and_line(tmp_path):
    p = tmp_path / "w.csv"
    text = ("timestamp,temperature\n2026-02-02T00:00Z,warm\n2026-02-02T01:00Z,-75\n"
            "2026-02-02T02:00Z,300.1\n2026-02-02T03:00Z,1\n2026-02-02T03:00Z,2\n")
    with pytest.raises(InputProblems) as e:
        parse_weather_csv(text, p, "UTC")
    assert _problems(e) == [
        f"{p}:2: temperature 'warm' is not a number [degC]",
        f"{p}:3: temperature -75 degC is outside -60 .. 60 degC (a unit in kelvin or "
        "fahrenheit, or a missing-value code?)",
        f"{p}:4: temperature 300.1 degC is outside -60 .. 60 degC (a unit in kelvin or "
        "fahrenheit, or a missing-value code?)",
    ]
    with pytest.raises(InputProblems) as e:
        parse_weather_csv(text.replace("warm", "1").replace("-75", "1").replace("300.1", "1"),
                          p, "UTC")
    assert _problems(e) == [f"{p}:6: the instant 2026-02-02T03:00:00+00:00 has two temperatures "
                            "(1 and 2 degC; the other on line 5)"]
    with pytest.raises(InputProblems) as e:
        parse_weather_csv("when,t\n", p, "UTC")
    assert _problems(e)[0].startswith(f"{p}:1: no column 'timestamp' (timestamp), "
                                      "'temperature' (temperature)")
