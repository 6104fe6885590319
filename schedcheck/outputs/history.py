"""The portfolio's history: an SQLite database of monthly figures and findings per site.

Both the writer and the reader of the database live here, against the rule that reading sits
in :mod:`schedcheck.inputs`, because the schema is one fact: the tables, their columns and
the queries on them change together, and the reader reads only what this writer wrote (in the
same run, to draw the roll-up's 12-month view). Schema (version :data:`SCHEMA_VERSION`,
documented in docs/portfolio.md):

- ``schema_version(version)``: one row.
- ``runs(run_id, run_at, tool_version)``: one row per portfolio run [run_at UTC ISO 8601].
- ``months(site, month, component, unit, role, days, period_h, scheduled_h, running_h,
  in_schedule_h, in_allowance_h, off_schedule_h, missed_h, no_data_h, off_schedule_kwh,
  off_schedule_cost, run_id)``, key ``(site, month, component)``; ``month`` is the local
  ``YYYY-MM``.
- ``findings(site, month, component, kind, start, end, hours, kwh, run_id)``; ``start`` and
  ``end`` local ISO 8601 with offset; ``month`` that of ``start``.

Each run replaces, in one transaction, every row of each (site, month) it audited. Two runs at
once are serialised by SQLite's own file lock: a writer waits up to ``busy_timeout`` and then
stops with a one-line error naming the file.
"""

from __future__ import annotations

import datetime as dt
import sqlite3
from pathlib import Path

from schedcheck import __version__
from schedcheck.errors import InputError
from schedcheck.outputs.portfolio_records import ROLLUP_HOURS

SCHEMA_VERSION = 1
#: how long a run waits for another run's lock [s]: common practice, no source
BUSY_TIMEOUT_S = 30.0
#: months per unit in the roll-up's history view (the issue asks for a year)
HISTORY_MONTHS = 12

_FIGURES = tuple(f"{k}_h" for k in ROLLUP_HOURS) + ("off_schedule_kwh", "off_schedule_cost")
_SCHEMA = f"""
CREATE TABLE IF NOT EXISTS schema_version (version INTEGER NOT NULL);
CREATE TABLE IF NOT EXISTS runs (run_id INTEGER PRIMARY KEY, run_at TEXT NOT NULL,
    tool_version TEXT NOT NULL);
CREATE TABLE IF NOT EXISTS months (site TEXT NOT NULL, month TEXT NOT NULL,
    component TEXT NOT NULL, unit TEXT NOT NULL, role TEXT NOT NULL, days INTEGER NOT NULL,
    {", ".join(f"{c} REAL NOT NULL" for c in _FIGURES)},
    run_id INTEGER NOT NULL REFERENCES runs(run_id), PRIMARY KEY (site, month, component));
CREATE TABLE IF NOT EXISTS findings (site TEXT NOT NULL, month TEXT NOT NULL,
    component TEXT NOT NULL, kind TEXT NOT NULL, start TEXT NOT NULL, "end" TEXT NOT NULL,
    hours REAL NOT NULL, kwh REAL NOT NULL, run_id INTEGER NOT NULL REFERENCES runs(run_id));
CREATE INDEX IF NOT EXISTS findings_site_month ON findings (site, month);
"""


def _connect(path: Path, busy_timeout: float) -> sqlite3.Connection:
    try:
        con = sqlite3.connect(path, timeout=busy_timeout, isolation_level=None)
        con.execute("BEGIN IMMEDIATE")      # take the write lock now, or wait for it
    except sqlite3.OperationalError as e:
        raise InputError(f"cannot open the history database ({e}); another run may hold it",
                         path=path) from None
    except sqlite3.DatabaseError as e:
        raise InputError(f"is not a history database ({e})", path=path) from None
    return con


def _check_schema(con: sqlite3.Connection, path: Path) -> None:
    try:
        for stmt in _SCHEMA.split(";"):
            if stmt.strip():
                con.execute(stmt)
        rows = con.execute("SELECT version FROM schema_version").fetchall()
    except sqlite3.DatabaseError as e:
        raise InputError(f"is not a history database ({e})", path=path) from None
    if not rows:
        con.execute("INSERT INTO schema_version VALUES (?)", (SCHEMA_VERSION,))
    elif rows[0][0] != SCHEMA_VERSION:
        raise InputError(f"history schema version {rows[0][0]}; this schedcheck writes "
                         f"version {SCHEMA_VERSION}", path=path)


