"""How sure a component's run states are, and warnings about a level set in the site file.

Part of run-state classification (see :mod:`schedcheck.runstate.onofflevel`).

Defaults (each with its source):

* ``NEAR_SHARE`` = 0.02: when more than 2 % of the readings lie near the on/off level (inside
  the hysteresis band, at least +-0.1 decade), the confidence is ``medium``; above 4 % ``low``
  (common practice, no source).
* A separation (Ashman's D) below 2 makes the confidence ``low``: below 2 two normal groups
  overlap (K. M. Ashman, C. M. Bird, S. E. Zepf, The Astronomical Journal 108, 2348-2361, 1994).
"""

from __future__ import annotations

import numpy as np

from schedcheck.runstate import thresholds as th

NEAR_SHARE = 0.02         # [-]


def confidence(L: np.ndarray, b: float, on: float, off: float, sep: float,
               warnings: list[str], *, min_half: float) -> tuple[str, float, tuple[str, ...]]:
    """How sure the states are: ``high`` / ``medium`` / ``low``, the share of readings near the
    level (within the hysteresis band, at least +-``min_half`` decades) and the concerns in
    words."""
    half = max(min_half, on - b, b - off)
    near = float(np.mean(np.abs(L - b) <= half)) if L.size else float("nan")
    concerns: list[str] = []
    weak = bool(np.isfinite(sep) and sep < th.MIN_D)
    if weak:
        concerns.append(f"the readings below and above the on/off level overlap (separation "
                        f"{sep:.1f}, below {th.MIN_D:g}): the split is weak")
    if near > NEAR_SHARE:
        concerns.append(f"{near:.1%} of the readings lie near the on/off level")
    concerns += warnings
    if weak or near > 2 * NEAR_SHARE:
        return "low", near, tuple(concerns)
    return ("medium" if concerns else "high"), near, tuple(concerns)


def configured_warnings(configured: float, b: float, med: list[float], n_below: int,
                         n_above: int) -> list[str]:
    """Warnings for a level set in the site file that lies outside the readings' level groups
    (below the stopped machine's noise, or above its running level)."""
    groups = ", ".join(f"{10**m:.3g}" for m in med)
    if len(med) >= 2 and b < med[0]:
        return [f"the configured threshold {configured:g} is below the lowest level group "
                f"(median {10**med[0]:.3g}, the stopped machine's noise), so most stopped "
                f"readings count as running; the level groups have medians {groups}: set "
                "`threshold` between the stopped and the running group"]
    if len(med) >= 2 and b > med[-1]:
        return [f"the configured threshold {configured:g} is above the highest level group "
                f"(median {10**med[-1]:.3g}), so most running readings count as off; the "
                f"level groups have medians {groups}: set `threshold` between the stopped "
                "and the running group"]
    if n_below == 0:
        return [f"every reading is above the configured threshold {configured:g}: counted as "
                "running all the time; check `threshold` if this machine does stop"]
    if n_above == 0:
        return [f"no reading is above the configured threshold {configured:g}: never counted "
                "as running; check `threshold` if this machine does run"]
    return []
