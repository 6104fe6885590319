"""The demo's building-system trends: command and status points of some fans, with one planted
case of each trend finding (invented data, like the rest of the demo).

The export ``bms/trends.csv`` is long format (``Time, Point, Value``), as a building automation
system writes it: change-of-value logging with a repeat sample every :data:`REPEAT` (so a
value stays known over a weekend), one point logged on change of value only (long silences:
unknown after ``[trends] max_gap``), one status sampled at intervals, and rows repeated where
two export runs overlapped. Nothing here changes a vibration reading or the demo's other truth;
the random choices come from their own stream of the seed.

Planted cases (``trend_truth``, saved as ``truth/trends.json``):

* ``hand_mode``: AHU-2's supply fan on the second override night: the command stayed off (the
  fan ran in hand); on the other nights the override was in the controls, so the command was on;
* ``failed_start``: AHU-4's trip on 2026-03-18: both fans commanded on, neither running;
* ``false_status``: AHU-1's supply status stuck on from Friday 2026-05-08 19:00 to Sunday
  23:00 while the fan was stopped;
* AHU-3's controller clock ignores daylight saving: its command moves with its (late) running,
  so no ``hand_mode`` or ``failed_start`` may come of it.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from schedcheck.demo.plan import NIGHT_OVERRIDE, TRIP, TZ
from schedcheck.intervals import NS_PER_S, Intervals, from_ns, to_ns

TRENDS_EXPORT = "bms/trends.csv"
#: a change-of-value log that also repeats its value this often (invented demo setting)
REPEAT = pd.Timedelta("12h")
STATUS_INTERVAL = pd.Timedelta("5min")     # the interval-sampled status
DUPLICATE_SHARE = 0.02                     # rows repeated by overlapping export runs

# component key -> (command point, status point or None, how the command is logged)
POINTS = {
    "AHU-1/supply": ("LH-AHU1-SF-CMD", "LH-AHU1-SF-STS", "repeat"),
    "AHU-2/supply": ("LH-AHU2-SF-CMD", "LH-AHU2-SF-STS", "repeat"),
    "AHU-3/supply": ("LH-AHU3-SF-CMD", None, "repeat"),
    "AHU-4/supply": ("LH-AHU4-SF-CMD", None, "repeat"),
    "AHU-4/exhaust": ("LH-AHU4-EF-CMD", None, "repeat"),
    "AHU-5/supply": ("LH-AHU5-SF-SPD", None, "change"),     # speed command in %
}
# in the export but named by no component (exports carry more points than an audit uses)
UNUSED = {"AHU-2/wheel": "LH-AHU2-HRW-CMD"}
SENSOR_OF = {"AHU-1/supply": "VB-1011", "AHU-2/supply": "VB-1021", "AHU-3/supply": "VB-1031",
             "AHU-4/supply": "VB-1041", "AHU-4/exhaust": "VB-1042", "AHU-5/supply": "VB-1051"}
HAND_NIGHT = NIGHT_OVERRIDE[1][1]                                  # 2026-03-10
STUCK_STATUS = ("AHU-1/supply", "2026-05-08T19:00:00", "2026-05-10T23:00:00")


def trend_site_toml(text: str) -> str:
    """The demo's site file with ``[trends]`` and each commanded fan's ``command``/``status``."""
    by_sensor = {SENSOR_OF[k]: v for k, v in POINTS.items()}
    out = []
    for line in text.split("\n"):
        out.append(line)
        sensor = line.partition('sensor = "')[2].rstrip('"') if line.startswith("sensor") else ""
        if sensor in by_sensor:
            cmd, sts, _ = by_sensor[sensor]
            out.append(f'command = "{cmd}"')
            if sts:
                out.append(f'status = "{sts}"')
        if line.startswith("[[unit]]") and "[trends]" not in "\n".join(out):
            out[-1:] = ["[trends]", f'files = ["{TRENDS_EXPORT}"]',
                        'columns = { timestamp = "Time", point = "Point", value = "Value" }',
                        'naive_time = "local"', 'max_gap = "24h"', "", line]
    return "\n".join(out)


def _runs(demo, key: str) -> Intervals:
    t = demo.truth[key]
    r = t[t["state"] == "run"]
    return Intervals.from_arrays(to_ns(r["start"]), to_ns(r["end"]))


def _local(text: str) -> int:
    return int(to_ns(pd.Timestamp(text).tz_localize(TZ)))


def planted_commands(demo) -> dict[str, Intervals]:
    """When each commanded fan's command was on (UTC ns), before logging."""
    s0, e0 = int(to_ns(demo.start)), int(to_ns(demo.end))
    out = {}
    for key in POINTS:
        on = _runs(demo, key)
        for f in demo.faults:
            if f.component != key:
                continue
            ep = Intervals.from_arrays([to_ns(a) for a, _ in f.episodes],
                                       [to_ns(b) for _, b in f.episodes])
            if f.kind == "night" and key == "AHU-2/supply":
                hand = [(to_ns(a), to_ns(b)) for a, b in f.episodes
                        if pd.Timestamp(a).tz_convert(TZ).date() == HAND_NIGHT]
                on = on.difference(Intervals.from_arrays([a for a, _ in hand],
                                                         [b for _, b in hand]))
            if f.kind == "missed" and f.dates == (str(TRIP[1]),):
                on = on.union(ep)        # the command stayed on through the trip
        out[key] = on.clip(s0, e0)
    return out


