"""Tests of the evidence pack (report.html): content, self-containment, escaping, size, CLI."""

from __future__ import annotations

import datetime as dt
import json
from html.parser import HTMLParser

import pandas as pd
import pytest

from schedcheck.cli import main
from schedcheck.outputs.report import render_report, report_context, write_report
from schedcheck.outputs.saved import read_saved_audit
from tests.report_fixture import write_fixture

HOSTILE_SITE = '<script>alert("site")</script> & Sons'
HOSTILE_UNIT = "<img src=x onerror=alert(1)>"
HOSTILE_COMP = 'fan"><b>'
HOSTILE_SENSOR = "S-1' onmouseover='alert(2)"
HOSTILE_HOLIDAY = 'Ebb & Flow\'s <iframe src="https://evil.invalid"></iframe> day'
HOSTILE_EVENT = "<svg onload=alert(3)>Opening & \"late\" hours"


class _Tags(HTMLParser):
    """Collects every start tag and attribute name of a page."""

    def __init__(self) -> None:
        super().__init__()
        self.tags: set[str] = set()
        self.attrs: set[str] = set()

    def handle_starttag(self, tag, attrs):
        self.tags.add(tag)
        self.attrs.update(name for name, _ in attrs)


@pytest.fixture(scope="module")
def outdir(tmp_path_factory):
    return write_fixture(tmp_path_factory.mktemp("audit"))


@pytest.fixture(scope="module")
def page(outdir):
    return write_report(outdir).read_text(encoding="utf-8")


def test_page_names_site_window_and_every_component(outdir, page):
    data = read_saved_audit(outdir)
    assert "Harbour Street Offices" in page
    assert "Mon 23 Mar 2026" in page and "Sun 05 Apr 2026" in page and "Europe/Oslo" in page
    for comp in data.summary["components"]:
        assert comp["id"] in page
        assert comp["sensor"] in page
    n = len(data.summary["components"])
    assert page.count('class="chart carpet"') == n
    assert page.count('class="chart bars"') == n
    # the window holds the spring clock change (Europe/Oslo, 29 Mar 2026: EU rule, last Sunday
    # of March, Directive 2000/84/EC) and the page says how it is drawn
    assert "Sun 29 Mar 2026 (23 h)" in page
    # the day off, named, for every unit
    assert "Thu 26 Mar 2026</td><td>Founders&#39; Day</td><td>holiday</td><td>all</td>" in page


def test_carpet_running_area_equals_running_hours(outdir):
    # the drawing (from runs.csv) against the summary's hour figures: equal, except that a run
    # across the skipped spring hour (29 Mar 2026 02:00-03:00 in Oslo, i.e. 01:00 UTC) is drawn
    # as one wall-clock block, one hour longer than the elapsed time
    import re

    from schedcheck.outputs.svg import HOUR_PX

    data = read_saved_audit(outdir)
    change = pd.Timestamp("2026-03-29T01:00:00Z")
    for comp in report_context(data)["components"]:
        d = re.search(r'class="st-run"[^>]*\sd="([^"]*)"', str(comp["carpet"])).group(1)
        drawn_h = sum(float(v) for v in re.findall(r"v([\d.]+)", d)) / HOUR_PX
        runs = data.runs[(data.runs["component"] == comp["id"]) & (data.runs["state"] == "run")]
        bridged = int(((runs["start"] < change) & (runs["end"] > change)).sum())
        assert drawn_h == pytest.approx(comp["hours"]["running"] + bridged, abs=0.1)


def test_headline_figures_agree_with_the_daily_file(outdir, page):
    data = read_saved_audit(outdir)
    ctx = report_context(data)
    off_h = data.daily["off_schedule_h"].sum()
    assert ctx["totals"]["off_schedule_h"] == pytest.approx(off_h)
    kwh = data.daily["off_schedule_kwh"].sum()
    assert ctx["totals"]["off_schedule_kwh"] == pytest.approx(kwh, rel=1e-3)
    # the headline counts unit-hours, with the component-hours (the daily file's sum) beside
    unit_h = ctx["totals"]["unit_h"]
    assert unit_h <= off_h + 1e-6
    assert f"<b>{unit_h:,.1f} unit-hours</b>" in page
    if abs(unit_h - off_h) >= 0.05:
        assert f"({off_h:,.1f} component-hours" in page
    fans = data.daily[~data.daily["component"].str.endswith("wheel")]
    assert ctx["totals"]["missed_h"] == pytest.approx(fans["missed_h"].sum())


