"""The names of the three run states: every instant of a component's window is in one of them."""

RUN = "run"          # the component is turning (any speed above the stopped level)
OFF = "off"          # known to be stopped
NO_DATA = "no_data"  # no reading close enough to say

#: Every state, in the order outputs list them.
STATES = (RUN, OFF, NO_DATA)
