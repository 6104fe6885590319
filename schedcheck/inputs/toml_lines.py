"""Where keys are in a TOML text: a plain line scan for error messages (no second parser)."""

from __future__ import annotations

import re

_HEADER = re.compile(r"^\s*(\[\[?)\s*([A-Za-z0-9_.\-\s]+?)\s*\]\]?\s*(?:#.*)?$")
_KEY = re.compile(r"^\s*([A-Za-z0-9_\-]+)\s*(?:\.\s*[A-Za-z0-9_\-]+\s*)*=")


def key_lines(text: str) -> dict[tuple, int]:
    """Where keys and table headers are: ``(table path, key or None) -> line``.

    Table paths count arrays of tables from 1: ``("unit", 2, "component", 1)``. A plain
    scan of the text (no second TOML parser); keys inside multi-line values are not found.
    """
    out: dict[tuple, int] = {}
    path: tuple = ()
    counts: dict[tuple, int] = {}
    arrays: dict[str, tuple] = {}
    for n, line in enumerate(text.splitlines(), 1):
        m = _HEADER.match(line)
        if m:
            names = [x.strip() for x in m.group(2).split(".")]
            parent: tuple = ()
            if len(names) > 1 and ".".join(names[:-1]) in arrays:
                parent = arrays[".".join(names[:-1])]
            elif len(names) > 1:
                parent = tuple(names[:-1])
            if m.group(1) == "[[":
                counts[parent + (names[-1],)] = counts.get(parent + (names[-1],), 0) + 1
                path = parent + (names[-1], counts[parent + (names[-1],)])
                arrays[".".join(names)] = path
            else:
                path = parent + (names[-1],)
            out.setdefault((path, None), n)
            continue
        m = _KEY.match(line)
        if m:
            out.setdefault((path, m.group(1)), n)
    return out
