"""Energy at the real speed, and the speed limits of allowed windows and standby ventilation.

Energy is summed over pieces of constant speed: ``power_kw * speed ** exponent * hours``
(:func:`schedcheck.audit.energy.affinity_power`), so it is exact minute by minute for the speeds
the run states carry (:class:`schedcheck.runstate.speeds.SpeedPieces`).

Limits (interface section 6): occupied periods, allowances and allowed windows without
``max_speed`` accept any speed. A minute in an allowed window with ``max_speed``, or any other
minute when ``standby_speed`` is set, is allowed only while the speed is at or below the limit
(the higher where both apply). Above it the minute is off-schedule and only the energy above
what the limit would have used counts: ``power_kw * (speed ** exponent - limit ** exponent)``.

Everything is cut into *elementary segments* at every boundary of the inputs (speed pieces,
limit zones, off-schedule running, day edges), inside which all of them are constant; sums over
segments are exact in integer nanoseconds.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from schedcheck.audit.energy import affinity_power
from schedcheck.intervals import NS_PER_H, Intervals, to_ns
from schedcheck.runstate.speeds import SpeedPieces


@dataclass(frozen=True)
class LimitZones:
    """Where a speed limit applies: disjoint pieces ``starts``, ``ends`` [int64 ns UTC] with
    their ``limit`` [-], and ``limited`` (the allowed windows with a ``max_speed``, which then
    allow running only up to their limit)."""

    starts: np.ndarray
    ends: np.ndarray
    limit: np.ndarray
    limited: Intervals

    @classmethod
    def none(cls) -> LimitZones:
        z = np.zeros(0, np.int64)
        return cls(z, z, np.zeros(0), Intervals.empty())

    def limit_at(self, t: np.ndarray) -> np.ndarray:
        """The limit at each instant [-]; 0 where none applies (every running minute there is
        off-schedule at full energy, or allowed at any speed: the caller knows which)."""
        i = np.searchsorted(self.starts, t, side="right") - 1
        ok = (i >= 0) & (t < self.ends[np.clip(i, 0, None)]) if self.starts.size else i < -1
        out = np.zeros(t.shape)
        out[ok] = self.limit[i[ok]]
        return out

    def zone_set(self) -> Intervals:
        return Intervals.from_arrays(self.starts, self.ends)


def limit_zones(window: Intervals, free: Intervals, limits: pd.DataFrame | None,
                standby: float | None) -> LimitZones:
    """The limit zones of one unit's schedule.

    Parameters
    ----------
    window : Intervals
        The audit window [UTC ns].
    free : Intervals
        Time allowed at any speed: occupied periods, allowances and allowed windows without
        ``max_speed`` [UTC ns].
    limits : DataFrame or None
        ``start, end, max_speed`` of allowed windows with a limit (may overlap) [UTC, -].
    standby : float or None
        ``standby_speed`` [-].
    """
    have = limits is not None and len(limits) > 0
    if not have and standby is None:
        return LimitZones.none()
    if have:
        ls, le = to_ns(limits["start"]), to_ns(limits["end"])
        lv = limits["max_speed"].to_numpy(dtype=float)
    else:
        ls = le = np.zeros(0, np.int64)
        lv = np.zeros(0)
    limited = Intervals.from_arrays(ls, le) & window
    limited = limited - free
    zone = limited | (window - free) if standby is not None else limited
    cuts = np.unique(np.concatenate([zone.starts, zone.ends, ls, le]))
    a, b = cuts[:-1], cuts[1:]
    mid = a + (b - a) // 2
    inz = zone.contains(mid)
    a, b, mid = a[inz], b[inz], mid[inz]
    lim = np.full(a.size, float(standby) if standby is not None else 0.0)
    for s, e, v in zip(ls, le, lv, strict=True):     # the higher limit where both apply
        hit = (mid >= s) & (mid < e)
        lim[hit] = np.maximum(lim[hit], v)
    return LimitZones(a, b, lim, limited)


def _segments(pieces: SpeedPieces, *cut_sets: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Elementary segments of the run time: cut at every piece edge and every given instant."""
    cuts = np.unique(np.concatenate([pieces.starts, pieces.ends, *cut_sets]))
    a, b = cuts[:-1], cuts[1:]
    keep = Intervals.from_arrays(pieces.starts, pieces.ends).contains(a + (b - a) // 2)
    return a[keep], b[keep]


def within_limit(pieces: SpeedPieces, zones: LimitZones) -> Intervals:
    """The running time inside the limit zones at or below their limit [UTC ns]."""
    if zones.starts.size == 0 or pieces.starts.size == 0:
        return Intervals.empty()
    a, b = _segments(pieces, zones.starts, zones.ends)
    mid = a + (b - a) // 2
    inz = zones.zone_set().contains(mid)
    ok = inz & (pieces.speed_at(mid) <= zones.limit_at(mid) + 1e-9)
    return Intervals.from_arrays(a[ok], b[ok])


def energy_per_bin(pieces: SpeedPieces, power_kw: float, exponent: float, edges: np.ndarray,
                   inside: Intervals | None = None, zones: LimitZones | None = None
                   ) -> np.ndarray:
    """kWh per bin ``[edges[i], edges[i+1])`` of running (only ``inside`` when given), at the
    pieces' speeds, less what the zones' limits would have used [kWh]."""
    edges = np.asarray(edges, dtype=np.int64)
    extra = [edges]
    if inside is not None:
        extra += [inside.starts, inside.ends]
    if zones is not None:
        extra += [zones.starts, zones.ends]
    a, b = _segments(pieces, *extra)
    mid = a + (b - a) // 2
    keep = inside.contains(mid) if inside is not None else np.ones(a.size, bool)
    a, b, mid = a[keep], b[keep], mid[keep]
    kw = affinity_power(power_kw, pieces.speed_at(mid), exponent)
    if zones is not None and zones.starts.size:
        kw = np.maximum(np.asarray(kw) - affinity_power(power_kw, zones.limit_at(mid), exponent),
                        0.0)
    kwh = np.asarray(kw, dtype=float) * (b - a) / NS_PER_H
    k = np.searchsorted(edges, a, side="right") - 1
    ok = (k >= 0) & (k < edges.size - 1)
    return np.bincount(k[ok], weights=kwh[ok], minlength=edges.size - 1)[: edges.size - 1]


def hours_by_speed(pieces: SpeedPieces, step: float) -> list[tuple[float, float]]:
    """Running hours grouped by speed rounded to ``step``: ``(speed, hours)``, lowest first."""
    if pieces.starts.size == 0:
        return []
    r = np.round(np.round(pieces.speed / step) * step, 4)
    ns = pd.Series(pieces.ends - pieces.starts).groupby(r).sum()
    return [(float(s), float(h) / NS_PER_H) for s, h in ns.items()]


def energy_between(pieces: SpeedPieces, power_kw: float, exponent: float, starts: np.ndarray,
                   ends: np.ndarray, inside: Intervals, zones: LimitZones | None = None
                   ) -> np.ndarray:
    """kWh of the running inside ``inside`` within each ``[starts[i], ends[i])``, at the
    pieces' speeds less the zones' limits (as :func:`energy_per_bin`) [kWh]."""
    s, e = np.asarray(starts, np.int64), np.asarray(ends, np.int64)
    if s.size == 0:
        return np.zeros(0)
    edges = np.unique(np.concatenate([s, e]))
    if edges.size < 2:
        return np.zeros(s.size)
    cum = np.concatenate([[0.0], np.cumsum(energy_per_bin(pieces, power_kw, exponent, edges,
                                                          inside=inside, zones=zones))])
    return cum[np.searchsorted(edges, e)] - cum[np.searchsorted(edges, s)]
