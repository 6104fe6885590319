"""The evidence pack in the report: close-ups per finding, provenance, day labels, page footer."""

from __future__ import annotations

import datetime as dt
import gzip
import re
import shutil

import pandas as pd
import pytest

from schedcheck.audit.evidence import STRIPS_SHOWN
from schedcheck.cli import main
from schedcheck.outputs.evidence_report import css_string
from schedcheck.outputs.report import write_report
from schedcheck.outputs.svg import _date_axis


@pytest.fixture(scope="module")
def demo_page(demo_audit):
    return (demo_audit.result.outdir / "report.html").read_text("utf-8")


def test_each_costliest_finding_has_a_minute_strip(demo_audit, demo_page):
    outdir = demo_audit.result.outdir
    findings = pd.read_csv(outdir / "findings.csv")
    n = min(len(findings), STRIPS_SHOWN)
    assert n > 0
    assert demo_page.count('<figure class="strip"') == n
    assert demo_page.count('class="chart strip"') == n
    # every strip is linked from its row of the findings table, and has a level trace
    anchors = re.findall(r'<figure class="strip" id="([^"]+)"', demo_page)
    for a in anchors:
        assert f'href="#{a}"' in demo_page
    assert demo_page.count('class="trace"') >= n
    levels = pd.read_csv(outdir / "levels.csv.gz")
    assert levels["finding"].nunique() == n
    # one point a minute at most, per finding and component
    t = pd.to_datetime(levels["time"], utc=True)
    assert not levels.assign(t=t).duplicated(["finding", "component", "t"]).any()


def test_report_redraws_the_strips_from_the_saved_folder_alone(demo_audit, demo_page, tmp_path):
    copy = tmp_path / "audit"
    shutil.copytree(demo_audit.result.outdir, copy)
    (copy / "report.html").unlink()
    assert main(["report", str(copy)]) == 0
    again = (copy / "report.html").read_text("utf-8")
    strips = re.findall(r'<figure class="strip".*?</figure>', again, flags=re.S)
    assert strips == re.findall(r'<figure class="strip".*?</figure>', demo_page, flags=re.S)


def test_a_damaged_levels_file_stops_the_report_with_one_line(demo_audit, tmp_path, capsys):
    copy = tmp_path / "audit"
    shutil.copytree(demo_audit.result.outdir, copy)
    (copy / "levels.csv.gz").write_bytes(gzip.compress(
        b"finding,component,time,level\n1,A/s,2026-03-01T00:00:00+01:00,oops\n"))
    assert main(["report", str(copy)]) == 2
    err = capsys.readouterr().err.strip()
    assert err.startswith("error:") and "levels.csv.gz:2" in err and "\n" not in err


def test_a_folder_without_levels_draws_no_strips(demo_audit, tmp_path):
    copy = tmp_path / "audit"
    shutil.copytree(demo_audit.result.outdir, copy)
    (copy / "levels.csv.gz").unlink()
    page = write_report(copy).read_text("utf-8")
    assert '<figure class="strip"' not in page and "Findings, costliest first" in page


def test_provenance_block_lists_inputs_with_hashes(demo_audit, demo_page):
    import json

    prov = json.loads((demo_audit.result.outdir / "summary.json").read_text("utf-8"))["provenance"]
    assert 'id="provenance"' in demo_page
    for item in prov["inputs"]:
        assert item["sha256"] in demo_page and item["path"] in demo_page
    assert "energy.price = " in demo_page


def test_page_footer_names_site_window_and_page_numbers(demo_page):
    style = demo_page.split("<style>", 1)[1].split("</style>", 1)[0]
    assert "@bottom-left" in style and 'counter(page) " of " counter(pages)' in style


def test_footer_text_cannot_break_out_of_the_style_sheet():
    text = css_string('</style><script>alert("x")</script> & Sønner')
    assert "<" not in text and '"' not in text[1:-1] and "Sønner" in text
    assert text.startswith('"') and text.endswith('"')


def test_carpet_labels_every_day_of_a_month_and_mondays_beyond():
    month = _date_axis(dt.date(2026, 3, 1), 31, 23.2, 100.0)
    days = re.findall(r">(\d\d)</text>", month)
    assert days == [f"{d:02d}" for d in range(1, 32)]
    quarter = _date_axis(dt.date(2026, 3, 1), 91, 7.9, 100.0)
    labels = re.findall(r">(\d\d)</text>", quarter)
    mondays = [d for d in pd.date_range("2026-03-01", periods=91) if d.weekday() == 0]
    assert labels == [f"{d.day:02d}" for d in mondays]
    assert ">Mar 2026<" in quarter and ">Apr<" in quarter and ">May<" in quarter
