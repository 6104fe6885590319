"""One finding per unit and problem: the components of a unit that move together."""

from __future__ import annotations

import pandas as pd
import pytest

from schedcheck.findings.grouping import DEFAULT_TOGETHER, finding_id, group_by_unit

TZ = "Europe/Oslo"
UNIT_OF = {"AHU-2/supply": "AHU-2", "AHU-2/exhaust": "AHU-2", "AHU-2/wheel": "AHU-2",
           "AHU-3/supply": "AHU-3"}
LEAD_OF = {"AHU-2": "AHU-2/supply", "AHU-3": "AHU-3/supply"}


def t(text: str) -> pd.Timestamp:
    return pd.Timestamp(text, tz=TZ).tz_convert("UTC")


def rows(*spec) -> pd.DataFrame:
    """(component, kind, local start, local end, hours, kwh) -> a priced findings table."""
    return pd.DataFrame([{
        "component": c, "kind": k, "start": t(a), "end": t(b), "hours": h, "kwh": kwh,
        "cost": 1.2 * kwh, "co2_kg": 0.017 * kwh, "detail": f"{c} ran",
        "detail_template": "Ran {h} h{energy}.".replace("{h}", str(h))}
        for c, k, a, b, h, kwh in spec])


def group(frame, **kw):
    return group_by_unit(frame, UNIT_OF, LEAD_OF, TZ,
                         describe=lambda kwh, cost: f" ({kwh:.1f} kWh)", **kw)


def test_fans_of_one_unit_on_one_night_make_one_finding_with_each_ones_energy():
    found = group(rows(
        ("AHU-2/exhaust", "night", "2026-03-09 21:58", "2026-03-10 05:03", 7.08, 27.2),
        ("AHU-2/supply", "night", "2026-03-09 21:59", "2026-03-10 05:03", 7.07, 39.9),
        ("AHU-2/wheel", "night", "2026-03-09 22:00", "2026-03-10 05:04", 7.05, 2.6)))
    assert len(found) == 1
    f = found.iloc[0]
    assert f["id"] == "AHU-2-night-2026-03-09"
    assert f["unit"] == "AHU-2" and f["component"] == "AHU-2/supply"   # the state component
    assert f["components"] == ["AHU-2/supply", "AHU-2/exhaust", "AHU-2/wheel"]
    assert f["start"] == t("2026-03-09 21:58") and f["end"] == t("2026-03-10 05:04")
    assert f["hours"] == pytest.approx(7.08)                  # unit-hours: the longest part
    assert f["component_hours"] == pytest.approx(7.08 + 7.07 + 7.05)
    assert f["kwh"] == pytest.approx(27.2 + 39.9 + 2.6)
    assert [p["kwh"] for p in f["parts"]] == [39.9, 27.2, 2.6]
    # the lead's sentence with the unit's energy, then each component's
    assert f["detail"].startswith("Ran 7.07 h (69.7 kWh).")
    assert "AHU-2/supply 39.9 kWh, AHU-2/exhaust 27.2 kWh, AHU-2/wheel 2.6 kWh" in f["detail"]


def test_other_kinds_other_units_and_other_nights_stay_apart():
    found = group(rows(
        ("AHU-2/supply", "night", "2026-03-09 22:00", "2026-03-10 05:00", 7.0, 40.0),
        ("AHU-2/supply", "night", "2026-03-10 22:00", "2026-03-11 05:00", 7.0, 40.0),
        ("AHU-2/exhaust", "missed", "2026-03-10 10:00", "2026-03-10 12:00", 2.0, 0.0),
        ("AHU-3/supply", "night", "2026-03-09 22:00", "2026-03-10 05:00", 7.0, 40.0)))
    assert sorted(found["id"]) == ["AHU-2-missed-2026-03-10", "AHU-2-night-2026-03-09",
                                   "AHU-2-night-2026-03-10", "AHU-3-night-2026-03-09"]
    missed = found[found["kind"] == "missed"].iloc[0]
    assert missed["component"] == "AHU-2/exhaust" and missed["components"] == ["AHU-2/exhaust"]
    assert "Components involved" not in missed["detail"]


def test_tolerance_joins_a_part_that_starts_late_and_is_a_setting():
    frame = rows(
        ("AHU-2/supply", "night", "2026-03-09 22:00", "2026-03-09 23:00", 1.0, 5.0),
        ("AHU-2/exhaust", "night", "2026-03-09 23:20", "2026-03-10 01:00", 1.7, 5.0),
        ("AHU-2/wheel", "night", "2026-03-10 02:00", "2026-03-10 04:00", 2.0, 1.0))
    assert DEFAULT_TOGETHER == pd.Timedelta("30min")
    assert len(group(frame)) == 2            # 20 min apart joins, 60 min apart does not
    assert len(group(frame, together=pd.Timedelta("1h"))) == 1
    assert len(group(frame, together=pd.Timedelta("10min"))) == 3


def test_a_second_finding_of_one_kind_on_one_date_gets_a_suffix_in_order_of_start():
    found = group(rows(
        ("AHU-3/supply", "night", "2026-03-10 19:00", "2026-03-10 23:00", 4.0, 1.0),
        ("AHU-3/supply", "night", "2026-03-10 01:00", "2026-03-10 05:00", 4.0, 1.0)))
    assert found["id"].tolist() == ["AHU-3-night-2026-03-10", "AHU-3-night-2026-03-10-2"]


def test_ids_are_safe_text():
    assert finding_id("AHU 7 / roof", "weekend", "2026-03-14") == "AHU-7-roof-weekend-2026-03-14"


def test_no_findings_give_an_empty_table_with_the_columns():
    empty = rows()
    found = group(empty.reindex(columns=["component", "kind", "start", "end", "hours", "kwh",
                                         "cost", "co2_kg", "detail"]))
    assert len(found) == 0 and "id" in found.columns and "components" in found.columns


def test_a_night_cut_at_a_holidays_midnight_counts_both_pieces_in_its_unit_hours():
    # a setback night starting on a public holiday: 2 h on the holiday, 5 h on the next day,
    # each fan's two pieces one finding; unit-hours are the longest fan's 7 h, not 5 h
    found = group(rows(
        ("AHU-2/supply", "setback", "2026-05-01 22:00", "2026-05-02 00:00", 2.0, 0.6),
        ("AHU-2/supply", "setback", "2026-05-02 00:00", "2026-05-02 05:00", 5.0, 1.5),
        ("AHU-2/exhaust", "setback", "2026-05-01 22:01", "2026-05-02 00:00", 1.98, 0.4),
        ("AHU-2/exhaust", "setback", "2026-05-02 00:00", "2026-05-02 05:01", 5.02, 1.0)))
    assert len(found) == 1
    f = found.iloc[0]
    assert f["hours"] == pytest.approx(7.0) and f["component_hours"] == pytest.approx(14.0)
    assert f["start"] == t("2026-05-01 22:00") and f["end"] == t("2026-05-02 05:01")
