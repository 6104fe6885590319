"""The finding kinds, in the order the rules run and the outputs list them."""

KINDS = ("night", "weekend", "holiday", "unscheduled_day", "continuous", "clock_offset",
         "early_start", "late_stop", "missed", "short_cycling", "setback", "over_speed",
         # from the building system's trends (trends/against.py)
         "hand_mode", "failed_start", "false_status")

#: Kinds that describe running another finding already prices (the trends' diagnoses): no
#: energy of their own, never scaled to a year.
DIAGNOSIS_KINDS = ("hand_mode", "failed_start", "false_status")
