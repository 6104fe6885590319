"""Reading iCalendar (.ics) files, with errors that name the file (and line where known).

:func:`read_calendar` parses one file; :func:`check_calendar_file` runs every guard rail of
:mod:`schedcheck.schedule.calendars` on it, plus a trial expansion over one year, and returns the
problems instead of raising (``schedcheck check`` reports them all).
"""

from __future__ import annotations

import datetime as dt
import re
from pathlib import Path

import icalendar

from schedcheck.errors import InputError, InputProblems
from schedcheck.inputs.file_limits import (
    MAX_CALENDAR_BYTES,
    MAX_EVENTS_PER_FILE,
    MAX_TZID_CHARS,
    dense_zone_rule_line,
    long_tzid_line,
    read_regular,
    too_many_events_line,
)
from schedcheck.schedule.calendars import expand_calendar
from schedcheck.schedule.guards import check_calendar

_UID_LINE = re.compile(r"^UID[;:](?:.*:)?(.*)$", re.IGNORECASE)


def _forget_custom_zones(text: str) -> None:
    """Let this file's VTIMEZONE blocks define their TZIDs, whatever files came before.

    The icalendar library keeps the first VTIMEZONE it parses for a TZID that is not a known
    zone, for the whole process, and reads every later file's times with it. Two files that
    define one name differently (exports of different ages) would then share the first one's
    daylight-saving rules. Times are bound to their zone while parsing, so dropping the kept
    definitions of the names this file defines, just before it is parsed, gives each file its
    own.
    """
    from icalendar.timezone import tzp

    cache = getattr(tzp, "_TZP__tz_cache", None)   # private; absent in other releases
    if not isinstance(cache, dict):
        return
    clean = getattr(tzp, "clean_timezone_id", lambda x: x)
    in_block = False
    for line in text.splitlines():
        up = line.strip().upper()
        if up == "BEGIN:VTIMEZONE":
            in_block = True
        elif up == "END:VTIMEZONE":
            in_block = False
        elif in_block and up.startswith("TZID:"):
            name = line.strip()[5:]
            cache.pop(name, None)
            cache.pop(clean(name), None)


def read_calendar(path: str | Path, *, max_events: int = MAX_EVENTS_PER_FILE
                  ) -> icalendar.Calendar:
    """Parse an iCalendar file (RFC 5545).

    Several VCALENDAR objects in one file are merged into one calendar. A file of more than
    ``max_events`` events is refused before it is parsed (memory grows with the events).

    Raises
    ------
    InputError
        When the file is missing, unreadable, not UTF-8 or not an iCalendar file.
    """
    path = Path(path)
    try:
        data = read_regular(path, MAX_CALENDAR_BYTES, "calendar file")
    except FileNotFoundError:
        raise InputError("calendar file not found", path=path) from None
    except OSError as exc:
        msg = f"cannot read the calendar file: {exc.strerror or exc}"
        raise InputError(msg, path=path) from None
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        raise InputError("is not UTF-8 text (RFC 5545 calendars are UTF-8)", path=path,
                         line=line) from None
    if "BEGIN:VCALENDAR" not in text.upper():
        raise InputError("is not an iCalendar file (no BEGIN:VCALENDAR)", path=path)
    tzid_line = long_tzid_line(text)
    if tzid_line is not None:
        raise InputError(f"a TZID is longer than {MAX_TZID_CHARS} characters; time zone ids are "
                         "short names such as Europe/Oslo", path=path, line=tzid_line)
    many = too_many_events_line(text, max_events)
    if many is not None:
        raise InputError(f"holds more than {max_events:,} events (VEVENT), the most one calendar "
                         "file may have; split it, or keep only the years the audits need",
                         path=path, line=many)
    zone_line = dense_zone_rule_line(text)
    if zone_line is not None:
        raise InputError("a VTIMEZONE rule repeats more often than weekly; daylight-saving "
                         "rules repeat yearly", path=path, line=zone_line)
    _forget_custom_zones(text)
    try:
        cals = icalendar.Calendar.from_ical(text, multiple=True)
    except (ValueError, IndexError, KeyError) as exc:
        raise InputError(f"is not a valid iCalendar file: {exc}", path=path) from None
    cals = [c for c in cals if c.name == "VCALENDAR"]
    if not cals:
        line, what = _unbalanced(text)
        raise InputError(what or "holds no VCALENDAR", path=path, line=line)
    if len(cals) == 1:
        return cals[0]
    merged = icalendar.Calendar()
    for key, value in cals[0].property_items(recursive=False)[1:-1]:
        merged.add(key, value)
    for c in cals:
        for sub in c.subcomponents:
            merged.add_component(sub)
    return merged


