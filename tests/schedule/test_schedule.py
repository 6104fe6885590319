"""schedule.intended: union, days off, allowances, allowed windows, priorities, window edges."""

from __future__ import annotations

import datetime as dt

import icalendar
import pandas as pd
import pytest

from schedcheck.intervals import Intervals
from schedcheck.schedule.intended import UnitSchedule, expand_unit_schedule
from schedcheck.site import HolidaySettings

OSLO = "Europe/Oslo"
D = dt.date
WEEKDAYS = ("SUMMARY:Offices\nDTSTART;TZID=Europe/Oslo:20260302T070000\n"
            "DTEND;TZID=Europe/Oslo:20260302T170000\nRRULE:FREQ=WEEKLY;BYDAY=MO,TU,WE,TH,FR")


def cal(*events: str) -> icalendar.Calendar:
    text = "BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//schedcheck tests//EN\r\n"
    for i, body in enumerate(events):
        text += f"BEGIN:VEVENT\r\nUID:ev{i}@example.org\r\n"
        text += body.strip().replace("\n", "\r\n") + "\r\nEND:VEVENT\r\n"
    return icalendar.Calendar.from_ical(text + "END:VCALENDAR\r\n")


def rows(s: UnitSchedule, kind: str | None = None) -> list[tuple[str, str, str, str]]:
    f = s.intervals if kind is None else s.intervals[s.intervals["kind"] == kind]
    return [(a.tz_convert(OSLO).strftime("%m-%d %H:%M"), b.tz_convert(OSLO).strftime("%m-%d %H:%M"),
             k, src) for a, b, k, src in zip(f["start"], f["end"], f["kind"], f["source"],
                                             strict=True)]


MARCH_2 = D(2026, 3, 2)


def expand(occupied, allowed=(), first=MARCH_2, last=MARCH_2, **kw) -> UnitSchedule:
    return expand_unit_schedule([("occ.ics", c) for c in occupied],
                                [("allowed.ics", c) for c in allowed], OSLO, first, last, **kw)


def assert_disjoint_and_sorted(s: UnitSchedule) -> None:
    f = s.intervals
    assert list(f.columns) == ["start", "end", "kind", "source"]
    assert str(f["start"].dtype) == "datetime64[ns, UTC]"
    assert (f["end"] > f["start"]).all()
    assert f["start"].is_monotonic_increasing
    assert (f["start"].iloc[1:].to_numpy() >= f["end"].iloc[:-1].to_numpy()).all()


def test_overlapping_events_are_unioned_with_both_sources():
    c = cal(WEEKDAYS, "SUMMARY:Canteen\nDTSTART;TZID=Europe/Oslo:20260302T100000\n"
            "DTEND;TZID=Europe/Oslo:20260302T190000")
    s = expand([c])
    assert rows(s) == [("03-02 07:00", "03-02 19:00", "occupied", "Offices; Canteen")]
    assert_disjoint_and_sorted(s)


def test_allowances_after_union_and_allowed_window_minus_both():
    night = cal("SUMMARY:Night purge\nDTSTART;TZID=Europe/Oslo:20260302T030000\n"
                "DTEND;TZID=Europe/Oslo:20260302T060000")
    s = expand([cal(WEEKDAYS)], [night], early_start=pd.Timedelta("2h"),
               late_stop=pd.Timedelta("30min"))
    assert rows(s) == [
        ("03-02 03:00", "03-02 05:00", "allowed", "Night purge"),
        ("03-02 05:00", "03-02 07:00", "allowance", "early start 2h"),
        ("03-02 07:00", "03-02 17:00", "occupied", "Offices"),
        ("03-02 17:00", "03-02 17:30", "allowance", "late stop 30min"),
    ]
    assert_disjoint_and_sorted(s)


def test_allowance_between_close_periods_is_one_piece_naming_both_rules():
    c = cal("SUMMARY:Morning\nDTSTART;TZID=Europe/Oslo:20260302T070000\n"
            "DTEND;TZID=Europe/Oslo:20260302T110000",
            "SUMMARY:Evening\nDTSTART;TZID=Europe/Oslo:20260302T120000\n"
            "DTEND;TZID=Europe/Oslo:20260302T150000")
    s = expand([c], early_start=pd.Timedelta("1h"), late_stop=pd.Timedelta("30min"))
    gap = ("03-02 11:00", "03-02 12:00", "allowance", "late stop 30min + early start 1h")
    assert gap in rows(s)


