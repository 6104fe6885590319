"""`schedcheck audit` as a new user runs it: a small site of our own, written from scratch."""

import datetime as dt
import json

import numpy as np
import pandas as pd
import pytest

from schedcheck.demo import synth
from tests.helpers import local_to_utc, run_cli, weekday_calendar

TZ = "America/New_York"
FIRST, LAST = dt.date(2026, 10, 28), dt.date(2026, 11, 4)

SITE = """
[site]
name = "Harbor Row Test Annex (fictional)"
timezone = "America/New_York"

[readings]
files = ["readings/*.csv"]
unit = "mm/s"

[schedule]
occupied = "office.ics"
early_start = "1h"
late_stop = "30min"

[energy]
price = 0.15
currency = "USD"
co2_per_kwh = 0.4

[[unit]]
id = "AHU-7"
name = "Annex offices"

[[unit.component]]
id = "supply"
role = "supply_fan"
sensor = "HX-0701"
power_kw = 10.0
speed = 0.8

[[unit.component]]
id = "exhaust"
role = "exhaust_fan"
sensor = "HX-0702"
power_kw = 4.0
speed = 0.8
"""

CAL = weekday_calendar(TZ, "annex-office")


def local(text: str) -> pd.Timestamp:
    return local_to_utc(text, TZ)


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    folder = tmp_path_factory.mktemp("annex")
    (folder / "site.toml").write_text(SITE)
    (folder / "office.ics").write_bytes(CAL.encode())
    (folder / "readings").mkdir()
    start, end = local(str(FIRST)), local(str(LAST + dt.timedelta(days=1)))
    rng = np.random.default_rng(7)
    # weekdays 06:30-18:10 local (inside the allowances) plus a weekend run on Saturday 31 Oct
    truth = synth.weekday_truth(start, end, TZ, rng, on="06:30", off="18:10", scatter="5min",
                                extra_runs=[(local("2026-10-31 10:00"), local("2026-10-31 16:00"))])
    frames = [synth.readings_for_component(truth, sensor=s, rng=rng, start=start, end=end,
                                           running_level=lv)
              for s, lv in (("HX-0701", 2.0), ("HX-0702", 1.2))]
    rows = pd.concat(frames, ignore_index=True)
    rows["timestamp"] = rows["timestamp"].dt.strftime("%Y-%m-%dT%H:%M:%SZ")
    rows.to_csv(folder / "readings" / "annex.csv", index=False)
    return folder, truth


run = run_cli


def test_audit_writes_everything_and_prints_the_table(site, tmp_path, capsys):
    folder, truth = site
    out = tmp_path / "audit"
    code, stdout, stderr = run(["audit", str(folder / "site.toml"), "--out", str(out)], capsys)
    assert code == 0, stderr
    for name in ("summary.json", "daily.csv", "runs.csv", "findings.csv", "findings.ics",
                 "schedule.csv", "report.html"):
        assert (out / name).is_file(), name
        assert str(out / name) in stdout
    assert "AHU-7/supply" in stdout and "Total" in stdout
    assert "smoke control" in stdout
    assert stderr == ""  # no progress lines when stderr is not a terminal
    s = json.loads((out / "summary.json").read_text())
    # default window: the whole local days covered by the data
    assert (s["period"]["first_date"], s["period"]["last_date"]) == (str(FIRST), str(LAST))
    # 8 days, one of them 25 h (US clocks go back on 1 Nov 2026: first Sunday of November,
    # Energy Policy Act of 2005)
    assert s["period"]["hours"] == 8 * 24 + 1
    sup = next(c for c in s["components"] if c["id"] == "AHU-7/supply")
    run_truth = truth[truth["state"] == "run"]
    true_run_h = float(((run_truth["end"] - run_truth["start"]) / pd.Timedelta("1h")).sum())
    n_changes = len(truth) - 1
    assert abs(sup["hours"]["running"] - true_run_h) <= 0.01 * true_run_h + n_changes / 60
    # the only off-schedule running is the 6 h Saturday run
    assert abs(sup["hours"]["off_schedule"] - 6.0) <= 0.06 + 2 / 60
    # 10 kW * 0.8^3 = 5.12 kW (fan affinity law, cube)
    assert sup["energy"]["off_schedule_kwh"] == pytest.approx(5.12 * sup["hours"]["off_schedule"],
                                                              abs=0.01)
    weekend = [f for f in s["findings"] if f["component"] == "AHU-7/supply"
               and f["kind"] == "weekend"]
    assert len(weekend) == 1 and weekend[0]["start"].startswith("2026-10-31T")
    daily = pd.read_csv(out / "daily.csv")
    d = dict(zip(daily[daily["component"] == "AHU-7/supply"]["date"],
                 daily[daily["component"] == "AHU-7/supply"]["period_h"], strict=True))
    assert d["2026-11-01"] == 25 and d["2026-10-31"] == 24


