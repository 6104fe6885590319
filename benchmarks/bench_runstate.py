"""Speed and memory of the run-state classifier: one year of one sensor's minute readings.

Target (issue 3): 525,600 readings classified in under 0.5 s on the project machine.
Usage: ``python benchmarks/bench_runstate.py [--repeat N] [--whole-mg]``. Prints the best of N
wall-clock times, the peak memory traced by tracemalloc during one run, and how well the states
match the generator's truth (a sanity check that the figure is for real work).
"""

from __future__ import annotations

import argparse
import time
import tracemalloc

import numpy as np
import pandas as pd

from schedcheck.demo import synth
from schedcheck.runstate import classify as runstate
from schedcheck.site import Component, RunStateSettings, ScheduleSettings, Unit

TARGET_S = 0.5


def year_of_readings(seed: int = 1, *, whole_mg: bool = False) -> tuple[
        pd.DataFrame, pd.DataFrame, pd.Timestamp, pd.Timestamp]:
    start = pd.Timestamp("2025-01-01T00:00Z")
    end = pd.Timestamp("2026-01-01T00:00Z")
    rng = np.random.default_rng(seed)
    truth = synth.weekday_truth(start, end, "Europe/Oslo", rng)
    frame = synth.readings_for_component(
        truth, sensor="B-1", rng=rng, start=start, end=end, packet_loss=0.0, duplicates=0.0,
        out_of_order=0.0, level_drift=0.02,
        **(dict(running_level=200.0, noise_floor=4.0, noise_per_axis=True, resolution=1.0)
           if whole_mg else {}))
    return frame, truth, start, end


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=5)
    ap.add_argument("--whole-mg", action="store_true",
                    help="readings in whole mg (reading step found, levels dithered)")
    args = ap.parse_args()
    frame, truth, start, end = year_of_readings(whole_mg=args.whole_mg)
    comp = Component("supply", "BENCH", "supply_fan", "B-1", 5.0, 1.0)
    unit = Unit("BENCH", "bench", ScheduleSettings(), (comp,))
    gap, settings = pd.Timedelta("5min"), RunStateSettings()
    best = float("inf")
    for _ in range(args.repeat):
        t0 = time.perf_counter()
        res = runstate.classify_unit(unit, {"B-1": frame}, start, end, gap, settings)
        best = min(best, time.perf_counter() - t0)
    tracemalloc.start()
    runstate.classify_unit(unit, {"B-1": frame}, start, end, gap, settings)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    score = synth.score_states(truth, res[comp.key].intervals, start, end)
    print(f"readings: {len(frame):,}")
    print(f"classify_unit, best of {args.repeat}: {best:.3f} s (target < {TARGET_S} s) "
          f"{'OK' if best < TARGET_S else 'SLOW'}")
    print(f"peak traced memory: {peak / 2**20:.1f} MiB")
    print(f"known minutes right: {score['known_share_correct']:.4%}, transitions: "
          f"{score['transitions']}, max error: {score['max_error']}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
