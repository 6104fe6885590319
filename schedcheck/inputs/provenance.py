"""Where an audit came from: the input files with their sizes and SHA-256, and the settings.

Written into ``summary.json`` as ``provenance`` and shown in the report, so a reader can tell
whether two audits saw the same data. Files are hashed in chunks of :data:`HASH_CHUNK` bytes, so
memory stays flat on large readings files.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import hashlib
from pathlib import Path

import pandas as pd

from schedcheck import __version__
from schedcheck.errors import InputError
from schedcheck.inputs.readings_files import readings_files
from schedcheck.site import Site

HASH_CHUNK = 1 << 20   # 1 MiB reads (common practice, no source)


def sha256_file(path: Path, chunk: int = HASH_CHUNK) -> tuple[int, str]:
    """Size [bytes] and SHA-256 (hex) of a file, read in chunks (FIPS 180-4 via hashlib)."""
    h = hashlib.sha256()
    size = 0
    try:
        with open(path, "rb") as f:
            while block := f.read(chunk):
                h.update(block)
                size += len(block)
    except OSError as e:
        raise InputError(f"cannot read ({e.strerror or e})", path=path) from None
    return size, h.hexdigest()


def input_files(site: Site) -> list[tuple[str, Path]]:
    """Every file the audit reads, as (role, path): the site file, the calendars of each unit
    (occupied and allowed) and the readings files, each once, in that order."""
    out: list[tuple[str, Path]] = [("site", Path(site.path))]
    seen = {Path(site.path)}
    for unit in site.units:
        for role, paths in (("occupied", unit.schedule.occupied),
                            ("allowed", unit.schedule.allowed)):
            for p in paths:
                if Path(p) not in seen:
                    seen.add(Path(p))
                    out.append((role, Path(p)))
    for p in readings_files(site):
        if Path(p) not in seen:
            seen.add(Path(p))
            out.append(("readings", Path(p)))
    return out


def _shown_path(path: Path, base: Path) -> str:
    try:
        return path.resolve().relative_to(base.resolve()).as_posix()
    except ValueError:
        return str(path)


def _plain(value):
    """Settings as JSON-ready values: durations as text (``2h``), paths relative, None kept
    (None means the documented default)."""
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        return {f.name: _plain(getattr(value, f.name)) for f in dataclasses.fields(value)}
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    if isinstance(value, pd.Timedelta):
        return _duration(value)
    if isinstance(value, Path):
        return value.name
    if isinstance(value, (dt.date, dt.datetime)):
        return value.isoformat()
    return value


def _duration(td: pd.Timedelta) -> str:
    """``1h30min``, ``90s``: the site file's own way of writing a duration."""
    secs = int(td.total_seconds())
    h, rest = divmod(secs, 3600)
    m, s = divmod(rest, 60)
    text = (f"{h}h" if h else "") + (f"{m}min" if m else "") + (f"{s}s" if s else "")
    return text or "0min"


def settings_in_force(site: Site) -> dict:
    """The site's settings that shape the figures (null = the documented default)."""
    units = {}
    for u in site.units:
        units[u.id] = {
            "schedule": _plain(u.schedule),
            "components": {c.id: {k: _plain(getattr(c, k)) for k in
                                  ("role", "sensor", "power_kw", "speed", "threshold")}
                           for c in u.components},
        }
    return {
        "readings": {k: _plain(getattr(site.readings, k)) for k in
                     ("files", "unit", "naive_time", "max_gap", "skip_bad_rows")},
        "holidays": _plain(site.holidays), "schedule": _plain(site.schedule),
        "energy": _plain(site.energy), "run_state": _plain(site.run_state),
        "findings": _plain(site.findings), "units": units,
    }


def provenance(site: Site) -> dict:
    """The audit's provenance: tool version, input files and settings.

    Returns
    -------
    dict
        ``version``; ``inputs``: one ``{"role", "path", "bytes", "sha256"}`` per file, the path
        relative to the site file's folder where it lies inside it; ``settings``
        (:func:`settings_in_force`).
    """
    base = site.base_dir
    inputs = []
    for role, path in input_files(site):
        size, digest = sha256_file(path)
        inputs.append({"role": role, "path": _shown_path(path, base), "bytes": size,
                       "sha256": digest})
    return {"version": __version__, "inputs": inputs, "settings": settings_in_force(site)}