def test_public_holiday_removes_occupied_period_and_its_allowances():
    # 2026-04-02 and 04-03 are Norwegian public holidays (Maundy Thursday, Good Friday)
    s = expand([cal(WEEKDAYS)], first=D(2026, 4, 1), last=D(2026, 4, 3),
               early_start=pd.Timedelta("1h"), holidays=HolidaySettings(country="NO"))
    assert [r[0][:5] for r in rows(s, "occupied")] == ["04-01"]
    assert rows(s, "allowance") == [("04-01 06:00", "04-01 07:00", "allowance", "early start 1h")]
    assert s.days_off["date"].tolist() == [D(2026, 4, 2), D(2026, 4, 3)]


def test_event_marked_open_on_holidays_stays():
    duty = ("SUMMARY:Easter duty\nCATEGORIES:OPEN-ON-HOLIDAYS\n"
            "DTSTART;TZID=Europe/Oslo:20260402T090000\nDTEND;TZID=Europe/Oslo:20260402T120000")
    s = expand([cal(WEEKDAYS, duty)], first=D(2026, 4, 2), last=D(2026, 4, 2),
               holidays=HolidaySettings(country="NO"))
    assert rows(s) == [("04-02 09:00", "04-02 12:00", "occupied", "Easter duty")]


def test_closure_dates_remove_periods_too():
    s = expand([cal(WEEKDAYS)], first=D(2026, 3, 2), last=D(2026, 3, 4),
               holidays=HolidaySettings(closed=((D(2026, 3, 3), D(2026, 3, 3)),)))
    assert [r[0][:5] for r in rows(s, "occupied")] == ["03-02", "03-04"]
    assert s.days_off["kind"].tolist() == ["closure"]


def test_night_period_belongs_to_the_date_it_starts_on():
    # 22:00-06:00 shifts; 2026-03-03 is a closure date
    night = cal("SUMMARY:Night shift\nDTSTART;TZID=Europe/Oslo:20260302T220000\n"
                "DTEND;TZID=Europe/Oslo:20260303T060000\nRRULE:FREQ=DAILY;COUNT=3")
    s = expand([night], first=D(2026, 3, 2), last=D(2026, 3, 5),
               holidays=HolidaySettings(closed=((D(2026, 3, 3), D(2026, 3, 3)),)))
    # the shift starting on the 2nd runs into the closed 3rd and is kept whole; the one
    # starting on the closed 3rd is removed whole; the one starting on the 4th stays
    assert rows(s) == [("03-02 22:00", "03-03 06:00", "occupied", "Night shift"),
                       ("03-04 22:00", "03-05 06:00", "occupied", "Night shift")]


def test_multi_day_event_loses_whole_days_off_it_spans():
    week = cal("SUMMARY:Trade fair\nDTSTART;TZID=Europe/Oslo:20260330T080000\n"
               "DTEND;TZID=Europe/Oslo:20260403T180000")
    s = expand([week], first=D(2026, 3, 30), last=D(2026, 4, 3),
               holidays=HolidaySettings(country="NO"))
    assert rows(s) == [("03-30 08:00", "04-02 00:00", "occupied", "Trade fair")]


def test_allowance_reaches_into_the_window_from_a_period_after_it():
    early = cal("SUMMARY:Early shift\nDTSTART;TZID=Europe/Oslo:20260303T003000\n"
                "DTEND;TZID=Europe/Oslo:20260303T080000")
    s = expand([early], first=D(2026, 3, 2), last=D(2026, 3, 2),
               early_start=pd.Timedelta("2h"))
    assert rows(s) == [("03-02 22:30", "03-03 00:00", "allowance", "early start 2h")]


def test_allowed_windows_ignore_days_off():
    night = cal("SUMMARY:Night purge\nDTSTART;TZID=Europe/Oslo:20260402T030000\n"
                "DTEND;TZID=Europe/Oslo:20260402T060000")
    s = expand([cal(WEEKDAYS)], [night], first=D(2026, 4, 2), last=D(2026, 4, 2),
               holidays=HolidaySettings(country="NO"))
    assert rows(s) == [("04-02 03:00", "04-02 06:00", "allowed", "Night purge")]


def test_dst_day_hours():
    # on 2026-03-29 (spring change) a 07:00-17:00 period is still 10 h, the local day 23 h
    daily = cal("SUMMARY:Daily\nDTSTART;TZID=Europe/Oslo:20260328T070000\n"
                "DTEND;TZID=Europe/Oslo:20260328T170000\nRRULE:FREQ=DAILY")
    s = expand([daily], first=D(2026, 3, 29), last=D(2026, 3, 29),
               early_start=pd.Timedelta("8h"), late_stop=pd.Timedelta("8h"))
    assert s.of_kind("occupied").hours() == pytest.approx(10.0)
    # allowance: 00:00-07:00 local (6 h of real time: 02:00-03:00 does not exist) + 17-24 (7 h)
    assert s.of_kind("allowance").hours() == pytest.approx(13.0)


