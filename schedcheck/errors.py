"""The project's own exception types.

Every problem with a user's input is an :class:`InputError` whose text is one line that names
the file, and the line or key, where it was found: ``FILE:LINE: what is wrong`` or
``FILE: key: what is wrong``. The CLI prints it as ``error: <text>`` and exits with status 2.
Anything else that escapes is an internal error (exit status 1).
"""

from __future__ import annotations

from collections.abc import Iterable
from pathlib import Path

#: how many characters of a bad value an error line quotes (common practice, no source)
EXCERPT_CHARS = 60


def terminal_text(text: object, *, line_breaks: bool = False) -> str:
    """``text`` with control characters (C0, DEL, C1, line separators) shown as visible escapes
    (``\\x1b``), so text from an input file cannot move the cursor, set a window title or
    clear a terminal; ``line_breaks`` keeps line feeds (a table cell's own line breaks)."""
    s = str(text)
    if s.isascii() and s.isprintable():
        return s
    out = []
    for ch in s:
        o = ord(ch)
        if line_breaks and ch == "\n":
            out.append(ch)
        elif o < 0x20 or 0x7F <= o < 0xA0 or ch in "\u2028\u2029":
            out.append(ch.encode("unicode_escape").decode("ascii"))
        else:
            out.append(ch)
    return "".join(out)


def excerpt(text: object, limit: int = EXCERPT_CHARS) -> str:
    """A short, quoted, escaped excerpt of a bad value for an error line (at most ``limit``
    characters of it)."""
    s = str(text)
    quoted = repr(s[:limit])
    return quoted[:-1] + "..." + quoted[-1] if len(s) > limit else quoted


class SchedcheckError(Exception):
    """Base class of every error the library raises on purpose."""


def _where(path: str | Path | None, line: int | None = None, key: str | None = None) -> str:
    parts = []
    if path is not None:
        head = str(path)
        if line is not None:
            head += f":{line}"
        parts.append(head)
    elif line is not None:
        parts.append(f"line {line}")
    if key:
        parts.append(key)
    return ": ".join(parts)


class InputError(SchedcheckError):
    """A problem with an input file, an option or a setting.

    Parameters
    ----------
    message : str
        What is wrong, in one plain sentence without a trailing newline.
    path : str or Path, optional
        The file the problem is in.
    line : int, optional
        1-based line number in ``path`` (for text files).
    key : str, optional
        Dotted key of a setting (``unit[2].component[1].power_kw``) or a column/field name.
    """

    def __init__(
        self,
        message: str,
        *,
        path: str | Path | None = None,
        line: int | None = None,
        key: str | None = None,
    ) -> None:
        self.message = " ".join(str(message).split())  # always one line
        self.path = None if path is None else str(path)
        self.line = line
        self.key = key
        where = _where(path, line, key)
        super().__init__(f"{where}: {self.message}" if where else self.message)


class NoReadingsError(InputError):
    """No readings at all for any configured sensor (in the asked window, if there was one).

    ``nothing_else`` is True when the files held nothing else in that window either (no other
    sensors, no bad rows): then the window, not the files, is what to look at.
    """

    def __init__(self, message: str, *, nothing_else: bool = False, **where) -> None:
        super().__init__(message, **where)
        self.nothing_else = nothing_else


class InputProblems(InputError):
    """Several input problems found in one pass (``schedcheck check`` reports them all).

    ``str()`` is the first problem plus a count of the others, so it is still one line;
    ``problems`` holds every :class:`InputError`.
    """

    def __init__(self, problems: Iterable[InputError]) -> None:
        self.problems = list(problems)
        if not self.problems:
            raise ValueError("InputProblems needs at least one problem")
        first = self.problems[0]
        more = len(self.problems) - 1
        text = str(first) + (f" (and {more} more problem{'s' if more > 1 else ''})" if more else "")
        SchedcheckError.__init__(self, text)
        self.message = text
        self.path = first.path
        self.line = first.line
        self.key = first.key


class TableError(InputError, ValueError):
    """A table handed to the core breaks its contract (a missing column, an unknown state or
    kind, naive instants, a row that ends before it starts).

    The core checks a table once, where it enters (:meth:`schedcheck.runstate.states.StateSets
    .from_table`, :meth:`schedcheck.audit.accounting.ScheduleSets.from_table`). Such a table
    comes from a caller's data, so this is an :class:`InputError` naming the table and column
    (``states.state: ...``) and the CLI reports it as bad input; it is also a ``ValueError``,
    what a library caller expects for an argument of the right type but a wrong value. A
    separate programmer-error type would split one check into two kinds of failure again.
    """
