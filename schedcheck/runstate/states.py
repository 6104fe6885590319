"""The three run states, and the one form run states travel in between the core's stages.

Every instant of a component's window is in exactly one state. The classifier, the accounting
and the findings all pass run states as a :class:`StateSets` (three disjoint interval sets
tiling the window); tables (``start, end, state``) exist only at the edges, read once by
:meth:`StateSets.from_table`.
"""

from __future__ import annotations

from dataclasses import dataclass

import pandas as pd

from schedcheck.intervals import NS_PER_H, Intervals, check_labels, table_ns

RUN = "run"          # the component is turning (any speed above the stopped level)
OFF = "off"          # known to be stopped
NO_DATA = "no_data"  # no reading close enough to say

#: Every state, in the order outputs list them.
STATES = (RUN, OFF, NO_DATA)



@dataclass(frozen=True)
class NoDataWarnShares:
    """When missing data earns a warning: shares of the audit window without data [-].

    Both are common practice, no source. ``note`` (1 %, about 7 h of a month): the run-state
    classifier names the hours without readings and the longest silence, worth a look at the
    sensor. ``understate`` (10 %): the audit warns that the component's hours and kWh cover
    only the known time and may understate the running. They are two levels of one fact, kept
    apart because the second sentence would be an overstatement at 1 %.
    """

    note: float = 0.01
    understate: float = 0.10


#: The levels every warning about missing data uses (see :class:`NoDataWarnShares`).
NO_DATA_WARN = NoDataWarnShares()


@dataclass(frozen=True)
class StateSets:
    """The run states of one component as three disjoint interval sets tiling the window.

    ``warnings`` says how a table that overlapped itself or left part of the window uncovered
    was mended (see :meth:`from_table`).
    """

    run: Intervals
    off: Intervals
    no_data: Intervals
    warnings: tuple[str, ...] = ()

    def of(self, state: str) -> Intervals:
        """The set of one state by its name."""
        return {RUN: self.run, OFF: self.off, NO_DATA: self.no_data}[state]

    @classmethod
    def from_table(cls, states: pd.DataFrame, start: pd.Timestamp, end: pd.Timestamp,
                   *, name: str = "states") -> StateSets:
        """Read a run-state table (``start``, ``end``, ``state``; tz-aware) for ``[start, end)``.

        Where the table overlaps itself, ``run`` wins over ``off``; any part of the window the
        table does not cover is ``no_data``. Either case adds a warning, never a lost minute.

        Raises
        ------
        TableError
            A missing column, naive instants or an unknown state, naming ``name``.
        """
        s, e = table_ns(states, name, ("start", "end", "state"))
        labels = check_labels(states, name, "state", STATES, "run states")
        win = Intervals.window(start, end)
        pick = {st: Intervals.from_arrays(s[labels == st], e[labels == st]) & win
                for st in STATES}
        run = pick[RUN]
        off = pick[OFF] - run
        no_data = win - run - off
        warnings: list[str] = []
        declared = pick[NO_DATA] - run - off
        if no_data.duration_ns() != declared.duration_ns():
            gap_h = (no_data.duration_ns() - declared.duration_ns()) / NS_PER_H
            warnings.append(
                f"run states left {gap_h:.3f} h of the window uncovered; counted as no data"
            )
        overlap = (pick[RUN] & pick[OFF]).duration_ns()
        if overlap:
            warnings.append(
                f"run states overlap for {overlap / NS_PER_H:.3f} h; counted as running")
        return cls(run, off, no_data, tuple(warnings))