def test_kinds_never_overlap_on_a_messy_month():
    occ = cal(WEEKDAYS, "SUMMARY:Late\nDTSTART;TZID=Europe/Oslo:20260304T150000\n"
              "DTEND;TZID=Europe/Oslo:20260305T010000\nRRULE:FREQ=WEEKLY;BYDAY=WE",
              "SUMMARY:Saturday\nDTSTART:20260307T090000\nDTEND:20260307T140000\n"
              "RRULE:FREQ=WEEKLY")
    allowed = cal("SUMMARY:Purge\nDTSTART;TZID=Europe/Oslo:20260301T020000\n"
                  "DTEND;TZID=Europe/Oslo:20260301T080000\nRRULE:FREQ=DAILY")
    s = expand([occ], [allowed], first=D(2026, 3, 1), last=D(2026, 4, 30),
               early_start=pd.Timedelta("3h"), late_stop=pd.Timedelta("1h"),
               holidays=HolidaySettings(country="NO"))
    assert_disjoint_and_sorted(s)
    o, a, w = (s.of_kind(k) for k in ("occupied", "allowance", "allowed"))
    assert (o & a).duration_ns() == 0 and (o & w).duration_ns() == 0
    assert (a & w).duration_ns() == 0
    total = Intervals.from_frame(s.intervals).duration_ns()
    assert total == o.duration_ns() + a.duration_ns() + w.duration_ns()


# -- property test: whatever the events, the kinds partition cleanly --------------------------
from hypothesis import HealthCheck, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

_EVENT = st.tuples(st.integers(0, 20), st.integers(0, 47), st.integers(1, 40), st.booleans())


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(events=st.lists(_EVENT, min_size=0, max_size=8),
       allowed=st.lists(_EVENT, min_size=0, max_size=4),
       off=st.sets(st.integers(0, 20), max_size=4),
       early=st.integers(0, 6), late=st.integers(0, 6),
       tz=st.sampled_from([OSLO, "America/New_York"]))
def test_schedule_properties_across_dst(events, allowed, off, early, late, tz):
    # windows of 2026-03-20..04-09 span the spring change in both zones
    base = dt.datetime(2026, 3, 20)

    def calendar(items):
        bodies = []
        for day, half_hour, length, marked in items:
            s = base + dt.timedelta(days=day, minutes=30 * half_hour)
            e = s + dt.timedelta(minutes=30 * length)
            bodies.append(f"SUMMARY:E{day}-{half_hour}\nDTSTART;TZID={tz}:{s:%Y%m%dT%H%M%S}\n"
                          f"DTEND;TZID={tz}:{e:%Y%m%dT%H%M%S}"
                          + ("\nCATEGORIES:OPEN-ON-HOLIDAYS" if marked else ""))
        return cal(*bodies)

    first, last = D(2026, 3, 20), D(2026, 4, 9)
    closed = tuple((first + dt.timedelta(days=d),) * 2 for d in sorted(off))
    s = expand_unit_schedule([("occ.ics", calendar(events))], [("a.ics", calendar(allowed))],
                             tz, first, last, early_start=pd.Timedelta(hours=early),
                             late_stop=pd.Timedelta(hours=late),
                             holidays=HolidaySettings(closed=closed))
    f = s.intervals
    if len(f):
        assert (f["end"] > f["start"]).all()
        assert (f["start"].iloc[1:].to_numpy() >= f["end"].iloc[:-1].to_numpy()).all()
    o, a, w = (s.of_kind(k) for k in ("occupied", "allowance", "allowed"))
    w0, w1 = pd.Timestamp(f"{first}", tz=tz), pd.Timestamp(f"{last + dt.timedelta(days=1)}", tz=tz)
    window = Intervals.window(w0, w1)
    for part in (o, a, w):   # nothing outside the window
        assert (part - window).duration_ns() == 0
    # allowance lies within the widened occupied time, and allowed within the allowed events
    widened = o.shift_ends(pd.Timedelta(hours=early).value, pd.Timedelta(hours=late).value)
    assert (a - widened).duration_ns() == 0
    assert (o & a).duration_ns() == (o & w).duration_ns() == (a & w).duration_ns() == 0
    # occupied time equals a plain re-statement of the documented day-off rule
    assert o == _reference_occupied(events, base, tz, {first + dt.timedelta(days=d) for d in off},
                                    window)
    assert len(s.days_off) == len(off)