def test_window_options(site, tmp_path, capsys):
    folder, _ = site
    out = tmp_path / "a"
    code, _, err = run(["audit", str(folder / "site.toml"), "--from", "2026-10-31",
                        "--to", "2026-11-01", "--out", str(out)], capsys)
    assert code == 0, err
    s = json.loads((out / "summary.json").read_text())
    assert s["period"]["start"] == "2026-10-31T00:00:00-04:00"
    assert s["period"]["end"] == "2026-11-02T00:00:00-05:00"
    assert s["period"]["hours"] == 49


@pytest.mark.parametrize(
    ("extra", "needle"),
    [(["--from", "2026-11-03", "--to", "2026-11-01"], "--to"),
     (["--from", "31/10/2026"], "--from")],
)
def test_bad_dates_are_one_line_errors(site, tmp_path, capsys, extra, needle):
    folder, _ = site
    code, _, err = run(["audit", str(folder / "site.toml"), "--out", str(tmp_path / "x"),
                        *extra], capsys)
    assert code == 2
    assert err.startswith("error: ") and needle in err and err.count("\n") == 1
    assert "Traceback" not in err


def test_missing_site_file(tmp_path, capsys):
    code, _, err = run(["audit", str(tmp_path / "nope.toml")], capsys)
    assert code == 2 and "nope.toml" in err and "Traceback" not in err


def test_bad_readings_row_named_then_skipped(site, tmp_path, capsys):
    folder, _ = site
    bad = tmp_path / "bad"
    bad.mkdir()
    (bad / "site.toml").write_text(SITE)
    (bad / "office.ics").write_bytes(CAL.encode())
    (bad / "readings").mkdir()
    lines = (folder / "readings" / "annex.csv").read_text().splitlines()
    lines.insert(5, "not-a-time,HX-0701,1,1,1,1,1,1")
    (bad / "readings" / "annex.csv").write_text("\n".join(lines) + "\n")
    code, _, err = run(["audit", str(bad / "site.toml"), "--out", str(tmp_path / "o1")], capsys)
    assert code == 2 and "annex.csv:6" in err and "Traceback" not in err
    code, _, err = run(["audit", str(bad / "site.toml"), "--out", str(tmp_path / "o2"),
                        "--skip-bad-rows"], capsys)
    assert code == 0, err
    s = json.loads((tmp_path / "o2" / "summary.json").read_text())
    assert s["bad_rows"]["count"] == 1


def test_default_window_reads_once_and_matches_the_explicit_window(site, tmp_path, capsys):
    # The default window reads every file once and cuts it to whole days; the data health and
    # every figure must equal those of the same window given explicitly.
    folder, _ = site
    a, b = tmp_path / "a", tmp_path / "b"
    assert run(["audit", str(folder / "site.toml"), "--out", str(a)], capsys)[0] == 0
    assert run(["audit", str(folder / "site.toml"), "--from", str(FIRST), "--to", str(LAST),
                "--out", str(b)], capsys)[0] == 0
    sa, sb = (json.loads((x / "summary.json").read_text()) for x in (a, b))
    assert sa["sensors"] == sb["sensors"]
    assert [c["seconds"] for c in sa["components"]] == [c["seconds"] for c in sb["components"]]
    assert (a / "runs.csv").read_text() == (b / "runs.csv").read_text()


def test_out_that_is_a_file_is_a_clear_error(site, tmp_path, capsys):
    folder, _ = site
    target = tmp_path / "taken"
    target.write_text("x")
    code, _, err = run(["audit", str(folder / "site.toml"), "--from", "2026-10-28", "--to",
                        "2026-10-28", "--out", str(target)], capsys)
    assert code == 2 and "taken" in err and "not a folder" in err


