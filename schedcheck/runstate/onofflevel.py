"""The on/off level of one component: levels per reading, grouping, the learned or floor level.

Part of run-state classification (see :mod:`schedcheck.runstate.classify` for the whole sequence and
``docs/run-states.md`` for the user's view). The published methods (Otsu, Ashman's D, the
histogram valley) live in :mod:`.thresholds`; this module decides which one applies.

Defaults (each with its source):

* ``FLOOR_BY_UNIT`` -- the floor level per reading unit, for three axes combined (a sensor with
  fewer axes gets sqrt(axes / 3) of it; see :func:`schedcheck.runstate.classify`). Common
  practice, no source: MEMS accelerometers of the kind used in wireless vibration sensors have
  noise densities of roughly 25-300 ug/sqrt(Hz) (a typical datasheet range); integrated to
  velocity over 10-1000 Hz that is about 0.01-0.15 mm/s RMS (computed: v = a_n / (2 pi) *
  sqrt(1/10 Hz - 1/1000 Hz)); a running machine should read several times its stopped
  background, which gives 0.2 mm/s. The other units are the same level converted at a typical
  30 Hz fan frequency. Where the readings show a stopped group, its level is learned instead
  (:mod:`.lowgroups`).
* ``HYSTERESIS`` = 0.1 decade either side (about +-26 %), narrowed to a quarter of the distance
  to each group's median when the groups are known (common practice, no source).
* ``CLOSE_TO_FLOOR``, ``SLOWER_SHARE``: see their comments (common practice, no source).
* ``RUNNING_SPREAD`` = 2: level groups whose medians lie within this factor of each other are the
  spread of one running level (running noise, or two close speeds), never a stop and a run:
  a stopped machine reads several times below its running level (the rule of thumb behind the
  floor level above) and idle vibration at most ``IDLE_RATIO`` of it. Common practice, no
  source.
* ``CARRIED_SHARE`` = 0.95: a middle group is carried vibration when at least this share of its
  readings fall while a sibling moves and at most 1 - this share of the lowest group's
  (common practice, no source).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from schedcheck.errors import InputError
from schedcheck.runstate import lowgroups
from schedcheck.runstate import thresholds as th
from schedcheck.runstate.confidence import confidence, configured_warnings
from schedcheck.site import RunStateSettings

FLOOR_BY_UNIT = {"mm/s": 0.2, "in/s": 0.008, "ips": 0.008, "m/s": 0.0002,
                 "g": 0.004, "mg": 4.0, "m/s2": 0.04, "m/s^2": 0.04, "m/s²": 0.04}
SEPARATION_CAP = 1000.0   # Ashman's D reported at most this (noise-free levels give infinity)
HYSTERESIS = 0.1          # [decades]
CARRIED_SHARE = 0.95      # [-]
RUNNING_SPREAD = 2.0      # [-] ratio of group medians
DISPLAY_BINS = 60         # histogram bins kept for pictures and summary.json
CLOSE_TO_FLOOR = 0.3      # [decades] a single group within a factor of 2 of the floor is warned
#                           about (common practice, no source)
SLOWER_SHARE = 0.8        # a middle group with at most this share of its readings while a
#                           sibling moves is a slower running level (common practice, no source)



@dataclass(frozen=True)
class Threshold:
    """The on/off level of one component and why it was chosen.

    ``level``, ``on_level``, ``off_level`` are in the reading unit; ``separation`` is Ashman's D
    between the readings below and above ``level`` (log10 levels; at most 1000) and
    ``effectiveness`` Otsu's eta of that split (both NaN when one side is empty); ``counts`` /
    ``edges_log10`` a histogram of log10 levels for pictures; ``groups`` the medians of the
    level groups found [reading unit]; ``reason`` one plain sentence; ``floor`` the floor level
    in force and ``step`` the reading step (0 = not quantised) [reading unit]; ``confidence``
    ``high`` / ``medium`` / ``low`` with ``near_share`` (share of readings near the level [-])
    and ``concerns`` (why not high, in words; see :mod:`.confidence`).
    """

    level: float
    source: str                       # "learned" | "configured" | "floor"
    separation: float
    effectiveness: float
    on_level: float
    off_level: float
    counts: np.ndarray = field(default_factory=lambda: np.zeros(0, int))
    edges_log10: np.ndarray = field(default_factory=lambda: np.zeros(0))
    groups: tuple[float, ...] = ()
    reason: str = ""
    warnings: tuple[str, ...] = ()
    floor: float = float("nan")       # the floor level in force [reading unit]
    step: float = 0.0                 # reading step found or set [reading unit]; 0 = none
    confidence: str = ""              # "high" | "medium" | "low"
    near_share: float = float("nan")  # share of readings near the level (within the band) [-]
    concerns: tuple[str, ...] = ()    # why the confidence is not high, in plain words


# -- levels ----------------------------------------------------------------------------------
def default_floor(settings: RunStateSettings, level_unit: str) -> tuple[float, list[str]]:
    """The floor level [reading unit] from the settings or the table of defaults, + warnings."""
    if settings.floor is not None:   # 0 is allowed: anything above zero is running
        return max(float(settings.floor), 1e-12), []
    key = level_unit.strip().lower().replace(" ", "")
    if key in FLOOR_BY_UNIT:
        return FLOOR_BY_UNIT[key], []
    return FLOOR_BY_UNIT["mm/s"], [
        f"no default floor level for reading unit {level_unit!r}; used 0.2 (meant for mm/s): "
        "set [run_state] floor"]


# -- the on/off level ------------------------------------------------------------------------
def _band(b: float, lo: float = np.nan, hi: float = np.nan,
          step: float = 0.0) -> tuple[float, float]:
    """Hysteresis levels (log10) around ``b``: +-HYSTERESIS, at most a quarter of the way to the
    group medians ``lo`` / ``hi`` (log10), but never less than one reading ``step`` either side
    [reading unit] (else a one-step change on one axis would flip the state)."""
    h = HYSTERESIS
    if np.isfinite(lo):
        h = min(h, 0.25 * (b - lo))
    if np.isfinite(hi):
        h = min(h, 0.25 * (hi - b))
    h = max(h, 0.0)
    on, off = b + h, b - h
    if step > 0:
        lin = 10.0**b
        on = max(on, float(np.log10(lin + step)))
        if lin - step > 0:
            off = min(off, float(np.log10(lin - step)))
    return on, off


def _moving_share(mask: np.ndarray, sib: np.ndarray | None) -> tuple[float, int]:
    """Share of the readings in ``mask`` taken while a sibling moved, and how many were known."""
    if sib is None:
        return np.nan, 0
    s = sib[mask]
    s = s[np.isfinite(s)]
    return (float(s.mean()) if s.size else np.nan), int(s.size)


def _display_histogram(L: np.ndarray, marks: list[float]) -> tuple[np.ndarray, np.ndarray]:
    lo = min([L.min()] + marks) if L.size else min(marks or [-2.0])
    hi = max([L.max()] + marks) if L.size else max(marks or [1.0])
    if hi - lo < 1e-6:
        lo, hi = lo - 0.5, hi + 0.5
    pad = 0.03 * (hi - lo)
    counts, edges = np.histogram(L, bins=DISPLAY_BINS, range=(lo - pad, hi + pad))
    return counts, edges


@dataclass(frozen=True)
class _Evidence:
    """What the choice of level looks at (log10 levels; floor ``F`` = log10 ``floor``)."""

    L: np.ndarray
    floor: float
    groups: th.LevelGroups
    sibling_moving: np.ndarray | None
    step: float
    times: np.ndarray | None
    idle_ratio: float
    shift_days: int

    @property
    def F(self) -> float:
        return float(np.log10(self.floor))

    @property
    def med(self) -> list[float]:
        return [float(m) for m in self.groups.medians]


@dataclass
class _Choice:
    """A level (log10) and the group medians either side of it (NaN: none), with the reason."""

    b: float
    src: str
    lo: float
    hi: float
    reason: str
    warn: list[str] = field(default_factory=list)


def _never_running(ev: _Evidence, what: str) -> _Choice:
    return _Choice(ev.F, "floor", ev.med[-1], np.nan,
                   f"{what} lie below the floor level {ev.floor:g}: never running",
                   ["never running by the floor level; set `threshold` if this machine does run"])


def _configured_choice(ev: _Evidence, configured: float) -> _Choice:
    """A level set in the site file: used as it is."""
    if configured <= 0:
        raise InputError("threshold must be above 0", key="threshold")
    b = float(np.log10(configured))
    below, above = [m for m in ev.med if m < b], [m for m in ev.med if m > b]
    return _Choice(b, "configured", max(below) if below else np.nan,
                   min(above) if above else np.nan, f"set in the site file ({configured:g})")


def _one_group(ev: _Evidence) -> _Choice:
    """One level group: running all the time above the floor, never running below it."""
    m, F = ev.med[0], ev.F
    state, side = ("running", "above") if m > F else ("off", "below")
    c = _Choice(F, "floor", np.nan if m > F else m, m if m > F else np.nan,
                f"one level group ({ev.groups.reason}); its median {10**m:.3g} is {side} "
                f"the floor level {ev.floor:g}, so it is {state}")
    if abs(m - F) < CLOSE_TO_FLOOR:
        c.warn.append(f"the only level group (median {10**m:.3g}) lies close to the floor level "
                      f"{ev.floor:g}; check the states and set `threshold` if they are wrong")
    return c


def _shift_warning(ev: _Evidence, lower: np.ndarray, running: np.ndarray, low: float,
                   high: float) -> str | None:
    """A warning naming the dates when two running groups occupy separate blocks of weeks."""
    if ev.times is None:
        return None
    blocks = lowgroups.level_blocks(ev.times, lower, running, ev.shift_days)
    return None if blocks is None else lowgroups.describe_blocks(blocks, 10**low, 10**high)


def _running_noise(ev: _Evidence) -> _Choice | None:
    """Groups that all lie within :data:`RUNNING_SPREAD` of each other, the highest above the
    floor: one running level split by its own spread; running throughout, the on/off level a
    factor RUNNING_SPREAD below the lowest group (and at most the floor)."""
    med, spread = ev.med, float(np.log10(RUNNING_SPREAD))
    if len(med) < 2 or med[-1] <= ev.F or med[-1] - med[0] >= spread:
        return None
    names = ", ".join(f"{10**m:.3g}" for m in med)
    return _Choice(min(ev.F, med[0] - spread), "floor", np.nan, med[0],
                   f"{len(med)} level groups (medians {names}) within a factor of "
                   f"{RUNNING_SPREAD:g} of each other: the spread of one running level, not a "
                   "stop; running throughout")


def _two_groups(ev: _Evidence) -> _Choice:
    """Two level groups: stopped and running, unless both lie on one side of the floor."""
    g, med, F, floor = ev.groups, ev.med, ev.F, ev.floor
    b0 = g.boundaries[0]
    learned = _Choice(b0, "learned", med[0], med[1],
                      f"two level groups (medians {10**med[0]:.3g} and {10**med[1]:.3g}); "
                      "the level is at the lowest point between them (the separation shown "
                      "is of the readings either side of it)")
    if med[1] <= F:
        return _never_running(ev, f"both level groups (medians {10**med[0]:.3g}, "
                                  f"{10**med[1]:.3g})")
    if med[0] < F:
        return learned
    # both groups above the floor: a stopped machine above the floor, a level shift, carried
    # vibration, or two speeds of a fan that never stopped
    idle = lowgroups.idle_reason(10**med[0], 10**med[1], ev.step, ev.idle_ratio)
    if idle:
        learned.reason += f"; {idle}"
        return learned
    always = _Choice(F, "floor", np.nan, med[0],
                     f"two level groups (medians {10**med[0]:.3g}, {10**med[1]:.3g}) both above "
                     f"the floor level {floor:g}: two running levels, never stopped")
    shift = _shift_warning(ev, ev.L <= b0, np.ones(ev.L.size, bool), med[0], med[1])
    if shift:
        always.reason = always.reason.replace("two running levels", "one running level that "
                                              "shifted")
        always.warn.append(shift)
        return always
    share, n = _moving_share(ev.L <= b0, ev.sibling_moving)
    overall, _ = _moving_share(np.ones(ev.L.size, bool), ev.sibling_moving)
    # carried only if the siblings do stop at times (else nothing tells the two apart)
    if n and share >= CARRIED_SHARE and overall <= 1 - th.MIN_SHARE:
        learned.reason += ("; the lower group, above the floor, appears only while another "
                           "component of the unit runs: carried vibration, counted as off")
        return learned
    always.reason = always.reason.replace("two running levels", "two running levels (speeds)")
    always.warn.append(f"counted as running all the time; if the group at {10**med[0]:.3g} is a "
                       f"stopped machine shaken by its neighbours, set `threshold` to about "
                       f"{10 ** ((med[0] + med[1]) / 2):.3g}")
    return always


def _three_groups(ev: _Evidence) -> _Choice:
    """Three level groups: is the middle one running, carried vibration or idle?"""
    med, F, floor = ev.med, ev.F, ev.floor
    lo_b, hi_b = ev.groups.boundaries
    low, mid = ev.L <= lo_b, (ev.L > lo_b) & (ev.L <= hi_b)
    p_mid, n_mid = _moving_share(mid, ev.sibling_moving)
    p_low, n_low = _moving_share(low, ev.sibling_moving)
    close = med[2] - med[1] < float(np.log10(RUNNING_SPREAD))
    three = f"three level groups (medians {10**med[0]:.3g}, {10**med[1]:.3g}, {10**med[2]:.3g})"
    as_off = _Choice(hi_b, "learned", med[1], med[2], three)
    as_run = _Choice(lo_b, "learned", med[0], med[1], three)
    if med[2] <= F:
        # the scatter of a stopped machine's background can split into groups too
        return _never_running(ev, three + " all")
    if med[0] > F and not lowgroups.idle_reason(10**med[0], 10**med[2], ev.step,
                                                 ev.idle_ratio):
        # every group above the floor and the lowest no stopped or idle level: never stopped
        c = _Choice(F, "floor", np.nan, med[0], f"{three} all above the floor level {floor:g}: "
                    "running levels (speeds), never stopped")
        c.warn.append(f"counted as running all the time; if the group at {10**med[0]:.3g} is a "
                      "stopped machine shaken by its neighbours, set `threshold` to about "
                      f"{10 ** ((med[0] + med[1]) / 2):.3g}")
        return c
    if close and med[1] > F:
        as_run.reason += (f"; the middle group lies within a factor of {RUNNING_SPREAD:g} of the "
                          "running level: the spread of that level, running")
        return as_run
    shift = _shift_warning(ev, mid, ~low, med[1], med[2])
    if shift:
        as_run.reason += "; the middle group is the running level of some weeks: running"
        as_run.warn.append(shift)
        return as_run
    if n_mid and p_mid >= CARRIED_SHARE and (not n_low or p_low <= 1 - CARRIED_SHARE):
        as_off.reason += (f"; the middle group appears only while another component of the unit "
                          f"runs ({p_mid:.0%} of its readings): carried vibration, counted as off")
        return as_off
    idle = lowgroups.idle_reason(10**med[1], 10**med[2], 0.0, ev.idle_ratio,
                                 noise=10**med[0])
    if med[1] <= F and idle:
        # off is the group at the noise floor only: a middle group below the default floor but
        # above the idle ratio of the learned stopped group is a slow running level
        as_off.reason += f"; the middle group lies below the floor level {floor:g}: counted as off"
        return as_off
    if idle:
        as_off.reason += f"; {idle.replace('the low group', 'the middle group')}, counted as off"
        return as_off
    if n_mid and p_mid <= SLOWER_SHARE:
        as_run.reason += (f"; the middle group also appears while the rest of the unit is "
                          f"stopped ({1 - p_mid:.0%} of its readings): a slower running level")
        return as_run
    why = "no other component of the unit to compare with" if not n_mid else (
        f"{p_mid:.0%} of its readings fall while another component runs")
    as_run.reason += f"; the middle group counted as running ({why})"
    as_run.warn.append(f"{three}: cannot tell whether the middle group is running or vibration "
                       f"carried from a neighbour ({why}); counted as running. If it is carried, "
                       f"set `threshold` to about {10 ** ((med[1] + med[2]) / 2):.3g}")
    return as_run


def choose_threshold(
    L: np.ndarray,
    *,
    configured: float | None,
    floor: float,
    sibling_moving: np.ndarray | None = None,
    groups: th.LevelGroups | None = None,
    step: float = 0.0,
    times: np.ndarray | None = None,
    idle_ratio: float = lowgroups.IDLE_RATIO,
    shift_days: int = lowgroups.SHIFT_DAYS,
) -> Threshold:
    """The on/off level of one component from its log10 levels.

    Steps: group the levels (:func:`.thresholds.level_groups`); choose the level by the number
    of groups (:func:`_one_group`, :func:`_two_groups`, :func:`_three_groups`) unless one is
    configured; put it at the histogram valley when learned; set the hysteresis band (at least
    one reading step either side); measure separation and confidence.

    Parameters
    ----------
    L : ndarray
        log10 of the component's levels (finite) [log10 reading unit].
    configured : float or None
        A level set in the site file [reading unit]; wins when given.
    floor : float
        Absolute floor level [reading unit], used when the levels do not split.
    sibling_moving : ndarray, optional
        Per reading: 1 when another component of the unit moved, 0 when none did, NaN unknown.
    groups : LevelGroups, optional
        A grouping already computed for ``L``.
    step : float
        The reading step (0 = not quantised) [reading unit].
    times : ndarray of int64, optional
        Reading instants of ``L`` [ns since epoch]: needed to tell a level shift over weeks from
        a second speed.
    idle_ratio : float
        See :func:`.lowgroups.idle_reason` [-].
    shift_days : int
        See :func:`.lowgroups.level_blocks` [d].

    Returns
    -------
    Threshold
    """
    if L.size == 0:
        lv = configured if configured is not None else floor
        src = "configured" if configured is not None else "floor"
        b = float(np.log10(lv))
        on, off = _band(b, step=step)
        c, e = _display_histogram(L, [b])
        why = "no readings to learn a level from"
        return Threshold(lv, src, np.nan, np.nan, 10**on, 10**off, c, e,
                         "no readings to learn from", (why,), floor, step, "low", np.nan, (why,))
    g = groups if groups is not None else th.level_groups(L)
    ev = _Evidence(L, floor, g, sibling_moving, step, times, idle_ratio, shift_days)
    warn: list[str] = []
    if L.size >= 10 and np.all(L == L[0]):
        # all zeros are raised to a tenth of the floor by log_levels: say 0, not that stand-in
        same = "0" if np.isclose(10 ** L[0], floor / 10, rtol=1e-9) else f"{10 ** L[0]:.3g}"
        warn.append(f"every reading has the same level ({same}): is the sensor stuck "
                    "or disconnected?")
    if configured is not None:
        ch = _configured_choice(ev, configured)
    else:
        ch = _running_noise(ev) or {1: _one_group, 2: _two_groups}.get(g.count,
                                                                        _three_groups)(ev)
    warn += ch.warn
    b = th.valley_level(L, ch.lo, ch.hi) if ch.src == "learned" else ch.b
    on, off = _band(b, ch.lo, ch.hi, step)
    below, above = L[L <= b], L[L > b]
    if configured is not None:
        warn += configured_warnings(configured, b, ev.med, below.size, above.size)
    sep = min(th.ashman_d(below, above), SEPARATION_CAP)
    eff = th.otsu_effectiveness(L, b) if below.size and above.size else np.nan
    c, e = _display_histogram(L, [on, off, ev.F])
    level = float(configured) if configured is not None else float(10**b)
    conf, near, concerns = confidence(L, b, on, off, sep, warn,
                                        min_half=HYSTERESIS)
    return Threshold(level, ch.src, sep, eff, float(10**on), float(10**off), c, e,
                     tuple(float(10**m) for m in ev.med), ch.reason, tuple(warn), floor,
                     step, conf, near, concerns)
