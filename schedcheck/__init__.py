"""schedcheck: find air handling units that run outside their intended schedule.

Fan vibration readings are turned into run intervals, the occupancy calendars into intended
intervals, and the two are compared and priced with the fan affinity laws.
"""

__version__ = "0.1.0"