def test_window_beyond_the_data_is_no_data_with_warnings(site, tmp_path, capsys):
    folder, _ = site
    out = tmp_path / "beyond"
    code, stdout, err = run(["audit", str(folder / "site.toml"), "--from", "2026-11-03",
                             "--to", "2026-11-06", "--out", str(out)], capsys)
    assert code == 0, err
    s = json.loads((out / "summary.json").read_text())
    sup = next(c for c in s["components"] if c["id"] == "AHU-7/supply")
    # the data ends with 4 Nov: 5 and 6 Nov are 48 h of no data, nothing lost
    assert sup["hours"]["no_data"] >= 48 and sup["hours"]["period"] == 96
    assert any("ends with 2026-11-06 but the last reading" in w for w in s["warnings"])
    assert any("AHU-7/supply: 5" in w and "no data" in w for w in s["warnings"])
    assert "warning: the window ends with 2026-11-06" in stdout


def test_from_after_the_data_names_the_option(site, tmp_path, capsys):
    folder, _ = site
    code, _, err = run(["audit", str(folder / "site.toml"), "--from", "2026-12-01",
                        "--out", str(tmp_path / "late")], capsys)
    assert code == 2 and err.startswith("error: --from: 2026-12-01 is after the last whole day")


def test_a_window_without_any_readings_names_the_dates_and_options(site, tmp_path, capsys):
    # both dates given and no reading of any sensor on those days: the dates are what to fix,
    # so the one line names --from/--to and the local dates, not UTC instants
    folder, _ = site
    for cmd in (["audit", "--out", str(tmp_path / "empty")], ["states"]):
        code, _, err = run([cmd[0], str(folder / "site.toml"), "--from", "2025-01-05", "--to",
                            "2025-01-09", *cmd[1:]], capsys)
        assert code == 2 and err.count("\n") == 1, err
        assert err.startswith("error: --from/--to: no readings for any configured sensor on "
                              "2025-01-05 to 2025-01-09 (local dates)"), err


def test_a_threshold_below_the_noise_is_warned_on_the_terminal(site, tmp_path, capsys):
    # a `threshold` typed below the stopped fan's noise makes every minute running; the audit
    # still runs, but the terminal says why the component's off-schedule hours are so large
    folder, _ = site
    bad = tmp_path / "low"
    bad.mkdir()
    text = SITE.replace('sensor = "HX-0701"', 'sensor = "HX-0701"\nthreshold = 0.0001')
    (bad / "site.toml").write_text(text.replace('"readings/*.csv"',
                                                f'"{folder.as_posix()}/readings/*.csv"'))
    (bad / "office.ics").write_bytes(CAL.encode())
    code, stdout, err = run(["audit", str(bad / "site.toml"), "--out", str(bad / "out")], capsys)
    assert code == 0, err
    s = json.loads((bad / "out" / "summary.json").read_text())
    sup = next(c for c in s["components"] if c["id"] == "AHU-7/supply")
    assert sup["hours"]["running"] == sup["hours"]["period"]
    assert any("below the lowest level group" in w for w in sup["warnings"])
    assert "warning: AHU-7/supply: the configured threshold 0.0001 is below" in stdout


def test_one_reading_with_a_reset_clock_is_named_not_blamed_on_to(site, tmp_path, capsys):
    # a sensor whose clock reset to 2000-01-01 for one reading stretched the default window
    # over 26 years and failed as "--to: the window ... is 9,570 days long" with no --to given
    folder, _ = site
    stray = tmp_path / "stray"
    (stray / "readings").mkdir(parents=True)
    (stray / "site.toml").write_text(SITE)
    (stray / "office.ics").write_bytes(CAL.encode())
    text = (folder / "readings" / "annex.csv").read_text()
    first_row = text.splitlines()[1].split(",")
    stray_row = ",".join(["2000-01-01T00:00:07Z", "HX-0702", *first_row[2:]])
    (stray / "readings" / "annex.csv").write_text(text + stray_row + "\n")
    want = (f"error: {stray / 'site.toml'}: readings.files: the readings span 2000-01-01 to "
            "2026-11-04 (9,805 days; one window covers at most 1,100): the earliest is sensor "
            "HX-0702 at 2000-01-01 00:00:07Z")
    for args in (["audit", "--out", str(stray / "out")], ["states"], ["schedule"], ["check"]):
        code, _, err = run([args[0], str(stray / "site.toml"), *args[1:]], capsys)
        assert code == 2 and err.startswith(want), (args, err)
        assert "--to:" not in err and "remove a stray time stamp" in err
    # with the window given, the stray reading is simply outside it
    code, _, err = run(["audit", str(stray / "site.toml"), "--from", str(FIRST), "--to",
                        str(LAST), "--out", str(stray / "out")], capsys)
    assert code == 0, err
