"""`schedcheck check` through the CLI: exit status, one `error:` line per problem, no traceback."""

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from schedcheck.cli import main
from schedcheck.jobs.check import check_site

ROOT = Path(__file__).resolve().parents[2]

CAL = """BEGIN:VCALENDAR\r
VERSION:2.0\r
PRODID:-//schedcheck tests//EN\r
BEGIN:VEVENT\r
UID:office-hours@test\r
DTSTAMP:20260101T000000Z\r
DTSTART;TZID=Europe/Oslo:20260105T070000\r
DTEND;TZID=Europe/Oslo:20260105T170000\r
RRULE:FREQ=WEEKLY;BYDAY=MO,TU,WE,TH,FR\r
SUMMARY:Office hours\r
END:VEVENT\r
END:VCALENDAR\r
"""

SITE = """\
[site]
name = "Birch Row Test Library"
timezone = "Europe/Oslo"

[readings]
files = ["readings/*.csv"]

[holidays]
country = "NO"

[schedule]
occupied = "hours.ics"
early_start = "1h"

[[unit]]
id = "AHU-1"

[[unit.component]]
id = "supply"
role = "supply_fan"
sensor = "VS-11"
power_kw = 5.5
speed = 0.8

[[unit.component]]
id = "exhaust"
role = "exhaust_fan"
sensor = "VS-12"
power_kw = 4.0
speed = 0.8
"""


def make(tmp_path: Path, site: str = SITE, rows: pd.DataFrame | None = None) -> Path:
    (tmp_path / "readings").mkdir(exist_ok=True)
    (tmp_path / "hours.ics").write_text(CAL, newline="")
    if rows is None:
        rng = np.random.default_rng(3)
        t = pd.date_range("2026-03-02T00:00:00Z", periods=2 * 1440, freq="1min")
        on = (t.hour >= 6) & (t.hour < 16)
        rows = pd.concat([pd.DataFrame({
            "timestamp": (t + pd.to_timedelta(rng.integers(0, 15, len(t)), unit="s"))
            .strftime("%Y-%m-%dT%H:%M:%SZ"),
            "sensor": s, "x_rms": np.where(on, 2.0, 0.05) * rng.lognormal(0, 0.1, len(t))})
            for s in ("VS-11", "VS-12", "VS-99")])
    rows.to_csv(tmp_path / "readings" / "r.csv", index=False, float_format="%.4f")
    p = tmp_path / "site.toml"
    p.write_text(site)
    return p


def run(capsys, *args) -> tuple[int, str, str]:
    code = main(["check", *map(str, args)])
    out, err = capsys.readouterr()
    assert "Traceback" not in out + err
    return code, out, err


def error_lines(err: str) -> list[str]:
    return [line for line in err.splitlines() if line.startswith("error: ")]


def test_clean_site_passes_and_shows_health(tmp_path, capsys):
    code, out, err = run(capsys, make(tmp_path))
    assert code == 0, err
    assert "All inputs look fine" in out and not error_lines(err)
    assert "VS-11" in out and "AHU-1/supply" in out and "2,880" in out
    assert "does not map: VS-99 (2,880 rows)" in out
    report = check_site(tmp_path / "site.toml")
    assert report.ok and [h.count for h in report.health] == [2880, 2880]
    assert report.health[0].median_interval is not None
    assert report.unconfigured == {"VS-99": 2880}


def test_broken_row_is_named_by_file_and_line(tmp_path, capsys):
    p = make(tmp_path)
    f = tmp_path / "readings" / "r.csv"
    lines = f.read_text().splitlines()
    lines[41] = lines[41].rsplit(",", 1)[0] + ",n/a"       # file line 42
    f.write_text("\n".join(lines) + "\n")
    code, out, err = run(capsys, p)
    assert code == 2
    (line,) = error_lines(err)
    assert line == f"error: {f}:42: level x_rms is 'n/a', not a number (pass --skip-bad-rows " \
                   "to drop bad rows)"
    assert "1 problem found" in err
    # with the option the row is skipped, counted and shown
    code, out, err = run(capsys, "--skip-bad-rows", p)
    assert code == 0 and "Skipped 1 bad row(s)" in out and f"{f}:42" in out


def test_every_site_problem_gets_its_own_error_line(tmp_path, capsys):
    bad = (SITE.replace("Europe/Oslo", "Europe/Olso").replace("power_kw = 5.5", "power_kw = -5")
           .replace('early_start = "1h"', 'earlystart = "1h"')
           .replace('sensor = "VS-12"', 'sensor = "VS-11"'))
    code, out, err = run(capsys, make(tmp_path, bad))
    assert code == 2
    errs = error_lines(err)
    site = tmp_path / "site.toml"
    assert len(errs) == 4 and all(e.startswith(f"error: {site}:") for e in errs)
    lines = SITE.splitlines()
    # each names the line of its key: timezone, earlystart, power_kw, the second sensor
    expect = [lines.index('timezone = "Europe/Oslo"') + 1, lines.index('early_start = "1h"') + 1,
              lines.index("power_kw = 5.5") + 1, lines.index('sensor = "VS-12"') + 1]
    assert sorted(int(e.split(":")[2]) for e in errs) == sorted(expect)
    assert any('did you mean "early_start"' in e for e in errs)
    assert "4 problems found" in err and "checked once the site file is valid" in out


def test_calendar_and_readings_problems_are_reported_together(tmp_path, capsys):
    p = make(tmp_path)
    (tmp_path / "hours.ics").write_text("this is not a calendar\n")
    f = tmp_path / "readings" / "r.csv"
    text = f.read_text().splitlines()
    text[9] = "2026-03-02T00:08:00,VS-11,0.05"            # line 10: no offset
    f.write_text("\n".join(text) + "\n")
    code, out, err = run(capsys, p)
    assert code == 2
    errs = error_lines(err)
    assert len(errs) == 2
    assert errs[0].startswith(f"error: {tmp_path / 'hours.ics'}")
    assert errs[1].startswith(f"error: {f}:10: timestamp '2026-03-02T00:08:00' has no UTC offset")


