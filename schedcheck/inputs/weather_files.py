"""Reading outdoor temperature files: a CSV (timestamp, temperature) or an EnergyPlus weather
file (.epw). Returns the core's :class:`schedcheck.audit.outdoor_air.OutdoorTemperature`.

CSV: a header row; columns ``timestamp`` and ``temperature`` [degC] by default (renamed with
``[weather] columns``); timestamps as for readings (ISO 8601 with an offset, epoch seconds, or
wall times read as ``naive_time`` says; :func:`schedcheck.readings.timestamps.parse_timestamps`).
An empty temperature is a missing reading (a gap, counted); anything else that is not a number,
or a temperature outside :data:`~schedcheck.audit.outdoor_air.TEMPERATURE_RANGE`, is an error
with its line.

EPW (EnergyPlus weather file; "Auxiliary Programs" manual of EnergyPlus, "Weather Converter
Program", section on the EPW data format): eight header lines, the first
``LOCATION,city,state,country,source,WMO,latitude,longitude,time zone,elevation`` with the time
zone as hours from UTC; then one record per hour, ``year,month,day,hour,minute,flags,dry bulb
[degC],...``. Hour 1..24 is the hour *ending* at that time, in local standard time (no daylight
saving). The dry bulb is the value at the end of that hour, so a record's instant is
``date + hour`` local standard time, ``- time zone`` in UTC. (pvlib.iotools.read_epw reads the
same dates, zone and values but labels each record at the start of its hour, one hour earlier;
tests/inputs/test_weather_files.py checks both against each other.) A dry bulb
of 99.9 is the format's missing-value code. A typical-year file (TMY, IWEC: months taken from
different years) is laid on the audit's years with ``[weather] typical_year = true``.
"""

from __future__ import annotations

import io
from pathlib import Path

import numpy as np
import pandas as pd

from schedcheck.audit.outdoor_air import TEMPERATURE_RANGE, OutdoorTemperature
from schedcheck.errors import InputError, InputProblems
from schedcheck.readings.timestamps import OK, describe_time, parse_timestamps
from schedcheck.site import WeatherSettings

#: EPW: the dry-bulb field's missing-value code [degC] (EnergyPlus Auxiliary Programs, EPW
#: data dictionary: "missing value = 99.9").
EPW_MISSING = 99.9
EPW_HEADER_LINES = 8
EPW_DRY_BULB = 6              # 0-based field of the dry-bulb temperature
MAX_PROBLEMS = 20             # problems listed from one file before the rest are counted


def read_weather(settings: WeatherSettings, tz: str, years: tuple[int, ...] = ()
                 ) -> OutdoorTemperature:
    """Read the site's weather file.

    Parameters
    ----------
    settings : WeatherSettings
        The ``[weather]`` table (file resolved).
    tz : str
        The site's IANA time zone, for CSV wall times with ``naive_time = "local"``.
    years : tuple of int
        The audit window's years, for a typical-year .epw.

    Raises
    ------
    InputProblems
        One :class:`InputError` per bad row (``FILE:LINE: what``), or for an unreadable file.
    """
    path = Path(settings.file)
    try:
        text = path.read_bytes().decode("utf-8-sig", errors="replace")
    except OSError as e:
        raise InputProblems([InputError(f"cannot read the weather file ({e.strerror or e})",
                                        path=path)]) from None
    if path.suffix.lower() == ".epw":
        return parse_epw(text, path, years=years if settings.typical_year else ())
    return parse_weather_csv(text, path, tz, settings.naive_time, settings.columns)


def parse_weather_csv(text: str, path: Path, tz: str, naive_time: str | None = None,
                      columns: dict[str, str] | None = None) -> OutdoorTemperature:
    """A weather CSV's text to temperatures (see the module docstring)."""
    names = {"timestamp": "timestamp", "temperature": "temperature", **(columns or {})}
    try:
        frame = pd.read_csv(io.StringIO(text), dtype=str, keep_default_na=False,
                            skip_blank_lines=False)
    except (pd.errors.ParserError, pd.errors.EmptyDataError) as e:
        msg = " ".join(str(e).split()) or "no rows"
        raise InputProblems([InputError(f"not a readable CSV ({msg})", path=path)]) from None
    missing = [f"{theirs!r} ({ours})" for ours, theirs in names.items()
               if theirs not in frame.columns]
    if missing:
        raise InputProblems([InputError(
            f"no column {', '.join(missing)}; columns found: {', '.join(frame.columns)[:200]}; "
            "name them with [weather] columns", path=path, line=1)])
    raw_t = frame[names["timestamp"]]
    raw_v = frame[names["temperature"]].str.strip()
    blank = (raw_t.str.strip() == "") & (raw_v == "")
    raw_t, raw_v = raw_t[~blank], raw_v[~blank]
    lines = raw_t.index.to_numpy() + 2           # header is line 1
    parsed = parse_timestamps(raw_t.reset_index(drop=True), naive_time=naive_time, tz=tz)
    values = pd.to_numeric(raw_v.str.replace(",", ".", regex=False), errors="coerce").to_numpy()
    empty = (raw_v == "").to_numpy()
    problems = []
    for i in np.flatnonzero(parsed.status != OK):
        problems.append(InputError(describe_time(raw_t.iloc[i], int(parsed.status[i]), tz)
                                   + ("; set [weather] naive_time to \"local\" or \"utc\""
                                      if naive_time is None and "offset" in
                                      describe_time(raw_t.iloc[i], int(parsed.status[i]), tz)
                                      else ""), path=path, line=int(lines[i])))
    for i in np.flatnonzero(np.isnan(values) & ~empty):
        problems.append(InputError(f"temperature {raw_v.iloc[i]!r} is not a number [degC]",
                                   path=path, line=int(lines[i])))
    problems += _absurd(values, lines, path)
    _raise(problems)
    keep = ~empty
    return _series(parsed.utc[keep], values[keep], lines[keep], path)


