"""Seeded generator: true run intervals in, realistic vibration readings out (tests and demo).

Every function takes its randomness from a :class:`numpy.random.Generator` passed in by the
caller, so the same seed always gives the same rows. Everything is vectorised; three months of
minute data for ten sensors takes well under a couple of seconds.

The pieces
----------
``truth_from_runs(runs, start, end)``
    A list of ``(run_start, run_end)`` pairs -> a *truth* table ``start, end, state`` (``run`` /
    ``off``) covering ``[start, end)`` exactly.
``weekday_truth(start, end, tz, rng, ...)``
    A typical office pattern (weekdays, local on/off times with a few minutes of scatter), plus
    optional extra runs, as a truth table.
``readings_for_component(truth, sensor=..., rng=..., start=..., end=..., ...)``
    Readings of one sensor, in readings-file form: columns ``timestamp`` (UTC), ``sensor``,
    ``x_rms``, ``y_rms``, ``z_rms``, ``x_peak``, ``y_peak``, ``z_peak``, in *file order*, i.e.
    with the duplicates and out-of-order rows a real gateway export has.
``truth_with_gaps(truth, outages, start, end)``
    The truth the classifier should recover: ``no_data`` where the outages are.
``score_states(truth, found, start, end, ...)``
    Share of known minutes classified correctly and the error of every true transition.

The reading model (per reading, per axis)
-----------------------------------------
* background: ``noise_floor`` [reading unit] times a log-normal scatter (sigma 0.25), present
  whether or not the fan runs (sensor self-noise plus building background);
* running: ``running_level * speed**speed_exponent * (1 + level_drift * days / 30)`` times a
  log-normal scatter (sigma 0.08), only while the truth says ``run``;
* carried: ``carried_level`` (same drift, scatter sigma 0.10) while the *sibling's* truth
  (``carried``) says ``run``, whatever this component does;
* idle: ``idle_level`` (scatter sigma 0.15) while the truth says ``off`` inside one of the
  ``idle`` periods (vibration carried from machines outside the unit, or an idle state): a low
  group of readings while the component is stopped;
* ``level_factor``: a slow change of the running (and carried) level, linear between the given
  instants (a filter loading up, a belt wearing, a sensor re-mounted; a jump back is two
  instants close together);
* all scatters are multiplied by ``scatter`` (0 gives noise-free levels for exact-recovery
  tests);
* the three add in quadrature (independent sources) and are split over the axes by fixed
  per-sensor weights (with ``noise_per_axis`` the background is ``noise_floor`` on *each* axis,
  as a MEMS sensor's own noise is, so the stopped magnitude is about sqrt(axes) times it);
  peaks are the RMS times a crest factor of about 1.5 (common practice,
  no source: about sqrt(2) for a sine, more with impacts), times ``transient_factor`` during
  the first two minutes after each start.

With ``resolution`` every RMS and peak value is rounded to whole multiples of it (a sensor
reporting in whole mg), never below one step.

Readings are due at ``start + k * period``. Their times get uniform jitter of up to
+-``jitter`` (in whole seconds when ``jitter`` is a second or more, as gateways stamp
readings); a share ``packet_loss`` of readings is lost at random, readings inside ``outages``
are lost, a share ``duplicates`` is sent twice and a share ``out_of_order`` swaps places with
its neighbour in the file.
"""

from __future__ import annotations

from collections.abc import Iterable

import numpy as np
import pandas as pd

from schedcheck.demo.truth import (  # noqa: F401 - re-exported: the generator's truth helpers
    _run_set,
    _state_at,
    _utc,
    score_states,
    truth_from_runs,
    truth_with_gaps,
    weekday_truth,
)
from schedcheck.intervals import from_ns, to_ns
from schedcheck.site import READING_COLUMNS  # noqa: F401 - the columns the generator writes

AXES = ("x", "y", "z")
CREST_FACTOR = 1.5        # peak / RMS of a running fan (common practice, no source)
TRANSIENT_TIME = pd.Timedelta("2min")   # start transient lasts about this long (common
#                                         practice, no source)
_NS_MIN = 60_000_000_000


def _quantised(values: np.ndarray, step: float) -> np.ndarray:
    """Values rounded to whole multiples of ``step``, at least one step (0 = unchanged)."""
    if step <= 0:
        return values
    return np.maximum(np.round(values / step), 1.0) * step