def test_sensor_without_data_is_a_warning_not_an_error(tmp_path, capsys):
    site = SITE.replace('sensor = "VS-12"', 'sensor = "VS-13"')
    code, out, err = run(capsys, make(tmp_path, site))
    assert code == 0 and not error_lines(err)
    assert "warning: sensor VS-13 (AHU-1/exhaust) has no readings" in err


def test_no_readings_for_any_sensor_is_an_error(tmp_path, capsys):
    site = SITE.replace('"VS-11"', '"VS-21"').replace('"VS-12"', '"VS-22"')
    code, out, err = run(capsys, make(tmp_path, site))
    (line,) = error_lines(err)
    assert code == 2 and "no readings for any configured sensor (VS-21, VS-22)" in line
    assert "the files hold other sensors: VS-11, VS-12, VS-99" in line


def test_missing_site_file(tmp_path, capsys):
    code, out, err = run(capsys, tmp_path / "nope.toml")
    assert code == 2 and error_lines(err) == [f"error: {tmp_path / 'nope.toml'}: the site file "
                                              "does not exist"]


@pytest.mark.skipif(not (ROOT / "examples" / "minimal" / "site.toml").exists(),
                    reason="no minimal example")
def test_the_minimal_example_checks_clean(capsys):
    code, out, err = run(capsys, ROOT / "examples" / "minimal" / "site.toml")
    assert code == 0, err


def test_a_sensor_that_starts_late_shows_the_silence_as_a_gap(tmp_path):
    t = pd.date_range("2026-03-02T00:00:00Z", periods=600, freq="1min")
    rows = pd.concat([
        pd.DataFrame({"timestamp": t.strftime("%Y-%m-%dT%H:%M:%SZ"), "sensor": "VS-11",
                      "x_rms": 1.0}),
        pd.DataFrame({"timestamp": t[120:].strftime("%Y-%m-%dT%H:%M:%SZ"), "sensor": "VS-12",
                      "x_rms": 1.0})])
    report = check_site(make(tmp_path, rows=rows))
    h11, h12 = report.health
    assert (h11.gaps, h11.gap_hours) == (0, 0.0)
    assert h12.gaps == 1 and h12.gap_hours == pytest.approx(2.0)   # 00:00 to 02:00 UTC


def test_schedule_warnings_show_in_check(tmp_path, capsys):
    # a calendar whose only series is cancelled is valid iCalendar, yet the audit would find
    # no occupied time at all: check says so before anyone runs the audit
    p = make(tmp_path)
    (tmp_path / "hours.ics").write_text(CAL.replace("SUMMARY:Office hours\r\n",
                                                    "SUMMARY:Office hours\r\nSTATUS:CANCELLED\r\n"),
                                        newline="")
    code, out, err = run(capsys, p)
    assert code == 2, err      # nothing is occupied: the unit cannot be judged (refused)
    assert f"warning: AHU-1: {tmp_path / 'hours.ics'}: every event of the calendar is cancelled" \
        in err
    report = check_site(p)
    assert len(report.problems) == 1 and len(report.warnings) == 1
    # a calendar that cannot be read is one problem, not also a schedule problem
    (tmp_path / "hours.ics").write_text("Mon-Fri 07:00-17:00\n")
    code, out, err = run(capsys, p)
    assert code == 2 and len(error_lines(err)) == 1


def test_a_long_silence_is_a_warning_as_in_the_audit(tmp_path, capsys):
    # VS-12 is silent for 30 h of the 48 h of data: "All inputs look fine" would be wrong
    t = pd.date_range("2026-03-02T00:00:00Z", periods=2 * 1440, freq="1min")
    quiet = (t >= pd.Timestamp("2026-03-02T12:00Z")) & (t < pd.Timestamp("2026-03-03T18:00Z"))
    rows = pd.concat([
        pd.DataFrame({"timestamp": t.strftime("%Y-%m-%dT%H:%M:%SZ"), "sensor": "VS-11",
                      "x_rms": 1.0}),
        pd.DataFrame({"timestamp": t[~quiet].strftime("%Y-%m-%dT%H:%M:%SZ"), "sensor": "VS-12",
                      "x_rms": 1.0})])
    code, out, err = run(capsys, make(tmp_path, rows=rows))
    assert code == 0 and not error_lines(err)
    (warn,) = [w for w in err.splitlines() if "VS-12" in w]
    assert warn.startswith("warning: AHU-1/exhaust (sensor VS-12): 30.0 h without readings (")
    assert warn.endswith("% of the data's span; longest silence 30.0 h)")
    assert "All inputs look fine" not in out
    report = check_site(tmp_path / "site.toml")
    assert not any("VS-11" in w for w in report.warnings)


def test_a_unit_with_no_occupied_hour_is_refused(tmp_path, capsys):
    # events without DTEND (or DURATION) last no time at all (RFC 5545 section 3.6.1), so
    # nothing is occupied and every minute of running would count as off-schedule
    p = make(tmp_path)
    (tmp_path / "hours.ics").write_text(CAL.replace("DTEND;TZID=Europe/Oslo:20260105T170000\r\n",
                                                    ""), newline="")
    code, out, err = run(capsys, p)
    (line,) = error_lines(err)
    assert code == 2
    assert line.startswith(f"error: {p}: unit[AHU-1].schedule.occupied: unit AHU-1 has no "
                           "occupied hour from ")
    assert " in hours.ics: every event lacks a length (DTEND or DURATION)" in line
