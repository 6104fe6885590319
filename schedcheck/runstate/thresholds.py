"""Published methods for splitting a set of levels into groups: one function per method.

All functions take plain numpy arrays (the run-state classifier passes log10 levels) and return
plain numbers; none of them knows about fans.

* :func:`level_histogram` -- the histogram every method below works on (256 equal bins over the
  range of the values, bin centres as representatives: the same convention as scikit-image).
* :func:`otsu_threshold` -- Otsu's method, two classes [1].
* :func:`otsu_effectiveness` -- Otsu's own separability figure eta = between-class variance /
  total variance, 0..1 [1].
* :func:`multi_otsu_thresholds` -- Otsu's criterion for three classes, exhaustive search [1, 3].
* :func:`ashman_d` -- Ashman's D between two groups [2]; D > 2 is the usual criterion for a
  clean separation of two normal components.
* :func:`valley_level` -- the lowest point of the histogram between two groups [4].
* :func:`level_groups` -- the plain dispatcher: are there one, two or three groups?

References
----------
.. [1] N. Otsu, "A threshold selection method from gray-level histograms", IEEE Transactions
   on Systems, Man, and Cybernetics 9(1), 62-66, 1979.
.. [2] K. M. Ashman, C. M. Bird, S. E. Zepf, "Detecting bimodality in astronomical datasets",
   The Astronomical Journal 108, 2348-2361, 1994.
.. [3] P.-S. Liao, T.-S. Chen, P.-C. Chung, "A fast algorithm for multilevel thresholding",
   Journal of Information Science and Engineering 17, 713-727, 2001.
.. [4] J. M. S. Prewitt, M. L. Mendelsohn, "The analysis of cell images", Annals of the New
   York Academy of Sciences 128(3), 1035-1053, 1966 (the minimum method).
.. [5] D. Freedman, P. Diaconis, "On the histogram as a density estimator: L2 theory",
   Zeitschrift fuer Wahrscheinlichkeitstheorie und verwandte Gebiete 57, 453-476, 1981 (bin
   width 2 IQR / n^(1/3); citation from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

NBINS = 256            # histogram bins for Otsu (scikit-image's default, kept for comparability)
MIN_D = 2.0            # Ashman's D above which two groups count as cleanly separated [2]
MIN_SHARE = 0.005      # smallest share of readings a group may hold (common practice, no source)
MIN_GAIN_3 = 0.02      # effectiveness gain a third group must bring (common practice, no source)
MAX_VALLEY = 0.5       # histogram valley between groups / lower group peak (common practice,
#                        no source); needed because D of the two halves of ONE normal group
#                        cut at its mean is 2.65 and of one uniform group 3.46 (computed)
SMOOTH_BINS = 5        # moving-average width, valley test, per 128 bins (common practice, no
#                        source); fewer bins (small samples, [5]) are smoothed in proportion


def level_histogram(values: np.ndarray, nbins: int = NBINS) -> tuple[np.ndarray, np.ndarray]:
    """Counts and bin centres of ``values`` in ``nbins`` equal bins over their range.

    Parameters
    ----------
    values : ndarray
        Finite values [any unit].
    nbins : int
        Number of bins.

    Returns
    -------
    counts : ndarray of float
    centres : ndarray of float
    """
    v = np.asarray(values, dtype=float).ravel()
    counts, edges = np.histogram(v, bins=nbins, range=(v.min(), v.max()))
    return counts.astype(float), (edges[:-1] + edges[1:]) / 2


def otsu_threshold(values: np.ndarray, nbins: int = NBINS, *, hist=None) -> float:
    """Otsu's threshold: the bin centre that maximises the between-class variance [1].

    Values above the threshold form the upper class. With a single distinct value that value is
    returned.

    Parameters
    ----------
    values : ndarray
        Finite values, at least one [any unit].
    nbins : int
        Number of histogram bins.
    hist : (counts, centres), optional
        :func:`level_histogram` of ``values``, when already computed.

    Returns
    -------
    float
        The threshold [same unit as ``values``].
    """
    v = np.asarray(values, dtype=float).ravel()
    if v.size == 0:
        raise ValueError("no values")
    if np.all(v == v[0]):
        return float(v[0])
    counts, centres = hist if hist is not None else level_histogram(v, nbins)
    w1 = np.cumsum(counts)
    w2 = np.cumsum(counts[::-1])[::-1]
    m1 = np.cumsum(counts * centres) / w1
    with np.errstate(invalid="ignore", divide="ignore"):
        m2 = (np.cumsum((counts * centres)[::-1]) / w2[::-1])[::-1]
    between = w1[:-1] * w2[1:] * (m1[:-1] - m2[1:]) ** 2
    return float(centres[int(np.nanargmax(between))])


def otsu_effectiveness(values: np.ndarray, thresholds) -> float:
    """Otsu's effectiveness eta: between-class variance over total variance, 0..1 [1].

    Parameters
    ----------
    values : ndarray
        The values [any unit].
    thresholds : float or sequence of float
        Class boundaries; a value above a boundary is in the class above it.

    Returns
    -------
    float
        eta (1 = every class a single value; 0 = the classes do not differ); NaN when the
        values do not vary.
    """
    v = np.asarray(values, dtype=float).ravel()
    total = v.var()
    if v.size == 0 or total == 0:
        return float("nan")
    cls = np.zeros(v.size, np.intp)
    for b in np.atleast_1d(thresholds):
        cls += v > b
    n = np.bincount(cls).astype(float)
    s = np.bincount(cls, weights=v)
    ok = n > 0
    means = s[ok] / n[ok]
    between = float((n[ok] * (means - v.mean()) ** 2).sum() / v.size)
    return between / float(total)


def multi_otsu_thresholds(values: np.ndarray, nbins: int = NBINS, *,
                          hist=None) -> tuple[float, float]:
    """Two thresholds splitting ``values`` into three classes by Otsu's criterion [1, 3].

    Exhaustive search over all pairs of bin boundaries, vectorised (256 bins: 32,640 pairs).

    Parameters
    ----------
    values : ndarray
        Finite values with at least three distinct values [any unit].
    nbins : int
        Number of histogram bins.
    hist : (counts, centres), optional
        :func:`level_histogram` of ``values``, when already computed.

    Returns
    -------
    (float, float)
        Lower and upper threshold (bin centres) [same unit as ``values``].
    """
    counts, centres = hist if hist is not None else level_histogram(values, nbins)
    nbins = counts.size
    p = counts / counts.sum()
    cp = np.cumsum(p)
    cs = np.cumsum(p * centres)
    i = np.arange(nbins - 2)[:, None]          # last bin of class 1
    j = np.arange(1, nbins - 1)[None, :]       # last bin of class 2
    w1, s1 = cp[i], cs[i]
    w2, s2 = cp[j] - cp[i], cs[j] - cs[i]
    w3, s3 = 1.0 - cp[j], cs[-1] - cs[j]
    with np.errstate(invalid="ignore", divide="ignore"):
        score = s1**2 / w1 + s2**2 / w2 + s3**2 / w3
    valid = (j > i) & (w1 > 0) & (w2 > 0) & (w3 > 0)
    score = np.where(valid, score, -np.inf)
    a, b = np.unravel_index(int(np.argmax(score)), score.shape)
    return float(centres[a]), float(centres[b + 1])


def ashman_d(a: np.ndarray, b: np.ndarray) -> float:
    """Ashman's D between two groups of values [2].

    ``D = sqrt(2) * |mean_a - mean_b| / sqrt(var_a + var_b)``; D > 2 is needed for a clean
    separation of two normal components. Infinite when both groups have no spread and differ.

    Parameters
    ----------
    a, b : ndarray
        The two groups [same unit].

    Returns
    -------
    float
        D [-]; NaN when a group is empty.
    """
    a = np.asarray(a, dtype=float)
    b = np.asarray(b, dtype=float)
    if a.size == 0 or b.size == 0:
        return float("nan")
    spread = np.sqrt(a.var() + b.var())
    diff = abs(a.mean() - b.mean())
    if spread == 0:
        return float("inf") if diff > 0 else float("nan")
    return float(np.sqrt(2.0) * diff / spread)


@dataclass(frozen=True)
class LevelGroups:
    """What :func:`level_groups` found.

    ``boundaries`` holds 0, 1 or 2 thresholds (values above a boundary are in the group above);
    ``medians`` and ``shares`` one entry per group, lowest first; ``separations`` the Ashman's D
    of each pair of neighbouring groups; ``effectiveness`` Otsu's eta of the grouping;
    ``two_way`` the best two-group split (threshold, D, eta) even when it was rejected.
    """

    boundaries: tuple[float, ...]
    medians: tuple[float, ...]
    shares: tuple[float, ...]
    separations: tuple[float, ...]
    effectiveness: float
    two_way: tuple[float, float, float]
    reason: str

    @property
    def count(self) -> int:
        return len(self.medians)


def valley_ratio(values: np.ndarray, boundary: float, left: float, right: float) -> float:
    """Depth of the histogram valley at ``boundary`` between two groups.

    The histogram (smoothed over ``SMOOTH_BINS`` bins) is searched for its lowest count between
    the group medians ``left`` and ``right``, and that is divided by the smaller of the two
    groups' highest counts (each group's bins on its own side of ``boundary``). Near 0: a clear
    gap; near 1: no valley at all (one group cut in two).

    Parameters
    ----------
    values : ndarray
        All values [any unit].
    boundary, left, right : float
        The threshold and the medians of the groups below and above it [same unit].

    Returns
    -------
    float
        Valley / peak [-].
    """
    v = np.asarray(values, dtype=float)
    sel = v[(v >= left - (boundary - left)) & (v <= right + (right - boundary))]
    if sel.size == 0 or not left < right:
        return 1.0
    rng = (float(sel.min()), float(sel.max()))
    if rng[1] <= rng[0]:
        return 1.0
    # bins no narrower than the Freedman-Diaconis width [5] for this many values: with a
    # thousand readings (one day), 128 bins hold about ten each, and their sampling noise alone
    # makes dips as deep as a real valley
    q1, q3 = np.percentile(sel, [25, 75])
    fd = 2 * (q3 - q1) / sel.size ** (1 / 3)
    nb = 128 if fd <= 0 else int(np.clip(np.ceil((rng[1] - rng[0]) / fd), 16, 128))
    smooth = max(1, round(SMOOTH_BINS * nb / 128))
    edges = np.linspace(rng[0], rng[1], nb + 1)
    kernel = np.ones(smooth) / smooth
    lo = np.convolve(np.histogram(sel[sel <= boundary], nb, rng)[0], kernel, mode="same")
    hi = np.convolve(np.histogram(sel[sel > boundary], nb, rng)[0], kernel, mode="same")
    peak = min(lo.max(), hi.max())
    if peak <= 0:
        return 1.0
    k = np.clip(np.searchsorted(edges, [left, right], side="right") - 1, 0, nb - 1)
    seg = (lo + hi)[k[0]:k[1] + 1]
    j = int(np.argmin(seg))
    # a valley is a dip with higher ground on both sides of it between the medians: the tail of
    # one bell falls steadily to a "lowest point" at the far median, which is no valley
    # (sampling noise then lets Otsu cut a single group of a short window into two or three)
    sides = min(seg[:j + 1].max(), seg[j:].max())
    dip = float(seg[j] / sides) if sides > 0 else 1.0
    return max(float(seg[j] / peak), dip)


def valley_level(values: np.ndarray, left: float, right: float, nbins: int = NBINS) -> float:
    """The lowest point of the histogram between two group medians ``left`` < ``right``.

    The minimum method of Prewitt and Mendelsohn [4], restricted to the stretch between the two
    groups: the values between the medians are binned (``nbins`` bins, smoothed over
    ``SMOOTH_BINS``), and the level is the middle of the longest run of bins at the lowest
    count, so an empty gap gives its middle.

    Parameters
    ----------
    values : ndarray
        All values [any unit].
    left, right : float
        Medians of the groups below and above [same unit].

    Returns
    -------
    float
        The level [same unit]; the midpoint of ``left`` and ``right`` when there is nothing
        between them.

    References
    ----------
    .. [4] J. M. S. Prewitt, M. L. Mendelsohn, "The analysis of cell images", Annals of the
       New York Academy of Sciences 128(3), 1035-1053, 1966.
    """
    v = np.asarray(values, dtype=float)
    if not right > left:
        return float((left + right) / 2)
    sel = v[(v >= left) & (v <= right)]
    counts, edges = np.histogram(sel, nbins, (left, right))
    sm = np.convolve(counts, np.ones(SMOOTH_BINS) / SMOOTH_BINS, mode="same")
    low = sm <= sm.min() + 1e-9
    # longest run of lowest bins
    d = np.diff(np.concatenate([[0], low.astype(np.int8), [0]]))
    starts, stops = np.flatnonzero(d == 1), np.flatnonzero(d == -1)
    k = int(np.argmax(stops - starts))
    return float((edges[starts[k]] + edges[stops[k]]) / 2)


def _describe(v: np.ndarray, bounds: tuple[float, ...]):
    cls = np.zeros(v.size, np.intp)
    for b in bounds:
        cls += v > b
    groups = [v[cls == k] for k in range(len(bounds) + 1)]
    med = tuple(float(np.median(g)) if g.size else float("nan") for g in groups)
    share = tuple(g.size / v.size for g in groups)
    seps = tuple(ashman_d(groups[k], groups[k + 1]) for k in range(len(groups) - 1))
    return med, share, seps


def level_groups(
    values: np.ndarray,
    *,
    min_d: float = MIN_D,
    min_share: float = MIN_SHARE,
    min_gain: float = MIN_GAIN_3,
) -> LevelGroups:
    """Decide whether ``values`` form one, two or three well-separated groups.

    Two groups: Otsu's split with Ashman's D >= ``min_d`` and the smaller group holding at least
    ``min_share`` of the values. Three groups: the three-class Otsu split with every group at
    least ``min_share``, both neighbouring pairs D >= ``min_d``, and an effectiveness at least
    ``min_gain`` above the two-group one. Otherwise one group: a single group is never cut in
    half.

    Parameters
    ----------
    values : ndarray
        Values to group (the classifier passes log10 levels) [any unit].
    min_d : float
        Smallest Ashman's D accepted between neighbouring groups [-].
    min_share : float
        Smallest share of the values a group may hold [-].
    min_gain : float
        Smallest effectiveness gain for a third group [-].

    Returns
    -------
    LevelGroups
    """
    v = np.asarray(values, dtype=float).ravel()
    v = v[np.isfinite(v)]
    if v.size < 3 or np.all(v == v[0]):
        m = float(np.median(v)) if v.size else float("nan")
        return LevelGroups((), (m,), (1.0,), (), float("nan"), (m, float("nan"), float("nan")),
                           "too few distinct levels to split")
    hist = level_histogram(v)
    t2 = otsu_threshold(v, hist=hist)
    med2, share2, sep2 = _describe(v, (t2,))
    eta2 = otsu_effectiveness(v, t2)
    two_way = (t2, sep2[0], eta2)
    valley2 = valley_ratio(v, t2, med2[0], med2[1])
    two_ok = min(share2) >= min_share and sep2[0] >= min_d and valley2 <= MAX_VALLEY
    if np.count_nonzero(hist[0]) >= 3:
        lo, hi = multi_otsu_thresholds(v, hist=hist)
        med3, share3, sep3 = _describe(v, (lo, hi))
        eta3 = otsu_effectiveness(v, (lo, hi))
        if (min(share3) >= min_share and min(sep3) >= min_d
                and (not two_ok or eta3 - eta2 >= min_gain)
                and valley_ratio(v, lo, med3[0], med3[1]) <= MAX_VALLEY
                and valley_ratio(v, hi, med3[1], med3[2]) <= MAX_VALLEY):
            return LevelGroups((lo, hi), med3, share3, sep3, eta3, two_way,
                               "three separated level groups")
    if two_ok:
        return LevelGroups((t2,), med2, share2, sep2, eta2, two_way, "two separated level groups")
    if min(share2) < min_share:
        why = f"the smaller group holds only {min(share2):.2%} of readings"
    elif sep2[0] >= min_d:
        why = "no gap between the two halves of the levels (one group, not two)"
    else:
        why = f"the two groups overlap (Ashman's D {sep2[0]:.2f} < {min_d:g})"
    return LevelGroups((), (float(np.median(v)),), (1.0,), (), eta2, two_way, why)
