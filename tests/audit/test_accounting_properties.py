"""Property tests: the accounting identities hold for any tiling, across daylight-saving changes."""

import datetime as dt

import numpy as np
import pandas as pd
from hypothesis import given, settings
from hypothesis import strategies as st

from schedcheck.audit.accounting import FIGURES, account_component
from schedcheck.intervals import NS_PER_H, from_ns, to_ns
from schedcheck.window import day_window

# Windows spanning the 2026 changes: EU last Sundays of March/October (Directive 2000/84/EC),
# US second Sunday of March and first Sunday of November (Energy Policy Act of 2005).
WINDOWS = [
    ("Europe/Oslo", dt.date(2026, 3, 27), dt.date(2026, 3, 31)),
    ("Europe/Oslo", dt.date(2026, 10, 23), dt.date(2026, 10, 27)),
    ("America/New_York", dt.date(2026, 3, 6), dt.date(2026, 3, 10)),
    ("America/New_York", dt.date(2026, 10, 30), dt.date(2026, 11, 3)),
]
MIN_NS = 60 * 10**9


@st.composite
def case(draw):
    tz, first, last = draw(st.sampled_from(WINDOWS))
    start, end = day_window(first, last, tz)
    s0, s1 = to_ns(start), to_ns(end)
    n_min = (s1 - s0) // MIN_NS
    cuts = sorted(set(draw(st.lists(st.integers(1, n_min - 1), max_size=40))))
    edges = np.array([s0] + [s0 + c * MIN_NS for c in cuts] + [s1], dtype=np.int64)
    labels = draw(st.lists(st.sampled_from(["run", "off", "no_data"]),
                           min_size=len(edges) - 1, max_size=len(edges) - 1))
    states = pd.DataFrame({"start": from_ns(edges[:-1]), "end": from_ns(edges[1:]),
                           "state": labels, "level": 1.0})
    rows = draw(st.lists(st.tuples(st.integers(-600, n_min + 600), st.integers(1, 2000),
                                   st.sampled_from(["occupied", "allowance", "allowed"])),
                         max_size=15))
    sched = pd.DataFrame({
        "start": from_ns([s0 + a * MIN_NS for a, _, _ in rows]),
        "end": from_ns([s0 + (a + b) * MIN_NS for a, b, _ in rows]),
        "kind": [k for _, _, k in rows], "source": "x",
    })
    fan = draw(st.booleans())
    return tz, first, last, start, end, states, sched, fan, edges, labels


@settings(max_examples=150, deadline=None)
@given(case())
def test_identities_hold_and_days_sum_to_totals(c):
    tz, first, last, start, end, states, sched, fan, edges, labels = c
    acc = account_component(states, sched, start, end, tz, counts_missed=fan)
    ns = acc.ns
    # nothing lost, nothing counted twice
    assert ns["running"] + ns["off"] + ns["no_data"] == ns["period"] == to_ns(end) - to_ns(start)
    assert ns["in_schedule"] + ns["in_allowance"] + ns["off_schedule"] == ns["running"]
    assert ns["in_schedule"] + ns["occupied_off"] + ns["occupied_no_data"] == ns["scheduled"]
    assert ns["missed"] == (ns["occupied_off"] if fan else 0)
    # the state totals equal the plain sum of the drawn tiling
    lengths = np.diff(edges)
    for name, key in (("run", "running"), ("off", "off"), ("no_data", "no_data")):
        assert ns[key] == int(lengths[np.array(labels) == name].sum())
    # daily rows sum to the totals, to the nanosecond
    for k in FIGURES:
        assert int(acc.daily[f"{k}_ns"].sum()) == ns[k], k
    # local day lengths: 23, 24 or 25 h, one short or long day in each window
    hours = sorted(set((acc.daily["period_ns"] // NS_PER_H).tolist()))
    assert set(hours) <= {23, 24, 25} and len(hours) == 2
    assert (acc.daily["period_ns"] % NS_PER_H == 0).all()
    assert acc.daily["date"].tolist()[0] == first and acc.daily["date"].tolist()[-1] == last
    # starts: off -> run changes in the drawn tiling (adjacent equal labels merge)
    merged = [lab for i, lab in enumerate(labels) if i == 0 or labels[i - 1] != lab]
    seen = sum(1 for a, b in zip(merged, merged[1:], strict=False) if a == "off" and b == "run")
    assert acc.starts == seen == int(acc.daily["starts"].sum())
