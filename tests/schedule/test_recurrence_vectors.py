"""Recurrence rules against an independent implementation's own test vectors.

The vectors are python-dateutil's tests/test_rrule.py (repository dateutil/dateutil, the commit
named in each case; Apache-2.0 / BSD-3-Clause), extracted by ``vectors/extract_dateutil.py``
into ``vectors/dateutil_rrule.json`` with the file, line and test name of every case. Each case
is expanded by schedcheck (a floating DTSTART read in UTC, one-second events) and must end in
one of four ways:

* ``agree``: the same instants;
* ``undefined``: DTSTART is not synchronised with the rule, which RFC 5545 section 3.3.10 leaves
  undefined ("The recurrence set generated with a "DTSTART" property value not synchronized
  with the recurrence rule is undefined"); we keep DTSTART as the first occurrence (section
  3.8.5.3: "The "DTSTART" property value always counts as the first occurrence") and must
  otherwise give exactly dateutil's instants;
* ``refused``: a guard rail of ours refuses the rule, with the reason asserted (MINUTELY and
  SECONDLY rules, more than 48 starts a day, WEEKLY BYSETPOS off the week's first day);
* ``decided``: a documented reading of ours that differs from dateutil's (docs/calendars.md,
  "How recurrence is read"), each listed below with its own expected instants.
"""

from __future__ import annotations

import datetime as dt
import json
from collections import Counter
from pathlib import Path

import icalendar
import pytest

from schedcheck.errors import InputError
from schedcheck.schedule.calendars import expand_calendar

pytestmark = pytest.mark.validation

VECTORS = Path(__file__).parent / "vectors"
CASES = [case for name in ("dateutil_rrule.json", "libical_recur.json")
         for case in json.loads((VECTORS / name).read_text(encoding="utf-8"))]

REFUSALS = {   # rule part -> words the refusal must contain
    "FREQ=MINUTELY": "MINUTELY", "FREQ=SECONDLY": "SECONDLY",
}

# YEARLY + BYWEEKNO without BYDAY: the Tuesday (DTSTART 1997-09-02 is a Tuesday) of ISO week
# 20, as libical and RFC 8984 section 4.3.3.1 read it; dateutil gives every day of the week.
# Expected from the ISO calendar itself (date.fromisocalendar), not from any rule library.
DECIDED = {
    "dateutil:testYearlyByWeekNo:225": [
        dt.datetime.combine(dt.date.fromisocalendar(y, 20, 2), dt.time(9))
        for y in (1998, 1999, 2000)
    ],
    # YEARLY + BYMONTHDAY without BYMONTH: days 1 and 3 of DTSTART's month (September) each
    # year, as libical reads it; dateutil gives those days of every month.
    "dateutil:testYearlyByMonthDay:84": [
        dt.datetime(1997, 9, 3, 9), dt.datetime(1998, 9, 1, 9), dt.datetime(1998, 9, 3, 9)],
}


def _parse(text: str) -> dt.datetime:
    """A DATE, floating or UTC DATE-TIME as a naive UTC instant (the site's zone is UTC)."""
    if len(text) == 8:
        return dt.datetime.strptime(text, "%Y%m%d")
    return dt.datetime.strptime(text.removesuffix("Z"), "%Y%m%dT%H%M%S")


def _start_lines(start: str) -> str:
    if len(start) == 8:   # an all-day series: one day each
        return f"DTSTART;VALUE=DATE:{start}\r\nDURATION:P1D\r\n"
    return f"DTSTART:{start}\r\nDURATION:PT1S\r\n"


def _expand(case: dict, last: dt.date | None = None) -> list[dt.datetime]:
    text = ("BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//schedcheck vectors//EN\r\n"
            f"BEGIN:VEVENT\r\nUID:{case['id']}\r\nDTSTAMP:20260101T000000Z\r\n"
            f"{_start_lines(case['dtstart'])}RRULE:{case['rrule']}\r\n"
            "SUMMARY:vector\r\nEND:VEVENT\r\nEND:VCALENDAR\r\n")
    want = [_parse(x) for x in case["expected"]]
    first = min([*want, _parse(case["dtstart"])]).date()
    last = last or max(want).date()
    res = expand_calendar(icalendar.Calendar.from_ical(text), "UTC", first, last,
                          max_days=(last - first).days + 1)
    return sorted({t.tz_localize(None).to_pydatetime() for t in res.events["event_start"]})


def _outcome(case: dict) -> tuple[str, str]:
    if case["id"] in DECIDED:
        want = DECIDED[case["id"]]
        got = [g for g in _expand(case, want[-1].date()) if g != _parse(case["dtstart"])]
        return ("decided", "") if got == want else ("disagree", f"{got} != {want}")
    try:
        got = _expand(case)
    except InputError as exc:
        return "refused", str(exc)
    want = [_parse(x) for x in case["expected"]]
    start = _parse(case["dtstart"])
    if got == want:
        return "agree", ""
    if start not in want and [g for g in got if g != start] == want:
        return "undefined", ""
    return "disagree", f"{got} != {want}"


@pytest.mark.parametrize("case", CASES, ids=[c["id"] for c in CASES])
def test_vector(case):
    kind, detail = _outcome(case)
    assert kind != "disagree", f"{case['source']['file']}:{case['source']['line']}: {detail}"
    if kind == "refused":
        words = [w for part, w in REFUSALS.items() if part in case["rrule"]]
        if "BYSETPOS" in case["rrule"] and "FREQ=WEEKLY" in case["rrule"]:
            words = ["BYSETPOS"]
        elif "BYWEEKNO" in case["rrule"] and "INTERVAL" in case["rrule"]:
            words = ["week number"]
        elif not words:
            words = ["starts a day"]
        assert any(w in detail for w in words), detail


def test_the_suite_is_large_and_every_case_names_its_source():
    assert len(CASES) >= 300
    for case in CASES:
        src = case["source"]
        assert src["repository"] in ("dateutil/dateutil", "libical/libical")
        assert len(src["commit"]) == 40 and src["file"] and src["line"] > 0 and src["test"]


def test_most_cases_are_expanded_not_refused():
    kinds = Counter(_outcome(c)[0] for c in CASES)
    assert kinds["disagree"] == 0
    assert kinds["agree"] + kinds["undefined"] + kinds["decided"] >= 150
