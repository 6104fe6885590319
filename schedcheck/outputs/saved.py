"""Read an audit output folder back (summary.json and the CSV files) for re-rendering the report.

The report is drawn from these saved files alone, so ``schedcheck report OUTDIR`` can redraw it
without the readings. Every problem raises :class:`~schedcheck.errors.InputError` naming the
file, and the line and column where there is one.

Instants in the CSV files are local ISO 8601 with an offset; they are read back as tz-aware UTC
(``datetime64[ns, UTC]``), which is exact across daylight-saving changes because every value
carries its own offset.
"""

from __future__ import annotations

import datetime as dt
import json
import math
import zoneinfo
from dataclasses import dataclass
from pathlib import Path

import pandas as pd

from schedcheck.errors import InputError
from schedcheck.outputs.cells import uncell_frame
from schedcheck.outputs.episode_records import check_episodes
from schedcheck.outputs.levels_file import LEVELS_FILE, read_levels
from schedcheck.outputs.schema import SUMMARY_SCHEMA as SCHEMA
from schedcheck.runstate.states import STATES
from schedcheck.schedule.kinds import SCHEDULE_KINDS

# file name -> (required columns, instant columns, numeric columns, instants may be blank)
_CSV_SPECS: dict[str, tuple[tuple[str, ...], tuple[str, ...], tuple[str, ...], bool]] = {
    "daily.csv": (
        ("component", "date", "period_h", "scheduled_h", "running_h", "in_schedule_h",
         "in_allowance_h", "off_schedule_h", "missed_h", "no_data_h"),
        ("first_start", "last_stop"),
        ("period_h", "scheduled_h", "running_h", "in_schedule_h", "in_allowance_h",
         "off_schedule_h", "missed_h", "off_h", "no_data_h", "starts", "off_schedule_kwh"),
        True,
    ),
    "runs.csv": (
        ("component", "state", "start", "end"),
        ("start", "end"),
        ("hours", "level", "speed"),
        False,
    ),
    "findings.csv": (
        ("component", "kind", "start", "end", "hours", "kwh"),
        ("start", "end"),
        ("hours", "kwh", "cost", "co2_kg"),
        False,
    ),
    "schedule.csv": (
        ("unit", "kind", "start", "end"),
        ("start", "end"),
        (),
        False,
    ),
}


@dataclass(frozen=True)
class SavedAudit:
    """An audit output folder read back into memory.

    Attributes
    ----------
    outdir : Path
        The folder the files were read from.
    summary : dict
        ``summary.json`` as parsed (validated for the fields the report needs).
    daily : DataFrame
        ``daily.csv``; ``date`` as :class:`datetime.date`, hour columns float [h],
        ``first_start``/``last_stop`` UTC (NaT where blank).
    runs : DataFrame
        ``runs.csv``; ``start``/``end`` UTC, ``state`` one of run/off/no_data.
    findings : DataFrame
        ``findings.csv``; ``start``/``end`` UTC, ``hours`` [h], ``kwh`` [kWh], ``cost``,
        ``co2_kg`` [kg].
    schedule : DataFrame
        ``schedule.csv``; ``start``/``end`` UTC, ``kind`` one of occupied/allowance/allowed.
    levels : DataFrame or None
        ``levels.csv.gz`` (:mod:`schedcheck.outputs.levels_file`), None in a folder without.
    """

    outdir: Path
    summary: dict
    daily: pd.DataFrame
    runs: pd.DataFrame
    findings: pd.DataFrame
    schedule: pd.DataFrame
    levels: pd.DataFrame | None = None

    @property
    def timezone(self) -> str:
        """The site's IANA time zone."""
        return self.summary["site"]["timezone"]

    @property
    def first_date(self) -> dt.date:
        """First local date of the audit window."""
        return _period_date(self.summary, "first_date", "start", self.timezone, end=False)

    @property
    def last_date(self) -> dt.date:
        """Last local date of the audit window (inclusive)."""
        return _period_date(self.summary, "last_date", "end", self.timezone, end=True)


def _period_date(summary: dict, key: str, instant_key: str, tz: str, *, end: bool) -> dt.date:
    period = summary["period"]
    if period.get(key):
        return dt.date.fromisoformat(str(period[key]))
    ts = pd.Timestamp(period[instant_key]).tz_convert(tz)
    if end:
        ts = ts - pd.Timedelta(1, "ns")
    return ts.date()


