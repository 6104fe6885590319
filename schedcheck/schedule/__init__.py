"""Schedule: calendars, days off and allowances -> the intended intervals of each unit."""

from schedcheck import lazy_exports

__getattr__, __all__ = lazy_exports(__name__, {
    "UnitSchedule": "intended", "expand_unit_schedule": "intended",
    "expand_calendar": "calendars", "check_calendar": "guards",
    "days_off": "daysoff", "public_holidays": "daysoff", "closure_days": "daysoff",
    "OCCUPIED": "kinds", "ALLOWANCE": "kinds", "ALLOWED": "kinds",
    "SCHEDULE_KINDS": "kinds", "DAY_OFF_KINDS": "kinds",
})