def _samples(on: Intervals, s0: int, e0: int, rng, *, lead: tuple[int, int],
             repeat: bool) -> tuple[np.ndarray, np.ndarray]:
    """Change-of-value samples of an on/off signal (edges moved by ``lead`` seconds early),
    plus repeats every REPEAT where ``repeat``."""
    n = len(on)
    a = on.starts - rng.integers(*lead, n) * NS_PER_S
    b = on.ends - rng.integers(0, 6, n) * NS_PER_S
    t = np.concatenate([[s0], a, b])
    v = np.concatenate([[0.0], np.ones(n), np.zeros(n)])
    if n and on.starts[0] <= s0:
        v[0] = 1.0
    order = np.argsort(t, kind="stable")
    t, v = t[order], v[order]
    if repeat:
        grid = np.arange(s0, e0, int(REPEAT.value), dtype=np.int64)
        k = np.searchsorted(t, grid, side="right") - 1
        t, v = np.concatenate([t, grid]), np.concatenate([v, v[np.maximum(k, 0)]])
        order = np.argsort(t, kind="stable")
        t, v = t[order], v[order]
    keep = (t >= s0) & (t < e0)
    return t[keep], v[keep]


def trend_export(demo) -> pd.DataFrame:
    """The rows of ``bms/trends.csv``: Time (local ISO 8601 with offset), Point, Value."""
    rng = np.random.default_rng([demo.seed, 17])
    s0, e0 = int(to_ns(demo.start)), int(to_ns(demo.end))
    parts = []
    for key, on in planted_commands(demo).items():
        cmd, sts, logging = POINTS[key]
        t, v = _samples(on, s0, e0, rng, lead=(3, 26), repeat=logging == "repeat")
        if cmd.endswith("SPD"):
            words = np.where(v > 0, "75.0", "0.0")
        else:
            words = np.where(v > 0, "Active", "Inactive")
        parts.append(pd.DataFrame({"t": t, "Point": cmd, "Value": words}))
        if sts is None:
            continue
        run = _runs(demo, key)
        if key == STUCK_STATUS[0]:
            run = run.union(Intervals.from_arrays([_local(STUCK_STATUS[1])],
                                                  [_local(STUCK_STATUS[2])])).clip(s0, e0)
        if key == "AHU-2/supply":     # an older controller: the status sampled at intervals
            grid = np.arange(s0, e0, int(STATUS_INTERVAL.value), dtype=np.int64)
            k = np.searchsorted(run.starts, grid, side="right") - 1
            inside = (k >= 0) & (grid < run.ends[np.maximum(k, 0)])
            t, v = grid, inside.astype(float)
        else:                          # a current switch: changes a few seconds after the fan
            shifted = Intervals.from_arrays(run.starts + 5 * NS_PER_S, run.ends + 3 * NS_PER_S)
            t, v = _samples(shifted.clip(s0, e0), s0, e0, rng, lead=(0, 1), repeat=True)
        parts.append(pd.DataFrame({"t": t, "Point": sts, "Value": np.where(v > 0, "ON", "OFF")}))
    for key, name in UNUSED.items():
        t, v = _samples(_runs(demo, key), s0, e0, rng, lead=(3, 26), repeat=True)
        parts.append(pd.DataFrame({"t": t, "Point": name,
                                   "Value": np.where(v > 0, "Active", "Inactive")}))
    rows = pd.concat(parts, ignore_index=True)
    dup = rows.sample(frac=DUPLICATE_SHARE, random_state=int(rng.integers(2**31)))
    rows = pd.concat([rows, dup]).sort_values(["Point", "t"], kind="stable")
    times = from_ns(rows["t"].to_numpy()).tz_convert(TZ)
    return pd.DataFrame({"Time": times.strftime("%Y-%m-%dT%H:%M:%S%z").str.replace(
                             r"(\d\d)(\d\d)$", r"\1:\2", regex=True),
                         "Point": rows["Point"].to_numpy(), "Value": rows["Value"].to_numpy()})


def trend_truth(demo) -> dict:
    """The planted cases with their true spans and hours, and the clock-fault unit."""
    s0, e0 = int(to_ns(demo.start)), int(to_ns(demo.end))
    cmd = planted_commands(demo)
    cases = []

    def add(key: str, kind: str, spans: Intervals, note: str) -> None:
        if len(spans):
            a, b = from_ns([spans.starts[0]])[0], from_ns([spans.ends[-1]])[0]
            cases.append({"component": key, "kind": kind,
                          "date": a.tz_convert(TZ).date().isoformat(),
                          "start": a.isoformat(), "end": b.isoformat(),
                          "hours": round(spans.hours(), 4), "note": note})

    run2 = _runs(demo, "AHU-2/supply")
    add("AHU-2/supply", "hand_mode", run2.difference(cmd["AHU-2/supply"]),
        f"AHU-2's supply fan ran in hand on the night starting {HAND_NIGHT}: the command "
        "stayed off.")
    for key in ("AHU-4/supply", "AHU-4/exhaust"):
        add(key, "failed_start", cmd[key].difference(_runs(demo, key)),
            f"AHU-4 tripped on {TRIP[1]}: commanded on, not running.")
    stuck = Intervals.from_arrays([_local(STUCK_STATUS[1])], [_local(STUCK_STATUS[2])])
    add(STUCK_STATUS[0], "false_status",
        stuck.difference(_runs(demo, STUCK_STATUS[0])).clip(s0, e0),
        "AHU-1's supply status point stuck on over a weekend while the fan was stopped.")
    return {"note": "Invented demo data: the trend cases planted by the generator.",
            "export": TRENDS_EXPORT,
            "points": {k: {"command": c, "status": s, "logging": lg}
                       for k, (c, s, lg) in POINTS.items()},
            "cases": cases, "clock_fault_units": ["AHU-3"]}