def read_saved_audit(outdir: str | Path) -> SavedAudit:
    """Read an audit output folder.

    Parameters
    ----------
    outdir : str or Path
        Folder holding ``summary.json``, ``daily.csv``, ``runs.csv``, ``findings.csv`` and
        ``schedule.csv`` as written by ``schedcheck audit``.

    Returns
    -------
    SavedAudit

    Raises
    ------
    InputError
        A file is missing or malformed; the message names the file (and line and column).
    """
    outdir = Path(outdir)
    if not outdir.is_dir():
        raise InputError("is not a folder of audit outputs (run `schedcheck audit` first)",
                         path=outdir)
    summary = read_summary(outdir / "summary.json")
    frames = {name: read_csv_file(outdir / name) for name in _CSV_SPECS}
    return SavedAudit(outdir=outdir, summary=summary, daily=frames["daily.csv"],
                      runs=frames["runs.csv"], findings=frames["findings.csv"],
                      schedule=frames["schedule.csv"],
                      levels=read_levels(outdir / LEVELS_FILE))


def read_summary(path: Path) -> dict:
    """Read and check ``summary.json`` (the fields the report relies on)."""
    data = _load_json(path)
    _check_schema(data, path)
    _check_sections(data, path)
    _check_site(data["site"], path)
    _check_period(data["period"], path)
    _check_hours(data["components"], path)
    for i, comp in enumerate(data["components"]):
        _check_nested(comp, path, f"components[{i}]")
    _check_lists(data, path)
    _check_days_off(data.get("days_off") or [], path)
    return data


def _load_json(path: Path) -> dict:
    """The parsed file: present, UTF-8, valid JSON and one object."""
    if not path.is_file():
        raise InputError("missing; this folder holds no complete audit output", path=path)
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except UnicodeDecodeError:
        raise InputError("is not UTF-8 text", path=path) from None
    except json.JSONDecodeError as e:
        raise InputError(f"is not valid JSON ({e.msg}, column {e.colno})", path=path,
                         line=e.lineno) from None
    if not isinstance(data, dict):
        raise InputError("must hold a JSON object", path=path)
    return data


def _check_schema(data: dict, path: Path) -> None:
    """The layout number is this version's: another layout would be drawn wrong without a word."""
    if data.get("schema") != SCHEMA:
        raise InputError(f"{data.get('schema')!r} is not a layout this version reads ({SCHEMA}); "
                         "audit the site again with this version", path=path, key="schema")


def _check_sections(data: dict, path: Path) -> None:
    """``site`` and ``period`` are objects, ``components`` a list."""
    for key, kind in (("site", dict), ("period", dict), ("components", list)):
        if not isinstance(data.get(key), kind):
            raise InputError(f"missing or not a{'n object' if kind is dict else ' list'}",
                             path=path, key=key)


def _check_site(site: dict, path: Path) -> None:
    """The site's name and an IANA time zone."""
    for key in ("name", "timezone"):
        if not isinstance(site.get(key), str):
            raise InputError("missing or not text", path=path, key=f"site.{key}")
    try:
        zoneinfo.ZoneInfo(site["timezone"])
    except (zoneinfo.ZoneInfoNotFoundError, ValueError):
        raise InputError(f"{site['timezone']!r} is not an IANA time zone", path=path,
                         key="site.timezone") from None


def _check_period(period: dict, path: Path) -> None:
    """Start and end instants with an offset; first and last dates, where given, are dates."""
    for key in ("start", "end"):
        try:
            ts = pd.Timestamp(period.get(key))
            if ts is pd.NaT or ts.tzinfo is None:
                raise ValueError
        except (ValueError, TypeError):
            raise InputError("missing or not an ISO 8601 instant with an offset", path=path,
                             key=f"period.{key}") from None
    for key in ("first_date", "last_date"):
        value = period.get(key)
        if value is not None:
            try:
                dt.date.fromisoformat(str(value))
            except ValueError:
                raise InputError(f"{value!r} is not a date (YYYY-MM-DD)", path=path,
                                 key=f"period.{key}") from None


