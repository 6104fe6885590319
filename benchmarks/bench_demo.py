"""Speed, memory and size of the demo site: build, readings, files.

Target (issue 2, item 8): generating three months for the demo's eleven sensors takes a few
seconds; the written demo stays small (about 10 MB for 1.4 million readings rows).
Usage: ``python benchmarks/bench_demo.py [--months N] [--repeat N]``. Prints the best of N
wall-clock times per stage, the peak resident memory of the process (getrusage; tracemalloc
would slow the CSV writing many times over) and the bytes written.
"""

from __future__ import annotations

import argparse
import resource
import shutil
import tempfile
import time
from pathlib import Path

from schedcheck.demo.build import build_demo, demo_readings
from schedcheck.outputs.demo_files import write_demo


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--months", type=int, default=3)
    ap.add_argument("--repeat", type=int, default=2)
    args = ap.parse_args()
    best = {"build": float("inf"), "readings": float("inf"), "write": float("inf")}
    size = rows = 0
    for _ in range(args.repeat):
        folder = Path(tempfile.mkdtemp(prefix="bench-demo-"))
        try:
            t0 = time.perf_counter()
            demo = build_demo(months=args.months)
            t1 = time.perf_counter()
            readings = demo_readings(demo)
            t2 = time.perf_counter()
            files = write_demo(demo, readings, folder / "d")
            t3 = time.perf_counter()
            best["build"] = min(best["build"], t1 - t0)
            best["readings"] = min(best["readings"], t2 - t1)
            best["write"] = min(best["write"], t3 - t2)
            size = sum(p.stat().st_size for p in files)
            rows = sum(len(f) for f in readings.values())
        finally:
            shutil.rmtree(folder, ignore_errors=True)
    print(f"demo, {args.months} months, {len(demo.machines)} sensors, {rows:,} readings rows")
    for stage, secs in best.items():
        print(f"  {stage:9s} {secs:6.2f} s (best of {args.repeat})")
    print(f"  total     {sum(best.values()):6.2f} s")
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1e3   # Linux: kB
    print(f"  peak resident memory {peak:.0f} MB, written {size / 1e6:.1f} MB")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
