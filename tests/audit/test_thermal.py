"""The audit's outdoor-air step end to end: a small site with a weather file, against a hand
calculation from the contract's formulas (interface section 7)."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from tests.helpers import run_cli, weekday_calendar

TZ = "Europe/Stockholm"
OUTDOOR_AIR = ("outdoor_air = { flow = 3600, heat_recovery = 0.5, supply_temperature = 18.0, "
               "extract_temperature = 21.0 }")


def _site(tmp_path, outdoor_air: str = OUTDOOR_AIR, weather: str = "weather.csv") -> object:
    """One unit, supply fan running 06:00-22:00 local every day of 11-18 Jan 2026, office hours
    Mon-Fri 07:00-18:00; hourly weather: -5 degC until Wed 14 Jan 12:00, then 30 degC, with
    no reading on Saturday 17 Jan from 01:00 to 23:00."""
    (tmp_path / "office.ics").write_text(weekday_calendar(TZ, "thermal"), newline="")
    minutes = pd.date_range("2026-01-11", "2026-01-19", freq="1min", inclusive="left", tz=TZ)
    hour = minutes.hour + minutes.minute / 60
    level = np.where((hour >= 6) & (hour < 22), 2.0, 0.05)
    pd.DataFrame({"timestamp": minutes.tz_convert("UTC").strftime("%Y-%m-%dT%H:%M:%SZ"),
                  "sensor": "S1", "x_rms": level}).to_csv(tmp_path / "readings.csv", index=False)
    hours = pd.date_range("2026-01-10", "2026-01-20", freq="1h", tz=TZ)
    temp = np.where(hours < pd.Timestamp("2026-01-14T12:30", tz=TZ), -5.0, 30.0)
    sat = (hours > pd.Timestamp("2026-01-17T00:30", tz=TZ)) & (
        hours < pd.Timestamp("2026-01-17T23:30", tz=TZ))
    pd.DataFrame({"time": hours[~sat].strftime("%Y-%m-%dT%H:%M:%S%z"),
                  "t_out": temp[~sat]}).to_csv(tmp_path / "weather.csv", index=False)
    site = tmp_path / "site.toml"
    site.write_text(f"""
[site]
name = "Thermal test"
timezone = "{TZ}"

[readings]
files = ["readings.csv"]

[schedule]
occupied = "office.ics"

[energy]
price = 1.0
currency = "SEK"

[weather]
file = "{weather}"
columns = {{ timestamp = "time", temperature = "t_out" }}

[heating]
price = 0.95
efficiency = 0.95
co2_per_kwh = 0.05

[cooling]
price = 1.20
cop = 3.0
co2_per_kwh = 0.02

[[unit]]
id = "AHU-1"
{outdoor_air}

