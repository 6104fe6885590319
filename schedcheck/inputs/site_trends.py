"""The site file's ``[trends]`` table and each component's ``command`` and ``status`` points
(interface section 8). Called by :class:`schedcheck.inputs.site_sections.SiteValidator`; every
problem is collected with its key and line.

Whether a named point is in the trend files is checked when the trends are read
(:func:`schedcheck.inputs.trend_files.check_points`), since reading the site file reads no data.
"""

from __future__ import annotations

from pathlib import Path

from schedcheck.inputs.file_limits import pattern_problem
from schedcheck.inputs.file_patterns import resolve_patterns
from schedcheck.inputs.site_rules import _TRENDS, MAX_TREND_GAP
from schedcheck.inputs.site_values import ValueReader, hint
from schedcheck.site import TREND_COLUMNS, Component, TrendSettings

#: The longest point name accepted (a building system's names are far shorter; common
#: practice, no source).
MAX_POINT_CHARS = 200


def trend_settings(v: ValueReader, data: dict, base: Path, *,
                   require_files: bool = True) -> TrendSettings | None:
    """The ``[trends]`` table, or None when the site file has none."""
    if "trends" not in data:
        return None
    t = v.table(data, "trends", "trends", _TRENDS)
    files = v.strings(t, "files", "trends.files")
    if "files" not in t:
        v.err("trends.files", "missing (required): the trend export files or glob patterns")
    for i, (pat, hits) in enumerate(resolve_patterns(base, tuple(files or ())), 1):
        k = "trends.files" if len(files or ()) == 1 else f"trends.files[{i}]"
        if problem := pattern_problem(base, pat):
            v.err(k, problem)
        elif not hits and require_files:
            v.err(k, f"{pat!r} matches no file (relative to {base.resolve()})")
    naive = v.string(t, "naive_time", "trends.naive_time", choices=("local", "utc"))
    max_gap = v.duration(t, "max_gap", "trends.max_gap", TrendSettings.max_gap, True,
                         most=MAX_TREND_GAP)
    columns: dict[str, str] = {}
    cols = t.get("columns", {})
    if not isinstance(cols, dict):
        v.err("trends.columns", "must be a table such as { point = \"Point\" }")
        cols = {}
    for ours, theirs in cols.items():
        k = f"trends.columns.{ours}"
        if ours not in TREND_COLUMNS:
            v.err(k, "unknown column" + hint(ours, TREND_COLUMNS))
        elif not isinstance(theirs, str) or not theirs.strip():
            v.err(k, f"must be the column name in the file, not {theirs!r}")
        elif theirs in columns.values():
            v.err(k, f"column {theirs!r} is already used")
        else:
            columns[ours] = theirs
    return TrendSettings(files=tuple(files or ()), columns=columns, naive_time=naive,
                         max_gap=max_gap)


def component_points(v: ValueReader, c: dict, key: str) -> tuple[str | None, str | None]:
    """A component's ``command`` and ``status`` point names (None where not given)."""
    out = []
    for name in ("command", "status"):
        val = v.string(c, name, f"{key}.{name}")
        if val is not None and len(val) > MAX_POINT_CHARS:
            v.err(f"{key}.{name}", f"longer than {MAX_POINT_CHARS} characters")
            val = None
        out.append(val)
    if out[1] is not None and out[0] is None:
        v.err(f"{key}.status", "needs a command point too: the status is held against the "
              "command and the vibration")
    if out[0] is not None and out[0] == out[1]:
        v.err(f"{key}.status", f"is the command point {out[0]!r}; name the point that reports "
              "the fan running")
    return out[0], out[1]


def check_trend_keys(v: ValueReader, data: dict, components: tuple[Component, ...],
                     key_of: dict[str, str]) -> None:
    """A ``command`` without a ``[trends]`` table is an error; so is one point on two fans."""
    seen: dict[str, str] = {}
    for comp in components:
        for role in ("command", "status"):
            point = getattr(comp, role)
            if point is None:
                continue
            k = f"{key_of.get(comp.key, comp.key)}.{role}"
            if "trends" not in data:
                v.err(k, "needs a [trends] table with the trend export files")
            elif point in seen:
                v.err(k, f"point {point!r} is already the {seen[point]}")
            else:
                seen[point] = f"{role} of {comp.key}"


def wanted_points(components, key_of: dict[str, str] | None = None) -> dict[str, str]:
    """``site-file key -> point name`` of every configured command and status point."""
    out = {}
    for comp in components:
        base = (key_of or {}).get(comp.key, f"unit[{comp.unit}].component[{comp.id}]")
        for role in ("command", "status"):
            if getattr(comp, role) is not None:
                out[f"{base}.{role}"] = getattr(comp, role)
    return out
