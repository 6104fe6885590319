"""The portfolio: a process pool, a Dask cluster and single audits give the same figures; a
broken site is one failed row and exit status 2."""

from __future__ import annotations

import csv
import json
import shutil

import pytest

from schedcheck.jobs.audit import audit_site
from schedcheck.jobs.portfolio import run_portfolio
from schedcheck.outputs.portfolio_files import unit_ranking

pytestmark = pytest.mark.slow


@pytest.fixture(scope="module")
def sites(demo_month, tmp_path_factory):
    """Three one-month demo sites under their own names, and one site file that is not TOML."""
    root = tmp_path_factory.mktemp("portfolio_sites")
    files = []
    for name in ("Alder Court", "Birch Yard", "Cedar Row"):
        folder = root / name.split()[0].lower()
        folder.mkdir()
        for part in ("readings", "calendars", "weather", "bms"):
            shutil.copytree(demo_month.folder / part, folder / part)
        text = demo_month.site_file.read_text(encoding="utf-8").splitlines()
        first = next(i for i, line in enumerate(text) if line.startswith("name = "))
        text[first] = f'name = "{name} (fictional)"'
        (folder / "site.toml").write_text("\n".join(text) + "\n", encoding="utf-8")
        files.append(folder / "site.toml")
    broken = root / "broken.toml"
    broken.write_text('name = "Unclosed\n', encoding="utf-8")
    return files[:2] + [broken] + files[2:]


def _rows(path):
    with open(path, newline="", encoding="utf-8") as f:
        return list(csv.DictReader(f))


@pytest.fixture(scope="module")
def pool_run(sites, tmp_path_factory):
    return run_portfolio(sites, tmp_path_factory.mktemp("pool"), jobs=2)


def test_broken_site_is_one_failed_row_and_the_rest_go_on(pool_run):
    assert [s["status"] for s in pool_run.sites] == ["ok", "ok", "failed", "ok"]
    failed = pool_run.failed[0]
    assert failed["error"].startswith("error: ") and "broken.toml:1" in failed["error"]
    rows = _rows(pool_run.files["portfolio.csv"])
    bad = [r for r in rows if r["status"] == "failed"]
    assert len(bad) == 1 and bad[0]["site"] == "broken" and "broken.toml" in bad[0]["error"]
    assert {r["site"] for r in rows} == {"alder-court-fictional", "birch-yard-fictional",
                                         "broken", "cedar-row-fictional"}


def test_rollup_equals_the_single_audit_figure_for_figure(pool_run, sites, tmp_path):
    single = audit_site(sites[0], out=tmp_path / "single")
    summary = json.loads((single.outdir / "summary.json").read_text(encoding="utf-8"))
    rows = [r for r in _rows(pool_run.files["portfolio.csv"])
            if r["site"] == "alder-court-fictional"]
    assert [r["component"] for r in rows] == [c["id"] for c in summary["components"]]
    for r, c in zip(rows, summary["components"], strict=True):
        for k, v in c["hours"].items():
            if f"{k}_h" in r:
                assert float(r[f"{k}_h"]) == v, (c["id"], k)
        for k in ("running_kwh", "off_schedule_kwh", "off_schedule_cost"):
            assert float(r[k]) == c["energy"][k], (c["id"], k)
        assert int(r["findings"]) == sum(f["component"] == c["id"] for f in summary["findings"])
    # the worker's audit folder holds the same summary as the single audit (bar the clock)
    worker = json.loads((pool_run.outdir / "sites" / "alder-court-fictional" / "summary.json")
                        .read_text(encoding="utf-8"))
    assert worker["components"] == summary["components"]
    assert worker["findings"] == summary["findings"]


def test_dask_cluster_gives_the_pool_figures(pool_run, sites, tmp_path):
    distributed = pytest.importorskip("distributed")   # the test extra installs it
    with distributed.LocalCluster(processes=False, n_workers=1, threads_per_worker=2,
                                  dashboard_address=None) as cluster:
        on_cluster = run_portfolio(sites, tmp_path / "cluster", jobs=2,
                                   scheduler=cluster.scheduler_address)
    assert _rows(on_cluster.files["portfolio.csv"]) == _rows(pool_run.files["portfolio.csv"])
    a = json.loads(on_cluster.files["portfolio.json"].read_text(encoding="utf-8"))
    b = json.loads(pool_run.files["portfolio.json"].read_text(encoding="utf-8"))
    for s in a["sites"] + b["sites"]:   # only the report link's folder differs
        s.pop("report", None)
    assert a["sites"] == b["sites"] and a["units"] == b["units"]


def test_one_process_gives_the_pool_figures(pool_run, sites, tmp_path):
    alone = run_portfolio(sites, tmp_path / "alone", jobs=1)
    assert _rows(alone.files["portfolio.csv"]) == _rows(pool_run.files["portfolio.csv"])


def test_cli_exit_status_is_2_with_one_line_per_failed_site(sites, tmp_path, capsys):
    from schedcheck.cli import main

    rc = main(["portfolio", str(sites[2]), "--out", str(tmp_path / "p"), "--jobs", "1"])
    err = capsys.readouterr().err.strip().splitlines()
    assert rc == 2
    assert len(err) == 1 and err[0].startswith("broken: error: ") and "broken.toml:1" in err[0]
    assert (tmp_path / "p" / "portfolio.html").exists()


def test_ranking_puts_the_costliest_unit_first():
    comp = {"currency": "NOK", "findings": 1, "off_schedule_h": 1.0}
    sites = [{"site": "a", "components": [
        dict(comp, unit="U1", off_schedule_kwh=5.0, off_schedule_cost=10.0),
        dict(comp, unit="U2", off_schedule_kwh=1.0, off_schedule_cost=2.0),
        dict(comp, unit="U2", off_schedule_kwh=9.0, off_schedule_cost=9.0)]},
        {"site": "b", "components": [dict(comp, unit="U1", off_schedule_kwh=1.0,
                                           off_schedule_cost=3.0)]}]
    ranked = unit_ranking(sites)
    assert [(u["site"], u["unit"], u["off_schedule_cost"]) for u in ranked] == [
        ("a", "U2", 11.0), ("a", "U1", 10.0), ("b", "U1", 3.0)]
    assert ranked[0]["components"] == 2 and ranked[0]["findings"] == 2
