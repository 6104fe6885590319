"""Plain words the report builds from the audit's contents (no figures, no markup)."""

from __future__ import annotations

#: role -> the plural the headline uses; fans share one word
ROLE_PLURALS = {"supply_fan": "fans", "exhaust_fan": "fans", "return_fan": "fans",
                "heat_wheel": "heat wheels", "other": "other monitored parts"}


def monitored_words(roles) -> str:
    """``"fans"``, ``"fans and heat wheels"``, ...: only the kinds of component present,
    in the order of :data:`ROLE_PLURALS`."""
    present = {ROLE_PLURALS.get(r, "other monitored parts") for r in roles}
    words = [w for w in dict.fromkeys(ROLE_PLURALS.values()) if w in present]
    if not words:
        return "components"
    return words[0] if len(words) == 1 else ", ".join(words[:-1]) + " and " + words[-1]


#: decimals of the separation figure (Ashman's D) wherever it is shown or written
SEPARATION_DECIMALS = 1


def separation_figure(sep, cap: float) -> float | None:
    """The one separation figure of ``states``, ``summary.json`` and the report: Ashman's D
    capped at ``cap`` (``runstate.onofflevel.SEPARATION_CAP``) and rounded to
    :data:`SEPARATION_DECIMALS`; None where there is none."""
    if sep is None:
        return None
    try:
        x = float(sep)
    except (TypeError, ValueError):
        return None
    if x != x:   # NaN
        return None
    return float(cap) if x >= cap else round(x, SEPARATION_DECIMALS)


def separation_text(sep, cap: float) -> str:
    """The figure as text: ``2.8``, ``>1000`` at the cap, ``-`` for none."""
    x = separation_figure(sep, cap)
    if x is None:
        return "-"
    return f">{cap:.0f}" if x >= cap else f"{x:.{SEPARATION_DECIMALS}f}"