def parse_epw(text: str, path: Path, years: tuple[int, ...] = ()) -> OutdoorTemperature:
    """An EnergyPlus weather file's text to dry-bulb temperatures (module docstring).

    ``years``: lay a typical year on these years (each record's year replaced; 29 February,
    which typical years lack, is then a gap).
    """
    rows = text.splitlines()
    head = rows[0].split(",") if rows else []
    if not head or head[0].strip().upper() != "LOCATION":
        raise InputProblems([InputError("not an EnergyPlus weather file: the first line must "
                                        "start with LOCATION", path=path, line=1)])
    try:
        offset_h = float(head[8])
        if not -12.0 <= offset_h <= 14.0:
            raise ValueError
    except (IndexError, ValueError):
        raise InputProblems([InputError("LOCATION line: the ninth field must be the time zone "
                                        "in hours from UTC (such as 1.0)", path=path,
                                        line=1)]) from None
    problems, when, temps, lines = [], [], [], []
    for n, row in enumerate(rows[EPW_HEADER_LINES:], EPW_HEADER_LINES + 1):
        if not row.strip():
            continue
        f = row.split(",")
        try:
            y, mo, d, h = (int(f[k]) for k in range(4))
            t = float(f[EPW_DRY_BULB])
            if not 1 <= h <= 24:
                raise ValueError
            day = pd.Timestamp(year=y, month=mo, day=d)
        except (IndexError, ValueError):
            problems.append(InputError("not an EPW data record (year, month, day, hour 1-24, "
                                       "minute, flags, dry bulb [degC], ...)", path=path,
                                       line=n))
            continue
        if t == EPW_MISSING:
            continue
        when.append((day, h))
        temps.append(t)
        lines.append(n)
    _raise(problems)
    values, line_no = np.asarray(temps, dtype=float), np.asarray(lines, dtype=np.int64)
    _raise(_absurd(values, line_no, path))
    if not when:
        raise InputProblems([InputError("no dry-bulb temperatures in the file", path=path)])
    days = pd.DatetimeIndex([w[0] for w in when])
    hours = np.array([w[1] for w in when], dtype=np.int64)
    shift = hours * 3_600 * 10**9 - int(offset_h * 3_600 * 10**9)
    if years:
        stamps, vals, lns = [], [], []
        md = days.strftime("%m-%d")
        for year in years:
            ok = np.asarray([not (m == "02-29" and not _leap(year)) for m in md])
            moved = pd.to_datetime([f"{year}-{m}" for m in md[ok]])
            stamps.append(moved.as_unit("ns").asi8 + shift[ok])
            vals.append(values[ok])
            lns.append(line_no[ok])
        ns, values, line_no = np.concatenate(stamps), np.concatenate(vals), np.concatenate(lns)
    else:
        ns = days.as_unit("ns").asi8 + shift
    return _series(ns, values, line_no, path)


def _leap(year: int) -> bool:
    return year % 4 == 0 and (year % 100 != 0 or year % 400 == 0)


def _absurd(values: np.ndarray, lines: np.ndarray, path: Path) -> list[InputError]:
    lo, hi = TEMPERATURE_RANGE
    bad = np.flatnonzero((values < lo) | (values > hi))
    return [InputError(f"temperature {values[i]:g} degC is outside {lo:g} .. {hi:g} degC (a "
                       "unit in kelvin or fahrenheit, or a missing-value code?)", path=path,
                       line=int(lines[i])) for i in bad]


def _raise(problems: list[InputError]) -> None:
    if not problems:
        return
    more = len(problems) - MAX_PROBLEMS
    shown = problems[:MAX_PROBLEMS]
    if more > 0:
        shown.append(InputError(f"... and {more} more bad rows", path=problems[0].path))
    raise InputProblems(shown)


def _series(ns: np.ndarray, values: np.ndarray, lines: np.ndarray, path: Path
            ) -> OutdoorTemperature:
    """Sorted by instant; the same instant twice with different temperatures is an error."""
    order = np.argsort(ns, kind="stable")
    ns, values, lines = ns[order], values[order], lines[order]
    same = np.flatnonzero(np.diff(ns) == 0)
    clash = same[values[same] != values[same + 1]]
    if len(clash):
        i = clash[0]
        raise InputProblems([InputError(
            f"the instant {pd.Timestamp(ns[i], tz='UTC').isoformat()} has two temperatures "
            f"({values[i]:g} and {values[i + 1]:g} degC; the other on line {lines[i]})",
            path=path, line=int(lines[i + 1]))])
    keep = np.concatenate([[True], np.diff(ns) != 0]) if len(ns) else np.zeros(0, bool)
    return OutdoorTemperature(ns[keep], values[keep], source=str(path))
