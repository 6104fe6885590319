"""Run-state classification: vibration readings -> run / off / no_data intervals per component.

Steps, for each component (see ``docs/run-states.md`` for the user's view):

1. **Level.** One level per reading: the vector magnitude of the RMS axes present,
   ``sqrt(x_rms^2 + y_rms^2 + z_rms^2)`` [reading unit]; the magnitude of the peak axes is kept
   as supporting evidence (start transients). Grouping works on ``log10(level)``.
2. **On/off level.** A ``threshold`` set for the component wins (source ``configured``).
   Otherwise the log levels are grouped (:func:`schedcheck.runstate.thresholds.level_groups`: Otsu's
   split, Ashman's D, a histogram valley) and the level is learned (source ``learned``: the
   lowest point of the histogram between the off and the running group), or, when they do
   not split into well-separated groups, decided against an absolute floor level
   (source ``floor``). Three groups: the middle one is judged from the unit's other components
   (a group seen only while a sibling moves is carried vibration, not running).
3. **Hysteresis.** A reading at or above ``on_level`` means run, at or below ``off_level``
   means off, in between keeps the previous state; an in-between reading whose peak is a start
   transient (crest factor >= ``TRANSIENT_CREST``) counts as run.
4. **Gaps.** ``max_gap`` follows the sensor's reading interval when the interval is more than
   half of it (:func:`schedcheck.runstate.sensor.timing`, which also warns about intervals too
   coarse for starts). Each reading stands for the time up to half-way to its neighbours. A silence
   longer than ``max_gap`` is ``no_data`` (half a reading period after the last reading to
   half a period before the next) and no state is carried across it. A silence between a
   window edge and the nearest reading is bridged when it is no longer than ``max_gap``.
5. **Minimum dwell.** A run shorter than ``min_run`` or a stop shorter than ``min_stop`` with
   known states on both sides is absorbed by its neighbours (runs first, then stops).

Starts: an ``off`` -> ``run`` change inside the window. A run that follows ``no_data`` or opens
the window is not counted: nobody saw it start.

Defaults (each with its source):

* ``MIN_RUN``, ``MIN_STOP`` = 3 min, or ``DWELL_PERIODS`` = 2.5 reading periods when readings
  are rarer than one a minute: one or two odd readings never start or stop a fan (common
  practice, no source). Settings given in the site file are used as they are.
* ``TRANSIENT_CREST`` = 2.5: steady running fans show crest factors of about 1.4-2 (sine
  sqrt(2); common practice, no source), start transients more.
* The floor level, hysteresis and carried-vibration defaults are documented in
  :mod:`schedcheck.runstate.onofflevel`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import cached_property

import numpy as np
import pandas as pd

from schedcheck.errors import InputError
from schedcheck.intervals import Intervals, from_ns, to_ns
from schedcheck.runstate import lowgroups, sensor
from schedcheck.runstate import thresholds as th
from schedcheck.runstate.levels import (  # noqa: F401 - re-exported: the classifier's public names
    PEAK,
    RMS,
    log_levels,
    reading_levels,
)
from schedcheck.runstate.onofflevel import (  # noqa: F401 - re-exported: the classifier's public names
    CARRIED_SHARE,
    FLOOR_BY_UNIT,
    HYSTERESIS,
    SEPARATION_CAP,
    Threshold,
    choose_threshold,
    default_floor,
)
from schedcheck.runstate.siblings import decided as _decided
from schedcheck.runstate.siblings import moving as _moving
from schedcheck.runstate.siblings import own as _own
from schedcheck.runstate.siblings import sibling_moving as _sibling_moving
from schedcheck.runstate.speeds import SpeedPieces, assign_speeds, rotation_values
from schedcheck.runstate.states import NO_DATA, NO_DATA_WARN, OFF, RUN, STATES, StateSets
from schedcheck.runstate.switching import hysteresis_states, min_dwell  # noqa: F401 - re-exported
from schedcheck.site import Component, RunStateSettings, Unit

MIN_RUN = pd.Timedelta("3min")
MIN_STOP = pd.Timedelta("3min")
DWELL_PERIODS = 2.5       # default dwell in reading periods, when longer than 3 min [-]
TRANSIENT_CREST = 2.5     # [-]


@dataclass(frozen=True)
class ComponentStates:
    """Run states of one component over ``[start, end)``, in the form the core passes on.

    ``sets``: the ``run``/``off``/``no_data`` interval sets tiling the window (what the
    accounting and the findings take). ``piece_starts``, ``piece_ends`` [int64 ns UTC],
    ``piece_states`` and ``piece_levels``: the contiguous pieces in time order, adjacent pieces
    differing in state; a piece's level is the median level of the readings inside [reading
    unit], NaN for ``no_data``. ``starts``: off -> run changes inside the window.
    ``run_share``: running time over known (run + off) time [-], NaN with no known time.
    ``warnings``: data warnings (the threshold's own warnings are in ``threshold.warnings``;
    ``threshold`` is None for states read from a table).
    """

    component: Component
    sets: StateSets
    piece_starts: np.ndarray
    piece_ends: np.ndarray
    piece_states: np.ndarray
    piece_levels: np.ndarray
    threshold: Threshold | None
    starts: int
    run_share: float
    warnings: tuple[str, ...] = ()
    speeds: SpeedPieces | None = None   # run time by speed (runstate/speeds.py); None = `speed`

    @cached_property
    def speed_pieces(self) -> SpeedPieces:
        """The run time cut into pieces of one speed each (:mod:`schedcheck.runstate.speeds`)."""
        return (self.speeds if self.speeds is not None
                else SpeedPieces.constant(self.sets.run, self.component.speed))

    def speed_at(self, instants: np.ndarray) -> np.ndarray:
        """The speed [-] at each of the int64 ns ``instants``; NaN where not running."""
        return self.speed_pieces.speed_at(instants)

    @cached_property
    def intervals(self) -> pd.DataFrame:
        """The pieces as a table ``start, end, state, level`` (UTC), for outputs and users."""
        return pd.DataFrame({
            "start": from_ns(self.piece_starts), "end": from_ns(self.piece_ends),
            "state": self.piece_states, "level": self.piece_levels,
        })

    def level_at(self, instants: np.ndarray) -> np.ndarray:
        """The level of the piece each of the int64 ns ``instants`` lies in; NaN in no_data,
        before the first piece, or where the piece has no level [reading unit]."""
        t = np.asarray(instants, dtype=np.int64)
        if self.piece_starts.size == 0:
            return np.full(t.shape, np.nan)
        idx = np.searchsorted(self.piece_starts, t, side="right") - 1
        lv = self.piece_levels.astype(float)[np.clip(idx, 0, None)]
        lv[idx < 0] = np.nan
        lv[self.sets.no_data.contains(t)] = np.nan
        return lv

    @classmethod
    def from_table(cls, component: Component, table: pd.DataFrame, start: pd.Timestamp,
                   end: pd.Timestamp) -> ComponentStates:
        """States read from a table ``start, end, state`` (and ``level``, optional), checked
        once by :meth:`StateSets.from_table`; the pieces are the table's rows in time order."""
        sets = StateSets.from_table(table, start, end)
        tab = table.sort_values("start", kind="stable")
        level = (tab["level"].astype(float).to_numpy() if "level" in tab.columns
                 else np.full(len(tab), np.nan))
        bs, be = to_ns(tab["start"]), to_ns(tab["end"])
        codes = np.asarray(tab["state"].astype(str).to_numpy(), dtype=object)
        starts, share = run_summary(bs, be, codes)
        return cls(component, sets, np.asarray(bs, np.int64), np.asarray(be, np.int64), codes,
                   level, None, starts, share, sets.warnings)


