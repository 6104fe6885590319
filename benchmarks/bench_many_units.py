"""Speed of an audit of a site with many units (issue 15): one week of readings at 5-minute
steps per unit, every unit on the site's one occupancy calendar.

Target: 1,000 units finish in well under a minute. Usage:
``python benchmarks/bench_many_units.py [--units N]``. The site is invented (a fictional
campus of our own), written to a temporary folder, audited once with ``schedcheck audit`` in
process; prints the wall-clock time of the audit (site, readings, schedule, outputs) and of
the schedule expansion alone, and the audit's CPU time.
"""

from __future__ import annotations

import argparse
import os
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from tests.small_site import TZ, site_toml, write_site  # noqa: E402


def build(folder: Path, units: int) -> Path:
    """Write a site of ``units`` units sharing one calendar; returns the site file."""
    rng = np.random.default_rng(15)
    idx = pd.date_range("2026-03-02", "2026-03-08 23:55", freq="5min", tz=TZ)
    local_h = idx.hour + idx.minute / 60
    on = (idx.day_of_week < 5) & (local_h >= 6.5) & (local_h < 18.5)
    frames = []
    for i in range(units):
        level = np.where(on, 2.0, 0.05) * (1 + 0.05 * rng.standard_normal(len(idx)))
        frames.append(pd.DataFrame({"timestamp": idx.tz_convert("UTC").strftime(
            "%Y-%m-%dT%H:%M:%SZ"), "sensor": f"S-{i}", "x_rms": np.round(np.abs(level), 4)}))
    site = write_site(folder, frame=pd.concat(frames, ignore_index=True))
    text = site_toml(unit="U-0", sensor="S-0").replace('max_gap', 'max_gap')
    text = text.replace('unit = "mm/s"', 'unit = "mm/s"\nmax_gap = "15min"')
    text += "".join(f'\n[[unit]]\nid = "U-{i}"\n[[unit.component]]\nid = "supply"\n'
                    f'role = "supply_fan"\nsensor = "S-{i}"\npower_kw = 5.5\nspeed = 1.0\n'
                    for i in range(1, units))
    site.write_text(text, encoding="utf-8")
    return site


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--units", type=int, default=1000)
    args = ap.parse_args()
    from schedcheck.inputs.site_file import load_site
    from schedcheck.jobs.audit import audit_site
    from schedcheck.jobs.schedule import unit_schedules

    with tempfile.TemporaryDirectory() as tmp:
        site = build(Path(tmp) / "site", args.units)
        loaded = load_site(site)
        t0 = time.perf_counter()
        unit_schedules(loaded, pd.Timestamp("2026-03-02").date(),
                       pd.Timestamp("2026-03-08").date())
        t_sched = time.perf_counter() - t0
        t0, c0 = time.perf_counter(), time.process_time()
        result = audit_site(site, out=Path(tmp) / "out")
        t_audit, c_audit = time.perf_counter() - t0, time.process_time() - c0
    print(f"{args.units} units, {len(result.components)} components: schedule expansion "
          f"{t_sched:.2f} s, whole audit {t_audit:.1f} s (CPU time {c_audit:.1f} s; on a "
          f"shared machine the wall time follows the load), load {os.getloadavg()[0]:.1f}")


if __name__ == "__main__":
    main()
