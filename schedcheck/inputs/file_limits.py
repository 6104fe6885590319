"""Guard rails on the files a site names: regular files of bounded size, and readings patterns
that stay inside the site's folder tree.

Site files and calendars come from other people and programs. A "file" that is ``/dev/zero``,
a pipe or a socket never ends; a glob such as ``/**/*.parquet`` walks the whole file system; a
pattern such as ``../../etc/*`` lists another folder's names in the messages. Each is refused
with a one-line error before anything is read. A glob that matches a device or pipe among the
readings files is named in a warning (such a file is never read). Limits: docs/site-file.md
("Limits") and docs/calendars.md.
"""

from __future__ import annotations

import glob
import os
import re
import stat
from pathlib import Path

from schedcheck.errors import InputError, excerpt

#: largest site file read [bytes]; a real one is a few kB (common practice, no source)
MAX_SITE_FILE_BYTES = 4 * 1024 * 1024

#: largest calendar file read [bytes]; a year of daily one-off events is about 0.3 MB
#: (common practice, no source)
MAX_CALENDAR_BYTES = 32 * 1024 * 1024

#: most events (VEVENT blocks) one calendar file may hold [-]. A calendar of a booking system
#: with 20 bookings a working day over three years has about 15,000. Parsing holds about
#: 2.6 kB and takes about 0.6 ms per event (icalendar 7.3, measured on the shared two-core
#: build machine), so this bounds one file to about 50 MB and 12 s; a larger file is refused
#: before it is parsed (the bound is common practice, no source)
MAX_EVENTS_PER_FILE = 20_000

_WILDCARDS = ("*", "?", "[")
_VEVENT = re.compile(r"^[ \t]*BEGIN:VEVENT[ \t]*\r?$", re.IGNORECASE | re.MULTILINE)


def read_regular(path: Path, limit: int, what: str) -> bytes:
    """The bytes of ``path``, refused unless it is a regular file of at most ``limit`` bytes.

    Raises
    ------
    FileNotFoundError, IsADirectoryError, OSError
        As :meth:`pathlib.Path.read_bytes` (callers word these).
    InputError
        Not a regular file, or larger than ``limit``.
    """
    st = os.stat(path)          # follows a link: what matters is what would be read
    if stat.S_ISDIR(st.st_mode):
        raise IsADirectoryError(21, "Is a directory", str(path))
    if not stat.S_ISREG(st.st_mode):
        raise InputError(f"is not a regular file (a device, pipe or socket); give the {what} "
                         "itself", path=path)
    if st.st_size > limit:
        raise InputError(f"is {st.st_size / 2**20:.1f} MiB, more than the {limit / 2**20:.0f} "
                         f"MiB a {what} may have", path=path)
    with open(path, "rb") as f:
        data = f.read(limit + 1)
    if len(data) > limit:
        raise InputError(f"is more than the {limit / 2**20:.0f} MiB a {what} may have",
                         path=path)
    return data


def pattern_problem(base_dir: Path, pattern: str) -> str | None:
    """Why a readings pattern is refused, or None.

    A pattern with wildcards may not be an absolute ``**`` pattern (it would walk a whole file
    system) and its fixed part (before the first wildcard) must lie inside ``base_dir`` (the
    site's folder tree). A plain file name may point anywhere: the user named that file.
    """
    if not any(w in pattern for w in _WILDCARDS):
        return None
    p = Path(pattern).expanduser()
    parts = p.parts
    fixed = []
    for part in parts:
        if any(w in part for w in _WILDCARDS):
            break
        fixed.append(part)
    if p.is_absolute() and "**" in pattern:
        return (f"{excerpt(pattern)} is an absolute pattern with '**', which would search a "
                "whole file system; name the readings folder, e.g. \"readings/**/*.parquet\"")
    root = Path(*fixed) if fixed else Path(".")
    where = root if root.is_absolute() else base_dir / root
    inside = Path(os.path.abspath(where))
    base = Path(os.path.abspath(base_dir))
    if not p.is_absolute() and inside != base and base not in inside.parents:
        return (f"{excerpt(pattern)} leaves the site file's folder; move the readings under it, "
                "or name the files without wildcards")
    return None


def special_files(base_dir: Path, patterns: tuple[str, ...]) -> list[Path]:
    """Devices, pipes and sockets the readings patterns match (never read; named in warnings)."""
    out = []
    for pat in patterns:
        if pattern_problem(base_dir, pat):
            continue
        p = Path(pat).expanduser()
        full = p if p.is_absolute() else base_dir / p
        for h in glob.glob(str(full), recursive=True):
            try:
                mode = os.stat(h).st_mode
            except OSError:
                continue
            if not (stat.S_ISREG(mode) or stat.S_ISDIR(mode)):
                out.append(Path(h))
    return sorted(set(out))


def too_many_events_line(text: str, most: int = MAX_EVENTS_PER_FILE) -> int | None:
    """The 1-based line of the first event past ``most`` in a calendar's text, or None."""
    for n, m in enumerate(_VEVENT.finditer(text), 1):
        if n > most:
            return text.count("\n", 0, m.start()) + 1
    return None


#: the longest TZID read from a calendar [characters]; zone ids (IANA or descriptive, such as
#: "W. Europe Standard Time") are well under this (common practice, no source)
MAX_TZID_CHARS = 128

_TZID = re.compile(r"TZID[=:]\"?([^;:\"\r\n]*)", re.IGNORECASE)


def long_tzid_line(text: str) -> int | None:
    """The 1-based line of the first TZID longer than :data:`MAX_TZID_CHARS`, or None."""
    for m in _TZID.finditer(text):
        if len(m.group(1)) > MAX_TZID_CHARS:
            return text.count("\n", 0, m.start()) + 1
    return None


#: the densest rule a VTIMEZONE block may use: clocks change once or twice a year, so a rule
#: more frequent than daily only makes a calendar library generate millions of transitions
#: (RFC 5545 section 3.6.5 describes yearly rules; the bound is common practice, no source)
_DENSE_ZONE_RULE = re.compile(r"^RRULE[;:].*FREQ=(SECONDLY|MINUTELY|HOURLY|DAILY)",
                              re.IGNORECASE)


def unfolded_lines(text: str):
    """``(line, text)`` of each content line, folded lines joined (RFC 5545 section 3.1: a line
    break followed by a space or a tab continues the line); ``line`` is where it starts."""
    start, parts = 0, []
    for n, raw in enumerate(text.splitlines(), 1):
        if raw[:1] in (" ", "\t") and parts:
            parts.append(raw[1:])
            continue
        if parts:
            yield start, "".join(parts)
        start, parts = n, [raw]
    if parts:
        yield start, "".join(parts)


def dense_zone_rule_line(text: str) -> int | None:
    """The 1-based line of the first VTIMEZONE rule more frequent than weekly, or None."""
    inside = False
    for n, line in unfolded_lines(text):
        up = line.strip().upper()
        if up == "BEGIN:VTIMEZONE":
            inside = True
        elif up == "END:VTIMEZONE":
            inside = False
        elif inside and _DENSE_ZONE_RULE.match(up):
            return n
    return None
