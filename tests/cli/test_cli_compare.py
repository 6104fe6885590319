"""`schedcheck compare` as a user runs it: a small site of our own, and the demo site.

The small site is written from scratch with the seeded generator (schedcheck.demo.synth): unit
AHU-A is left running day and night from 13:00 on the change date (a controls change gone
wrong); unit AHU-B keeps its office pattern, with one Saturday override after the change and a
five-hour gateway outage before it; unit AHU-C got its sensor only on the change date, so it
cannot be compared; unit AHU-D ran on to 22:00 every weekday until the change fixed it.
Expected figures come from that planted truth.
"""

from __future__ import annotations

import datetime as dt
import json

import numpy as np
import pandas as pd
import pytest

from schedcheck.cli import main
from schedcheck.demo import synth
from tests.helpers import local_to_utc, run_cli, weekday_calendar

TZ = "Europe/Berlin"
CHANGE = dt.date(2026, 2, 2)  # a Monday
BEFORE = AFTER = 21
FIRST = CHANGE - dt.timedelta(days=BEFORE)
LAST = CHANGE + dt.timedelta(days=AFTER - 1)

SITE = """
[site]
name = "Copperleaf Print Works (fictional)"
timezone = "Europe/Berlin"

[readings]
files = ["readings/*.csv"]

[schedule]
occupied = "office.ics"
early_start = "1h"
late_stop = "30min"

[energy]
price = 0.30
currency = "EUR"

[[unit]]
id = "AHU-A"
name = "Press hall"

[[unit.component]]
id = "supply"
role = "supply_fan"
sensor = "CP-0101"
power_kw = 10.0
speed = 1.0

[[unit]]
id = "AHU-B"
name = "Offices"

[[unit.component]]
id = "supply"
role = "supply_fan"
sensor = "CP-0201"
power_kw = 4.0
speed = 1.0

[[unit]]
id = "AHU-C"
name = "Stores"

[[unit.component]]
id = "supply"
role = "supply_fan"
sensor = "CP-0301"
power_kw = 2.0
speed = 1.0

[[unit]]
id = "AHU-D"
name = "Canteen"

[[unit.component]]
id = "supply"
role = "supply_fan"
sensor = "CP-0401"
power_kw = 5.0
speed = 0.8
"""

CAL = weekday_calendar(TZ, "copperleaf-office")


def local(text: str) -> pd.Timestamp:
    return local_to_utc(text, TZ)


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    folder = tmp_path_factory.mktemp("copperleaf")
    (folder / "site.toml").write_text(SITE)
    (folder / "office.ics").write_bytes(CAL.encode())
    (folder / "readings").mkdir()
    start, end = local(str(FIRST)), local(str(LAST + dt.timedelta(days=1)))
    rng = np.random.default_rng(42)
    # runs 06:15-18:15 local on weekdays, inside the allowances (06:00-18:30)
    stuck = [(local(f"{CHANGE} 13:00"), end)]
    truth_a = synth.weekday_truth(start, end, TZ, rng, on="06:15", off="18:15", scatter="5min",
                                  extra_runs=stuck)
    override = [(local("2026-02-14 10:00"), local("2026-02-14 16:00"))]
    truth_b = synth.weekday_truth(start, end, TZ, rng, on="06:15", off="18:15", scatter="5min",
                                  extra_runs=override)
    outage = [(local("2026-01-20 08:00"), local("2026-01-20 13:00"))]
    # AHU-D: weekdays 06:15-22:00 before the change (3.5 h past the 18:30 allowance), then
    # 06:15-18:15 like the others
    late = synth.weekday_truth(start, local(str(CHANGE)), TZ, rng, on="06:15", off="22:00",
                               scatter="0min")
    late_runs = [(r.start, r.end) for r in late.itertuples() if r.state == "run"]
    truth_d = synth.weekday_truth(start, end, TZ, rng, on="06:15", off="18:15", scatter="5min",
                                  extra_runs=late_runs)
    frames = [
        synth.readings_for_component(truth_a, sensor="CP-0101", rng=rng, start=start, end=end,
                                     running_level=2.0),
        synth.readings_for_component(truth_b, sensor="CP-0201", rng=rng, start=start, end=end,
                                     running_level=1.5, outages=outage),
        synth.readings_for_component(truth_b, sensor="CP-0301", rng=rng, start=local(str(CHANGE)),
                                     end=end, running_level=1.0),
        synth.readings_for_component(truth_d, sensor="CP-0401", rng=rng, start=start, end=end,
                                     running_level=1.8),
    ]
    rows = pd.concat(frames, ignore_index=True)
    rows["timestamp"] = rows["timestamp"].dt.strftime("%Y-%m-%dT%H:%M:%SZ")
    rows.to_csv(folder / "readings" / "press.csv", index=False)
    return folder / "site.toml"