def readings_for_component(
    truth: pd.DataFrame,
    *,
    sensor: str,
    rng: np.random.Generator,
    start,
    end,
    period: str = "60s",
    jitter: str = "5s",
    noise_floor: float = 0.03,
    running_level: float = 1.0,
    level_drift: float = 0.0,
    speed: pd.Series | None = None,
    speed_exponent: float = 2.0,
    carried: pd.DataFrame | None = None,
    carried_level: float = 0.0,
    transient_factor: float = 3.0,
    packet_loss: float = 0.01,
    outages: Iterable[tuple] = (),
    duplicates: float = 0.002,
    out_of_order: float = 0.002,
    axes: str = "xyz",
    peaks: bool = True,
    scatter: float = 1.0,
    noise_per_axis: bool = False,
    resolution: float = 0.0,
    idle_level: float = 0.0,
    idle: Iterable[tuple] = (),
    level_factor: pd.Series | None = None,
    design_rpm: float | None = None,
) -> pd.DataFrame:
    """Readings of one sensor on a component whose true run intervals are ``truth``.

    Parameters
    ----------
    truth : DataFrame
        ``start, end, state`` (``run`` / ``off``), UTC; rows outside the window are ignored.
    sensor : str
        Sensor id written in every row.
    rng : numpy.random.Generator
        The only source of randomness.
    start, end : tz-aware instants
        With ``resolution`` every RMS and peak value is rounded to whole multiples of it (a sensor
reporting in whole mg), never below one step.

Readings are due at ``start + k * period`` inside ``[start, end)``.
    period : str
        Nominal reading interval [duration].
    jitter : str
        Each reading time moves by a uniform amount of up to +- this [duration].
    noise_floor : float
        Background level per reading with the fan stopped [reading unit, e.g. mm/s].
    running_level : float
        Level while running at design speed [reading unit].
    level_drift : float
        Relative change of the running and carried levels per 30 days [-] (0.1 = +10 %).
    speed : Series, optional
        Speed as a fraction of design speed [-], indexed by UTC instants; each value holds
        until the next (a variable-speed drive). Missing = 1.0.
    speed_exponent : float
        Level scales as ``speed ** speed_exponent`` [-]; the default is the classifier's
        estimate exponent (:data:`schedcheck.runstate.speeds.SPEED_EXPONENT`, with its source).
    carried : DataFrame, optional
        A sibling component's truth; while it runs, ``carried_level`` is added.
    carried_level : float
        Vibration carried from the sibling through the casing [reading unit].
    transient_factor : float
        Peaks are multiplied by this during the first two minutes after each start [-].
    packet_loss : float
        Share of readings lost at random [-].
    outages : iterable of (start, end)
        Periods with no readings at all (gateway down, battery flat).
    duplicates, out_of_order : float
        Share of readings sent twice / swapped with their neighbour in the file [-].
    axes : str
        Which axes the sensor reports, e.g. ``"xyz"`` or ``"z"``.
    peaks : bool
        Whether to write the ``*_peak`` columns.
    scatter : float
        Multiplies every random scatter of the levels [-]; 0 gives noise-free levels (the
        background is then exactly ``noise_floor``).
    noise_per_axis : bool
        ``noise_floor`` is the background of each axis (not of the magnitude).
    resolution : float
        Reading step: values are rounded to whole multiples of it, at least one step [reading
        unit]; 0 = not rounded.
    idle_level : float
        Level of the idle group while stopped inside ``idle`` [reading unit].
    idle : iterable of (start, end)
        Periods in which a stopped component shows ``idle_level``.
    level_factor : Series, optional
        Multiplies the running and carried levels [-], indexed by UTC instants, linear in
        between, constant before the first and after the last.
    design_rpm : float, optional
        With it, a ``rotation_hz`` column is written: ``speed * design_rpm / 60`` with a
        scatter of 0.5 % while running, empty while stopped (a sensor's spectral estimate).

    Returns
    -------
    DataFrame
        ``timestamp`` (UTC), ``sensor``, then ``<axis>_rms`` and (with ``peaks``)
        ``<axis>_peak`` for each axis in ``axes``; in file order.
    """
    s0, e0 = to_ns(_utc(start)), to_ns(_utc(end))
    step = pd.Timedelta(period).value
    jit = pd.Timedelta(jitter).value
    nominal = np.arange(s0, e0, step, dtype=np.int64)
    n = nominal.size
    # jitter in whole seconds, as gateways stamp readings (sub-second jitter is kept as is)
    if jit >= 1_000_000_000:
        js = jit // 1_000_000_000
        t = nominal + rng.integers(-js, js + 1, n) * 1_000_000_000
    else:
        t = nominal + (rng.integers(-jit, jit + 1, n) if jit else 0)
    t = np.clip(t, s0, e0 - 1)

    run = _run_set(truth)
    running = run.contains(t)
    days = (t - s0) / (86400 * 1e9)
    drift = 1.0 + level_drift * days / 30.0
    sp = np.ones(n)
    if speed is not None and len(speed):
        idx = to_ns(pd.DatetimeIndex(speed.index))
        order = np.argsort(idx, kind="stable")
        idx, val = idx[order], np.asarray(speed.to_numpy(dtype=float))[order]
        k = np.searchsorted(idx, t, side="right") - 1
        sp = np.where(k >= 0, val[np.clip(k, 0, None)], 1.0)
    if level_factor is not None and len(level_factor):
        fi = to_ns(pd.DatetimeIndex(level_factor.index))
        fo = np.argsort(fi, kind="stable")
        drift = drift * np.interp(t.astype(float), fi[fo].astype(float),
                                  np.asarray(level_factor.to_numpy(dtype=float))[fo])
    r_level = running_level * np.power(np.clip(sp, 0, None), speed_exponent) * drift
    r_level = np.where(running, r_level * np.exp(rng.normal(0, 0.08 * scatter, n)), 0.0)
    c_level = np.zeros(n)
    if carried is not None and carried_level > 0:
        c_run = _run_set(carried).contains(t)
        c_wobble = np.exp(rng.normal(0, 0.10 * scatter, n))
        c_level = np.where(c_run, carried_level * drift * c_wobble, 0.0)

    i_level = np.zeros(n)
    if idle_level > 0:   # drawn only when asked for: existing seeds give the same readings
        idle_on = np.zeros(n, bool)
        for a, b in idle:
            idle_on |= (t >= to_ns(_utc(a))) & (t < to_ns(_utc(b)))
        i_level = np.where(idle_on & ~running,
                           idle_level * np.exp(rng.normal(0, 0.15 * scatter, n)), 0.0)

    # start transients: first TRANSIENT_TIME of every run that follows an off period
    after_start = np.zeros(n, bool)
    if len(run):
        starts = run.starts[run.starts > s0]
        if starts.size:
            k = np.searchsorted(starts, t, side="right") - 1
            since = t - starts[np.clip(k, 0, None)]
            after_start = (k >= 0) & running & (since < TRANSIENT_TIME.value)

    weights = rng.uniform(0.5, 1.0, len(axes)) if scatter else np.ones(len(axes))
    weights = weights / np.sqrt((weights**2).sum())
    cols: dict[str, np.ndarray] = {}
    for i, ax in enumerate(axes):
        per_axis = noise_floor if noise_per_axis else noise_floor / np.sqrt(len(axes))
        bg = per_axis * np.exp(rng.normal(0, 0.25 * scatter, n))
        rms = np.sqrt((weights[i] * r_level) ** 2 + (weights[i] * c_level) ** 2
                      + (weights[i] * i_level) ** 2 + bg**2)
        cols[f"{ax}_rms"] = _quantised(rms, resolution)
        if peaks:
            crest = CREST_FACTOR * np.exp(rng.normal(0, 0.1 * scatter, n))
            peak = rms * crest * np.where(after_start, transient_factor, 1.0)
            cols[f"{ax}_peak"] = _quantised(peak, resolution)

    keep = rng.random(n) >= packet_loss
    for a, b in outages:
        keep &= ~((t >= to_ns(_utc(a))) & (t < to_ns(_utc(b))))
    rows = np.flatnonzero(keep)
    # duplicates: repeat some rows right after themselves
    reps = np.where(rng.random(rows.size) < duplicates, 2, 1)
    rows = np.repeat(rows, reps)
    # out of order: swap some rows with the next one in the file
    if rows.size > 1 and out_of_order > 0:
        swap = np.flatnonzero(rng.random(rows.size - 1) < out_of_order)
        swap = swap[np.concatenate([[True], np.diff(swap) > 1])] if swap.size else swap
        rows[swap], rows[swap + 1] = rows[swap + 1].copy(), rows[swap].copy()

    out = {"timestamp": from_ns(t[rows]), "sensor": np.full(rows.size, sensor, dtype=object)}
    order = [f"{ax}_rms" for ax in axes] + ([f"{ax}_peak" for ax in axes] if peaks else [])
    for c in order:
        out[c] = cols[c][rows]
    if design_rpm is not None:
        hz = sp * design_rpm / 60.0 * np.exp(rng.normal(0, 0.005 * scatter, n))
        out["rotation_hz"] = np.where(running, hz, np.nan)[rows]
    return pd.DataFrame(out)


