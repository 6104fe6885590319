"""The demo's trends export: each planted case is found by the audit with its date and hours
(within a minute per transition), and AHU-3's wrong controller clock raises no hand mode.
Truth: the generator's ``truth/trends.json`` (demo/trends.py)."""

from __future__ import annotations

import json

import pandas as pd
import pytest

from schedcheck.inputs.trend_files import load_site_trends

pytestmark = pytest.mark.slow

TREND_KINDS = ("hand_mode", "failed_start", "false_status")
MINUTE_H = 1 / 60


def _truth(demo_audit) -> dict:
    return json.loads((demo_audit.folder / "truth" / "trends.json").read_text("utf-8"))


def test_every_planted_trend_case_is_found_with_its_date_and_hours(demo_audit):
    f = demo_audit.result.findings
    parts = demo_audit.result.component_findings
    truth = _truth(demo_audit)
    assert {c["kind"] for c in truth["cases"]} == set(TREND_KINDS)
    for case in truth["cases"]:
        unit = case["component"].split("/")[0]
        got = f[(f["kind"] == case["kind"]) & (f["unit"] == unit)]
        assert list(got["date"].astype(str)) == [case["date"]], case
        assert case["component"] in got.iloc[0]["components"]
        mine = parts[(parts["kind"] == case["kind"]) & (parts["component"] == case["component"])]
        assert len(mine) == 1
        # two transitions (start and end of the episode): within a minute each
        assert mine.iloc[0]["hours"] == pytest.approx(case["hours"], abs=2 * MINUTE_H)
        assert abs(mine.iloc[0]["start"] - pd.Timestamp(case["start"])) <= pd.Timedelta("1min")
        assert abs(mine.iloc[0]["end"] - pd.Timestamp(case["end"])) <= pd.Timedelta("1min")
    # no other trend finding anywhere: the commands followed the running elsewhere
    trend = f[f["kind"].isin(TREND_KINDS)]
    assert sorted(zip(trend["unit"], trend["kind"], strict=True)) == sorted(
        {(c["component"].split("/")[0], c["kind"]) for c in truth["cases"]})


def test_a_wrong_controller_clock_raises_no_hand_mode_or_failed_start(demo_audit):
    f = demo_audit.result.findings
    assert _truth(demo_audit)["clock_fault_units"] == ["AHU-3"]
    assert set(f[f["unit"] == "AHU-3"]["kind"]) >= {"clock_offset"}
    assert not (f["unit"] == "AHU-3").loc[f["kind"].isin(TREND_KINDS)].any()
    h = demo_audit.result.trends["AHU-3/supply"].hours()
    # the command's edges lead the fan's by seconds: minutes over the whole window, no more
    assert h["ran_while_commanded_off"] < 0.5 and h["off_while_commanded_on"] < 0.5


def test_minutes_are_exact_and_no_data_is_kept_apart(demo_audit):
    res = demo_audit.result
    for key, tr in res.trends.items():
        sets = res.component(key).account.states
        known = sets.run.union(sets.off)
        cmd = tr.command
        assert (known & cmd.on).duration_ns() + (known & cmd.off).duration_ns() \
            + tr.comparison.command_unknown.duration_ns() == known.duration_ns()
        assert not len(tr.comparison.ran_while_commanded_off & sets.no_data)
    # AHU-4's exhaust sensor was silent 50.7 h while commanded: no failed start comes of it
    ex = res.trends["AHU-4/exhaust"].comparison
    assert ex.off_while_commanded_on.hours() < 4.6
    # the change-of-value-only speed command is unknown after a day of silence (weekends)
    assert res.trends["AHU-5/supply"].hours()["command_unknown"] > 100
    said = [w for w in res.warnings if "command point" in w]
    assert len(said) == 1 and said[0].startswith("AHU-5/supply: its command point LH-AHU5-SF-SPD")


def test_the_export_has_duplicates_silences_and_interval_samples(demo_audit):
    site = demo_audit.result.site
    trends = load_site_trends(site)
    cov = {c["point"]: c for c in trends.coverage()}
    assert cov["LH-AHU5-SF-SPD"]["longest_silence_h"] > 48      # change of value only
    assert cov["LH-AHU2-SF-STS"]["longest_silence_h"] == pytest.approx(5 / 60)   # sampled
    rows = pd.read_csv(demo_audit.folder / "bms" / "trends.csv")
    assert rows.duplicated().sum() > 0


def test_the_summary_and_trends_file_carry_the_figures(demo_audit):
    s = json.loads((demo_audit.result.outdir / "summary.json").read_text("utf-8"))
    comp = {c["id"]: c for c in s["components"]}
    assert comp["AHU-1/supply"]["trends"] == {"command": "LH-AHU1-SF-CMD",
                                              "status": "LH-AHU1-SF-STS"}
    assert comp["AHU-1/supply"]["hours"]["status_disagrees"] >= 52.0
    assert "ran_while_commanded_off" in comp["AHU-3/supply"]["hours"]
    assert "status_disagrees" not in comp["AHU-3/supply"]["hours"]
    assert "trends" not in comp["AHU-1/exhaust"]
    t = pd.read_csv(demo_audit.result.outdir / "trends.csv")
    assert set(t["state"]) <= {"on", "off", "unknown"}
    one = t[(t["component"] == "AHU-1/supply") & (t["role"] == "command")]
    assert one["hours"].sum() == pytest.approx(s["period"]["hours"], abs=0.01)