run = run_cli


@pytest.fixture(scope="module")
def as_json(site):
    import contextlib
    import io

    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        code = main(["compare", str(site), "--change", str(CHANGE), "--before", str(BEFORE),
                     "--after", str(AFTER), "--format", "json"])
    assert code == 0
    return json.loads(buf.getvalue())


def test_json_has_the_interface_fields(as_json):
    j = as_json
    assert j["change"] == str(CHANGE)
    # periods are local midnights (UTC+1 in winter)
    assert j["before"] == {"start": f"{FIRST}T00:00:00+01:00", "end": f"{CHANGE}T00:00:00+01:00",
                           "days": BEFORE}
    assert j["after"]["start"] == f"{CHANGE}T00:00:00+01:00"
    assert j["after"]["end"] == f"{LAST + dt.timedelta(days=1)}T00:00:00+01:00"
    ids = [c["id"] for c in j["components"]]
    assert ids == ["AHU-A/supply", "AHU-B/supply", "AHU-C/supply", "AHU-D/supply"]
    for c in j["components"][:2]:
        for side in ("before", "after"):
            assert {"off_schedule_h_per_day", "kwh_per_day"} <= set(c[side])
        assert {"off_schedule_h_per_day", "ci95"} <= set(c["difference"])
        assert isinstance(c["change_points"], list)


def test_unit_left_running_is_found_with_its_date_and_size(as_json):
    a = as_json["components"][0]
    # Planted truth: before, every run sits inside the allowances -> 0 h off-schedule.
    # After, on occupied days the unit runs 24 h of which 11 h occupied + 1 h early start +
    # 0.5 h late stop are allowed -> 11.5 h; on the change day it ran on from 18:30 -> 5.5 h;
    # on unoccupied days 24 h. Day types are weighted by their share of the 42 days.
    occ_after = [5.5] + [11.5] * 14
    w_occ = 30 / 42
    expected_after = w_occ * np.mean(occ_after) + (1 - w_occ) * 24.0
    assert a["before"]["off_schedule_h_per_day"] == pytest.approx(0.0, abs=0.05)
    assert a["after"]["off_schedule_h_per_day"] == pytest.approx(expected_after, abs=0.1)
    lo, hi = a["difference"]["ci95"]
    assert lo < a["difference"]["off_schedule_h_per_day"] < hi and lo > 10
    # kWh follow the affinity law at full speed: 10 kW x hours
    assert a["after"]["kwh_per_day"] == pytest.approx(10.0 * a["after"]["off_schedule_h_per_day"],
                                                      rel=1e-3)
    [cp] = a["change_points"]
    assert cp["date"] == str(CHANGE)
    assert cp["latest"] in (str(CHANGE), str(CHANGE + dt.timedelta(days=1)))
    assert cp["before_mean"] == pytest.approx(0.0, abs=0.05) and cp["after_mean"] > 10