def _unbalanced(text: str) -> tuple[int | None, str | None]:
    """The first BEGIN/END that does not pair up (a file cut short, a line deleted by hand):
    its 1-based line and what is wrong, or (None, None)."""
    stack: list[tuple[str, int]] = []
    for i, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip().upper()
        if line.startswith("BEGIN:"):
            stack.append((line[6:], i))
        elif line.startswith("END:"):
            name = line[4:]
            if not stack:
                return i, f"END:{name} without a BEGIN:{name} before it"
            if stack[-1][0] != name:
                open_name, at = stack[-1]
                return i, (f"END:{name} while BEGIN:{open_name} from line {at} is still open "
                           f"(is an END:{open_name} missing?)")
            stack.pop()
    if stack:
        name, at = stack[-1]
        return at, (f"BEGIN:{name} is never closed (no END:{name}); is the file cut short?")
    return None, None


def _event_lines(path: Path) -> dict[str, int]:
    """1-based line of each VEVENT's BEGIN, by UID (first one wins)."""
    out: dict[str, int] = {}
    try:
        lines = path.read_text(encoding="utf-8-sig", errors="replace").splitlines()
    except OSError:
        return out
    begin = None
    for i, raw in enumerate(lines, start=1):
        line = raw.strip()
        if line.upper() == "BEGIN:VEVENT":
            begin = i
        elif begin is not None:
            m = _UID_LINE.match(line)
            if m:
                out.setdefault(m.group(1).strip(), begin)
                begin = None
    return out


def _with_line(err: InputError, lines: dict[str, int]) -> InputError:
    if err.key and err.line is None:
        m = re.search(r"\(([^,()]*)(?:, override of [^)]*)?\)$", err.key)
        if m and m.group(1) in lines:
            return InputError(err.message, path=err.path, line=lines[m.group(1)], key=err.key)
    return err


def check_calendar_file(path: str | Path, tz: str) -> list[InputError]:
    """Every problem in a calendar file, without raising.

    Reads the file, runs the static guard rails on every event, then expands the calendar over
    the current calendar year in zone ``tz`` to apply the window caps (occurrences, rule
    steps). Problems carry the file, the event and, where found, the line of its BEGIN:VEVENT.

    Parameters
    ----------
    path : str or Path
        The .ics file.
    tz : str
        The site's IANA zone (floating times are read in it).

    Returns
    -------
    list of InputError
        Empty when the calendar is fine.
    """
    path = Path(path)
    try:
        cal = read_calendar(path)
    except InputError as exc:
        return [exc]
    lines = _event_lines(path)
    problems = [_with_line(e, lines) for e in check_calendar(cal, path=path)]
    if problems:
        return problems
    year = dt.date.today().year
    try:
        expand_calendar(cal, tz, dt.date(year, 1, 1), dt.date(year, 12, 31), path=path)
    except InputProblems as exc:
        return [_with_line(e, lines) for e in exc.problems]
    except InputError as exc:
        return [_with_line(exc, lines)]
    return []


def read_checked_calendar(path: str | Path) -> icalendar.Calendar:
    """:func:`read_calendar` plus the static guard rails; raises the first problem with its line.

    Expansion re-checks everything, so this only improves messages (adds the event's line).
    """
    path = Path(path)
    cal = read_calendar(path)
    problems = check_calendar(cal, path=path)
    if problems:
        lines = _event_lines(path)
        problems = [_with_line(e, lines) for e in problems]
        raise problems[0] if len(problems) == 1 else InputProblems(problems)
    return cal
