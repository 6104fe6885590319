"""Speed and memory of the change-point search used by ``schedcheck compare``.

One component's daily off-schedule hours (occupied and unoccupied days, noise, one planted
step halfway) over 8 weeks (the default 28 + 28 days), half a year and a year; PELT with the
capped cost and day types, plus the tie ranges. No target has been set; the figures are for
information (a site of 20 components multiplies them by 20).
Usage: ``python benchmarks/bench_changes.py [--repeat N]``.
"""

from __future__ import annotations

import argparse
import time
import tracemalloc

import numpy as np

from schedcheck.changes.change_points import (
    change_point_ranges,
    mean_shift_penalty,
    pelt_mean_shift,
    robust_sigma,
)
from schedcheck.changes.compare import CAP_SIGMAS, MIN_SEGMENT_DAYS, SIGMA_FLOOR_H


def series(n: int, seed: int = 0) -> tuple[np.ndarray, np.ndarray, int]:
    """Daily off-schedule hours: 0.5 h on occupied days, 0 on weekends, +8 h from day n // 2."""
    rng = np.random.default_rng(seed)
    types = np.where(np.arange(n) % 7 >= 5, "unoccupied", "occupied")
    y = np.where(types == "occupied", 0.5, 0.0) + np.abs(rng.normal(0.0, 0.3, n))
    y[n // 2:] += 8.0
    return y, types, n // 2


def search(y: np.ndarray, types: np.ndarray) -> list[int]:
    sigma = max(robust_sigma(y, types), SIGMA_FLOOR_H)
    pen = mean_shift_penalty(y, types, sigma_floor=SIGMA_FLOOR_H)
    cap = CAP_SIGMAS * sigma
    points = pelt_mean_shift(y, pen, groups=types, min_size=MIN_SEGMENT_DAYS, cap=cap)
    change_point_ranges(y, points, groups=types, min_size=MIN_SEGMENT_DAYS, cap=cap)
    return points


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    for n in (56, 182, 365):
        y, types, truth = series(n)
        best = float("inf")
        for _ in range(args.repeat):
            t0 = time.perf_counter()
            found = search(y, types)
            best = min(best, time.perf_counter() - t0)
        tracemalloc.start()
        search(y, types)
        _, peak = tracemalloc.get_traced_memory()
        tracemalloc.stop()
        print(f"{n:4d} days: best of {args.repeat} {best:.3f} s, peak traced memory "
              f"{peak / 2**20:.1f} MiB, change points {found} (planted {truth})")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
