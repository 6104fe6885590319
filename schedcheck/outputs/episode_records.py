"""The behaviour episodes in ``summary.json`` (interface.md section 10): written per component
by :mod:`schedcheck.outputs.files`, checked when an audit folder is read back
(:mod:`schedcheck.outputs.saved`)."""

from __future__ import annotations

import datetime as dt
from pathlib import Path

from schedcheck.errors import InputError
from schedcheck.outputs.values import HOURS_DECIMALS, _r

EPISODE_KINDS = ("collective", "point")
EPISODE_FIELDS = ("start", "end", "kind", "mean_h_per_day", "usual_h_per_day")


def episode_records(episodes) -> list[dict]:
    """Episodes (:class:`schedcheck.changes.capa.Episode`) as JSON records: local ISO dates,
    ``end`` inclusive, hours per day rounded."""
    return [{"start": ep.start.isoformat(), "end": ep.end.isoformat(), "kind": ep.kind,
             "mean_h_per_day": _r(ep.mean_h_per_day, HOURS_DECIMALS),
             "usual_h_per_day": _r(ep.usual_h_per_day, HOURS_DECIMALS)}
            for ep in episodes]


def check_episodes(comp: dict, path: Path, where: str) -> None:
    """A component's ``episodes``: a list of records with ISO dates in order, a known kind and
    numbers per day (the report draws them)."""
    eps = comp.get("episodes")
    if eps is None:
        raise InputError("missing (a summary of this layout lists each component's episodes)",
                         path=path, key=f"{where}.episodes")
    if not isinstance(eps, list):
        raise InputError("must be a list", path=path, key=f"{where}.episodes")
    for i, ep in enumerate(eps):
        key = f"{where}.episodes[{i}]"
        if not isinstance(ep, dict):
            raise InputError("must be an object", path=path, key=key)
        try:
            a, b = dt.date.fromisoformat(ep.get("start")), dt.date.fromisoformat(ep.get("end"))
        except (TypeError, ValueError):
            raise InputError("start and end must be local dates YYYY-MM-DD", path=path,
                             key=key) from None
        if b < a:
            raise InputError(f"ends ({b}) before it starts ({a})", path=path, key=key)
        if ep.get("kind") not in EPISODE_KINDS:
            raise InputError(f"kind {ep.get('kind')!r} is not one of "
                             f"{', '.join(EPISODE_KINDS)}", path=path, key=key)
        for f in ("mean_h_per_day", "usual_h_per_day"):
            v = ep.get(f)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not 0 <= v <= 25:
                raise InputError(f"{f} {v!r} is not hours per day (0 to 25, the autumn clock "
                                 "change)", path=path, key=key)
