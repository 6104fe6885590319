"""A speed for every running minute: measured, configured or estimated, per run piece.

Run pieces are split where the speed level changes. The sources, in order of preference:

* ``measured``: a ``rotation_hz`` readings column (the shaft frequency some sensors estimate
  from the spectrum) and the component's ``design_rpm``: ``speed = rotation_hz * 60 /
  design_rpm`` per reading. Readings are grouped into levels of :data:`SPEED_STEP`; a piece's
  speed is the median of its readings' speeds.
* ``configured``: the component's ``speeds`` (the running level groups found in the readings,
  matched in order, lowest first), or its one ``speed`` where there is one running level.
* ``estimated``: the ratio of a group's level to the top running level, anchored at ``speed``:
  ``s = speed * (level / top_level) ** (1 / k)``, with ``k`` the exponent of vibration velocity
  against shaft speed (``[run_state] speed_exponent``, default :data:`SPEED_EXPONENT`), and a
  range from the limits of :data:`SPEED_EXPONENT_RANGE`.

Why k lies between 1 and 3 (the single-degree-of-freedom model of a machine on springs driven
by a rotating unbalance; e.g. https://novasolver.jp/en/tools/rotating-unbalance.html, or any
vibration textbook's "rotating unbalance" section): the unbalance force is ``F = m e w^2`` and
the displacement ``X = (m e / M) r^2 / sqrt((1 - r^2)^2 + (2 zeta r)^2)`` with ``r = w / w_n``
(running speed over the mounting's natural frequency). Vibration velocity is ``w X``. Well above
the mounting frequency (r >> 1, an isolated fan at full speed) ``X -> m e / M`` and velocity
grows with speed to the power 1; well below it (r << 1, a stiff mounting) ``X ~ w^2`` and
velocity grows with the power 3. A fan on isolators turned down to a third of its speed moves
toward its mounting frequency, between the two. The default 2 sits in the middle of the
sourced range (the choice itself: common practice, no source); the report gives the range.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np
import pandas as pd

from schedcheck.errors import InputError
from schedcheck.intervals import Intervals, to_ns
from schedcheck.runstate import thresholds as th

MEASURED, CONFIGURED, ESTIMATED = "measured", "configured", "estimated"
SPEED_SOURCES = (MEASURED, CONFIGURED, ESTIMATED)
SPEED_EXPONENT = 2.0              # vibration velocity ~ speed ** k [-]; see the module docstring
SPEED_EXPONENT_RANGE = (1.0, 3.0)  # the limits of the rotating-unbalance model [-]
SPEED_STEP = 0.05                 # speed levels for measured speeds and hours by speed [-]
#                                   (common practice, no source: drives are set in 5 % steps)
MIN_GROUP_RATIO = 1.5             # running groups closer in level are one speed (a factor 1.5
#                                   is about 1.2 in speed at k = 2; common practice, no source)
GROUPING_READINGS = 50_000        # running readings the speed groups are found from (a
#                                   regular subsample beyond; common practice, no source)
SMOOTH_READINGS = 5               # a speed level held by fewer readings in a row is absorbed
#                                   by its neighbours (common practice, no source)


@dataclass(frozen=True)
class SpeedLevel:
    """One running level group: its median level [reading unit], speed [-] (with the range
    ``low``..``high`` of an estimate) and source."""

    level: float
    speed: float
    low: float
    high: float
    source: str


@dataclass(frozen=True)
class SpeedPieces:
    """The run time of one component cut into pieces of one speed each.

    ``starts``, ``ends`` [int64 ns UTC] tile the component's ``run`` set exactly, in time order;
    ``speed`` [-], ``low`` / ``high`` (the range of an estimate; equal to ``speed`` otherwise)
    and ``source`` (:data:`SPEED_SOURCES`) per piece. ``levels``: the running level groups with
    their speeds (empty for measured speeds); ``warnings``: one line each; ``level``: the
    median level of the readings inside each piece (a piece with none: the nearest reading's).
    """

    starts: np.ndarray
    ends: np.ndarray
    speed: np.ndarray
    low: np.ndarray
    high: np.ndarray
    source: np.ndarray
    levels: tuple[SpeedLevel, ...] = ()
    warnings: tuple[str, ...] = ()
    exponent: float = SPEED_EXPONENT
    level: np.ndarray | None = None   # median reading level per piece [reading unit]; None:
    #                                   pieces made without readings

    @classmethod
    def constant(cls, run: Intervals, speed: float, source: str = CONFIGURED) -> SpeedPieces:
        """Every run interval at one speed (states read from a table, or no readings)."""
        n = len(run)
        s = np.full(n, float(speed))
        return cls(run.starts.copy(), run.ends.copy(), s, s.copy(), s.copy(),
                   np.full(n, source, dtype=object))

    @property
    def main_source(self) -> str:
        """The weakest source in the run time ('' with none): any estimated piece makes the
        figures estimates; else configured where any piece is; else measured."""
        present = set(self.source.tolist())
        return next((s for s in (ESTIMATED, CONFIGURED, MEASURED) if s in present), "")

    def speed_at(self, instants) -> np.ndarray:
        """The speed [-] at each of the int64 ns ``instants``; NaN where not running."""
        t = np.asarray(instants, dtype=np.int64)
        i = np.searchsorted(self.starts, t, side="right") - 1
        ok = (i >= 0) & (t < self.ends[np.clip(i, 0, None)]) if self.starts.size else i < -1
        out = np.full(t.shape, np.nan)
        out[ok] = self.speed[i[ok]]
        return out

    def speed_ns_per_bin(self, edges) -> np.ndarray:
        """Per bin ``[edges[i], edges[i+1])``: the sum of speed x running time [ns]; divided by
        the bin's running time it is the bin's mean running speed [-]."""
        e = np.asarray(edges, dtype=np.int64)
        if self.starts.size == 0:
            return np.zeros(max(e.size - 1, 0))
        w = self.speed * (self.ends - self.starts)
        cum = np.concatenate([[0.0], np.cumsum(w)])
        k = np.searchsorted(self.starts, e, side="right") - 1
        kk = np.clip(k, 0, None)
        part = np.clip(e - self.starts[kk], 0, self.ends[kk] - self.starts[kk]) * self.speed[kk]
        return np.diff(np.where(k >= 0, cum[kk] + part, 0.0))

    def overlap_ns(self, iv: Intervals) -> np.ndarray:
        """Per piece: its time inside the interval set ``iv`` [ns]."""
        return iv.cumulative_ns(self.ends) - iv.cumulative_ns(self.starts)

    def pieces_within(self, limit: np.ndarray | float) -> Intervals:
        """The pieces whose speed is at or below ``limit`` (one per piece, or one for all)."""
        keep = self.speed <= np.asarray(limit, dtype=float) + 1e-9
        return Intervals.from_arrays(self.starts[keep], self.ends[keep])

    def at_speed(self, speed: float, step: float = SPEED_STEP) -> Intervals:
        """The run time whose speed rounds to ``speed`` at ``step``."""
        keep = np.isclose(np.round(self.speed / step) * step, speed)
        return Intervals.from_arrays(self.starts[keep], self.ends[keep])


def rotation_values(frame: pd.DataFrame | None, t: np.ndarray) -> np.ndarray:
    """The ``rotation_hz`` of the readings at instants ``t`` (NaN where absent) [Hz]."""
    if frame is None or "rotation_hz" not in frame.columns or t.size == 0:
        return np.full(t.size, np.nan)
    ft = to_ns(frame["timestamp"])
    r = frame["rotation_hz"].to_numpy(dtype=float)
    order = np.argsort(ft, kind="stable")
    ft, r = ft[order], r[order]
    j = np.clip(np.searchsorted(ft, t), 0, ft.size - 1)
    return np.where(ft[j] == t, r[j], np.nan)


def _smoothed(x: np.ndarray) -> np.ndarray:
    """A running median over :data:`SMOOTH_READINGS` readings (flicker at a boundary); the
    ends keep their values."""
    w = SMOOTH_READINGS
    if x.size < w:
        return x
    out = np.array(x, dtype=float)
    n = x.size - w + 1
    if w == 5:   # a sorting network of five (Knuth, TAOCP vol. 3, 5.3.4): 9 vectorised
        #          compare-exchanges, several times faster than a partition of each window
        v = [out[i:i + n].copy() for i in range(5)]
        for i, j in _NETWORK5:
            v[i], v[j] = np.minimum(v[i], v[j]), np.maximum(v[i], v[j])
        out[2: x.size - 2] = v[2]
        return out
    win = np.lib.stride_tricks.sliding_window_view(out.copy(), w)
    out[w // 2: x.size - w // 2] = np.partition(win, w // 2, axis=1)[:, w // 2]
    return out


_NETWORK5 = ((0, 1), (3, 4), (2, 4), (2, 3), (0, 3), (0, 2), (1, 4), (1, 3), (1, 2))


def _cut(run_s: np.ndarray, run_e: np.ndarray, t: np.ndarray, key: np.ndarray
         ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Cut run pieces where ``key`` (one per reading) changes between readings.

    Returns sub-piece starts, ends, the index of the first reading of each (-1: a piece with
    no reading inside) and the reading -> sub-piece map.
    """
    p = np.searchsorted(run_s, t, side="right") - 1
    inside = (p >= 0) & (t < run_e[np.clip(p, 0, None)])
    ti, ki, pi = t[inside], key[inside], p[inside]
    new = np.ones(ti.size, bool)
    if ti.size > 1:
        new[1:] = (pi[1:] != pi[:-1]) | (ki[1:] != ki[:-1])
    first = np.flatnonzero(new)
    fp = pi[first]
    if first.size:
        opens = np.concatenate([[True], fp[1:] != fp[:-1]])
        closes = np.concatenate([fp[1:] != fp[:-1], [True]])
        starts = np.where(opens, run_s[fp], (ti[np.maximum(first - 1, 0)] + ti[first]) // 2)
        ends = np.where(closes, run_e[fp], np.concatenate([starts[1:], [0]]))
    else:
        starts = ends = np.zeros(0, np.int64)
    empty = np.setdiff1d(np.arange(run_s.size), pi)       # run pieces without readings
    s = np.concatenate([starts, run_s[empty]])
    e = np.concatenate([ends, run_e[empty]])
    src = np.concatenate([np.flatnonzero(inside)[first], np.full(empty.size, -1)])
    mids = (run_s[empty] + run_e[empty]) // 2
    if empty.size and t.size:                              # the nearest reading's key
        src[first.size:] = np.clip(np.searchsorted(t, mids), 0, t.size - 1)
    order = np.argsort(s, kind="stable")
    member = np.cumsum(new) - 1
    rmap = np.full(t.size, -1)
    rmap[inside] = np.argsort(order)[member]
    return s[order], e[order], src[order], rmap


def piece_levels(starts: np.ndarray, ends: np.ndarray, t: np.ndarray, level: np.ndarray
                 ) -> np.ndarray:
    """The median level of the readings inside each piece ``[starts, ends)`` (time order, not
    overlapping); a piece with no reading inside takes the nearest reading's level; NaN with no
    readings at all [reading unit]."""
    out = np.full(starts.size, np.nan)
    if t.size == 0 or starts.size == 0:
        return out
    k = np.searchsorted(starts, t, side="right") - 1
    inside = (k >= 0) & (t < ends[np.clip(k, 0, None)])
    if inside.any():
        med = pd.Series(level[inside]).groupby(k[inside]).median()
        out[med.index.to_numpy()] = med.to_numpy()
    empty = np.isnan(out)
    if empty.any():
        out[empty] = _nearest(starts[empty], ends[empty], t, level)
    return out


def _levels_by_piece(bs, be, t, level, rmap) -> np.ndarray:
    """:func:`piece_levels` from the reading -> piece map :func:`_cut` made (no search)."""
    out = np.full(bs.size, np.nan)
    ok = rmap >= 0
    if ok.any():
        med = pd.Series(level[ok]).groupby(rmap[ok], sort=False).median()
        out[med.index.to_numpy()] = med.to_numpy()
    empty = np.isnan(out)
    if empty.any() and t.size:   # pieces without a reading: the nearest reading's level
        out[empty] = _nearest(bs[empty], be[empty], t, level)
    return out


def _nearest(bs, be, t, level) -> np.ndarray:
    mid = (bs + be) // 2
    j = np.clip(np.searchsorted(t, mid), 1, max(t.size - 1, 1))
    jj = np.minimum(j, t.size - 1)
    return level[np.where(np.abs(t[j - 1] - mid) <= np.abs(t[jj] - mid), j - 1, jj)]


def _measured(comp, run_s, run_e, t, hz) -> SpeedPieces:
    s = hz * 60.0 / float(comp.design_rpm)
    ok = np.isfinite(s)
    t, s = t[ok], _smoothed(s[ok])
    key = np.round(s / SPEED_STEP).astype(np.int64)
    bs, be, src, rmap = _cut(run_s, run_e, t, key)
    med = pd.Series(s[rmap >= 0]).groupby(rmap[rmap >= 0]).median()
    speed = np.where(src >= 0, s[np.clip(src, 0, None)], comp.speed) if s.size else \
        np.full(bs.size, comp.speed)
    speed[med.index.to_numpy()] = med.to_numpy()
    n = bs.size
    return SpeedPieces(bs, be, speed, speed.copy(), speed.copy(),
                       np.full(n, MEASURED, dtype=object))


def _level_speeds(comp, medians: list[float], exponent: float
                  ) -> tuple[list[SpeedLevel], list[str]]:
    """Speeds of the running level groups (medians in the reading unit, lowest first)."""
    top = medians[-1]
    k_lo, k_hi = SPEED_EXPONENT_RANGE
    warn: list[str] = []
    if comp.speeds and len(comp.speeds) == len(medians):
        return [SpeedLevel(m, v, v, v, CONFIGURED) for m, v in zip(medians, comp.speeds,
                                                                    strict=True)], warn
    anchor = max(comp.speeds) if comp.speeds else comp.speed
    est = [anchor * (m / top) ** (1 / exponent) for m in medians]
    if comp.speeds:
        warn.append(f"{len(medians)} running level group(s) found but {len(comp.speeds)} "
                    f"speeds given; each group takes the nearest given speed to its estimate")
        snap = [min(comp.speeds, key=lambda v, e=e: abs(v - e)) for e in est]
        return [SpeedLevel(m, v, v, v, CONFIGURED) for m, v in zip(medians, snap,
                                                                    strict=True)], warn
    if len(medians) == 1:
        return [SpeedLevel(top, comp.speed, comp.speed, comp.speed, CONFIGURED)], warn
    out = [SpeedLevel(m, v, anchor * (m / top) ** (1 / k_lo), anchor * (m / top) ** (1 / k_hi),
                      CONFIGURED if m == top else ESTIMATED)
           for m, v in zip(medians, est, strict=True)]
    return out, warn


def _speed_boundaries(L: np.ndarray) -> np.ndarray:
    """Boundaries (log10) between running level groups: the level groups of the running
    readings (:func:`.thresholds.level_groups`), neighbours closer than
    :data:`MIN_GROUP_RATIO` merged (the spread and drift of one speed)."""
    # every k-th reading is enough to find the groups (at most GROUPING_READINGS)
    g = th.level_groups(L[:: max(1, L.size // GROUPING_READINGS)])
    keep = [b for b, lo, hi in zip(g.boundaries, g.medians, g.medians[1:], strict=False)
            if hi - lo >= np.log10(MIN_GROUP_RATIO)]
    return np.asarray(keep, dtype=float)


def assign_speeds(
    component, run: Intervals, t: np.ndarray, level: np.ndarray, rotation_hz: np.ndarray,
    *, exponent: float | None = None,
) -> SpeedPieces:
    """Speeds of one component's run time from its readings.

    Parameters
    ----------
    component : Component
        ``speed``, ``speeds``, ``design_rpm`` and ``key`` (for messages).
    run : Intervals
        The component's run set [UTC ns].
    t, level, rotation_hz : ndarray
        Reading instants [int64 ns UTC, ascending], levels [reading unit] and rotation
        frequencies [Hz] (NaN where absent).
    exponent : float, optional
        Vibration velocity against speed [-] for estimates; default :data:`SPEED_EXPONENT`.

    Raises
    ------
    InputError
        ``rotation_hz`` values without a ``design_rpm`` for the component.
    """
    k = SPEED_EXPONENT if exponent is None else float(exponent)
    run_s, run_e = run.starts, run.ends
    if run_s.size == 0:
        return SpeedPieces.constant(run, component.speed)
    has_hz = np.isfinite(rotation_hz)
    in_run = run.contains(t)
    if (has_hz & in_run).any():
        if component.design_rpm is None:
            raise InputError("the readings carry rotation_hz but the component has no "
                             "design_rpm: set design_rpm (rotation speed at design speed, rpm)",
                             key=component.key)
        sp = _measured(component, run_s, run_e, t[in_run], rotation_hz[in_run])
        return dataclasses.replace(sp, level=piece_levels(sp.starts, sp.ends, t[in_run],
                                                          level[in_run]))
    lv = level[in_run]
    tr = t[in_run]
    if lv.size == 0:
        return SpeedPieces.constant(run, component.speed)
    L = np.log10(np.maximum(lv, 1e-12))
    bounds = _speed_boundaries(L)
    key = np.searchsorted(bounds, L, side="left")
    key = np.round(_smoothed(key.astype(float))).astype(np.int64)
    medians = [float(10 ** np.median(L[key == i])) if (key == i).any() else np.nan
               for i in range(bounds.size + 1)]
    levels, warn = _level_speeds(component, medians, k)
    bs, be, src, rmap = _cut(run_s, run_e, tr, key)
    gi = key[np.clip(src, 0, None)]
    sp = np.array([levels[i].speed for i in gi], dtype=float)
    return SpeedPieces(bs, be, sp, np.array([levels[i].low for i in gi], dtype=float),
                       np.array([levels[i].high for i in gi], dtype=float),
                       np.array([levels[i].source for i in gi], dtype=object),
                       tuple(levels), tuple(warn), k, _levels_by_piece(bs, be, tr, lv, rmap))


__all__ = ["CONFIGURED", "ESTIMATED", "MEASURED", "SPEED_EXPONENT", "SPEED_EXPONENT_RANGE",
           "SPEED_SOURCES", "SPEED_STEP", "SpeedLevel", "SpeedPieces", "assign_speeds",
           "rotation_values"]