[[unit.component]]
id = "supply"
role = "supply_fan"
sensor = "S1"
power_kw = 4.0
speed = 0.8
threshold = 0.5
""")
    return site


def test_site_matches_a_hand_calculation_within_one_percent(tmp_path, capsys):
    site = _site(tmp_path)
    out = tmp_path / "out"
    code, stdout, err = run_cli(["audit", site, "--from", "2026-01-12", "--to", "2026-01-18",
                                 "--out", out], capsys)
    assert code == 0, err
    s = json.loads((out / "summary.json").read_text())
    en = s["components"][0]["energy"]
    # Hand calculation from the contract's formulas. V = 3600 m3/h x 0.8 / 3600 = 0.8 m3/s.
    # At -5: T_full = -5 + 0.5 x (21 + 5) = 8, heating 1.21 x 0.8 x (18 - 8) = 9.68 kW.
    # At 30: T_full = 30 + 0.5 x (21 - 30) = 25.5, cooling 1.21 x 0.8 x (25.5 - 18) = 7.26 kW.
    # Off-schedule running: Mon-Fri 06-07 and 18-22 (5 h), Sat and Sun 06-22 (16 h).
    # Heating: Mon 5 + Tue 5 + Wed 06-07 1 = 11 h. Cooling: Wed 18-22 4 + Thu 5 + Fri 5 +
    # Sat 21-22 1 (within 3 h of Sunday's midnight reading) + Sun 16 = 31 h. Saturday 06-21
    # (15 h) is more than 3 h from any reading: no estimate.
    heat, cool = 9.68 * 11, 7.26 * 31
    assert en["off_schedule_heating_kwh"] == pytest.approx(heat, rel=0.01)
    assert en["off_schedule_cooling_kwh"] == pytest.approx(cool, rel=0.01)
    assert en["off_schedule_hours_without_weather"] == pytest.approx(15.0, rel=0.01)
    cost = heat / 0.95 * 0.95 + cool / 3.0 * 1.20
    assert en["off_schedule_thermal_cost"] == pytest.approx(cost, rel=0.01)
    assert en["off_schedule_thermal_co2_kg"] == pytest.approx(
        heat / 0.95 * 0.05 + cool / 3.0 * 0.02, rel=0.01)
    assert s["totals"]["off_schedule_thermal_cost"] == pytest.approx(cost, rel=0.01)
    # the fan's own off-schedule energy alongside: 4 kW x 0.8^3 x 57 h
    assert en["off_schedule_kwh"] == pytest.approx(4.0 * 0.8**3 * 57, rel=0.01)
    daily = pd.read_csv(out / "daily.csv")
    assert daily["off_schedule_heating_kwh"].tolist()[:3] == pytest.approx(
        [48.4, 48.4, 9.68], rel=0.01)
    assert daily["off_schedule_heating_kwh"].sum() == pytest.approx(
        en["off_schedule_heating_kwh"], abs=0.01)
    assert daily["off_schedule_cooling_kwh"].sum() == pytest.approx(
        en["off_schedule_cooling_kwh"], abs=0.01)
    f = pd.read_csv(out / "findings.csv")
    assert f["heating_kwh"].sum() + f["cooling_kwh"].sum() <= heat + cool + 0.01
    weekend = f[f["kind"] == "weekend"]
    assert len(weekend) and (weekend["cooling_kwh"] > 0).all()
    assert weekend["detail"].str.contains("cooling it").all()
    assert any("no thermal estimate" in w or "have no outdoor temperature" in w
               for w in s["warnings"])
    assert "15.0 h" in " ".join(s["warnings"])
    report = (out / "report.html").read_text()
    assert "latent" in report and "frost" in report
    assert "Outdoor" in stdout and f"{en['off_schedule_thermal_cost']:.0f}" in stdout
    assert "sensible heat only" in stdout


def test_unit_without_supply_fan_says_so(tmp_path, capsys):
    site = _site(tmp_path)
    site.write_text(site.read_text().replace('role = "supply_fan"', 'role = "exhaust_fan"'))
    out = tmp_path / "out"
    code, _, err = run_cli(["audit", site, "--from", "2026-01-12", "--to", "2026-01-13",
                            "--out", out], capsys)
    assert code == 0, err
    s = json.loads((out / "summary.json").read_text())
    assert "off_schedule_heating_kwh" not in s["components"][0]["energy"]
    assert any("no monitored supply fan" in w for w in s["warnings"])


def test_bad_weather_file_is_a_one_line_error(tmp_path, capsys):
    site = _site(tmp_path)
    w = tmp_path / "weather.csv"
    lines = w.read_text().splitlines()
    lines[5] = lines[5].rsplit(",", 1)[0] + ",275.15"
    w.write_text("\n".join(lines) + "\n")
    code, _, err = run_cli(["audit", site, "--out", tmp_path / "out"], capsys)
    assert code == 2
    assert err.strip().splitlines() == [
        f"error: {w}:6: temperature 275.15 degC is outside -60 .. 60 degC (a unit in kelvin or "
        "fahrenheit, or a missing-value code?)"]
    assert not (tmp_path / "out" / "summary.json").exists()
    code, out, _ = run_cli(["check", site], capsys)
    assert code == 2 and "weather.csv:6: temperature 275.15" in out + _


@pytest.mark.parametrize(("air", "message"), [
    ("outdoor_air = { flow = -1 }", "unit[AHU-1].outdoor_air.flow: -1 is out of range"),
    ("outdoor_air = { flow = 3600, heat_recovery = 1.5 }",
     "unit[AHU-1].outdoor_air.heat_recovery: 1.5 is out of range: must be >= 0 and <= 0.95"),
    ("outdoor_air = { flow = 3600, supply_temp = 18 }",
     "unit[AHU-1].outdoor_air.supply_temp: unknown key"),
    ("outdoor_air = { heat_recovery = 0.5 }", "unit[AHU-1].outdoor_air.flow: missing"),
])
def test_outdoor_air_settings_are_validated(tmp_path, capsys, air, message):
    site = _site(tmp_path, outdoor_air=air)
    code, _, err = run_cli(["audit", site], capsys)
    assert code == 2 and message in err, err
    assert "site.toml:" in err


def test_missing_weather_file_names_the_key(tmp_path, capsys):
    site = _site(tmp_path, weather="nowhere.csv")
    code, _, err = run_cli(["audit", site], capsys)
    assert code == 2 and "weather.file: weather file 'nowhere.csv' does not exist" in err
