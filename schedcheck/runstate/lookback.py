"""The look-back: readings around the audit window that the classifier learns from.

A month audited on its own must give that month's figures inside a longer audit. So:

* the on/off levels are learned from every reading in the files (``learn_from_all``, the
  default), or from the look-back and the window only (``learn_from_all = false``);
* the states are classified over the look-back and the window together (a run that began
  before the window is the same run), and only the window's part is reported
  (:func:`window_states`);
* the clock check (:mod:`schedcheck.findings.clock`) takes the look-back's working days as its
  reference days, so the look-back reaches at least
  :data:`schedcheck.daylight.CLOCK_REACH` before the latest daylight-saving change;
  when the levels are learned from all readings, the states also run on for ``CLOCK_REACH``
  after the window where readings exist (:func:`lookahead_last`), so a window that ends just
  after a change sees the days that show the shift.

Defaults (each with its source):

* ``LOOKBACK`` = 8 weeks (56 days) before the window's first local date, where readings exist.
  Common practice, no source: two months hold a few dozen working days and weekends, enough
  for the stopped and the running level groups to show even when the window itself is a fan
  that never stopped. Set ``[run_state] lookback`` (``0min`` = none, the window alone).
* ``LEARN_FROM_ALL`` = True. Common practice, no source: a level learned from more readings
  sees every level group the sensor shows (a heat wheel's carried vibration may appear only in
  the mild months), and it makes every window's states those of the whole audit.
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import math

import numpy as np
import pandas as pd

from schedcheck.daylight import CLOCK_REACH, reference_first
from schedcheck.intervals import Intervals, to_ns
from schedcheck.runstate.classify import (
    ComponentStates,
    classify_unit,
    data_warnings,
    run_summary,
)
from schedcheck.runstate.speeds import SpeedPieces
from schedcheck.runstate.states import STATES, StateSets
from schedcheck.site import RunStateSettings

LOOKBACK = pd.Timedelta("56D")
LEARN_FROM_ALL = True


def learns_from_all(settings: RunStateSettings | None) -> bool:
    """Whether levels are learned from every reading in the files (see :data:`LEARN_FROM_ALL`);
    never with a look-back of 0 (the window alone)."""
    given = getattr(settings, "learn_from_all", None) if settings is not None else None
    return (LEARN_FROM_ALL if given is None else bool(given)) and lookback_of(settings) > \
        pd.Timedelta(0)


def lookback_of(settings: RunStateSettings | None) -> pd.Timedelta:
    """The look-back in force: ``[run_state] lookback`` or :data:`LOOKBACK`."""
    given = getattr(settings, "lookback", None) if settings is not None else None
    return LOOKBACK if given is None else pd.Timedelta(given)


def lookback_first(first: dt.date, lookback: pd.Timedelta) -> dt.date:
    """The first local date of the look-back: whole days, ``lookback`` rounded up to days."""
    days = math.ceil(pd.Timedelta(lookback) / pd.Timedelta("1D"))
    return first - dt.timedelta(days=max(days, 0))


def lookback_dates(first: dt.date, tz: str, settings: RunStateSettings | None) -> dt.date:
    """The first local date to read for a window that begins on ``first``: ``lookback``
    before it, or further back to :data:`schedcheck.daylight.CLOCK_REACH` before the
    latest daylight-saving change where that is earlier (the clock check's reference days).
    A look-back of 0 turns both off."""
    lb = lookback_of(settings)
    if lb <= pd.Timedelta(0):
        return first
    want = lookback_first(first, lb)
    clock = reference_first(first, tz)
    return min(want, clock) if clock is not None else want


def lookahead_last(last: dt.date, settings: RunStateSettings | None) -> dt.date:
    """The last local date the states are worked out for: ``CLOCK_REACH`` after ``last`` when
    the levels are learned from every reading (:func:`learns_from_all`), else ``last`` (then
    an audit of a past window never changes when newer readings arrive)."""
    return last + CLOCK_REACH if learns_from_all(settings) else last


def window_states(cs: ComponentStates, start: pd.Timestamp, end: pd.Timestamp) -> ComponentStates:
    """States classified over a look-back and the window, cut to the window ``[start, end)``.

    The pieces are clipped, the sets, starts and run share recomputed for the window, and the
    warning about missing readings measured over the window (the on/off level, learned from
    everything, is kept).
    """
    s0, e0 = int(to_ns(pd.Timestamp(start))), int(to_ns(pd.Timestamp(end)))
    bs, be = np.clip(cs.piece_starts, s0, e0), np.clip(cs.piece_ends, s0, e0)
    keep = be > bs
    bs, be = bs[keep].astype(np.int64), be[keep].astype(np.int64)
    names, levels = cs.piece_states[keep], cs.piece_levels[keep]
    starts, share = run_summary(bs, be, names)
    sets = StateSets(*(Intervals.from_arrays(bs[names == st], be[names == st]) for st in STATES))
    old = set(data_warnings(cs.component.sensor, cs.piece_starts, cs.piece_ends,
                            cs.piece_states, int(cs.piece_starts[0]) if cs.piece_starts.size
                            else s0, int(cs.piece_ends[-1]) if cs.piece_ends.size else e0))
    warn = [w for w in cs.warnings if w not in old]
    warn += data_warnings(cs.component.sensor, bs, be, names, s0, e0)
    return dataclasses.replace(cs, sets=sets, piece_starts=bs, piece_ends=be,
                               piece_states=names, piece_levels=levels, starts=starts,
                               run_share=share, warnings=tuple(warn),
                               speeds=_window_speeds(cs.speeds, s0, e0))


def _window_speeds(sp: SpeedPieces | None, s0: int, e0: int) -> SpeedPieces | None:
    """Speed pieces cut to the window ``[s0, e0)`` [int64 ns UTC]."""
    if sp is None:
        return None
    a, b = np.clip(sp.starts, s0, e0), np.clip(sp.ends, s0, e0)
    keep = b > a
    return dataclasses.replace(sp, starts=a[keep].astype(np.int64),
                               ends=b[keep].astype(np.int64), speed=sp.speed[keep],
                               low=sp.low[keep], high=sp.high[keep], source=sp.source[keep],
                               level=None if sp.level is None else sp.level[keep])


def classify_with_lookback(
    units, by_sensor, lookback_start: pd.Timestamp, start: pd.Timestamp, end: pd.Timestamp,
    max_gap: pd.Timedelta, settings: RunStateSettings | None = None, *, level_unit: str = "mm/s",
    progress=None, ahead_end: pd.Timestamp | None = None,
) -> tuple[dict[str, ComponentStates], dict[str, ComponentStates]]:
    """Classify every unit over ``[lookback_start, ahead_end)`` and cut the states to the window.

    Parameters
    ----------
    units : iterable of Unit
    by_sensor : mapping
        Sensor id -> readings frame covering the look-back and the window (more readings, the
        whole files say, are learned from but given no states).
    lookback_start, start, end : Timestamp
        The look-back's first instant, the window ``[start, end)`` (tz-aware);
        ``lookback_start`` may equal ``start`` (no look-back).
    max_gap, settings, level_unit
        As for :func:`schedcheck.runstate.classify.classify_unit`.
    progress : callable, optional
        Called with a short line per unit.
    ahead_end : Timestamp, optional
        The end of the days after the window that are classified too (default ``end``).

    Returns
    -------
    window, whole : dict
        Component key -> states of the window only, and of the whole span classified.
    """
    until = end if ahead_end is None else max(end, ahead_end)
    say = progress or (lambda _m: None)
    whole: dict[str, ComponentStates] = {}
    for unit in units:
        say(f"classifying run states of {unit.id}")
        whole.update(classify_unit(unit, by_sensor, min(lookback_start, start), until, max_gap,
                                   settings, level_unit=level_unit))
    if lookback_start >= start and until <= end:
        return dict(whole), whole
    return {k: window_states(cs, start, end) for k, cs in whole.items()}, whole
