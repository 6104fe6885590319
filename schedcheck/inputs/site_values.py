"""Typed-value readers for the site file: text, numbers, booleans, durations, lists, tables.

:class:`ValueReader` collects every problem as an :class:`~schedcheck.errors.InputError` with its
key and, where it can be found, the line of the key in the file (``site.toml:23:
energy.exponent: ...``); the section validators of :mod:`schedcheck.inputs.site_sections` build
on it.
"""

from __future__ import annotations

import difflib
from pathlib import Path

import pandas as pd

from schedcheck.durations import format_duration, parse_duration
from schedcheck.errors import InputError
from schedcheck.inputs.site_ids import ID_FIELDS, id_problem
from schedcheck.inputs.toml_lines import key_lines

HINT_LIST = 12   # allowed values listed in a message at most


def hint(word: str, allowed) -> str:
    """``; did you mean "x"?`` for a near miss, else the allowed values (at most HINT_LIST)."""
    allowed = list(allowed)
    same_case = [a for a in allowed if str(a).lower() == str(word).lower()]
    close = same_case or difflib.get_close_matches(str(word), allowed, n=1, cutoff=0.6)
    if close:
        return f'; did you mean "{close[0]}"?'
    shown = ", ".join(map(str, allowed[:HINT_LIST]))
    return f"; allowed: {shown}" + (f" (and {len(allowed) - HINT_LIST} more)"
                                     if len(allowed) > HINT_LIST else "")


def _is_number(x) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool)


class ValueReader:
    """Reads typed values out of parsed TOML tables, collecting every problem (never stops)."""

    def __init__(self, path: Path, text: str | None = None) -> None:
        self.path = path
        self.problems: list = []
        self.where = key_lines(text) if text else {}
        self.prefixes: dict[str, tuple] = {}   # "unit[AHU-1]" -> ("unit", 1), ...

    def err(self, key: str, msg: str) -> None:
        self.problems.append(InputError(msg, path=self.path, line=self.line_of(key), key=key))

    def line_of(self, key: str) -> int | None:
        """The line of ``key`` in the file, else of its table's header, else None."""
        if not self.where:
            return None
        table: tuple = ()
        rest = key
        # the longest unit or component prefix of the key ("unit[A].component[b]"): every
        # such prefix ends in "]" before a "." or the end, so only those cuts are looked up
        # (one dictionary look-up each: finding lines stays linear in the problems)
        cuts = [i + 1 for i, ch in enumerate(key) if ch == "]"
                and (i + 1 == len(key) or key[i + 1] == ".")]
        for cut in reversed(cuts):
            if key[:cut] in self.prefixes:
                table, rest = self.prefixes[key[:cut]], key[cut + 1:]
                break
        else:
            head, _, rest = key.partition(".")
            table = (head.split("[")[0],)
            if not rest:
                return self.where.get(((), table[0])) or self.where.get((table, None))
        parts = [x.split("[")[0] for x in rest.split(".")] if rest else []
        if len(parts) >= 2 and (table + (parts[0],), parts[1]) in self.where:
            return self.where[(table + (parts[0],), parts[1])]
        if parts and (table, parts[0]) in self.where:
            return self.where[(table, parts[0])]
        return self.where.get((table, None))

    # -- generic pieces ------------------------------------------------------------------------
    def table(self, data: dict, name: str, key: str, allowed, required: bool = False) -> dict:
        if name not in data:
            if required:
                self.err(key, f"missing table [{key}]" if "[" not in key else "missing")
            return {}
        t = data[name]
        if not isinstance(t, dict):
            self.err(key, f"must be a table, not {type(t).__name__}")
            return {}
        self.unknown(t, key, allowed)
        return t

    def unknown(self, t: dict, key: str, allowed) -> None:
        for k in t:
            if k not in allowed:
                self.err(f"{key}.{k}" if key else k, "unknown key" + hint(k, allowed))

    def string(self, t: dict, name: str, key: str, default=None, required=False, choices=None):
        if name not in t:
            if required:
                self.err(key, "missing (required)")
            return default
        x = t[name]
        if not isinstance(x, str) or not x.strip():
            quote = (f'; write it in quotes: {name} = "{x}"'
                     if isinstance(x, (int, float)) and not isinstance(x, bool) else "")
            self.err(key, f"must be a non-empty text, not {x!r}{quote}")
            return default
        if choices is not None and x not in choices:
            self.err(key, f"{x!r} is not allowed" + hint(x, choices))
            return default
        if name in ID_FIELDS and (problem := id_problem(x.strip(), name)):
            self.err(key, problem)
            return default
        return x.strip()

    def number(self, t, name, key, default=None, required=False, lo=None, hi=None,
               lo_open=False, integer=False):
        if name not in t:
            if required:
                self.err(key, "missing (required)")
            return default
        x = t[name]
        if not _is_number(x) or (integer and not isinstance(x, int)):
            kind = "a whole number" if integer else "a number"
            self.err(key, f"must be {kind}, not {x!r}")
            return default
        if x != x or x in (float("inf"), float("-inf")):
            self.err(key, f"must be a finite number, not {x!r}")
            return default
        low = lo is not None and (x <= lo if lo_open else x < lo)
        if low or (hi is not None and x > hi):
            rule = " and ".join(([f"{'>' if lo_open else '>='} {lo:g}"] if lo is not None
                                 else []) + ([f"<= {hi:g}"] if hi is not None else []))
            self.err(key, f"{x!r} is out of range: must be {rule}")
            return default
        return int(x) if integer else float(x)

    def boolean(self, t, name, key, default=False):
        if name not in t:
            return default
        if not isinstance(t[name], bool):
            self.err(key, f"must be true or false, not {t[name]!r}")
            return default
        return t[name]

    def duration(self, t, name, key, default=None, positive=False, most=None):
        if name not in t:
            return default
        try:
            d = parse_duration(t[name])
        except ValueError as e:
            self.err(key, str(e))
            return default
        if positive and d <= pd.Timedelta(0):
            self.err(key, "must be longer than zero")
            return default
        if most is not None and d > most:
            self.err(key, f"{format_duration(d)} is longer than the most, "
                     f"{format_duration(most)}")
            return default
        return d

    def strings(self, t, name, key) -> list[str] | None:
        if name not in t:
            return None
        x = t[name]
        items = [x] if isinstance(x, str) else x
        if not isinstance(items, list) or not all(isinstance(i, str) and i.strip() for i in items):
            self.err(key, f"must be a file name or a list of file names, not {x!r}")
            return None
        return [i.strip() for i in items]
