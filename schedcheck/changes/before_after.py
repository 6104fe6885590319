"""Before/after comparison of a daily figure around a change date (pure core).

Compares like with like (day type by day type) and gives a Welch-Satterthwaite 95% interval
for the difference. Re-exported by :mod:`schedcheck.changes.change_points`.

References
----------
.. [1] Welch B.L. (1947). The generalization of "Student's" problem when several different
   population variances are involved. Biometrika 34, 28-35.
.. [2] Satterthwaite F.E. (1946). An approximate distribution of estimates of variance
   components. Biometrics Bulletin 2(6), 110-114.
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from schedcheck.errors import InputError

#: Confidence level of the before/after interval [-]; 95% is common practice, no source.
CONFIDENCE = 0.95


@dataclass(frozen=True)
class BeforeAfter:
    """Before/after comparison of a daily figure.

    Means are standardised to one mix of day types (see :func:`before_after`), so
    ``after_mean - before_mean == difference``.
    """

    before_mean: float  # [unit of the series per day]
    after_mean: float
    difference: float  # after - before
    ci95: tuple[float, float]  # Welch-Satterthwaite interval of the difference
    n_before: int  # days used
    n_after: int
    dof: float  # Satterthwaite degrees of freedom (inf when exact)
    day_types: dict[str, dict[str, float]] = field(
        default_factory=dict
    )  # per type: n, means, weight
    notes: tuple[str, ...] = ()


def _dates(index) -> list[dt.date]:
    return [pd.Timestamp(d).date() for d in index]


def default_day_types(dates: Sequence[dt.date]) -> list[str]:
    """``"weekday"`` for Monday..Friday and ``"weekend"`` for Saturday and Sunday."""
    return ["weekend" if d.weekday() >= 5 else "weekday" for d in dates]


def before_after(
    daily: pd.Series,
    change_date: dt.date,
    before_days: int,
    after_days: int,
    *,
    day_types: pd.Series | None = None,
) -> BeforeAfter:
    """Compare a daily figure over the days before a change date with the days after it.

    Parameters
    ----------
    daily : pandas.Series
        One value per local date [e.g. h/day or kWh/day]; the index holds dates. NaN marks a
        day without a usable value; such days are left out (count them before calling).
    change_date : datetime.date
        First local date of the "after" period.
    before_days, after_days : int
        Lengths of the periods ``[change - before_days, change)`` and
        ``[change, change + after_days)`` [days].
    day_types : pandas.Series, optional
        A label per date (same index as ``daily``), for instance ``"occupied"`` for days with
        occupied hours and ``"unoccupied"`` for the rest. Default: weekday / weekend.

    Returns
    -------
    BeforeAfter

    Notes
    -----
    Like is compared with like: per day type ``k`` the two periods give means ``b_k``, ``a_k``
    and variances; the figures are weighted by ``w_k``, the share of type ``k`` among all days
    used in both periods, so a period with an extra weekend or a holiday is not penalised:
    ``before = sum w_k b_k``, ``after = sum w_k a_k``. The variance of the difference is
    ``sum w_k^2 (s_ak^2 / n_ak + s_bk^2 / n_bk)`` and its degrees of freedom are
    Satterthwaite's [2]_ (Welch's t interval [1]_ generalised to strata). A day type missing
    from one period is left out (with a note); a type with a single day in a period makes the
    comparison fall back to one stratum. Days are treated as independent; a run of similar
    days (the same override left on for a week) makes the interval narrower than it should be.
    A seeded bootstrap of days would not fix that either. Welch's interval was chosen because it
    is a closed form (no resampling, the same answer every run), allows the two periods
    different spreads (a unit left on all day varies less than one that stops), and behaves
    well with 20-30 days a period; its coverage is checked by simulation in the tests.
    """
    if before_days < 2 or after_days < 2:
        raise InputError("before and after periods need at least 2 days each", key="before/after")
    dates = _dates(daily.index)
    values = np.asarray(daily, dtype=float)
    if day_types is None:
        types = np.asarray(default_day_types(dates), dtype=object)
    else:
        given = dict(zip(_dates(day_types.index), list(day_types), strict=True))
        types = np.asarray([given.get(d) for d in dates], dtype=object)
    b0 = change_date - dt.timedelta(days=int(before_days))
    a1 = change_date + dt.timedelta(days=int(after_days))
    side = np.array(
        [0 if b0 <= d < change_date else 1 if change_date <= d < a1 else -1 for d in dates],
        dtype=np.int64,
    )
    ok = ~np.isnan(values) & (side >= 0) & np.array([t is not None for t in types], dtype=bool)
    v, side, types = values[ok], side[ok], types[ok].astype(str)
    n_b, n_a = int((side == 0).sum()), int((side == 1).sum())
    if n_b < 2 or n_a < 2:
        raise InputError(
            f"too few days with data to compare: {n_b} before and {n_a} after {change_date} "
            "(need 2 each)",
            key="change",
        )
    notes: list[str] = []
    labels = sorted(set(types.tolist()))
    count = {
        t: (int(((types == t) & (side == 0)).sum()), int(((types == t) & (side == 1)).sum()))
        for t in labels
    }
    keep = [t for t in labels if min(count[t]) > 0]
    notes += [
        f"{t} days appear on one side only and are left out of the comparison"
        for t in labels
        if t not in keep
    ]
    if not keep:
        raise InputError(f"no day type appears both before and after {change_date}", key="change")
    if any(min(count[t]) < 2 for t in keep):
        notes.append(
            "too few days of some type to compare type by type; all days compared as one group"
        )
        types = np.where(np.isin(types, keep), "all day types", types)
        keep = ["all day types"]
    used = np.isin(types, keep)
    v, side, types = v[used], side[used], types[used]
    total = len(v)
    parts = {}
    terms = []  # (variance contribution, n - 1)
    for t in keep:
        b = v[(types == t) & (side == 0)]
        a = v[(types == t) & (side == 1)]
        w = (len(a) + len(b)) / total
        parts[t] = {
            "weight": w,
            "n_before": len(b),
            "n_after": len(a),
            "before_mean": float(b.mean()),
            "after_mean": float(a.mean()),
        }
        terms.append((w**2 * b.var(ddof=1) / len(b), len(b) - 1))
        terms.append((w**2 * a.var(ddof=1) / len(a), len(a) - 1))
    before = sum(p["weight"] * p["before_mean"] for p in parts.values())
    after = sum(p["weight"] * p["after_mean"] for p in parts.values())
    diff = after - before
    var = sum(term for term, _ in terms)
    if var > 0:
        from scipy import stats  # imported here: it is slow to load and only needed now

        dof = var**2 / sum(term**2 / df for term, df in terms if term > 0)
        half = float(stats.t.ppf(0.5 + CONFIDENCE / 2, dof) * np.sqrt(var))
    else:
        dof, half = float("inf"), 0.0
        notes.append("every day of each type had the same value; the interval has no width")
    return BeforeAfter(
        before_mean=float(before),
        after_mean=float(after),
        difference=float(diff),
        ci95=(float(diff - half), float(diff + half)),
        n_before=int((side == 0).sum()),
        n_after=int((side == 1).sum()),
        dof=float(dof),
        day_types=parts,
        notes=tuple(notes),
    )