@dataclass(frozen=True)
class _Levels:
    """One sensor's finite readings in time order: instants [int64 ns UTC], levels [reading
    unit], crest factors of the peak axes [-] and log10 levels (floored)."""

    t: np.ndarray
    level: np.ndarray
    crest: np.ndarray
    log_level: np.ndarray
    rotation: np.ndarray | None = None   # rotation_hz per reading [Hz], NaN where absent


# -- states ----------------------------------------------------------------------------------
_CODES = np.array([OFF, RUN, NO_DATA], dtype=object)


def _state_table(
    t: np.ndarray, L: np.ndarray, lv: np.ndarray, pk: np.ndarray, thr: Threshold,
    s0: int, e0: int, max_gap: int, min_run: int | None, min_stop: int | None,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Readings (time-ordered, inside the window +- max_gap) -> the contiguous pieces.

    Returns piece starts and ends [int64 ns UTC], state codes (0 off, 1 run, 2 no_data) and
    median levels [reading unit].
    """
    n = t.size
    if n == 0:
        codes, bs, be = np.array([2]), np.array([s0]), np.array([e0])
    else:
        dt = np.diff(t)
        newseg = np.concatenate([[True], dt > max_gap])
        seg = np.cumsum(newseg) - 1
        inside = dt[dt <= max_gap]
        period = min(int(np.median(inside)) if inside.size else max_gap, max_gap)
        half = period // 2
        dwell = max(int(MIN_RUN.value), int(DWELL_PERIODS * period))
        min_run = dwell if min_run is None else min_run
        min_stop = dwell if min_stop is None else min_stop
        mid = t[:-1] + dt // 2
        a = np.concatenate([[t[0] - half], np.where(newseg[1:], t[1:] - half, mid)])
        b = np.concatenate([np.where(newseg[1:], t[:-1] + half, mid), [t[-1] + half]])
        # a silence at a window edge no longer than max_gap is bridged like any other
        if t[0] - s0 <= max_gap:
            a[0] = min(a[0], s0)
        if e0 - t[-1] <= max_gap:
            b[-1] = max(b[-1], e0)
        with np.errstate(invalid="ignore"):
            transient = pk >= TRANSIENT_CREST
        run = hysteresis_states(L, np.log10(thr.on_level), np.log10(thr.off_level), seg,
                                np.nan_to_num(transient, nan=False).astype(bool))
        first = np.concatenate([[True], (run[1:] != run[:-1]) | newseg[1:]])
        idx = np.flatnonzero(first)
        rs, re_ = a[idx], np.concatenate([b[idx[1:] - 1], b[-1:]])
        rs, re_, rr, rseg = min_dwell(rs, re_, run[idx], seg[idx], min_run, min_stop)
        # no_data: before the first piece, between data segments, after the last
        seg_start = np.concatenate([[True], rseg[1:] != rseg[:-1]])
        gap_s = np.concatenate([[s0], re_[np.flatnonzero(seg_start)[1:] - 1], re_[-1:]])
        gap_e = np.concatenate([rs[:1], rs[seg_start][1:], [e0]])
        bs = np.concatenate([rs, gap_s])
        be = np.concatenate([re_, gap_e])
        codes = np.concatenate([rr.astype(int), np.full(gap_s.size, 2)])
        order = np.argsort(bs, kind="stable")
        bs, be, codes = np.clip(bs[order], s0, e0), np.clip(be[order], s0, e0), codes[order]
        keep = be > bs
        bs, be, codes = bs[keep], be[keep], codes[keep]
        first = np.concatenate([[True], codes[1:] != codes[:-1]])
        idx = np.flatnonzero(first)
        be = np.concatenate([be[idx[1:] - 1], be[-1:]])
        bs, codes = bs[idx], codes[idx]
    level = np.full(bs.size, np.nan)
    win = (t >= s0) & (t < e0)
    if win.any():
        k = np.searchsorted(bs, t[win], side="right") - 1
        med = pd.Series(lv[win]).groupby(k).median()
        level[med.index.to_numpy()] = med.to_numpy()
        empty = np.isnan(level) & (codes != 2)
        if empty.any():   # a sliver with no reading inside: the nearest reading's level
            j = np.clip(np.searchsorted(t, (bs[empty] + be[empty]) // 2), 0, n - 1)
            level[empty] = lv[j]
    level[codes == 2] = np.nan
    return bs.astype(np.int64), be.astype(np.int64), codes, level


def run_summary(bs: np.ndarray, be: np.ndarray, st: np.ndarray) -> tuple[int, float]:
    """Seen starts (an ``off`` piece followed by a ``run`` piece) and the run share of the
    known time [-] of contiguous pieces (state names ``st``)."""
    starts = int(((st[1:] == RUN) & (st[:-1] == OFF)).sum())
    length = (np.asarray(be, np.int64) - np.asarray(bs, np.int64)) / 1e9     # [s]
    known = length[st != NO_DATA].sum()
    return starts, (float(length[st == RUN].sum() / known) if known > 0 else float("nan"))


def data_warnings(sensor_id: str, bs: np.ndarray, be: np.ndarray, names: np.ndarray, s0: int,
                  e0: int) -> list[str]:
    """The warning about missing readings over ``[s0, e0)`` [int64 ns] from the pieces: none
    at all, or more than :data:`schedcheck.runstate.states.NO_DATA_WARN` ``.note`` of it."""
    nd_len = (be - bs)[names == NO_DATA]
    if nd_len.sum() >= e0 - s0:
        return [f"no readings from sensor {sensor_id} in the window"]
    nd_h = float(nd_len.sum() / 1e9 / 3600)
    total_h = (e0 - s0) / 3.6e12
    if nd_h > NO_DATA_WARN.note * total_h:
        longest = float(nd_len.max() / 1e9 / 3600)
        return [f"{nd_h:.1f} h without readings ({nd_h / total_h:.1%} of the window; "
                f"longest silence {longest:.1f} h)"]
    return []


def _prepared(frame: pd.DataFrame | None, name: str, floor: float) -> _Levels:
    if frame is None or len(frame) == 0:
        z = np.zeros(0)
        return _Levels(np.zeros(0, np.int64), z, z, z)
    t, lv, pk = reading_levels(frame, name=name)
    ok = np.isfinite(lv)
    t, lv, pk = t[ok], lv[ok], pk[ok]
    return _Levels(t, lv, pk, log_levels(lv, floor), rotation_values(frame, t))


def classify_component(
    component: Component, frame: pd.DataFrame | None, start: pd.Timestamp, end: pd.Timestamp,
    max_gap: pd.Timedelta, settings: RunStateSettings | None = None, *,
    level_unit: str = "mm/s", sibling_moving: np.ndarray | None = None,
) -> ComponentStates:
    """Run states of one component from its sensor's readings (no siblings unless given).

    Parameters
    ----------
    component : Component
        The component (its ``threshold`` overrides learning).
    frame : DataFrame or None
        Its sensor's readings: ``timestamp`` and level columns [reading unit]. Every reading
        given is used to learn the level; states are produced for ``[start, end)``.
    start, end : Timestamp
        The window (tz-aware).
    max_gap : Timedelta
        Longer silences are ``no_data`` [duration].
    settings : RunStateSettings
        ``min_run``, ``min_stop``, ``floor`` (None = the documented defaults).
    level_unit : str
        The readings' unit label, for the default floor level.
    sibling_moving : ndarray, optional
        See :func:`choose_threshold`; one entry per finite reading, in time order.
    """
    settings = settings if settings is not None else RunStateSettings()
    base, fw = default_floor(settings, level_unit)
    floor, step = _sensor_facts(frame, settings, base)
    levels = _prepared(frame, component.sensor, floor)
    gap, tw = sensor.timing(levels.t, pd.Timedelta(max_gap), component.sensor)
    thr = choose_threshold(_grouping_levels(levels.level, levels.log_level, step, floor),
                           configured=component.threshold, floor=floor,
                           sibling_moving=sibling_moving,
                           **_learning_settings(settings, step, levels.t))
    return _finish(component, levels, thr, start=start, end=end, max_gap=gap,
                   settings=settings, warnings=fw + tw)


def _sensor_facts(frame: pd.DataFrame | None, settings: RunStateSettings,
                  base: float) -> tuple[float, float]:
    """The floor level in force and the reading step of one sensor [reading unit].

    The default floor (the table ``FLOOR_BY_UNIT``) is for three axes combined: the magnitude
    of n axes of independent noise is sqrt(n) times one axis's, so a sensor with fewer axes
    gets sqrt(n / 3) of it. A floor set in the site file is used as it is.
    """
    axes = sensor.axes_count(frame)
    floor = base if settings.floor is not None else base * np.sqrt(axes / 3)
    step = settings.resolution if settings.resolution is not None else sensor.reading_step(frame)
    return float(floor), float(step)


def _grouping_levels(lv: np.ndarray, L: np.ndarray, step: float, floor: float) -> np.ndarray:
    """log10 levels to learn from: dithered over one reading step when readings are quantised."""
    # dithered levels are at least half a step, so no zero needs raising as in log_levels
    return np.log10(sensor.dithered(lv, step)) if step > 0 and lv.size else L


def _learning_settings(settings: RunStateSettings, step: float, t: np.ndarray) -> dict:
    return {"step": step, "times": t,
            "idle_ratio": (settings.idle_ratio if settings.idle_ratio is not None
                           else lowgroups.IDLE_RATIO),
            "shift_days": (settings.shift_days if settings.shift_days is not None
                           else lowgroups.SHIFT_DAYS)}


def _finish(
    component: Component, levels: _Levels, threshold: Threshold, *, start: pd.Timestamp,
    end: pd.Timestamp, max_gap: pd.Timedelta, settings: RunStateSettings,
    warnings: list[str] | tuple[str, ...],
) -> ComponentStates:
    """The component's states over ``[start, end)`` from its readings and on/off level.

    ``warnings`` (the floor level's) come first; a warning about missing readings is added
    when they pass :data:`schedcheck.runstate.states.NO_DATA_WARN` ``.note`` of the window.
    """
    s0, e0 = to_ns(pd.Timestamp(start)), to_ns(pd.Timestamp(end))
    if e0 <= s0:
        raise InputError(f"the window ends ({end}) before it starts ({start})", key="window")
    mg = int(pd.Timedelta(max_gap).value)
    t = levels.t
    sel = (t >= s0 - mg) & (t < e0 + mg)
    min_run = None if settings.min_run is None else int(settings.min_run.value)
    min_stop = None if settings.min_stop is None else int(settings.min_stop.value)
    bs, be, codes, level = _state_table(t[sel], levels.log_level[sel], levels.level[sel],
                                        levels.crest[sel], threshold, s0, e0, mg, min_run,
                                        min_stop)
    names = _CODES[codes]
    starts, share = run_summary(bs, be, names)
    sets = StateSets(*(Intervals.from_arrays(bs[names == st], be[names == st]) for st in STATES))
    warn = list(warnings) + data_warnings(component.sensor, bs, be, names, s0, e0)
    rot = levels.rotation if levels.rotation is not None else np.full(t.size, np.nan)
    sp = assign_speeds(component, sets.run, t[sel], levels.level[sel], rot[sel],
                       exponent=settings.speed_exponent)
    warn += [f"speeds: {w}" for w in sp.warnings]
    return ComponentStates(component, sets, bs, be, names, level, threshold, starts, share,
                           tuple(warn), sp)


def classify_unit(
    unit: Unit, readings: Mapping[str, pd.DataFrame], start: pd.Timestamp, end: pd.Timestamp,
    max_gap: pd.Timedelta, settings: RunStateSettings | None = None, *,
    level_unit: str = "mm/s",
) -> dict[str, ComponentStates]:
    """Run states of every component of a unit, judging middle level groups by the siblings.

    Parameters
    ----------
    unit : Unit
        The unit and its components.
    readings : mapping
        Sensor id -> readings frame (``timestamp`` UTC + level columns); a missing sensor gives
        all ``no_data``.
    start, end : Timestamp
        The window [start, end) (tz-aware).
    max_gap : Timedelta
        Longer silences are ``no_data`` [duration].
    settings : RunStateSettings
        Classifier settings (None fields = documented defaults).
    level_unit : str
        The readings' unit label, for the default floor level.

    Returns
    -------
    dict
        ``Component.key`` -> :class:`ComponentStates`.
    """
    settings = settings if settings is not None else RunStateSettings()
    base, fw = default_floor(settings, level_unit)
    prep, groups, moving, facts, gaps = {}, {}, {}, {}, {}
    for c in unit.components:
        frame = readings.get(c.sensor)
        floor, step = facts[c.key] = _sensor_facts(frame, settings, base)
        levels = _prepared(frame, c.sensor, floor)
        Lg = _grouping_levels(levels.level, levels.log_level, step, floor)
        prep[c.key] = levels, Lg
        t = levels.t
        gaps[c.key] = sensor.timing(t, pd.Timedelta(max_gap), c.sensor)
        groups[c.key] = th.level_groups(Lg) if Lg.size else None
        moving[c.key] = (t, _moving(t, Lg, groups[c.key], floor) if Lg.size else Lg.astype(bool))
    # carried vibration is judged from a sibling's own decided state, never from a level this
    # component may have caused: fans (the sources of vibration) first, against their siblings'
    # top group only (a sibling's middle group may be this fan's echo); then the other
    # components against the fans' decided states
    out: dict[str, ComponentStates] = {}
    order = sorted(unit.components, key=lambda c: not c.is_fan)
    for c in order:
        levels, Lg = prep[c.key]
        t = levels.t
        floor, step = facts[c.key]
        gap, tw = gaps[c.key]
        others = [(moving[o.key] if o.key not in out
                   else _decided(out[o.key], prep[o.key], moving[o.key]))
                  if not c.is_fan else _own(moving[o.key], prep[o.key][1], groups[o.key])
                  for o in unit.components if o.key != c.key and o.sensor != c.sensor]
        mg = max([int(gaps[o.key][0].value) for o in unit.components])
        sib = _sibling_moving(t, others, mg)
        thr = choose_threshold(Lg, configured=c.threshold, floor=floor, sibling_moving=sib,
                               groups=groups[c.key], **_learning_settings(settings, step, t))
        out[c.key] = _finish(c, levels, thr, start=start, end=end, max_gap=gap,
                             settings=settings, warnings=fw + tw)
    return {c.key: out[c.key] for c in unit.components}

