"""The ``states`` job: learned on/off levels per component, how clearly they separate, pictures.

Opens the site, loads the readings of the window (local dates, both inclusive; default the
whole days covered by the data), classifies every unit (``classify_unit``)
and returns one record per component. Never prints.
"""

from __future__ import annotations

import datetime as dt
import math
import re
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from schedcheck.errors import InputError
from schedcheck.runstate.classify import ComponentStates, classify_unit
from schedcheck.runstate.onofflevel import SEPARATION_CAP
from schedcheck.site import Site
from schedcheck.window import day_window


@dataclass
class StatesResult:
    """What ``schedcheck states`` shows.

    ``records`` holds one dict per component (see :func:`component_record`); ``states`` the
    full :class:`ComponentStates` by component key; ``warnings`` the readings warnings.
    """

    site: Site
    first: dt.date
    last: dt.date
    start: pd.Timestamp
    end: pd.Timestamp
    states: dict[str, ComponentStates]
    records: list[dict]
    warnings: list[str] = field(default_factory=list)
    pictures: list[Path] = field(default_factory=list)


def _num(x: float | None, digits: int = 4) -> float | None:
    if x is None or not math.isfinite(float(x)):
        return None
    return round(float(x), digits)


def component_record(cs: ComponentStates) -> dict:
    """One component's figures as plain JSON-ready values.

    Fields: ``component`` (UNIT/COMPONENT), ``unit``, ``role``, ``sensor``, ``level``,
    ``on_level``, ``off_level`` [reading unit], ``source``, ``separation`` (Ashman's D, capped
    at 1000), ``effectiveness`` (Otsu's eta), ``groups`` (level group medians), ``floor`` (the floor
    level in force) [reading unit], ``running_share``
    (running / known time), ``starts``, ``starts_per_day`` (per 24 h of known time),
    ``known_hours``, ``no_data_hours`` [h], ``confidence`` (``high`` / ``medium`` / ``low``),
    ``near_share`` (share of readings near the level), ``concerns`` (why the confidence is not
    high, in words), ``reason`` and ``warnings``.
    """
    th, tab = cs.threshold, cs.intervals
    hours = (tab["end"] - tab["start"]).dt.total_seconds() / 3600.0
    no_data = float(hours[tab["state"] == "no_data"].sum())
    known = float(hours.sum()) - no_data
    c = cs.component
    sep = th.separation
    return {
        "component": c.key, "unit": c.unit, "role": c.role, "sensor": c.sensor,
        "level": _num(th.level, 6), "on_level": _num(th.on_level, 6),
        "off_level": _num(th.off_level, 6), "source": th.source,
        "separation": SEPARATION_CAP if sep > SEPARATION_CAP else _num(sep, 2),
        "effectiveness": _num(th.effectiveness, 3),
        "groups": [_num(g, 6) for g in th.groups], "floor": _num(th.floor, 6),
        "running_share": _num(cs.run_share, 4),
        "starts": int(cs.starts),
        "starts_per_day": _num(cs.starts / (known / 24.0), 2) if known > 0 else None,
        "known_hours": round(known, 2), "no_data_hours": round(no_data, 2),
        "confidence": th.confidence or None, "near_share": _num(th.near_share, 4),
        "concerns": list(th.concerns),
        "reason": th.reason,
        "warnings": list(th.warnings) + list(cs.warnings),
    }


def picture_name(component_key: str) -> str:
    """``UNIT/COMPONENT`` -> ``UNIT_COMPONENT.svg`` (characters unsafe in file names -> ``-``)."""
    unit, _, comp = component_key.partition("/")

    def safe(s: str) -> str:
        return re.sub(r"[^A-Za-z0-9._-]+", "-", s)
    return f"{safe(unit)}_{safe(comp)}.svg"


def site_states(
    site_path: str | Path,
    first: dt.date | None = None,
    last: dt.date | None = None,
    *,
    skip_bad_rows: bool = False,
    plot_dir: str | Path | None = None,
) -> StatesResult:
    """Classify every component of a site and describe its on/off level.

    Parameters
    ----------
    site_path : str or Path
        The site file (TOML).
    first, last : datetime.date, optional
        Local dates, both inclusive; missing ones come from the whole days covered by the data.
    skip_bad_rows : bool
        Skip unreadable readings rows (counted in the warnings) instead of stopping.
    plot_dir : str or Path, optional
        Write ``<unit>_<component>.svg`` histogram pictures into this folder.
    """
    from schedcheck.jobs.audit import audit_window
    from schedcheck.jobs.common import load_readings, open_site
    from schedcheck.outputs.histogram import histogram_svg, write_histogram

    site = open_site(site_path)
    if plot_dir is not None and Path(plot_dir).exists() and not Path(plot_dir).is_dir():
        raise InputError("exists and is not a folder; give another --plot", path=plot_dir)
    if plot_dir is not None and not Path(plot_dir).exists() and Path(plot_dir).suffix.lower() in (
            ".svg", ".png", ".pdf"):
        # "--plot levels.svg" made a folder called levels.svg
        raise InputError("looks like a file name; --plot takes a folder and writes one picture "
                         "per component into it", path=plot_dir)
    first, last = audit_window(site, first, last)
    start, end = day_window(first, last, site.timezone)
    readings = load_readings(site, start, end, skip_bad_rows=skip_bad_rows)
    states: dict[str, ComponentStates] = {}
    for unit in site.units:
        states.update(classify_unit(unit, readings.by_sensor, start, end, site.readings.max_gap,
                                    site.run_state, level_unit=site.readings.unit))
    records = [component_record(states[c.key]) for c in site.components]
    pictures = []
    if plot_dir is not None:
        for c in site.components:
            th = states[c.key].threshold
            svg = histogram_svg(th.counts, th.edges_log10, th.level, th.on_level, th.off_level,
                                f"{c.key} ({c.role.replace('_', ' ')}, sensor {c.sensor})",
                                source=th.source, unit=site.readings.unit, floor=th.floor)
            try:
                pictures.append(write_histogram(Path(plot_dir) / picture_name(c.key), svg))
            except OSError as e:
                raise InputError(f"cannot write the pictures here ({e.strerror or e})",
                                 path=plot_dir) from None
    warnings = [str(w) for w in getattr(readings, "warnings", []) or []]
    return StatesResult(site, first, last, start, end, states, records, warnings, pictures)
