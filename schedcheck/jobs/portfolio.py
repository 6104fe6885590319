"""The portfolio job: audit many sites, one per task, and roll them up (``schedcheck portfolio``).

Each task audits one site with the ordinary audit job (:func:`schedcheck.jobs.audit.audit_site`)
into ``DIR/sites/<site slug>/`` and returns only its roll-up figures
(:func:`schedcheck.outputs.portfolio_records.site_rollup`), so memory stays bounded as the
portfolio grows: a worker holds one site at a time and the parent only the roll-up. Tasks run
in a local process pool (``jobs`` processes), in this process (``jobs=1``), or on a Dask
distributed cluster (``scheduler``; dask and distributed are imported only then). A site with
bad input becomes a failed row with its one-line error; the others go on. Prints nothing:
``on_done`` is called with each site's roll-up as it finishes.
"""

from __future__ import annotations

import datetime as dt
import os
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

from schedcheck.errors import InputError, SchedcheckError


@dataclass(frozen=True)
class SiteTask:
    """One site to audit: its file, its audit folder and the local dates (None: the data's)."""

    site_file: str
    slug: str
    outdir: str
    report: str                       # the report relative to the portfolio folder
    first: dt.date | None = None
    last: dt.date | None = None


@dataclass
class PortfolioResult:
    """The roll-up of a portfolio run, in the order the sites were given."""

    outdir: Path
    sites: list[dict]
    files: dict[str, Path] = field(default_factory=dict)

    @property
    def failed(self) -> list[dict]:
        return [s for s in self.sites if s["status"] != "ok"]


def _one_line(text: str) -> str:
    return " ".join(str(text).split())


def audit_for_portfolio(task: SiteTask) -> dict:
    """Audit one site into its folder and return its roll-up (or its failure) as plain data.

    Runs in a worker process or on a cluster worker; never raises for bad input.
    """
    from schedcheck.jobs.audit import audit_site
    from schedcheck.outputs.portfolio_records import failed_rollup, site_rollup

    try:
        result = audit_site(task.site_file, task.first, task.last, out=task.outdir)
        return site_rollup(result, task.slug, task.report)
    except SchedcheckError as e:
        return failed_rollup(task.slug, task.site_file, f"error: {_one_line(e)}")
    except Exception as e:  # noqa: BLE001 - one broken site must not stop the portfolio
        return failed_rollup(task.slug, task.site_file,
                             f"internal error: {type(e).__name__}: {_one_line(e)}")


def plan_tasks(site_files: list[str | Path], out: Path, first: dt.date | None,
               last: dt.date | None) -> list[SiteTask]:
    """One task per site file, each with its own folder ``out/sites/<slug>``.

    The slug comes from the site's name (from the file name where the file cannot be read);
    a second site of the same name gets ``-2``, and so on.
    """
    from schedcheck.jobs.common import open_site
    from schedcheck.outputs.portfolio_records import site_slug

    tasks, taken = [], set()
    for f in site_files:
        try:
            base = site_slug(open_site(f, require_readings=False).name)
        except SchedcheckError:
            base = site_slug(Path(f).stem)     # the worker reports the error itself
        slug, n = base, 1
        while slug in taken:
            n += 1
            slug = f"{base}-{n}"
        taken.add(slug)
        folder = out / "sites" / slug
        tasks.append(SiteTask(str(f), slug, str(folder), f"sites/{slug}/report.html",
                              first, last))
    return tasks


def run_tasks(tasks: list[SiteTask], jobs: int, scheduler: str | None,
              on_done: Callable[[dict], None]) -> list[dict]:
    """Run the tasks and return their roll-ups in task order."""
    done: dict[int, dict] = {}
    if scheduler:
        from schedcheck.jobs.portfolio_cluster import run_on_cluster

        for i, rec in run_on_cluster(audit_for_portfolio, tasks, scheduler):
            done[i] = rec
            on_done(rec)
    elif jobs <= 1 or len(tasks) <= 1:
        for i, t in enumerate(tasks):
            done[i] = audit_for_portfolio(t)
            on_done(done[i])
    else:
        from concurrent.futures import ProcessPoolExecutor, as_completed

        with ProcessPoolExecutor(max_workers=min(jobs, len(tasks))) as pool:
            futures = {pool.submit(audit_for_portfolio, t): i for i, t in enumerate(tasks)}
            for fut in as_completed(futures):
                done[futures[fut]] = fut.result()
                on_done(done[futures[fut]])
    return [done[i] for i in range(len(tasks))]


def run_portfolio(
    site_files: list[str | Path],
    out: str | Path = "portfolio",
    first: dt.date | None = None,
    last: dt.date | None = None,
    jobs: int | None = None,
    scheduler: str | None = None,
    history: str | Path | None = None,
    on_done: Callable[[dict], None] | None = None,
) -> PortfolioResult:
    """Audit every site and write the roll-up (portfolio.csv, .json, .html) into ``out``.

    Parameters
    ----------
    site_files : list of str or Path
        The site files (TOML).
    out : str or Path
        The portfolio folder; each site's audit goes to ``out/sites/<slug>/``.
    first, last : date, optional
        Local dates to audit, both inclusive, for every site; default each site's data range.
    jobs : int, optional
        Local worker processes; default the number of cores.
    scheduler : str, optional
        Address of a Dask distributed scheduler to run the sites on instead.
    history : str or Path, optional
        SQLite file the monthly figures and findings are written to and the 12-month view read
        from (:mod:`schedcheck.outputs.history`).
    on_done : callable, optional
        Called with each site's roll-up dict as soon as it finishes (for a progress bar).
    """
    from schedcheck.outputs.portfolio_files import write_portfolio_files

    if not site_files:
        raise InputError("give at least one site file", key="SITE")
    out = Path(out)
    if out.exists() and not out.is_dir():
        raise InputError("exists and is not a folder; give another --out", path=out)
    jobs = jobs if jobs is not None else (os.cpu_count() or 1)
    if jobs < 1:
        raise InputError(f"must be 1 or more, not {jobs}", key="--jobs")
    tasks = plan_tasks(site_files, out, first, last)
    sites = run_tasks(tasks, jobs, scheduler, on_done or (lambda _r: None))
    months = None
    if history is not None:
        from schedcheck.outputs.history import read_months, write_history

        write_history(history, sites)
        months = read_months(history, [s["site"] for s in sites if s["status"] == "ok"])
    try:
        files = write_portfolio_files(sites, out, months)
    except OSError as e:
        raise InputError(f"cannot write the portfolio files here ({e.strerror or e})",
                         path=out) from None
    return PortfolioResult(outdir=out, sites=sites, files=files)
