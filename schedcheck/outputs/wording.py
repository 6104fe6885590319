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