def write_history(path: str | Path, sites: list[dict], *,
                  busy_timeout: float = BUSY_TIMEOUT_S) -> int:
    """Write the audited sites' months and findings; returns the run id.

    Every (site, month) a site's audit covered is replaced, all in one transaction; failed
    sites are not written.
    """
    path = Path(path)
    con = _connect(path, busy_timeout)
    try:
        _check_schema(con, path)
        run_at = dt.datetime.now(dt.UTC).replace(microsecond=0).isoformat()
        run_id = con.execute("INSERT INTO runs (run_at, tool_version) VALUES (?, ?)",
                             (run_at, __version__)).lastrowid
        for s in sites:
            if s["status"] != "ok":
                continue
            units = {c["component"]: (c["unit"], c["role"]) for c in s["components"]}
            for month in sorted({m["month"] for m in s["months"]}):
                con.execute("DELETE FROM months WHERE site = ? AND month = ?", (s["site"], month))
                con.execute("DELETE FROM findings WHERE site = ? AND month = ?",
                            (s["site"], month))
            con.executemany(
                f"INSERT INTO months VALUES (?, ?, ?, ?, ?, ?, {', '.join('?' * len(_FIGURES))},"
                " ?)",
                [(s["site"], m["month"], m["component"], *units[m["component"]], m["days"],
                  *(m[c] for c in _FIGURES), run_id) for m in s["months"]])
            con.executemany(
                "INSERT INTO findings VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
                [(s["site"], f["month"], f["component"], f["kind"], f["start"], f["end"],
                  f["hours"], f["kwh"], run_id) for f in s["findings"]])
        con.execute("COMMIT")
    except sqlite3.OperationalError as e:
        if con.in_transaction:
            con.execute("ROLLBACK")
        raise InputError(f"cannot write the history database ({e})", path=path) from None
    except BaseException:
        if con.in_transaction:
            con.execute("ROLLBACK")
        raise
    finally:
        con.close()
    return run_id


def _previous(month: str) -> str:
    y, m = int(month[:4]), int(month[5:7])
    return f"{y - 1}-12" if m == 1 else f"{y}-{m - 1:02d}"


def finding_marks(kinds_by_month: dict[str, set[tuple[str, str]]], month: str) -> list[dict]:
    """The findings of ``month`` marked against the calendar month before it.

    ``new``: a (component, kind) not found the month before (or that month was not audited);
    ``recurring``: found in both; ``resolved``: found the month before and not in ``month``
    (only when ``month`` was audited).
    """
    now = kinds_by_month.get(month, set())
    before = kinds_by_month.get(_previous(month), set())
    marks = [{"component": c, "kind": k, "mark": "recurring" if (c, k) in before else "new"}
             for c, k in sorted(now)]
    marks += [{"component": c, "kind": k, "mark": "resolved"} for c, k in sorted(before - now)]
    return marks


def read_months(path: str | Path, sites: list[str], *,
                busy_timeout: float = BUSY_TIMEOUT_S) -> dict[str, dict]:
    """The last :data:`HISTORY_MONTHS` audited months of every unit of ``sites``.

    Returns ``"site/unit" -> {"site", "unit", "months": [{"month", "off_schedule_h",
    "off_schedule_kwh", "off_schedule_cost", "marks": [...]}, ...]}``, newest month first.
    """
    path = Path(path)
    try:
        con = sqlite3.connect(f"{path.resolve().as_uri()}?mode=ro", uri=True, timeout=busy_timeout)
    except sqlite3.OperationalError as e:
        raise InputError(f"cannot read the history database ({e})", path=path) from None
    out: dict[str, dict] = {}
    try:
        for site in sites:
            rows = con.execute(
                "SELECT unit, month, SUM(off_schedule_h), SUM(off_schedule_kwh), "
                "SUM(off_schedule_cost) FROM months WHERE site = ? GROUP BY unit, month "
                "ORDER BY unit, month DESC", (site,)).fetchall()
            comps = dict(con.execute("SELECT DISTINCT component, unit FROM months "
                                     "WHERE site = ?", (site,)).fetchall())
            kinds: dict[str, dict[str, set]] = {}
            for comp, kind, month in con.execute(
                    "SELECT DISTINCT component, kind, month FROM findings WHERE site = ?",
                    (site,)):
                kinds.setdefault(comps.get(comp, ""), {}).setdefault(month, set()).add(
                    (comp, kind))
            audited = {(u, m) for u, m, *_ in rows}
            for unit, month, h, kwh, cost in rows:
                entry = out.setdefault(f"{site}/{unit}", {"site": site, "unit": unit,
                                                          "months": []})
                if len(entry["months"]) >= HISTORY_MONTHS:
                    continue
                by_month = {m: s for m, s in kinds.get(unit, {}).items()
                            if (unit, m) in audited}
                entry["months"].append({"month": month, "off_schedule_h": round(h, 3),
                                        "off_schedule_kwh": round(kwh, 3),
                                        "off_schedule_cost": round(cost, 2),
                                        "marks": finding_marks(by_month, month)})
    except sqlite3.DatabaseError as e:
        raise InputError(f"cannot read the history database ({e})", path=path) from None
    finally:
        con.close()
    return out
