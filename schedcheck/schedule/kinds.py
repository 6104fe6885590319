"""The names of the intended schedule's interval kinds and of the kinds of day off."""

OCCUPIED = "occupied"    # a period the unit must run
ALLOWANCE = "allowance"  # early start or late stop next to an occupied period
ALLOWED = "allowed"      # an allowed window: running is acceptable, not required

#: Interval kinds, in priority order: where two overlap, the first wins.
SCHEDULE_KINDS = (OCCUPIED, ALLOWANCE, ALLOWED)

HOLIDAY = "holiday"      # a public holiday
CLOSURE = "closure"      # a closure date from the site file

#: Kinds of day off.
DAY_OFF_KINDS = (HOLIDAY, CLOSURE)
