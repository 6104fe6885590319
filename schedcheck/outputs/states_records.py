"""The ``states`` command's figures per component as JSON-ready values, and picture names."""

from __future__ import annotations

import math
import re

from schedcheck.outputs.wording import separation_figure
from schedcheck.runstate.classify import ComponentStates
from schedcheck.runstate.hours import hours_by_state
from schedcheck.runstate.onofflevel import SEPARATION_CAP
from schedcheck.runstate.states import NO_DATA, OFF, RUN


def _num(x: float | None, digits: int = 4) -> float | None:
    if x is None or not math.isfinite(float(x)):
        return None
    return round(float(x), digits)


def component_record(cs: ComponentStates) -> dict:
    """One component's figures as plain JSON-ready values.

    Fields: ``component`` (UNIT/COMPONENT), ``unit``, ``role``, ``sensor``, ``level``,
    ``on_level``, ``off_level`` [reading unit], ``source``, ``separation`` (Ashman's D, as
    :func:`schedcheck.outputs.wording.separation_figure` gives it everywhere),
    ``effectiveness`` (Otsu's eta), ``groups`` (level group medians), ``floor`` (the floor
    level in force) [reading unit], ``running_share`` (running / known time), ``starts``,
    ``starts_per_day`` (per 24 h of known time), ``known_hours``, ``no_data_hours`` [h],
    ``confidence`` (``high`` / ``medium`` / ``low``), ``near_share`` (share of readings near
    the level), ``concerns`` (why the confidence is not high, in words), ``reason`` and
    ``warnings``; ``speed_levels``: the running level groups with their speeds (``level``
    [reading unit], ``speed``, ``low``, ``high`` [-], ``source``) and ``speed_source``.
    """
    th = cs.threshold
    hours = hours_by_state(cs.intervals)
    no_data = hours[NO_DATA]
    known = hours[RUN] + hours[OFF]
    c = cs.component
    sep = th.separation
    return {
        "component": c.key, "unit": c.unit, "role": c.role, "sensor": c.sensor,
        "level": _num(th.level, 6), "on_level": _num(th.on_level, 6),
        "off_level": _num(th.off_level, 6), "source": th.source,
        "separation": separation_figure(sep, SEPARATION_CAP),
        "effectiveness": _num(th.effectiveness, 3),
        "groups": [_num(g, 6) for g in th.groups], "floor": _num(th.floor, 6),
        "running_share": _num(cs.run_share, 4),
        "starts": int(cs.starts),
        "starts_per_day": _num(cs.starts / (known / 24.0), 2) if known > 0 else None,
        "known_hours": round(known, 2), "no_data_hours": round(no_data, 2),
        "confidence": th.confidence or None, "near_share": _num(th.near_share, 4),
        "concerns": list(th.concerns),
        "reason": th.reason,
        "warnings": list(th.warnings) + list(cs.warnings),
        "speed_levels": [{"level": _num(lv.level, 6), "speed": _num(lv.speed, 3),
                          "low": _num(lv.low, 3), "high": _num(lv.high, 3), "source": lv.source}
                         for lv in cs.speed_pieces.levels],
        "speed_source": cs.speed_pieces.main_source,
    }


def picture_name(component_key: str) -> str:
    """``UNIT/COMPONENT`` -> ``UNIT_COMPONENT.svg`` (characters unsafe in file names -> ``-``)."""
    unit, _, comp = component_key.partition("/")

    def safe(s: str) -> str:
        return re.sub(r"[^A-Za-z0-9._-]+", "-", s)
    return f"{safe(unit)}_{safe(comp)}.svg"