def _reference_occupied(events, base, tz, off_dates, window) -> Intervals:
    """The rule of docs/calendars.md written the slow, obvious way (times per RFC 5545 3.3.5)."""
    from zoneinfo import ZoneInfo

    zone, pieces = ZoneInfo(tz), []
    for day, half_hour, length, marked in events:
        s_local = base + dt.timedelta(days=day, minutes=30 * half_hour)
        e_local = s_local + dt.timedelta(minutes=30 * length)
        s = pd.Timestamp(s_local.replace(tzinfo=zone, fold=0).astimezone(dt.UTC))
        e = pd.Timestamp(e_local.replace(tzinfo=zone, fold=0).astimezone(dt.UTC))
        if e <= s:
            continue                                    # dropped with a warning
        piece = Intervals.window(s, e)
        if not marked:
            if s_local.date() in off_dates:
                continue                                # starts on a day off: removed whole
            if e - s >= pd.Timedelta(days=1):           # long: loses whole days off
                for d in off_dates:
                    d0 = pd.Timestamp(f"{d}", tz=tz)
                    d1 = pd.Timestamp(f"{d + dt.timedelta(days=1)}", tz=tz)
                    piece = piece - Intervals.window(d0, d1)
        pieces.append(piece)
    out = Intervals.empty()
    for p in pieces:
        out = out | p
    return out & window


def test_long_event_starting_before_the_window_is_judged_by_its_real_start():
    # one event for the whole spring term; the window starts the day after Good Friday, so the
    # padded expansion starts on a holiday: the term must not be removed for that
    term = cal("SUMMARY:Spring term\nDTSTART;TZID=Europe/Oslo:20260105T000000\n"
               "DTEND;TZID=Europe/Oslo:20260620T000000")
    s = expand([term], first=D(2026, 4, 4), last=D(2026, 4, 7),
               holidays=HolidaySettings(country="NO"))
    # Easter Sunday 5th and Monday 6th are cut out whole; the 4th and 7th stay
    assert rows(s) == [("04-04 00:00", "04-05 00:00", "occupied", "Spring term"),
                       ("04-07 00:00", "04-08 00:00", "occupied", "Spring term")]


def test_an_event_marked_free_is_occupied_with_a_warning_in_occupied_calendars_only():
    # calendar programs write TRANSP:TRANSPARENT (RFC 5545 3.8.2.7, "free") for all-day notes
    # such as "Building closed"; it stays occupied time (our rule), but the user is told
    closed = ("SUMMARY:Building closed\nDTSTART;VALUE=DATE:20260302\nDTEND;VALUE=DATE:20260303\n"
              "TRANSP:TRANSPARENT")
    s = expand([cal(WEEKDAYS, closed)])
    assert rows(s, "occupied") == [("03-02 00:00", "03-03 00:00", "occupied",
                                    "Offices; Building closed")]
    (w,) = s.warnings
    assert w.startswith("occ.ics: event 'Building closed' (ev1@example.org): is marked free")
    assert "[holidays] closed" in w
    assert not expand([cal(WEEKDAYS)], allowed=[cal(closed)]).warnings
    busy = closed.replace("TRANSPARENT", "OPAQUE")
    assert not expand([cal(WEEKDAYS, busy)]).warnings
    # only events that touch the window (with its allowances) are named: 2 March is two days
    # before a window of 4-5 March, but inside the padding the schedule expands
    assert not expand([cal(WEEKDAYS, closed)], first=D(2026, 3, 4), last=D(2026, 3, 5)).warnings
    assert expand([cal(WEEKDAYS, closed)], first=D(2026, 3, 3), last=D(2026, 3, 3),
                  late_stop="30min").warnings


def test_a_week_without_any_occupied_period_is_a_warning():
    # a calendar whose series ended last year leaves the unit with no occupied time at all:
    # every running minute becomes off-schedule, so the schedule says why
    old = cal("SUMMARY:Offices\nDTSTART;TZID=Europe/Oslo:20250106T070000\n"
              "DTEND;TZID=Europe/Oslo:20250106T170000\n"
              "RRULE:FREQ=WEEKLY;BYDAY=MO,TU,WE,TH,FR;UNTIL=20251219T235959Z")
    s = expand([old], first=D(2026, 3, 2), last=D(2026, 3, 8))
    assert len(s.intervals) == 0
    assert s.warnings == ["no occupied period from 2026-03-02 to 2026-03-08 in occ.ics (after "
                          "public holidays and closures): all running in the window counts as "
                          "off-schedule"]
    # a weekend on its own is unoccupied in most buildings: no warning for a short window
    weekend = expand([cal(WEEKDAYS)], first=D(2026, 3, 7), last=D(2026, 3, 8))
    assert len(weekend.intervals) == 0 and weekend.warnings == []
    # a week with occupied time: no warning
    assert expand([cal(WEEKDAYS)], first=D(2026, 3, 2), last=D(2026, 3, 8)).warnings == []
