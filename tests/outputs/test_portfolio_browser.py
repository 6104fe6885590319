"""The portfolio page in headless Chromium: it opens without errors or network requests, ranks
the units by off-schedule cost, links each site's report relatively, and shows hostile names
as text. Skipped when Chromium is absent, unless ``CI`` is set (as for the report)."""

from __future__ import annotations

import pytest

from schedcheck.outputs.portfolio_files import write_portfolio_files
from tests.chromium_cdp import Browser

pytestmark = pytest.mark.browser

HOSTILE = '<img src=x onerror="document.title=\'owned\'">'


def _comp(site: str, unit: str, cost: float) -> dict:
    return {"site": site, "unit": unit, "component": f"{unit}/supply", "role": "supply_fan",
            "off_schedule_h": cost / 3, "off_schedule_kwh": cost * 2, "off_schedule_cost": cost,
            "currency": "NOK", "findings": 1}


def _sites() -> list[dict]:
    ok = {"status": "ok", "error": "", "first_date": "2026-03-01", "last_date": "2026-03-31",
          "findings": [], "months": []}
    return [
        dict(ok, site="elm-house", name=f"Elm House {HOSTILE}", headline="3 h off schedule",
             report="sites/elm-house/report.html",
             components=[_comp("elm-house", "AHU-1", 40.0), _comp("elm-house", "AHU-2", 900.0)]),
        dict(ok, site="oak-hall", name="Oak Hall", headline="1 h off schedule",
             report="sites/oak-hall/report.html", components=[_comp("oak-hall", "AHU-9", 120.0)]),
        {"site": "broken", "name": "broken.toml", "status": "failed", "components": [],
         "error": f"error: broken.toml:1: not valid TOML {HOSTILE}", "findings": [],
         "months": [], "headline": "", "report": ""},
    ]


def _eval(browser: Browser, js: str):
    return browser.call("Runtime.evaluate", {"expression": js, "returnByValue": True})[
        "result"]["value"]


def test_page_ranks_units_links_reports_and_escapes(chromium, tmp_path):
    page = write_portfolio_files(_sites(), tmp_path)["portfolio.html"]
    with Browser(tmp_path / "profile") as browser:
        browser.open(page.as_uri())
        assert browser.problems() == []
        assert "owned" not in _eval(browser, "document.title")
        ranked = _eval(browser, "[...document.querySelectorAll('#units tbody tr')]"
                                ".map(r => r.cells[2].textContent)")
        links = _eval(browser, "[...document.querySelectorAll('#sites a')]"
                               ".map(a => a.getAttribute('href'))")
        text = _eval(browser, "document.body.innerText")
        imgs = _eval(browser, "document.querySelectorAll('img').length")
    assert ranked == ["AHU-2", "AHU-9", "AHU-1"]
    assert links == ["sites/elm-house/report.html", "sites/oak-hall/report.html"]
    assert HOSTILE in text and imgs == 0
    assert "failed: error: broken.toml:1" in text
    assert "freeze protection" in text and "life-safety" in text
