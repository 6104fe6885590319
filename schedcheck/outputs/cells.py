"""Text from the inputs made safe for the places it is written to: spreadsheet cells (CSV) and
terminal lines.

CSV: a spreadsheet evaluates a cell that begins with ``=``, ``+``, ``-`` or ``@`` as a formula,
and a leading tab or carriage return can hide such a start; OWASP's "CSV Injection" guidance
(owasp.org/www-community/attacks/CSV_Injection) is to prefix such a cell with an apostrophe, which
spreadsheets show as text. :func:`csv_cell` does that for text cells only (numbers stay numbers)
and :func:`csv_uncell` undoes it exactly, so the audit reads its own files back unchanged.

Terminal and calendar: :func:`~schedcheck.errors.terminal_text` shows control characters (ESC
sequences that set a window title or clear the screen, a bare CR that overwrites a line) as
visible escapes; :func:`ics_text` readies text for an iCalendar TEXT value.
"""

from __future__ import annotations

import pandas as pd

from schedcheck.errors import excerpt, terminal_text

__all__ = ["FORMULA_STARTS", "csv_cell", "csv_frame", "csv_uncell", "excerpt", "ics_text",
           "terminal_text", "uncell_frame"]

#: the first characters that make a spreadsheet read a cell as a formula (OWASP CSV Injection)
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def _needs_prefix(text: str) -> bool:
    return text.lstrip("'")[:1] in FORMULA_STARTS and text.lstrip("'") != ""


def csv_cell(value):
    """``value`` with a leading apostrophe where a spreadsheet would take it for a formula.

    Only text is changed; an apostrophe is also added before text that already starts with
    apostrophes followed by a formula character, so :func:`csv_uncell` is its exact inverse.
    """
    if isinstance(value, str) and _needs_prefix(value):
        return "'" + value
    return value


def csv_uncell(value):
    """The inverse of :func:`csv_cell` (for reading the audit's own CSV files back)."""
    if isinstance(value, str) and value.startswith("'") and _needs_prefix(value[1:]):
        return value[1:]
    return value


def _texty(col: pd.Series) -> bool:
    return col.dtype == object or pd.api.types.is_string_dtype(col.dtype)


def csv_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """A copy of ``frame`` with every text cell passed through :func:`csv_cell`."""
    out = frame.copy()
    for col in out.columns:
        if _texty(out[col]):
            out[col] = pd.Series([csv_cell(v) for v in out[col]], index=out.index,
                                 dtype=out[col].dtype)
    return out


def uncell_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """``frame`` (all text columns, as read back) with :func:`csv_uncell` applied in place."""
    for col in frame.columns:
        if _texty(frame[col]):
            frame[col] = pd.Series([csv_uncell(v) for v in frame[col]], index=frame.index,
                                   dtype=frame[col].dtype)
    return frame


def ics_text(value: object) -> str:
    """Text made fit for an iCalendar TEXT value (RFC 5545 section 3.3.11).

    A CR or CR LF becomes a line feed (which the writer escapes as ``\\n``), so a bare CR can
    never end a content line and start an injected one; other control characters, which TEXT
    may not hold (RFC 5545 section 3.1, ``CONTROL``), become visible escapes. The writer
    (``icalendar``) then escapes backslash, semicolon, comma and line feed, and folds lines at
    75 octets (section 3.1).
    """
    s = str(value).replace("\r\n", "\n").replace("\r", "\n")
    if s.isprintable():
        return s
    return "\n".join(terminal_text(part) for part in s.split("\n"))
