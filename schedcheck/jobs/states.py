"""The ``states`` job: learned on/off levels per component, how clearly they separate, pictures.

Opens the site, loads the readings of the window (local dates, both inclusive; default the
whole days covered by the data) with its look-back, classifies every unit
(:func:`schedcheck.runstate.lookback.classify_with_lookback`) and returns one record per
component. Never prints.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from schedcheck.errors import InputError
from schedcheck.outputs.states_records import component_record, picture_name
from schedcheck.runstate.classify import ComponentStates
from schedcheck.runstate.lookback import classify_with_lookback
from schedcheck.site import Site


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
    from schedcheck.jobs.audit import window_readings
    from schedcheck.jobs.common import open_readings, open_site
    from schedcheck.outputs.histogram import histogram_svg, write_histogram

    site = open_site(site_path)
    if plot_dir is not None and Path(plot_dir).exists() and not Path(plot_dir).is_dir():
        raise InputError("exists and is not a folder; give another --plot", path=plot_dir)
    if plot_dir is not None and not Path(plot_dir).exists() and Path(plot_dir).suffix.lower() in (
            ".svg", ".png", ".pdf"):
        # "--plot levels.svg" made a folder called levels.svg
        raise InputError("looks like a file name; --plot takes a folder and writes one picture "
                         "per component into it", path=plot_dir)
    # the levels are learned as the audit learns them: from the readings of the files (or the
    # look-back) with the window's states cut from the look-back's
    first, last, start, end, readings, span = window_readings(
        site, first, last, skip_bad_rows=skip_bad_rows, source=open_readings(site))
    states, _whole = classify_with_lookback(site.units, span.by_sensor, span.start, start, end,
                                            site.readings.max_gap, site.run_state,
                                            level_unit=site.readings.unit, ahead_end=span.end)
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
