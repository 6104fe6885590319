"""True run states for the seeded generator: truth tables from run lists or a weekday
pattern, outages as no data, and the score of classified states against the truth.

Used with :mod:`schedcheck.demo.synth` (which re-exports these names) by the tests and the demo.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterable, Sequence

import numpy as np
import pandas as pd

from schedcheck.intervals import Intervals, from_ns, to_ns


def _utc(ts) -> pd.Timestamp:
    t = pd.Timestamp(ts)
    if t.tzinfo is None:
        raise ValueError(f"naive instant {ts!r}: give a zone")
    return t.tz_convert("UTC").as_unit("ns")


def _truth_frame(starts: np.ndarray, ends: np.ndarray, states: Sequence[str]) -> pd.DataFrame:
    return pd.DataFrame(
        {"start": from_ns(starts), "end": from_ns(ends), "state": np.asarray(states, dtype=object)}
    )


def _labelled(run: Intervals, start_ns: int, end_ns: int) -> pd.DataFrame:
    """Run set inside the window -> contiguous run/off table covering it."""
    run = run.clip(start_ns, end_ns) if len(run) else run
    off = run.complement(start_ns, end_ns)
    s = np.concatenate([run.starts, off.starts])
    e = np.concatenate([run.ends, off.ends])
    lab = np.array(["run"] * len(run) + ["off"] * len(off), dtype=object)
    order = np.argsort(s, kind="stable")
    return _truth_frame(s[order], e[order], lab[order])


def truth_from_runs(runs: Iterable[tuple], start, end) -> pd.DataFrame:
    """Run periods -> a truth table covering ``[start, end)``.

    Parameters
    ----------
    runs : iterable of (start, end)
        Run periods (tz-aware instants); overlapping or touching ones merge; parts outside the
        window are cut off.
    start, end : tz-aware instants
        The window.

    Returns
    -------
    DataFrame
        ``start, end, state`` (``run`` / ``off``), UTC, contiguous, covering the window.
    """
    s0, e0 = to_ns(_utc(start)), to_ns(_utc(end))
    runs = list(runs)
    if runs:
        rs = np.array([to_ns(_utc(a)) for a, _ in runs], dtype=np.int64)
        re_ = np.array([to_ns(_utc(b)) for _, b in runs], dtype=np.int64)
        run = Intervals.from_arrays(rs, re_)
    else:
        run = Intervals.empty()
    return _labelled(run, s0, e0)


def weekday_truth(
    start,
    end,
    tz: str,
    rng: np.random.Generator,
    *,
    on: str = "06:00",
    off: str = "18:00",
    days: Sequence[int] = (0, 1, 2, 3, 4),
    scatter: str = "10min",
    extra_runs: Iterable[tuple] = (),
) -> pd.DataFrame:
    """A weekday office pattern as a truth table.

    Parameters
    ----------
    start, end : tz-aware instants
        The window.
    tz : str
        IANA zone the on/off times are local to.
    rng : numpy.random.Generator
        Source of the start/stop scatter.
    on, off : str
        Local start and stop times ``HH:MM``.
    days : sequence of int
        Weekdays with a run (Monday = 0).
    scatter : str
        Each start and stop moves by a uniform amount of up to +- this [duration].
    extra_runs : iterable of (start, end)
        Further run periods (overrides, night runs), tz-aware.
    """
    s0, e0 = _utc(start), _utc(end)
    t_on, t_off = dt.time.fromisoformat(on), dt.time.fromisoformat(off)
    sc = pd.Timedelta(scatter).value
    first = s0.tz_convert(tz).date() - dt.timedelta(days=1)
    last = e0.tz_convert(tz).date() + dt.timedelta(days=1)
    dates = pd.date_range(first, last, freq="D")
    dates = dates[np.isin(dates.day_of_week, list(days))]
    on_local = dates + pd.Timedelta(hours=t_on.hour, minutes=t_on.minute)
    off_local = dates + pd.Timedelta(hours=t_off.hour, minutes=t_off.minute)
    loc = dict(nonexistent="shift_forward", ambiguous=True)
    rs = to_ns(pd.DatetimeIndex(on_local).tz_localize(tz, **loc))
    re_ = to_ns(pd.DatetimeIndex(off_local).tz_localize(tz, **loc))
    if sc:
        rs = rs + rng.integers(-sc, sc + 1, rs.size)
        re_ = re_ + rng.integers(-sc, sc + 1, re_.size)
    extra = list(extra_runs)
    if extra:
        rs = np.concatenate([rs, [to_ns(_utc(a)) for a, _ in extra]]).astype(np.int64)
        re_ = np.concatenate([re_, [to_ns(_utc(b)) for _, b in extra]]).astype(np.int64)
    return _labelled(Intervals.from_arrays(rs, re_), to_ns(s0), to_ns(e0))


def _run_set(truth: pd.DataFrame | None) -> Intervals:
    if truth is None or len(truth) == 0:
        return Intervals.empty()
    return Intervals.from_frame(truth[truth["state"] == "run"])


def truth_with_gaps(truth: pd.DataFrame, outages: Iterable[tuple], start, end) -> pd.DataFrame:
    """The truth the classifier should recover: ``no_data`` over the outages.

    Parameters
    ----------
    truth : DataFrame
        ``start, end, state`` covering the window.
    outages : iterable of (start, end)
        Periods with no readings.
    start, end : tz-aware instants
        The window.

    Returns
    -------
    DataFrame
        ``start, end, state`` (``run`` / ``off`` / ``no_data``) covering ``[start, end)``,
        adjacent rows differing in state.
    """
    s0, e0 = to_ns(_utc(start)), to_ns(_utc(end))
    outs = list(outages)
    gap = (
        Intervals.from_arrays([to_ns(_utc(a)) for a, _ in outs], [to_ns(_utc(b)) for _, b in outs])
        if outs else Intervals.empty()
    ).clip(s0, e0)
    run = _run_set(truth).clip(s0, e0) - gap
    off = Intervals.window(s0, e0) - gap - run
    parts = [(run, "run"), (off, "off"), (gap, "no_data")]
    s = np.concatenate([p.starts for p, _ in parts])
    e = np.concatenate([p.ends for p, _ in parts])
    lab = np.concatenate([np.full(len(p), name, dtype=object) for p, name in parts])
    order = np.argsort(s, kind="stable")
    return _truth_frame(s[order], e[order], lab[order])


def _state_at(table: pd.DataFrame, t: np.ndarray) -> np.ndarray:
    s = to_ns(table["start"])
    k = np.clip(np.searchsorted(s, t, side="right") - 1, 0, None)
    e = to_ns(table["end"])
    lab = table["state"].to_numpy(dtype=object)[k]
    return np.where((t >= s[k]) & (t < e[k]), lab, "outside")


def score_states(
    truth: pd.DataFrame,
    found: pd.DataFrame,
    start,
    end,
    *,
    step: str = "60s",
    tolerance: str = "2min",
) -> dict:
    """Compare found run states with the truth, minute by minute and transition by transition.

    Parameters
    ----------
    truth, found : DataFrame
        ``start, end, state`` tables (``found`` e.g. ``ComponentStates.intervals``).
    start, end : tz-aware instants
        Window scored, sampled every ``step`` at the middle of each step.
    step : str
        Sampling step [duration].
    tolerance : str
        A true run/off transition counts as matched when ``found`` has the same transition
        within this distance [duration].

    Returns
    -------
    dict
        ``known_share_correct`` (share of sample instants with a known true state, i.e. not
        ``no_data``, where ``found`` says the same), ``known`` (their number), ``no_data_share``
        of ``found`` over those known instants, ``transitions`` (number of true run/off
        changes), ``unmatched`` (list of true transition instants with no match) and
        ``max_error`` (largest distance to the nearest matching found transition) [Timedelta].
    """
    s0, e0 = to_ns(_utc(start)), to_ns(_utc(end))
    st = pd.Timedelta(step).value
    t = np.arange(s0, e0, st, dtype=np.int64) + st // 2
    a, b = _state_at(truth, t), _state_at(found, t)
    known = (a == "run") | (a == "off")
    nk = int(known.sum())
    share = float((a[known] == b[known]).mean()) if nk else float("nan")

    def changes(tab: pd.DataFrame) -> tuple[np.ndarray, np.ndarray]:
        lab = tab["state"].to_numpy(dtype=object)
        ok = (lab[:-1] != "no_data") & (lab[1:] != "no_data") & (lab[:-1] != lab[1:])
        at = to_ns(tab["start"])[1:][ok]
        kind = lab[1:][ok]
        inside = (at > s0) & (at < e0)
        return at[inside], kind[inside]

    ta, ka = changes(truth)
    fb, kb = changes(found)
    tol = pd.Timedelta(tolerance).value
    unmatched, worst = [], 0
    for kind in ("run", "off"):
        x, y = ta[ka == kind], np.sort(fb[kb == kind])
        if x.size == 0:
            continue
        if y.size == 0:
            unmatched.extend(x.tolist())
            continue
        j = np.clip(np.searchsorted(y, x), 1, y.size - 1) if y.size > 1 else np.zeros(x.size, int)
        d = np.abs(y[j] - x)
        if y.size > 1:
            d = np.minimum(d, np.abs(y[j - 1] - x))
        worst = max(worst, int(d.max()))
        unmatched.extend(x[d > tol].tolist())
    return {
        "known_share_correct": share,
        "known": nk,
        "no_data_share": float((b[known] == "no_data").mean()) if nk else float("nan"),
        "transitions": int(ta.size),
        "unmatched": [from_ns([u])[0] for u in sorted(unmatched)],
        "max_error": pd.Timedelta(worst),
    }


def fault_hours_as_audited(kind: str, episodes, schedule: pd.DataFrame) -> float:
    """A planted fault's hours by the audit's definitions [h], so the demo's table of planted
    faults can be read against the audit's table: for ``missed`` the occupied time inside the
    fault (the fan was off), for ``over_speed`` the fault's running outside occupied periods
    and allowances (it runs in an allowed window above its ``max_speed``), for every other kind
    the fault's running outside occupied periods, allowances and allowed windows (off-schedule
    running).

    Parameters
    ----------
    kind : str
        The fault's finding kind.
    episodes : sequence of (Timestamp, Timestamp)
        The fault's true UTC ``[start, end)`` spans.
    schedule : pandas.DataFrame
        The unit's intended intervals (``start``, ``end``, ``kind``: occupied, allowance,
        allowed), as :func:`schedcheck.schedule.intended.unit_schedule` gives them.
    """
    ep = Intervals.from_arrays([_utc(a).value for a, _ in episodes],
                               [_utc(b).value for _, b in episodes])
    if kind == "missed":
        occupied = Intervals.from_frame(schedule[schedule["kind"] == "occupied"])
        return ep.intersection(occupied).hours()
    if kind == "over_speed":
        return ep.difference(Intervals.from_frame(schedule[schedule["kind"] != "allowed"])
                             ).hours()
    return ep.difference(Intervals.from_frame(schedule)).hours()
