"""Run states: vibration levels -> run / off / no_data intervals per component."""

from schedcheck import lazy_exports

__getattr__, __all__ = lazy_exports(__name__, {
    "ComponentStates": "classify", "classify_unit": "classify",
    "classify_component": "classify",
    "Threshold": "onofflevel", "choose_threshold": "onofflevel",
    "reading_levels": "levels", "log_levels": "levels",
    "hysteresis_states": "switching", "min_dwell": "switching",
    "otsu_threshold": "thresholds", "ashman_d": "thresholds", "level_groups": "thresholds",
    "hours_by_state": "hours",
    "RUN": "states", "OFF": "states", "NO_DATA": "states", "STATES": "states",
    "StateSets": "states",
})
