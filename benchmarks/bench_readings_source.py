"""What the command's :class:`~schedcheck.inputs.readings_files.ReadingsSource` saves.

``compare`` (and ``states`` without --from/--to) first reads every file to find the whole days
the data covers, then reads its window. With one source per command the window is cut from
the remembered whole read; with a fresh source per read the files are parsed twice. Uses the
gzip CSV of :mod:`bench_readings` (invented readings). The figures are for information.
Usage: ``python benchmarks/bench_readings_source.py [--sensors N] [--days D]``.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))
from bench_readings import write_inputs  # noqa: E402


def range_then_window(site, shared: bool) -> float:
    """Seconds for the data range (a whole read) and then the second half of it (a window)."""
    from schedcheck.jobs.common import data_time_range, load_readings, open_readings

    t0 = time.perf_counter()
    source = open_readings(site)
    first, last = data_time_range(site, source=source)
    start = pd.Timestamp(first + (last - first) / 2, tz=site.timezone).tz_convert("UTC")
    end = pd.Timestamp(last, tz=site.timezone).tz_convert("UTC")
    load_readings(site, start, end, source=source if shared else None)
    return time.perf_counter() - t0


def main() -> int:
    from schedcheck.inputs.site_file import load_site

    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sensors", type=int, default=20)
    ap.add_argument("--days", type=int, default=30)
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        site = load_site(write_inputs(Path(tmp), args.sensors, args.days)["csv"])
        print(f"{args.sensors} sensors x {args.days} days, gzip CSV: data range, then a window")
        for label, shared in (("one source per command", True), ("a fresh source per read",
                                                                  False)):
            print(f"{label:25s} {range_then_window(site, shared):6.1f} s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