def test_findings_sorted_by_cost_with_local_times(outdir, page):
    data = read_saved_audit(outdir)
    rows = report_context(data)["findings"]
    assert len(rows) == len(data.findings) > 0
    costs = [r["cost"] for r in rows]
    assert costs == sorted(costs, reverse=True)
    # every finding's local time and sentence is on the page, in that order
    cells = [f"{r['when'][0]}<br>to {r['when'][1]}" for r in rows]
    assert all(c in page for c in cells)
    positions = [page.index(c) for c in cells if page.count(c) == 1]
    assert positions == sorted(positions)
    top = data.findings.sort_values("cost", ascending=False).iloc[0]
    local_start = top["start"].tz_convert("Europe/Oslo").strftime("%a %d %b %Y %H:%M")
    assert rows[0]["when"][0] == local_start


def test_speed_sensitivity_follows_the_affinity_law(outdir):
    # fan affinity laws: power ~ speed**3, so 10 % more speed is 1.1**3 = 1.331 times the power
    # (the textbook cube law for geometrically similar fans; stated here from memory)
    data = read_saved_audit(outdir)
    ctx = report_context(data)
    comps = data.summary["components"]
    low = sum(c["energy"]["off_schedule_kwh"] * ((c["speed"] - 0.05) / c["speed"]) ** 3
              for c in comps)
    assert ctx["totals"]["kwh_speed_low"] == pytest.approx(low)
    assert ((0.85 + 0.05) / 0.85) ** 3 == pytest.approx(1.1870, abs=1e-4)
    assert ctx["totals"]["kwh_speed_high"] == pytest.approx(
        ctx["totals"]["off_schedule_kwh"] * 1.1870, rel=1e-3)
    nd = sum(c["hours"]["no_data"] * c["energy"]["running_kw"] for c in comps)
    assert ctx["totals"]["kwh_no_data_max"] == pytest.approx(nd) and nd > 0


def test_asks_cautions_and_method_are_present(page):
    assert "What to ask the controls contractor" in page
    assert "holiday calendar" in page       # the holiday finding's question
    for words in ("Ventilation minimums", "Freeze protection", "Smoke control",
                  "licensed", "local codes", "affinity laws", "No data</b> means"):
        assert words in page
    assert "switch off" not in page.lower().replace("switched off or", "")


def test_page_is_self_contained(page):
    tags = _Tags()
    tags.feed(page)
    assert not tags.tags & {"script", "link", "iframe", "img", "object", "embed"}
    assert not {a for a in tags.attrs if a.startswith("on")}
    assert "src=" not in page and "@import" not in page and "url(http" not in page
    assert page.replace('xmlns="http://www.w3.org/2000/svg"', "").count("http") == 0
    assert "@media print" in page and "@page" in page


def test_hostile_names_are_escaped(tmp_path):
    units = [(f"AHU-{HOSTILE_UNIT}", HOSTILE_UNIT,
              [(HOSTILE_COMP, "supply_fan", HOSTILE_SENSOR, 7.5)])]
    write_fixture(tmp_path, days=5, units=units, site_name=HOSTILE_SITE,
                  holiday=(1, HOSTILE_HOLIDAY), event_name=HOSTILE_EVENT)
    page = write_report(tmp_path).read_text(encoding="utf-8")
    tags = _Tags()
    tags.feed(page)
    assert not tags.tags & {"script", "img", "iframe"}
    assert not {a for a in tags.attrs if a.startswith("on")}
    for raw in (HOSTILE_SITE, HOSTILE_UNIT, HOSTILE_COMP, HOSTILE_SENSOR, HOSTILE_HOLIDAY,
                HOSTILE_EVENT):
        assert raw not in page
    assert "&lt;script&gt;alert(&#34;site&#34;)&lt;/script&gt; &amp; Sons" in page
    assert "&lt;img src=x onerror=alert(1)&gt;" in page
    assert "S-1&#39; onmouseover=&#39;alert(2)" in page
    assert "Ebb &amp; Flow&#39;s &lt;iframe" in page
    assert "&lt;svg onload=alert(3)&gt;Opening &amp; &#34;late&#34; hours" in page


