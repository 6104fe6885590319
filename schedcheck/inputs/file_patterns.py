"""Readings patterns of the site file (files or globs) -> the files they match."""

from __future__ import annotations

import glob
from pathlib import Path

from schedcheck.inputs.file_limits import pattern_problem


def resolve_patterns(base_dir: Path, patterns: tuple[str, ...]) -> list[tuple[str, list[Path]]]:
    """Expand readings patterns (files or globs, relative to ``base_dir``) into sorted files."""
    out = []
    for pat in patterns:
        if pattern_problem(base_dir, pat):      # refused by validation; never walked
            out.append((pat, []))
            continue
        p = Path(pat).expanduser()
        full = p if p.is_absolute() else base_dir / p
        hits = sorted(Path(h) for h in glob.glob(str(full), recursive=True))
        out.append((pat, [h for h in hits if h.is_file()]))
    return out
