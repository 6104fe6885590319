"""CAPA (collective and point anomalies) on a component's daily off-schedule hours.

:func:`capa` is the published method: Fisch, Eckley and Fearnhead, "A linear time method for
the detection of collective and point anomalies", Statistical Analysis and Data Mining 15(4),
494-508 (2022). On a series standardised so that its usual level is 0 and its spread 1, it
finds, by dynamic programming with pruning, the segments whose mean departs from 0 (collective
anomalies, at least ``min_length`` days) and the single days that do (point anomalies), by
maximising the penalised saving

    C(s, e) = (sum of x over [s, e))^2 / (e - s) - beta          (a collective anomaly)
    C(t) = x_t^2 - beta_point                                     (a point anomaly)

over non-overlapping anomalies. That saving is the fall in squared error when a segment gets its
own mean instead of the baseline (the mean-change cost of the paper, variance known).

Defaults (each with its source): ``beta = 1 + 2 sqrt(log n) + 2 log n``, the chi-square
penalty of one parameter ("penalty regime 1" of Fisch, Eckley and Fearnhead, "Subset
multivariate segment and point anomaly detection", JCGS 31(2), 574-585, 2022, the default of
skchange's CAPA for one series), ``beta_point = 2 beta`` (skchange's default, which puts
collective anomalies first); minimum segment :data:`MIN_LENGTH` days; maximum segment the
whole series. Pruning drops a start once it
can no longer beat the best saving by more than ``beta`` (the paper's pruning rule); it does
not change the result.

:func:`daily_episodes` prepares the series (robust standardisation by median and MAD with a
floor, since a healthy unit's series is mostly zeros and has no spread) and turns the anomalies
into dated episodes. The usual level is the median, unless the median itself is off-schedule
running (the unit was wrong for most of the window): then the schedule-conforming level, 0 h a
day, is the baseline, since the schedule says what usual should be.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import numpy as np

#: Smallest spread used for standardising [h/day]: half an hour a day of off-schedule running
#: is the least departure worth an episode (common practice, no source). A setting:
#: ``[findings] episode_floor``.
SCALE_FLOOR_H = 0.5
#: A median above this is itself a fault: the baseline is then 0 h a day [h/day] (common
#: practice, no source; a unit that runs an hour a day outside its schedule is not "usual").
CONFORMING_MEDIAN_H = 1.0
#: Scale factor that makes the MAD a standard deviation for normal data (1 / Phi^-1(3/4)).
MAD_TO_SD = 1.4826
#: Shortest collective anomaly [days]: a behaviour episode lasts at least a week; shorter
#: departures are findings of their own or point anomalies (common practice, no source; the
#: method's own floor, skchange's default, is 2). On seeded Gaussian series of 120 days it also
#: holds false collective episodes to 5 % with the default penalty (7 % with 2).
MIN_LENGTH = 7   # a setting: [findings] episode_min_days


@dataclass(frozen=True)
class Anomalies:
    """CAPA's result: collective anomalies as ``[start, end)`` index pairs, point anomalies as
    indices, both in increasing order."""

    collective: list[tuple[int, int]]
    points: list[int]


@dataclass(frozen=True)
class Episode:
    """A period in which the daily off-schedule hours departed from their usual level."""

    start: dt.date
    end: dt.date                 # inclusive
    kind: str                    # "collective" | "point"
    mean_h_per_day: float
    usual_h_per_day: float


def chi2_penalty(n: int) -> float:
    """``1 + 2 sqrt(log n) + 2 log n``: the collective-anomaly penalty for one series."""
    psi = float(np.log(max(n, 2)))
    return 1.0 + 2.0 * np.sqrt(psi) + 2.0 * psi


def capa(x: np.ndarray, *, beta: float | None = None, beta_point: float | None = None,
         min_length: int = MIN_LENGTH, max_length: int | None = None) -> Anomalies:
    """Collective and point anomalies of a standardised series (baseline mean 0, spread 1).

    Parameters
    ----------
    x : ndarray
        The standardised series [-].
    beta, beta_point : float, optional
        Penalties for a collective and a point anomaly (defaults: module docstring) [-].
    min_length, max_length : int
        Shortest and longest collective anomaly [samples]; ``max_length`` defaults to the
        whole series.
    """
    x = np.asarray(x, dtype=float)
    n = x.size
    if n == 0:
        return Anomalies([], [])
    beta = chi2_penalty(n) if beta is None else float(beta)
    beta_point = 2.0 * beta if beta_point is None else float(beta_point)
    max_length = n if max_length is None else max(int(max_length), min_length)
    sums = np.concatenate([[0.0], np.cumsum(x)])
    best = np.zeros(n + 1)               # best[t]: optimal saving of x[:t]
    choice = np.full(n, -1, dtype=np.int64)   # start of the anomaly ending at t, or -1
    starts = np.empty(0, dtype=np.int64)
    for t in range(n):
        options = [best[t], -np.inf, best[t] + x[t] * x[t] - beta_point]
        if t >= min_length - 1:
            starts = np.append(starts, t - min_length + 1)
            seg = (sums[t + 1] - sums[starts]) ** 2 / (t + 1 - starts) - beta
            cand = best[starts] + seg
            k = int(np.argmax(cand))
            options[1] = cand[k]
        pick = int(np.argmax(options))
        best[t + 1] = options[pick]
        if pick == 1:
            choice[t] = starts[k]
        elif pick == 2:
            choice[t] = t
        if starts.size:
            keep = (cand + beta > best[t + 1]) & (starts >= t - max_length + 2)
            starts = starts[keep]
    collective, points = [], []
    t = n - 1
    while t >= 0:
        s = int(choice[t])
        if s >= 0 and t - s + 1 > 1:
            collective.append((s, t + 1))
            t = s - 1
            continue
        if s == t:
            points.append(t)
        t -= 1
    return Anomalies(collective[::-1], points[::-1])


def standardise(hours: np.ndarray, *, floor: float = SCALE_FLOOR_H,
                conforming: float = CONFORMING_MEDIAN_H) -> tuple[np.ndarray, float, float]:
    """``(x, baseline, scale)``: the series standardised by its usual level and robust spread.

    Days without a figure (NaN) become the baseline (no evidence either way).
    """
    h = np.asarray(hours, dtype=float)
    known = h[np.isfinite(h)]
    if known.size == 0:
        return np.zeros(h.size), 0.0, floor
    median = float(np.median(known))
    baseline = median if median <= conforming else 0.0
    mad = float(np.median(np.abs(known - median))) * MAD_TO_SD
    scale = max(mad, floor)
    x = np.where(np.isfinite(h), (h - baseline) / scale, 0.0)
    return x, baseline, scale


def daily_episodes(dates: list[dt.date], hours: np.ndarray, *, shown: np.ndarray | None = None,
                   **settings) -> list[Episode]:
    """Episodes of one component's daily off-schedule hours [h/day], with local dates.

    ``hours`` is the series CAPA reads; ``shown`` (default ``hours``), the same days' hours
    whose means the episodes report (the audit dates on the hours with allowed windows filled
    in and reports the plain off-schedule hours: :mod:`schedcheck.changes.episodes`).

    Days without a figure (NaN: no data) are left out of the series CAPA reads, so a silent
    sensor neither ends an episode nor looks like a return to the usual level; an episode runs
    from its first to its last day with a figure.

    Only departures upwards (more off-schedule running than usual) are episodes of waste; a
    collective anomaly below the usual level (the waste stopping) is kept too, so that "it
    stopped on 3 March" can be read off the episode that ends there.

    Anomalies that touch and depart the same way are one episode (:func:`joined`): a change
    made part-way through a day leaves that day between the old and the new level, which CAPA
    marks as a point anomaly beside the collective one.
    """
    h = np.asarray(hours, dtype=float)
    floor = settings.pop("floor", SCALE_FLOOR_H)
    known = np.flatnonzero(np.isfinite(h))
    x, baseline, _ = standardise(h[known], floor=floor)
    found = capa(x, **settings)
    h = h if shown is None else np.asarray(shown, dtype=float)
    usual = baseline if shown is None else standardise(h, floor=floor)[1]
    spans = [(s, e, "collective") for s, e in found.collective]
    spans += [(t, t + 1, "point") for t in found.points]
    out = []
    for s, e, kind in edged(joined(sorted(spans), x), x):
        first, last = int(known[s]), int(known[e - 1])
        out.append(Episode(dates[first], dates[last], kind, _mean(h[known[s:e]]),
                           round(usual, 2)))
    return sorted(out, key=lambda ep: (ep.start, ep.kind))


def joined(spans: list[tuple[int, int, str]], x: np.ndarray) -> list[tuple[int, int, str]]:
    """Anomalies ``(start, end, kind)`` in order, those that touch and lie on the same side of
    the baseline joined; a join that holds a collective anomaly is one. Two points alone stay
    two points (a pair of odd days is not a period)."""
    out: list[list] = []
    for s, e, kind in spans:
        side = np.sign(x[s:e].sum())
        if out and out[-1][1] == s and out[-1][3] == side and "collective" in (kind, out[-1][2]):
            out[-1][1], out[-1][2] = e, "collective"
        else:
            out.append([s, e, kind, side])
    return [(s, e, kind) for s, e, kind, _ in out]


#: A day just outside a collective episode, departing the same way by more than this many
#: spreads (at least the floor), belongs to it: a fault that starts in the evening leaves its
#: first day with only a few hours (22:00-24:00 of a nightly setback), too few for CAPA to
#: move the boundary, though the first night began then (common practice, no source).
EDGE_SPREADS = 1.0


def edged(spans: list[tuple[int, int, str]], x: np.ndarray) -> list[tuple[int, int, str]]:
    """Each collective anomaly widened by one day at either end where that day, not part of
    another anomaly, departs the same way by more than :data:`EDGE_SPREADS`."""
    taken = np.zeros(x.size, dtype=bool)
    for s, e, _ in spans:
        taken[s:e] = True
    out = []
    for s, e, kind in spans:
        if kind == "collective":
            side = np.sign(x[s:e].sum())
            if s > 0 and not taken[s - 1] and side * x[s - 1] > EDGE_SPREADS:
                s -= 1
            if e < x.size and not taken[e] and side * x[e] > EDGE_SPREADS:
                e += 1
        out.append((s, e, kind))
    return out


def _mean(h: np.ndarray) -> float:
    """The mean of the days with a figure [h/day], rounded; 0 where none has one."""
    known = h[np.isfinite(h)]
    return round(float(known.mean()), 2) if known.size else 0.0
