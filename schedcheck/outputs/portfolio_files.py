"""Writers of the portfolio roll-up: portfolio.csv, portfolio.json and portfolio.html.

Each file is written to a temporary name and renamed into place, the page last, so a folder
holding portfolio.html holds a complete roll-up. The page is one self-contained HTML file
(no script, no network) drawn with an autoescaping jinja2 template like the report.
"""

from __future__ import annotations

import csv
import json
import os
from pathlib import Path

from schedcheck import __version__
from schedcheck.outputs.portfolio_records import PORTFOLIO_COLUMNS

PORTFOLIO_SCHEMA = 1


def portfolio_rows(sites: list[dict]) -> list[dict]:
    """The rows of portfolio.csv: every component of every site; a failed site is one row."""
    rows = []
    for s in sites:
        if s["status"] == "ok":
            rows.extend(s["components"])
        else:
            row = {k: "" for k in PORTFOLIO_COLUMNS}
            row.update({"site": s["site"], "status": "failed", "error": s["error"]})
            rows.append(row)
    return rows


def unit_ranking(sites: list[dict]) -> list[dict]:
    """Units of every site, the costliest off-schedule running first (then kWh, then name)."""
    units: dict[tuple[str, str], dict] = {}
    for s in sites:
        for c in s["components"]:
            u = units.setdefault((s["site"], c["unit"]), {
                "site": s["site"], "unit": c["unit"], "off_schedule_h": 0.0,
                "off_schedule_kwh": 0.0, "off_schedule_cost": 0.0, "findings": 0,
                "currency": c["currency"], "components": 0})
            u["off_schedule_h"] += c["off_schedule_h"]
            u["off_schedule_kwh"] += c["off_schedule_kwh"]
            u["off_schedule_cost"] += c["off_schedule_cost"]
            u["findings"] += c["findings"]
            u["components"] += 1
    return sorted(units.values(), key=lambda u: (-u["off_schedule_cost"],
                                                 -u["off_schedule_kwh"], u["site"], u["unit"]))


def _replace(path: Path, text: str) -> Path:
    tmp = path.with_name(f".{path.name}.tmp")
    tmp.write_text(text, encoding="utf-8", newline="")
    os.replace(tmp, path)
    return path


def portfolio_dict(sites: list[dict], months: dict | None = None) -> dict:
    """The content of portfolio.json."""
    return {"schema": PORTFOLIO_SCHEMA, "version": __version__, "sites": sites,
            "units": unit_ranking(sites), "history": months}


def render_portfolio(sites: list[dict], months: dict | None = None) -> str:
    """The roll-up page as HTML text."""
    import jinja2

    env = jinja2.Environment(loader=jinja2.PackageLoader("schedcheck.outputs", "templates"),
                             autoescape=True)   # site names and errors are never trusted
    page = env.get_template("portfolio.html.j2")
    return page.render(sites=sites, units=unit_ranking(sites), months=months or {},
                       failed=[s for s in sites if s["status"] != "ok"], version=__version__)


def write_portfolio_files(sites: list[dict], outdir: Path,
                          months: dict | None = None) -> dict[str, Path]:
    """Write the three roll-up files into ``outdir``; returns name -> path."""
    import io

    outdir.mkdir(parents=True, exist_ok=True)
    buf = io.StringIO()
    w = csv.DictWriter(buf, fieldnames=list(PORTFOLIO_COLUMNS), lineterminator="\n")
    w.writeheader()
    w.writerows(portfolio_rows(sites))
    files = {"portfolio.csv": _replace(outdir / "portfolio.csv", buf.getvalue())}
    files["portfolio.json"] = _replace(
        outdir / "portfolio.json", json.dumps(portfolio_dict(sites, months), indent=1) + "\n")
    files["portfolio.html"] = _replace(outdir / "portfolio.html",
                                       render_portfolio(sites, months))
    return files
