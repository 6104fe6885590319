"""The ``states`` job: learned on/off levels per component, how clearly they separate, pictures.

Opens the site, loads the readings of the window (local dates, both inclusive; default the
whole days covered by the data), classifies every unit (``classify_unit``)
and returns one record per component. Never prints.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from schedcheck.errors import InputError
from schedcheck.outputs.states_records import component_record, picture_name
from schedcheck.readings.window_clip import audit_window
from schedcheck.runstate.classify import ComponentStates, classify_unit
from schedcheck.site import Site
from schedcheck.window import day_window


@dataclass
class StatesResult:
    """What ``schedcheck states`` shows.

    ``records`` holds one dict per component (see
    :func:`schedcheck.outputs.states_records.component_record`); ``states`` the
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
    from schedcheck.jobs.common import load_readings, open_readings, open_site
    from schedcheck.outputs.histogram import histogram_svg, write_histogram

    site = open_site(site_path)
    if plot_dir is not None and Path(plot_dir).exists() and not Path(plot_dir).is_dir():
        raise InputError("exists and is not a folder; give another --plot", path=plot_dir)
    if plot_dir is not None and not Path(plot_dir).exists() and Path(plot_dir).suffix.lower() in (
            ".svg", ".png", ".pdf"):
        # "--plot levels.svg" made a folder called levels.svg
        raise InputError("looks like a file name; --plot takes a folder and writes one picture "
                         "per component into it", path=plot_dir)
    source = open_readings(site)
    # missing dates: the whole days of the data (bad rows skipped, they do not move the range);
    # the whole read is remembered, so the windowed read below does not parse the files again
    everything = (source.read(skip_bad_rows=True, keep=True)
                  if first is None or last is None else None)
    first, last = audit_window(site, first, last, everything)
    start, end = day_window(first, last, site.timezone)
    readings = load_readings(site, start, end, skip_bad_rows=skip_bad_rows, source=source)
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
    warnings = [str(w) for w in readings.warnings]
    return StatesResult(site, first, last, start, end, states, records, warnings, pictures)
