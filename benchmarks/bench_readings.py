"""Speed and memory of reading readings files (``schedcheck.inputs.readings_files``).

Writes invented one-a-minute readings (jitter, three RMS axes) for N sensors over D days as
gzip CSV, as Parquet in time order (all sensors in every row group: streamed in batches), as
Parquet sorted by sensor (read per sensor with a row filter) and as plain CSV the way some
gateways write it (local time without an offset, every other sensor on the z axis only with
its x and y cells left empty), then reads each through
``read_readings``. Each format is read in a fresh process so that the peak resident memory
(VmHWM, Linux) is that format's alone; importing the libraries takes about 200 MB. No
target has been set; the figures are for information.
Usage: ``python benchmarks/bench_readings.py [--sensors N] [--days D] [--repeat N]``.
"""

from __future__ import annotations

import argparse
import json
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq

CAL = ("BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//bench//EN\r\nBEGIN:VEVENT\r\n"
       "UID:b@bench\r\nDTSTAMP:20260101T000000Z\r\nDTSTART;TZID=Europe/Oslo:20260105T070000\r\n"
       "DTEND;TZID=Europe/Oslo:20260105T170000\r\nRRULE:FREQ=WEEKLY;BYDAY=MO,TU,WE,TH,FR\r\n"
       "END:VEVENT\r\nEND:VCALENDAR\r\n")


def write_inputs(folder: Path, sensors: int, days: int) -> dict[str, Path]:
    rng = np.random.default_rng(1)
    t = pd.date_range("2026-03-01T00:00:00Z", periods=days * 1440, freq="1min")
    frames, units = [], []
    for i in range(sensors):
        s = f"BX-{i:03d}"
        lv = np.where((t.hour >= 5) & (t.hour < 16), 2.0, 0.05) * rng.lognormal(0, 0.1, len(t))
        frames.append(pd.DataFrame({
            "timestamp": t + pd.to_timedelta(rng.integers(0, 20, len(t)), unit="s"),
            "sensor": s, "x_rms": lv.round(3), "y_rms": (lv * 0.8).round(3),
            "z_rms": (lv * 0.5).round(3)}))
        units.append(f'[[unit]]\nid = "AHU-{i}"\n[[unit.component]]\nid = "supply"\n'
                     f'role = "supply_fan"\nsensor = "{s}"\npower_kw = 5.0\nspeed = 0.8\n')
    df = pd.concat(frames).sort_values("timestamp", kind="stable")
    (folder / "weekdays.ics").write_text(CAL, newline="")
    out = {}
    names = ("csv", "parquet_time", "parquet_sensor", "csv_local_mixed")
    for name in names:
        (folder / name).mkdir()
    text = df.assign(timestamp=df["timestamp"].dt.strftime("%Y-%m-%dT%H:%M:%SZ"))
    text.to_csv(folder / "csv" / "r.csv.gz", index=False, float_format="%.3f")
    pq.write_table(pa.Table.from_pandas(df, preserve_index=False),
                   folder / "parquet_time" / "r.parquet")
    pq.write_table(pa.Table.from_pandas(df.sort_values(["sensor", "timestamp"]),
                                        preserve_index=False),
                   folder / "parquet_sensor" / "r.parquet", row_group_size=100_000)
    mixed = df.assign(timestamp=df["timestamp"].dt.tz_convert("Europe/Oslo")
                      .dt.strftime("%Y-%m-%d %H:%M:%S"))
    one_axis = mixed["sensor"].str[-1].astype(int) % 2 == 1
    mixed[["x_rms", "y_rms"]] = mixed[["x_rms", "y_rms"]].astype(object)
    mixed.loc[one_axis, ["x_rms", "y_rms"]] = ""
    mixed.to_csv(folder / "csv_local_mixed" / "r.csv", index=False, float_format="%.3f")
    for name in names:
        site = folder / f"site_{name}.toml"
        naive = 'naive_time = "local"\n' if name == "csv_local_mixed" else ""
        site.write_text(f'[site]\nname = "Bench Hall"\ntimezone = "Europe/Oslo"\n[readings]\n'
                        f'files = ["{name}/*"]\n{naive}[schedule]\noccupied = "weekdays.ics"\n'
                        + "".join(units))
        out[name] = site
    return out


def measure(site: str, repeat: int) -> dict:
    """One format, in this process: best wall time of ``repeat`` reads and peak RSS."""
    from schedcheck.inputs.readings_files import read_readings
    from schedcheck.inputs.site_file import load_site

    s = load_site(site)
    best, rows = float("inf"), 0
    for _ in range(repeat):
        t0 = time.perf_counter()
        r = read_readings(s)
        best = min(best, time.perf_counter() - t0)
        rows = sum(h.count for h in r.health.values())
    # VmHWM: this process's peak resident memory (Linux). getrusage's ru_maxrss would carry
    # the parent's peak over the fork.
    status = Path("/proc/self/status").read_text()
    peak = next(int(x.split()[1]) for x in status.splitlines() if x.startswith("VmHWM")) / 1024
    return {"seconds": best, "rows": rows, "peak_mb": peak}


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sensors", type=int, default=20)
    ap.add_argument("--days", type=int, default=30)
    ap.add_argument("--repeat", type=int, default=1)
    ap.add_argument("--measure", help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.measure:
        print(json.dumps(measure(args.measure, args.repeat)))
        return 0
    with tempfile.TemporaryDirectory() as tmp:
        sites = write_inputs(Path(tmp), args.sensors, args.days)
        print(f"{args.sensors} sensors x {args.days} days, one reading a minute each")
        for name, site in sites.items():
            out = subprocess.run([sys.executable, __file__, "--measure", str(site),
                                  "--repeat", str(args.repeat)], capture_output=True, text=True)
            if out.returncode:
                print(f"{name}: failed: {out.stderr.strip().splitlines()[-1:]}")
                return 1
            m = json.loads(out.stdout)
            size = sum(p.stat().st_size for p in (Path(tmp) / name).iterdir()) / 1e6
            print(f"{name:15s} {m['rows']:>10,} rows  {size:7.1f} MB on disk  "
                  f"{m['seconds']:6.1f} s  {m['rows'] / m['seconds'] / 1e3:7.0f} k rows/s  "
                  f"peak {m['peak_mb']:6.0f} MB")
    return 0


if __name__ == "__main__":
    sys.exit(main())