def test_a_fix_shows_as_less_running_from_its_date(as_json):
    d = as_json["components"][3]
    # Planted truth: 3.5 h a weekday past the late-stop allowance before, none after; the
    # weekdays are occupied days, weighted 30/42 of the days.
    expected = -3.5 * 30 / 42
    assert d["before"]["off_schedule_h_per_day"] == pytest.approx(-expected, abs=0.05)
    assert d["after"]["off_schedule_h_per_day"] == pytest.approx(0.0, abs=0.05)
    lo, hi = d["difference"]["ci95"]
    assert lo < expected < hi < 0
    # 5 kW at 80 % speed with the cube law: 5 x 0.8^3 = 2.56 kW (affinity laws)
    assert d["difference"]["kwh_per_day"] == pytest.approx(2.56 * expected, abs=0.15)
    [cp] = d["change_points"]
    assert cp["date"] <= str(CHANGE) <= cp["latest"]


def test_clean_unit_has_no_change_point_and_counts_the_outage_day(as_json):
    b = as_json["components"][1]
    assert b["change_points"] == []  # one Saturday override is an odd day, not a new pattern
    assert b["before"]["days_no_data"] == 1 and b["before"]["days_used"] == BEFORE - 1
    assert b["after"]["days_no_data"] == 0
    lo, hi = b["difference"]["ci95"]
    assert lo <= 0 <= hi or hi - lo < 1.0
    assert any("left out" in n for n in b["notes"])


def test_component_without_data_before_is_reported_not_dropped(as_json):
    c = as_json["components"][2]
    assert c["before"]["days_no_data"] == BEFORE and c["before"]["days_used"] == 0
    assert c["after"]["days_used"] == AFTER
    assert c["difference"] == {} and c["change_points"] == []
    assert any(n.startswith("not compared: too few days") for n in c["notes"])


def test_figures_agree_with_the_audits_daily_csv(site, as_json, tmp_path, capsys):
    # The same window audited by `schedcheck audit`: its daily.csv, weighted by day type the
    # way docs/compare.md describes, gives the per-day figures compare printed.
    code, _, err = run(["audit", str(site), "--from", str(FIRST), "--to", str(LAST), "--out",
                        str(tmp_path / "audit")], capsys)
    assert code == 0, err
    daily = pd.read_csv(tmp_path / "audit" / "daily.csv")
    daily = daily[daily["no_data_h"] <= 2.0]
    daily["type"] = np.where(daily["scheduled_h"] > 0, "occupied", "unoccupied")
    daily["side"] = np.where(daily["date"] < str(CHANGE), "before", "after")
    for comp in as_json["components"][:2]:
        rows = daily[daily["component"] == comp["id"]]
        weight = rows.groupby("type").size() / len(rows)
        for side in ("before", "after"):
            means = rows[rows["side"] == side].groupby("type")[["off_schedule_h",
                                                                 "off_schedule_kwh"]].mean()
            expect = means.mul(weight, axis=0).sum()
            assert comp[side]["off_schedule_h_per_day"] == pytest.approx(
                expect["off_schedule_h"], abs=2e-3)
            assert comp[side]["kwh_per_day"] == pytest.approx(expect["off_schedule_kwh"],
                                                              abs=2e-3)


def test_table_output_reads_plainly(site, capsys):
    code, out, err = run(["compare", str(site), "--change", str(CHANGE), "--before", "21",
                          "--after", "21"], capsys)
    assert code == 0, err
    assert "AHU-A/supply" in out and "more off-schedule running" in out
    assert "AHU-C/supply" in out and "not enough data" in out
    assert str(CHANGE) in out
    assert "ventilation minimums" in out and "smoke control" in out
    assert err == ""


def test_changes_that_round_to_zero_read_0_0_not_minus_0_0():
    # a clean unit's difference of -0.02 h/day with an interval of [-0.04, +0.01] was printed
    # "-0.0 [-0.0, +0.0]"
    from schedcheck.cli import compare as cli_compare

    assert cli_compare._interval(-0.04, 0.01) == "0.0..0.0"
    assert cli_compare._interval(-0.06, 2.6) == "-0.1..+2.6"
    assert cli_compare._signed(-0.02) == "0.0" and cli_compare._signed(1.26) == "+1.3"


def test_cli_default_period_is_the_job_default():
    from schedcheck.cli import compare as cli_compare
    from schedcheck.jobs import compare as job_compare

    assert cli_compare.DEFAULT_DAYS == job_compare.DEFAULT_DAYS