@pytest.mark.parametrize(("tz", "first", "day"), [
    # EU: summer time ends on the last Sunday of October (Directive 2000/84/EC, art. 2)
    ("Europe/Oslo", dt.date(2026, 10, 20), "Sun 25 Oct 2026 (25 h)"),
    # US: daylight saving time starts on the second Sunday of March (Energy Policy Act of 2005,
    # sec. 110)
    ("America/New_York", dt.date(2026, 3, 4), "Sun 08 Mar 2026 (23 h)"),
])
def test_clock_change_days_are_named(tmp_path, tz, first, day):
    write_fixture(tmp_path, first=first, days=10, tz=tz)
    page = write_report(tmp_path).read_text(encoding="utf-8")
    assert f"Clock changes in this window: {day}." in page
    assert tz in page


def test_unwritable_folder_is_one_line_error(outdir, capsys, monkeypatch):
    def refuse(*_args, **_kwargs):
        raise PermissionError(13, "Permission denied")

    monkeypatch.setattr("pathlib.Path.write_text", refuse)
    assert main(["report", str(outdir)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: ") and "report.html" in err and "Permission denied" in err


def test_rendering_is_repeatable(outdir):
    data = read_saved_audit(outdir)
    assert render_report(data) == render_report(data)


def test_no_findings_says_so(tmp_path):
    write_fixture(tmp_path, days=3)
    head = (tmp_path / "findings.csv").read_text().splitlines()[0]
    (tmp_path / "findings.csv").write_text(head + "\n")
    page = write_report(tmp_path).read_text(encoding="utf-8")
    assert "No findings" in page


def test_long_findings_list_is_cut_and_says_so(tmp_path, monkeypatch):
    from schedcheck.outputs import report as report_module

    write_fixture(tmp_path, days=14)
    n = len(read_saved_audit(tmp_path).findings)
    monkeypatch.setattr(report_module, "FINDINGS_SHOWN", 3)
    page = write_report(tmp_path).read_text(encoding="utf-8")
    assert f"{n - 3} smaller findings are not" in page and f"all {n} are in findings.csv" in page
    assert page.count('<td class="kind">') == 3


def test_no_price_hides_money_but_keeps_energy(tmp_path):
    write_fixture(tmp_path, days=3)
    path = tmp_path / "summary.json"
    summary = json.loads(path.read_text())
    summary["site"].pop("currency")
    summary["site"].pop("price")
    path.write_text(json.dumps(summary))
    page = write_report(tmp_path).read_text(encoding="utf-8")
    assert "NOK" not in page
    assert "energy off schedule" in page and "kWh" in page


def test_a_quarter_of_three_units_stays_small(tmp_path):
    units = [(f"AHU-{i}", f"Wing {i}", [("supply", "supply_fan", f"S{i}1", 7.5),
                                        ("exhaust", "exhaust_fan", f"S{i}2", 5.5)])
             for i in (1, 2, 3)]
    write_fixture(tmp_path, first=dt.date(2026, 1, 1), days=91, units=units)
    size = write_report(tmp_path).stat().st_size
    assert size < 2_000_000 * 91 / 365  # the year target (2 MB) pro rata


def test_cli_report_rerenders_and_prints_path(outdir, capsys):
    (outdir / "report.html").unlink()
    assert main(["report", str(outdir)]) == 0
    assert capsys.readouterr().out.strip() == str(outdir / "report.html")
    assert (outdir / "report.html").stat().st_size > 10_000


@pytest.mark.parametrize(("name", "damage", "expected"), [
    ("runs.csv", None, "runs.csv: missing"),
    ("summary.json", lambda t: t[:-20], "summary.json:"),
    ("summary.json", lambda t: t.replace('"Europe/Oslo"', '"Mars/Olympus"', 1),
     "summary.json: site.timezone: 'Mars/Olympus' is not an IANA time zone"),
    ("summary.json", lambda t: t.replace('"schema": 2', '"schema": 99', 1),
     "summary.json: schema: 99 is not a layout this version reads (2)"),
    ("summary.json", lambda t: t.replace('"schema": 2,', '', 1), "summary.json: schema: None"),
    ("daily.csv", lambda t: t.replace(",24.0,", ",lots,", 1), "daily.csv:2: period_h: 'lots'"),
    ("runs.csv", lambda t: t.replace(",run,", ",spinning,", 1), "runs.csv:3: state: 'spinning'"),
    ("schedule.csv", lambda t: t.replace("+01:00", "", 1), "schedule.csv:2: start:"),
    # a damaged year overflowed the nanosecond clock: an internal error before
    ("runs.csv", lambda t: t.replace(",2026-", ",1026-", 1), "runs.csv:2: start: '1026-"),
    ("findings.csv", lambda t: t.replace("kwh", "energy", 1), "findings.csv:1: header lacks"),
])
def test_bad_folder_is_one_line_error(tmp_path, capsys, name, damage, expected):
    write_fixture(tmp_path, days=2)
    path = tmp_path / name
    if damage is None:
        path.unlink()
    else:
        path.write_text(damage(path.read_text(encoding="utf-8")), encoding="utf-8")
    assert main(["report", str(tmp_path)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: ") and err.count("\n") == 1
    assert expected in err


@pytest.mark.parametrize(("damage", "expected"), [
    (lambda s: s["components"][0].update(threshold="high"),
     "components[0].threshold: must be an object"),
    (lambda s: s["components"][0]["threshold"].update(histogram={"edges": [1, 2],
                                                                 "counts": "many"}),
     "components[0].threshold.histogram.counts: must be a list of numbers"),
    (lambda s: s["components"][0]["energy"].update(off_schedule_kwh="12 kWh"),
     "components[0].energy.off_schedule_kwh: '12 kWh' is not a number"),
    (lambda s: s.update(days_off=[{"unit": "", "date": "24.12.2026", "name": "x"}]),
     "days_off[0].date: '24.12.2026' is not a date"),
    (lambda s: s.update(sensors=[1, 2]), "sensors[0]: must be an object"),
    (lambda s: s["components"][0]["threshold"].update(histogram={"edges": [0.0, 1.0],
                                                                 "counts": [3, 4]}),
     "components[0].threshold.histogram: has 2 edges for 2 counts"),
    # 10**317 overflowed while drawing (internal error); a level of 1e308 likewise
    (lambda s: s["components"][0]["threshold"].update(histogram={"edges": [0.0, 1.0, 317.0],
                                                                 "counts": [3, 4]}),
     "components[0].threshold.histogram.edges: edges are log10 levels; one is beyond"),
    (lambda s: s["components"][0]["threshold"].update(level=1e308),
     "components[0].threshold.level: 1e+308 is not a reading level (0 to 1e100)"),
])
def test_damaged_objects_in_summary_are_one_line_errors(tmp_path, capsys, damage, expected):
    # each of these ended as "internal error: TypeError/ValueError ..." with exit status 1
    write_fixture(tmp_path, days=2)
    path = tmp_path / "summary.json"
    summary = json.loads(path.read_text(encoding="utf-8"))
    damage(summary)
    path.write_text(json.dumps(summary), encoding="utf-8")
    assert main(["report", str(tmp_path)]) == 2
    err = capsys.readouterr().err
    assert err == f"error: {path}: {expected}" + err.split(expected, 1)[1]
    assert err.count("\n") == 1


def test_saved_audit_round_trips_instants(outdir):
    data = read_saved_audit(outdir)
    assert str(data.runs["start"].dtype) == "datetime64[ns, UTC]"
    # runs.csv covers the window exactly, per component (contiguous, no overlap)
    period = json.loads((outdir / "summary.json").read_text())["period"]
    for _, g in data.runs.groupby("component"):
        assert g["start"].iloc[0] == pd.Timestamp(period["start"])
        assert g["end"].iloc[-1] == pd.Timestamp(period["end"])
        assert (g["start"].iloc[1:].to_numpy() == g["end"].iloc[:-1].to_numpy()).all()


def test_night_kind_is_not_called_night_running(outdir, page):
    # kind "night" is any off-schedule running on a working day (docs/findings.md), also in
    # daytime: a lecture hall used only in the evening, running 08:00-15:10, was listed as
    # "Night running"
    data = read_saved_audit(outdir)
    assert (data.findings["kind"] == "night").any()
    assert "Night running" not in page
    assert "Off-schedule running on a working day or night" in page


def test_sensor_counts_have_thousands_separators(tmp_path):
    # a year of one-a-minute readings has about a thousand duplicates per sensor: the table
    # showed "1037" next to readings of "520,144"
    write_fixture(tmp_path, days=5)
    summary = json.loads((tmp_path / "summary.json").read_text(encoding="utf-8"))
    summary["sensors"][0]["duplicates"] = 1037
    (tmp_path / "summary.json").write_text(json.dumps(summary), encoding="utf-8")
    page = write_report(tmp_path).read_text(encoding="utf-8")
    assert '<td class="n">1,037</td>' in page
