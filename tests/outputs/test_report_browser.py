"""The report in a real browser: headless Chromium (Debian's ``chromium`` package).

Opens report.html without any network, checks for console errors, uncaught exceptions and
network requests, takes a screenshot that must not be blank, and prints to PDF on A4 and on
Letter with a sensible page count. Skipped when Chromium is absent, unless ``CI`` is set (CI
installs it, so there a missing browser is a failure).
"""

from __future__ import annotations

import datetime as dt

import numpy as np
import pytest

from schedcheck.outputs.report import write_report
from tests.chromium_cdp import Browser, pdf_pages, run_cli
from tests.report_fixture import write_fixture

pytestmark = pytest.mark.browser

A4_IN = (210 / 25.4, 297 / 25.4)   # ISO 216 A4, 210 x 297 mm
LETTER_IN = (8.5, 11.0)            # ANSI Letter, 8.5 x 11 in


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    out = write_fixture(tmp_path_factory.mktemp("audit"))
    return write_report(out)


def _screenshot_pixels(path) -> np.ndarray:
    from PIL import Image  # Pillow comes with scikit-image (test extra)

    with Image.open(path) as im:
        return np.asarray(im.convert("RGB"), dtype=float)


def test_opens_without_errors_or_network(chromium, report, tmp_path):
    with Browser(tmp_path / "profile") as browser:
        load_ms = browser.open(report.as_uri())
        assert browser.problems() == []
        title = browser.call("Runtime.evaluate", {"expression": "document.title",
                                                  "returnByValue": True})
        n_svg = browser.call("Runtime.evaluate", {
            "expression": "document.querySelectorAll('svg.chart').length",
            "returnByValue": True})
        # the episodes chart of each component is drawn: it has a size and its daily bars
        episodes = browser.call("Runtime.evaluate", {
            "expression": "[...document.querySelectorAll('svg.chart.episodes')].map(s => "
                          "[s.getBoundingClientRect().width, "
                          "s.querySelectorAll('path.bar-off_schedule').length])",
            "returnByValue": True})
    assert "Harbour Street Offices" in title["result"]["value"]
    assert n_svg["result"]["value"] == 12   # carpet, bars and episodes for 4 components
    shown = episodes["result"]["value"]
    assert len(shown) == 4 and all(w > 200 for w, _ in shown)
    assert sum(n for _, n in shown) >= 1   # the fixture's weekend running is drawn
    assert load_ms > 0


def test_screenshot_is_not_blank(chromium, report, tmp_path):
    png = tmp_path / "shot.png"
    res = run_cli(["--window-size=1100,1600", f"--screenshot={png}", report.as_uri()],
                  tmp_path / "profile")
    assert png.is_file(), res.stderr[-500:]
    px = _screenshot_pixels(png)
    grey = px.mean(axis=2)
    assert grey.std() > 20                       # not one flat colour
    assert (grey < 80).mean() > 0.005            # dark ink: headline, rules, running blocks
    # the amber of the occupied outlines or day-off marks is drawn (R high, B low)
    assert ((px[..., 0] > 200) & (px[..., 2] < 80)).sum() > 50


def test_prints_on_a4_and_letter(chromium, report, tmp_path):
    with Browser(tmp_path / "profile") as browser:
        browser.open(report.as_uri())
        pages = {name: pdf_pages(browser.print_pdf(size))
                 for name, size in (("A4", A4_IN), ("Letter", LETTER_IN))}
    # 14 days, 4 components: cover + tables, charts (about two per page), findings, method
    for n in pages.values():
        assert 3 <= n <= 12, pages


def test_printed_pages_carry_site_window_and_page_numbers(chromium, report, tmp_path):
    pypdf = pytest.importorskip("pypdf")
    import io
    import unicodedata

    with Browser(tmp_path / "profile") as browser:
        browser.open(report.as_uri())
        pdf = browser.print_pdf(A4_IN)
    pages = pypdf.PdfReader(io.BytesIO(pdf)).pages
    n = len(pages)
    assert n == pdf_pages(pdf) >= 3
    for i, page in enumerate(pages):
        text = " ".join(unicodedata.normalize("NFKC", page.extract_text()).split())  # no "ﬃ"
        assert f"page {i + 1} of {n}" in text
        # the @page footer: site name and window on every page
        assert "Harbour Street Offices" in text and "23 Mar 2026 to 05 Apr 2026" in text


def test_print_to_pdf_flag_writes_a_document(chromium, report, tmp_path):
    pdf = tmp_path / "report.pdf"
    res = run_cli(["--no-pdf-header-footer", f"--print-to-pdf={pdf}", report.as_uri()],
                  tmp_path / "profile")
    assert pdf.is_file(), res.stderr[-500:]
    data = pdf.read_bytes()
    assert data.startswith(b"%PDF") and 3 <= pdf_pages(data) <= 12


@pytest.mark.slow
def test_demo_audit_report_in_the_browser(chromium, demo_month, tmp_path):
    """The real pipeline: a one-month demo site, audited, its report opened and printed."""
    from schedcheck.jobs.audit import audit_site

    made = demo_month   # written once per session (tests/conftest.py)
    result = audit_site(made.site_file, out=tmp_path / "audit")
    report = result.files["report.html"]
    assert report.stat().st_size < 2_000_000
    with Browser(tmp_path / "profile") as browser:
        browser.open(report.as_uri())
        assert browser.problems() == []
        n = browser.call("Runtime.evaluate", {
            "expression": "document.querySelectorAll('section.comp').length",
            "returnByValue": True})["result"]["value"]
        strips = browser.call("Runtime.evaluate", {
            "expression": "document.querySelectorAll('figure.strip svg').length",
            "returnByValue": True})["result"]["value"]
        # the trends: a strip under the carpet plot of each commanded component, with its
        # lanes (command, status where given, running) and the hand-mode night's letter
        trends = browser.call("Runtime.evaluate", {
            "expression": "[...document.querySelectorAll('section.comp svg.trend-strip')]"
                          ".map(e => e.closest('section').querySelector('h3').textContent"
                          ".split(':')[0] + '|' + e.textContent.includes('running (vibration)'))"
                          ".join(';')", "returnByValue": True})["result"]["value"]
        # printed on A4 (about 718 CSS px between the margins), no close-up sticks out
        browser.call("Emulation.setEmulatedMedia", {"media": "print"})
        browser.call("Emulation.setDeviceMetricsOverride", {
            "width": 718, "height": 1000, "deviceScaleFactor": 1, "mobile": False})
        wide = browser.call("Runtime.evaluate", {
            "expression": "[...document.querySelectorAll('figure.strip svg')].filter(e => "
                          "e.getBoundingClientRect().right > 718.5).length",
            "returnByValue": True})["result"]["value"]
        trend_wide = browser.call("Runtime.evaluate", {
            "expression": "[...document.querySelectorAll('svg.trend-strip')].filter(e => "
                          "e.getBoundingClientRect().right > 718.5).length",
            "returnByValue": True})["result"]["value"]
        browser.call("Emulation.clearDeviceMetricsOverride")
        browser.call("Emulation.setEmulatedMedia", {"media": ""})
        pages = pdf_pages(browser.print_pdf(A4_IN))
    assert strips == min(len(result.findings), 40) > 0 and wide == 0
    assert sorted(trends.split(";")) == sorted(f"{k}|true" for k in result.trends)
    assert len(result.trends) == 6 and trend_wide == 0
    assert n == len(result.components) > 0
    assert 4 <= pages <= 5 * n
    assert result.first_date <= result.last_date < result.first_date + dt.timedelta(days=40)