@pytest.mark.parametrize(
    ("args", "words"),
    [
        (["--change", "2026-02-31"], "--change"),
        (["--change", "2026-02-02", "--before", "3"], "--before"),
        (["--change", "2026-02-02", "--after", "0"], "--after"),
        (["--change", "2026-02-02", "--format", "xml"], "--format"),
        # too many days were blamed on a --to nobody gave; a huge number was an OverflowError
        (["--change", "2026-02-02", "--before", "2000"],
         "error: --before: --before 2000 and --after 28 make 2,028 days; the most is 1,100"),
        (["--change", "2026-02-02", "--after", "99999999999999999999"], "error: --after: "),
        (["--change", "9999-12-30"], "error: --change: 9999-12-30 is out of range; give a date "
                                     "from 1900-01-01 to 2199-12-31"),
        # a change date outside the readings names --change and the days the readings cover
        (["--change", "2025-06-01"], "error: --change: no day of readings before 2025-06-01 "
                                     "(the readings cover 2026-01-12 to 2026-02-22)"),
        (["--change", "2026-02-23"], "error: --change: no day of readings from 2026-02-23"),
        (["--change", "2026-01-13"], "too few days"),
    ],
)
def test_bad_options_give_one_error_line(site, capsys, args, words):
    code, out, err = run(["compare", str(site), *args], capsys)
    assert code == 2
    assert err.startswith("error: ") and words in err and err.count("\n") == 1
    assert "Traceback" not in err


@pytest.mark.slow
def test_demo_controls_change_is_found_and_the_clean_unit_has_none(demo_audit, capsys):
    # The demo plants (truth/faults.json) a "continuous" fault on AHU-4 from a controls change
    # on 2026-04-20; AHU-5 is the clean unit.
    demo = demo_audit   # the session's demo site (tests/conftest.py)
    faults = json.loads((demo.folder / "truth" / "faults.json").read_text())["faults"]
    stuck = next(f for f in faults
                 if f["kind"] == "continuous" and f["component"] == "AHU-4/supply")
    change = stuck["dates"][0]
    args = ["compare", str(demo.site_file), "--change", change, "--format", "json"]
    code, out, err = run(args, capsys)
    assert code == 0, err
    comps = {c["id"]: c for c in json.loads(out)["components"]}
    first = comps["AHU-4/supply"]["change_points"][0]
    assert first["date"] <= change <= first["latest"]
    assert comps["AHU-4/supply"]["difference"]["ci95"][0] > 10
    assert comps["AHU-5/supply"]["change_points"] == []
    assert comps["AHU-5/exhaust"]["change_points"] == []


def test_few_usable_days_are_flagged_not_reported_as_a_firm_no_change():
    # two clean days after the change (the rest silent): identical days give a zero-width
    # interval, which must not read as a firm "no change" without a word
    import datetime as dt

    import pandas as pd

    from schedcheck.changes.compare import compare_daily
    from schedcheck.intervals import NS_PER_H

    dates = [dt.date(2026, 3, 2) + dt.timedelta(days=i) for i in range(21)]
    change = dt.date(2026, 3, 16)
    silent = [d >= dt.date(2026, 3, 18) for d in dates]
    daily = pd.DataFrame({
        "date": dates,
        "scheduled_ns": [10 * NS_PER_H if d.weekday() < 5 else 0 for d in dates],
        "off_schedule_ns": [0] * len(dates),
        "missed_ns": [0] * len(dates),
        "running_ns": [10 * NS_PER_H if d.weekday() < 5 and not s else 0
                       for d, s in zip(dates, silent, strict=True)],
        "no_data_ns": [24 * NS_PER_H if s else 0 for s in silent],
        "off_schedule_kwh": [0.0] * len(dates),
    })
    _, _, days, notes = compare_daily(daily, change, 14, 7)
    assert days["after"]["used"] == 2
    assert any(n.startswith("only 2 usable day(s) after the change") for n in notes), notes
    assert not any("usable day(s) before" in n for n in notes)
