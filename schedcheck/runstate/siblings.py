"""Evidence from a unit's other components for judging a middle level group (carried or not).

A component's middle level group is carried vibration when it appears only while a sibling
runs. That sibling's running must be its own, never a level the judged component may have
caused: fans are judged first against their siblings' top group only (a sibling's middle group
may be the fan's own echo), and the other components (heat wheels) against the fans' decided
states (:func:`schedcheck.runstate.classify.classify_unit`).
"""

from __future__ import annotations

import numpy as np

from schedcheck.runstate import thresholds as th


def moving(t: np.ndarray, L: np.ndarray, g: th.LevelGroups, floor: float) -> np.ndarray:
    b = g.boundaries[0] if g.count >= 2 else np.log10(floor)
    return L > b


def sibling_moving(t: np.ndarray, others: list[tuple[np.ndarray, np.ndarray]],
                    max_gap: int) -> np.ndarray | None:
    """Per reading time: 1 if any other component moved (nearest reading within max_gap)."""
    if not others or t.size == 0:
        return None
    out = np.full(t.size, np.nan)
    for ts, mv in others:
        if ts.size == 0:
            continue
        j = np.clip(np.searchsorted(ts, t), 1, max(ts.size - 1, 1)) if ts.size > 1 else None
        if j is None:
            near, dist = np.zeros(t.size, int), np.abs(ts[0] - t)
        else:
            left = np.abs(t - ts[j - 1]) <= np.abs(ts[j] - t)
            near = np.where(left, j - 1, j)
            dist = np.abs(ts[near] - t)
        val = np.where(dist <= max_gap, mv[near].astype(float), np.nan)
        out = np.where(np.isnan(out), val, np.where(np.isnan(val), out, np.maximum(out, val)))
    return out




def own(moving: tuple[np.ndarray, np.ndarray], Lg: np.ndarray, g: th.LevelGroups | None
         ) -> tuple[np.ndarray, np.ndarray]:
    """A sibling's readings in its top group when it has three (its own running level)."""
    if g is None or g.count < 3 or Lg.size == 0:
        return moving
    return moving[0], Lg > g.boundaries[-1]


def decided(cs, prep, moving: tuple[np.ndarray, np.ndarray] | None = None
            ) -> tuple[np.ndarray, np.ndarray]:
    """A sibling's decided state at its readings: True where it runs.

    Outside the span the sibling was classified over (readings learned from but given no
    states: the whole files, where levels are learned from all of them), its level-based
    ``moving`` flags stand in, so a later month's running fans still explain a wheel's
    carried vibration."""
    t = prep[0].t
    run = cs.sets.run.contains(t)
    if moving is None or cs.piece_starts.size == 0:
        return t, run
    inside = (t >= cs.piece_starts[0]) & (t < cs.piece_ends[-1])
    return t, np.where(inside, run, moving[1])