def _check_hours(components: list, path: Path) -> None:
    """Every component has an id, and its hour figures are numbers."""
    for i, comp in enumerate(components):
        if not isinstance(comp, dict) or not isinstance(comp.get("id"), str):
            raise InputError("each component needs an id", path=path, key=f"components[{i}].id")
        if not isinstance(comp.get("hours", {}), dict):
            raise InputError("must be an object", path=path, key=f"components[{i}].hours")
        for hkey, value in comp.get("hours", {}).items():
            if hkey == "by_speed":   # a list of {"speed": ..., "hours": ...}
                ok = isinstance(value, list) and all(
                    isinstance(r, dict) and _is_number(r.get("speed"))
                    and _is_number(r.get("hours")) for r in value)
                if not ok:
                    raise InputError("must be a list of {speed, hours} numbers", path=path,
                                     key=f"components[{i}].hours.by_speed")
                continue
            if not _is_number(value):
                raise InputError(f"{value!r} is not a number", path=path,
                                 key=f"components[{i}].hours.{hkey}")


def _check_lists(data: dict, path: Path) -> None:
    """The optional lists are lists, and those of records hold objects."""
    for key in ("findings", "sensors", "days_off", "units", "warnings"):
        if key in data and not isinstance(data[key], list):
            raise InputError("must be a list", path=path, key=key)
    for key in ("findings", "sensors", "days_off", "units"):
        for i, row in enumerate(data.get(key) or []):
            if not isinstance(row, dict):
                raise InputError("must be an object", path=path, key=f"{key}[{i}]")


def _check_days_off(days_off: list, path: Path) -> None:
    """Each day off has a date."""
    for i, row in enumerate(days_off):
        try:
            dt.date.fromisoformat(str(row.get("date")))
        except ValueError:
            raise InputError(f"{row.get('date')!r} is not a date (YYYY-MM-DD)", path=path,
                             key=f"days_off[{i}].date") from None


def _check_nested(comp: dict, path: Path, where: str) -> None:
    """The objects inside one component that the report reads: right types or absent."""
    for key in ("energy", "threshold"):
        value = comp.get(key)
        if value is not None and not isinstance(value, dict):
            raise InputError("must be an object", path=path, key=f"{where}.{key}")
    for ekey, value in (comp.get("energy") or {}).items():
        if value is not None and not _is_number(value):
            raise InputError(f"{value!r} is not a number", path=path,
                             key=f"{where}.energy.{ekey}")
    check_episodes(comp, path, where)
    th = comp.get("threshold") or {}
    _check_levels(th, path, f"{where}.threshold")
    if th.get("histogram") is not None:
        _check_histogram(th["histogram"], path, f"{where}.threshold.histogram")


def _check_levels(th: dict, path: Path, where: str) -> None:
    """The threshold's figures are numbers, and its levels reading levels."""
    for tkey in ("level", "on_level", "off_level", "floor", "separation", "effectiveness"):
        if th.get(tkey) is not None and not _is_number(th[tkey]):
            raise InputError(f"{th[tkey]!r} is not a number", path=path, key=f"{where}.{tkey}")
    for tkey in ("level", "on_level", "off_level", "floor"):
        if th.get(tkey) is not None and not 0 <= th[tkey] <= 1e100:
            raise InputError(f"{th[tkey]!r} is not a reading level (0 to 1e100)", path=path,
                             key=f"{where}.{tkey}")


def _check_histogram(hist, path: Path, where: str) -> None:
    """An object of log10 edges and counts, one more edge than counts."""
    if not isinstance(hist, dict):
        raise InputError("must be an object", path=path, key=where)
    for hkey in ("edges", "counts"):
        values = hist.get(hkey)
        if values is not None and not (isinstance(values, list)
                                       and all(_is_number(v) for v in values)):
            raise InputError("must be a list of numbers", path=path, key=f"{where}.{hkey}")
    edges, counts = hist.get("edges") or [], hist.get("counts") or []
    if any(e is not None and abs(e) > 100 for e in edges):
        # log10 of a level: beyond +-100 is no reading, and 10**e overflows when drawn
        raise InputError("edges are log10 levels; one is beyond -100..100", path=path,
                         key=f"{where}.edges")
    if edges and counts and len(edges) != len(counts) + 1:
        raise InputError(f"has {len(edges)} edges for {len(counts)} counts (one more edge than "
                         "counts expected)", path=path, key=where)


def _is_number(value: object) -> bool:
    return (isinstance(value, (int, float)) and not isinstance(value, bool)
            and math.isfinite(value)) or value is None


