"""A small site on disk for tests that run the CLI on hostile input: one unit, one supply fan,
a weekday calendar and a week of one-a-minute readings (invented data, fictional building).

The readings are seeded: the fan runs 06:30-18:30 local on weekdays (level about 2.0 mm/s)
and is stopped otherwise (noise floor about 0.05 mm/s).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from tests.helpers import weekday_calendar

TZ = "Europe/Oslo"
FIRST, LAST = "2026-03-02", "2026-03-08"     # a Monday to a Sunday


def readings_frame(seed: int = 1, sensor: str = "S-1", step: str = "1min") -> pd.DataFrame:
    """The readings: ``timestamp`` (UTC ISO text), ``sensor``, ``x_rms`` [mm/s]."""
    rng = np.random.default_rng(seed)
    idx = pd.date_range(f"{FIRST} 00:00", f"{LAST} 23:59", freq=step, tz=TZ)
    local_h = idx.hour + idx.minute / 60
    on = (idx.day_of_week < 5) & (local_h >= 6.5) & (local_h < 18.5)
    level = np.where(on, 2.0, 0.05) * (1 + 0.05 * rng.standard_normal(len(idx)))
    return pd.DataFrame({
        "timestamp": idx.tz_convert("UTC").strftime("%Y-%m-%dT%H:%M:%SZ"),
        "sensor": sensor, "x_rms": np.round(np.abs(level), 4)})


def site_toml(*, name: str = "Test Hall", unit: str = "AHU-1", component: str = "supply",
              sensor: str = "S-1", extra: str = "", unit_extra: str = "",
              readings: str = 'files = ["readings.csv"]', energy: str = "price = 1.2") -> str:
    """The site file text; each argument is TOML text put in its place."""
    return (
        f'[site]\nname = {toml_str(name)}\ntimezone = "{TZ}"\n\n'
        f'[readings]\n{readings}\nunit = "mm/s"\n\n'
        f'[schedule]\noccupied = "occupied.ics"\nearly_start = "1h"\nlate_stop = "30min"\n\n'
        f'[energy]\n{energy}\ncurrency = "NOK"\n\n{extra}\n'
        f'[[unit]]\nid = {toml_str(unit)}\n{unit_extra}\n'
        f'[[unit.component]]\nid = {toml_str(component)}\nrole = "supply_fan"\n'
        f'sensor = {toml_str(sensor)}\npower_kw = 5.5\nspeed = 1.0\n')


def toml_str(text: str) -> str:
    """``text`` as a TOML basic string (control characters as escapes)."""
    out = []
    for ch in text:
        if ch == '"' or ch == "\\":
            out.append("\\" + ch)
        elif ord(ch) < 0x20 or ord(ch) == 0x7F:
            out.append(f"\\u{ord(ch):04x}")
        else:
            out.append(ch)
    return '"' + "".join(out) + '"'


def write_site(folder: Path, *, frame: pd.DataFrame | None = None, **toml) -> Path:
    """Write the site into ``folder``; returns the site file. ``toml`` as :func:`site_toml`."""
    folder.mkdir(parents=True, exist_ok=True)
    sensor = toml.get("sensor", "S-1").strip()
    (folder / "occupied.ics").write_bytes(weekday_calendar(TZ, "small-site").encode())
    data = readings_frame(sensor=sensor) if frame is None else frame
    data.to_csv(folder / "readings.csv", index=False)
    path = folder / "site.toml"
    path.write_text(site_toml(**toml), encoding="utf-8")
    return path
