"""Two published switching rules of run-state classification: hysteresis and minimum dwell.

Used by :mod:`schedcheck.runstate.classify` (steps 3 and 5 of its docstring). Hysteresis
switching (a two-level comparator, as in a Schmitt trigger) keeps a noisy level near one
threshold from flipping the state; minimum dwell absorbs runs and stops too short to be real.
"""

from __future__ import annotations

import numpy as np


def hysteresis_states(
    L: np.ndarray, log_on: float, log_off: float, segment: np.ndarray,
    transient: np.ndarray | None = None,
) -> np.ndarray:
    """Two-level switching: True (run) from a reading >= ``log_on`` until one <= ``log_off``.

    Parameters
    ----------
    L : ndarray
        log10 levels, time-ordered [log10 reading unit].
    log_on, log_off : float
        Switching levels, ``log_off <= log_on`` [log10 reading unit].
    segment : ndarray of int
        Data segment of each reading (non-decreasing); no state is carried between segments.
    transient : ndarray of bool, optional
        Readings whose peak shows a start transient: an in-between one of these counts as run.

    Returns
    -------
    ndarray of bool
        Run state per reading. An in-between reading with no earlier decisive reading in its
        segment is run when above the mid-level of the band.
    """
    n = L.size
    decisive = np.where(L >= log_on, 1, np.where(L <= log_off, -1, 0))
    if transient is not None:
        decisive = np.where((decisive == 0) & transient, 1, decisive)
    idx = np.where(decisive != 0, np.arange(n), -1)
    last = np.maximum.accumulate(idx) if n else idx
    seg_first = np.searchsorted(segment, segment, side="left")
    known = last >= seg_first
    own = L >= (log_on + log_off) / 2
    return np.where(known, decisive[np.clip(last, 0, None)] > 0, own)


def min_dwell(
    starts: np.ndarray, ends: np.ndarray, run: np.ndarray, segment: np.ndarray,
    min_run: int, min_stop: int,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Absorb runs shorter than ``min_run`` and stops shorter than ``min_stop`` [ns].

    Only pieces with a neighbour on both sides in the same data segment change (at a gap or a
    window edge nobody knows how long a piece really lasted). Runs are absorbed first, then
    stops; neighbours of equal state are merged after each pass.
    """
    for target, shortest in ((True, min_run), (False, min_stop)):
        if starts.size < 3:
            break
        inner = np.zeros(starts.size, bool)
        inner[1:-1] = (segment[:-2] == segment[1:-1]) & (segment[2:] == segment[1:-1])
        flip = inner & (run == target) & (ends - starts < shortest)
        run = np.where(flip, ~run, run)
        keep = np.concatenate([[True], (run[1:] != run[:-1]) | (segment[1:] != segment[:-1])])
        idx = np.flatnonzero(keep)
        ends = np.concatenate([ends[idx[1:] - 1], ends[-1:]])
        starts, run, segment = starts[idx], run[idx], segment[idx]
    return starts, ends, run, segment