def read_csv_file(path: Path) -> pd.DataFrame:
    """Read one of the audit's CSV files and check its columns and values.

    Instant columns become ``datetime64[ns, UTC]``; numeric columns float64; ``date`` columns
    :class:`datetime.date`. Raises :class:`InputError` naming file, line and column.
    """
    required, instants, numbers, blank_ok = _CSV_SPECS[path.name]
    df = _load_csv(path)
    missing = [c for c in required if c not in df.columns]
    if missing:
        raise InputError(f"header lacks column(s) {', '.join(missing)}", path=path, line=1)
    for col in instants:
        if col in df.columns:
            df[col] = _parse_instants(df[col], path, col, blank_ok=blank_ok)
    for col in numbers:
        if col in df.columns:
            df[col] = _parse_numbers(df[col], path, col)
    if "date" in df.columns:
        df["date"] = _parse_dates(df["date"], path)
    if "state" in df.columns:
        _check_choice(df["state"], STATES, path, "state")
    if path.name == "schedule.csv":
        _check_choice(df["kind"], SCHEDULE_KINDS, path, "kind")
    if len(instants) == 2 and not blank_ok:
        bad = (df["end"] < df["start"]).to_numpy()
        if bad.any():
            raise InputError("end is before start", path=path, line=int(bad.argmax()) + 2,
                             key="end")
    return df


def _load_csv(path: Path) -> pd.DataFrame:
    """The file as text columns: present, UTF-8, valid CSV with a header line."""
    if not path.is_file():
        raise InputError("missing; this folder holds no complete audit output", path=path)
    try:
        # utf-8-sig also reads a file written with --excel (a byte-order mark first)
        return uncell_frame(pd.read_csv(path, dtype=str, keep_default_na=False,
                                        encoding="utf-8-sig"))
    except UnicodeDecodeError:
        raise InputError("is not UTF-8 text", path=path) from None
    except pd.errors.EmptyDataError:
        raise InputError("is empty; expected a header line", path=path, line=1) from None
    except pd.errors.ParserError as e:
        raise InputError(f"is not valid CSV ({' '.join(str(e).split())})", path=path) from None


def _parse_instants(col: pd.Series, path: Path, name: str, *, blank_ok: bool) -> pd.Series:
    text = col.str.strip()
    blank = text == ""
    parsed = pd.to_datetime(text.where(~blank, None), utc=True, format="ISO8601",
                            errors="coerce")
    bad = parsed.isna() & ~(blank if blank_ok else False)
    if bad.any():
        i = int(bad.to_numpy().argmax())
        raise InputError(f"{col.iloc[i]!r} is not an ISO 8601 instant with an offset",
                         path=path, line=i + 2, key=name)
    has_offset = text[~blank].str.contains(r"(?:Z|[+-]\d\d:?\d\d)$", regex=True)
    if not has_offset.all():
        i = int(has_offset.index[(~has_offset).to_numpy().argmax()])
        raise InputError(f"{col.iloc[i]!r} has no UTC offset", path=path, line=i + 2, key=name)
    lo, hi = pd.Timestamp("1900-01-01", tz="UTC"), pd.Timestamp("2200-01-01", tz="UTC")
    far = parsed.notna() & ((parsed < lo) | (parsed > hi))
    if far.any():   # a damaged year (1026, 9026) would overflow the nanosecond clock
        i = int(far.to_numpy().argmax())
        raise InputError(f"{col.iloc[i]!r} is not between 1900 and 2200", path=path,
                         line=i + 2, key=name)
    return parsed.dt.as_unit("ns")


def _parse_numbers(col: pd.Series, path: Path, name: str) -> pd.Series:
    text = col.str.strip()
    parsed = pd.to_numeric(text.where(text != "", None), errors="coerce").astype("float64")
    bad = parsed.isna() & (text != "")
    bad |= ~parsed.isna() & ~pd.Series(parsed.abs() < float("inf"), index=parsed.index)
    if bad.any():
        i = int(bad.to_numpy().argmax())
        raise InputError(f"{col.iloc[i]!r} is not a number", path=path, line=i + 2, key=name)
    return parsed


def _parse_dates(col: pd.Series, path: Path) -> pd.Series:
    out = []
    for i, value in enumerate(col):
        try:
            out.append(dt.date.fromisoformat(value.strip()))
        except ValueError:
            raise InputError(f"{value!r} is not a date (YYYY-MM-DD)", path=path, line=i + 2,
                             key="date") from None
    return pd.Series(out, index=col.index, dtype=object)


def _check_choice(col: pd.Series, allowed: tuple[str, ...], path: Path, name: str) -> None:
    bad = ~col.isin(allowed)
    if bad.any():
        i = int(bad.to_numpy().argmax())
        raise InputError(f"{col.iloc[i]!r} is not one of {', '.join(allowed)}", path=path,
                         line=i + 2, key=name)
