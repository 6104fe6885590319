"""schedule.calendars: time rules, daylight saving, and one hostile calendar per guard rail."""

from __future__ import annotations

import datetime as dt

import icalendar
import pytest

import schedcheck.schedule.calendars as calendars
from schedcheck.errors import InputError
from schedcheck.schedule.calendars import check_calendar, expand_calendar, is_open_on_holidays

OSLO = "Europe/Oslo"
NY = "America/New_York"


def cal(*events: str, head: str = "") -> icalendar.Calendar:
    text = "BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//schedcheck tests//EN\r\n" + head
    for i, body in enumerate(events):
        lines = body.strip().splitlines()
        if not any(x.startswith("UID") for x in lines):
            lines.insert(0, f"UID:ev{i}@example.org")
        if not any(x.startswith("SUMMARY") for x in lines):
            lines.insert(0, f"SUMMARY:Event {i}")
        text += "BEGIN:VEVENT\r\n" + "\r\n".join(lines) + "\r\nEND:VEVENT\r\n"
    return icalendar.Calendar.from_ical(text + "END:VCALENDAR\r\n")


def local_spans(res, tz: str) -> list[tuple[str, str]]:
    ev = res.events.sort_values("start")
    return [(s.tz_convert(tz).isoformat(), e.tz_convert(tz).isoformat())
            for s, e in zip(ev["start"], ev["end"], strict=True)]


def hours(res) -> list[float]:
    ev = res.events.sort_values("start")
    return [round((e - s).total_seconds() / 3600, 3) for s, e in zip(ev["start"], ev["end"],
                                                                       strict=True)]


D = dt.date


# -- time rules ------------------------------------------------------------------------------
def test_tzid_event_weekdays_and_columns():
    c = cal("DTSTART;TZID=Europe/Oslo:20260302T070000\nDTEND;TZID=Europe/Oslo:20260302T170000\n"
            "RRULE:FREQ=WEEKLY;BYDAY=MO,TU,WE,TH,FR")
    res = expand_calendar(c, OSLO, D(2026, 3, 2), D(2026, 3, 8))
    assert list(res.events.columns) == calendars.EVENT_COLUMNS
    assert str(res.events["start"].dtype) == "datetime64[ns, UTC]"
    assert local_spans(res, OSLO)[0] == ("2026-03-02T07:00:00+01:00", "2026-03-02T17:00:00+01:00")
    assert len(res.events) == 5 and res.warnings == []


def test_floating_time_is_read_in_site_zone():
    c = cal("DTSTART:20260302T070000\nDTEND:20260302T170000")
    oslo = expand_calendar(c, OSLO, D(2026, 3, 1), D(2026, 3, 3))
    ny = expand_calendar(c, NY, D(2026, 3, 1), D(2026, 3, 3))
    assert local_spans(oslo, OSLO) == [("2026-03-02T07:00:00+01:00", "2026-03-02T17:00:00+01:00")]
    assert local_spans(ny, NY) == [("2026-03-02T07:00:00-05:00", "2026-03-02T17:00:00-05:00")]


def test_utc_time_stays_utc():
    c = cal("DTSTART:20260302T060000Z\nDTEND:20260302T160000Z")
    res = expand_calendar(c, OSLO, D(2026, 3, 1), D(2026, 3, 3))
    assert local_spans(res, OSLO) == [("2026-03-02T07:00:00+01:00", "2026-03-02T17:00:00+01:00")]


def test_all_day_event_dtend_exclusive_and_default_one_day():
    # RFC 5545 section 3.6.1: DTEND of a DATE event is exclusive; without it, one day.
    c = cal("DTSTART;VALUE=DATE:20260330\nDTEND;VALUE=DATE:20260401",
            "DTSTART;VALUE=DATE:20260403")
    res = expand_calendar(c, OSLO, D(2026, 3, 28), D(2026, 4, 5))
    assert local_spans(res, OSLO) == [
        ("2026-03-30T00:00:00+02:00", "2026-04-01T00:00:00+02:00"),
        ("2026-04-03T00:00:00+02:00", "2026-04-04T00:00:00+02:00")]


def test_all_day_event_on_spring_change_day_is_23_hours():
    c = cal("DTSTART;VALUE=DATE:20260329\nDTEND;VALUE=DATE:20260330")
    assert hours(expand_calendar(c, OSLO, D(2026, 3, 29), D(2026, 3, 29))) == [23.0]


def test_non_iana_tzid_with_vtimezone():
    vtz = ("BEGIN:VTIMEZONE\r\nTZID:Fjord Standard Time\r\nBEGIN:STANDARD\r\n"
           "DTSTART:19701025T030000\r\nRRULE:FREQ=YEARLY;BYMONTH=10;BYDAY=-1SU\r\n"
           "TZOFFSETFROM:+0200\r\nTZOFFSETTO:+0100\r\nEND:STANDARD\r\nBEGIN:DAYLIGHT\r\n"
           "DTSTART:19700329T020000\r\nRRULE:FREQ=YEARLY;BYMONTH=3;BYDAY=-1SU\r\n"
           "TZOFFSETFROM:+0100\r\nTZOFFSETTO:+0200\r\nEND:DAYLIGHT\r\nEND:VTIMEZONE\r\n")
    c = cal("DTSTART;TZID=Fjord Standard Time:20260327T070000\n"
            "DTEND;TZID=Fjord Standard Time:20260327T170000\nRRULE:FREQ=DAILY;COUNT=3", head=vtz)
    res = expand_calendar(c, OSLO, D(2026, 3, 27), D(2026, 3, 31))
    assert local_spans(res, OSLO) == [
        ("2026-03-27T07:00:00+01:00", "2026-03-27T17:00:00+01:00"),
        ("2026-03-28T07:00:00+01:00", "2026-03-28T17:00:00+01:00"),
        ("2026-03-29T07:00:00+02:00", "2026-03-29T17:00:00+02:00")]


def _us_vtimezone(name: str, spring: str, autumn: str) -> str:
    """A VTIMEZONE for US Eastern time with the given yearly BYMONTH/BYDAY rules."""
    return (f"BEGIN:VTIMEZONE\r\nTZID:{name}\r\nBEGIN:STANDARD\r\nDTSTART:19701101T020000\r\n"
            f"RRULE:FREQ=YEARLY;{autumn}\r\nTZOFFSETFROM:-0400\r\nTZOFFSETTO:-0500\r\n"
            f"END:STANDARD\r\nBEGIN:DAYLIGHT\r\nDTSTART:19700308T020000\r\n"
            f"RRULE:FREQ=YEARLY;{spring}\r\nTZOFFSETFROM:-0500\r\nTZOFFSETTO:-0400\r\n"
            "END:DAYLIGHT\r\nEND:VTIMEZONE\r\n")


def test_a_vtimezone_with_outdated_daylight_saving_rules_is_read_by_them_with_a_warning():
    # US daylight saving time: second Sunday of March to first Sunday of November since 2007
    # (Energy Policy Act of 2005, section 110), before that first Sunday of April to last
    # Sunday of October. A calendar program with the old rules in its VTIMEZONE: RFC 5545
    # says its own rules apply (07:00 "Eastern" is 08:00 EDT on 9 March 2026), and the user is
    # told the days where that differs from the site's zone.
    event = ("DTSTART;TZID=Harbor Eastern:20260309T070000\n"
             "DTEND;TZID=Harbor Eastern:20260309T180000")
    old = _us_vtimezone("Harbor Eastern", "BYMONTH=4;BYDAY=1SU", "BYMONTH=10;BYDAY=-1SU")
    res = expand_calendar(cal(event, head=old), NY, D(2026, 3, 9), D(2026, 3, 9))
    assert local_spans(res, NY) == [("2026-03-09T08:00:00-04:00", "2026-03-09T19:00:00-04:00")]
    (w,) = res.warnings
    assert "VTIMEZONE 'Harbor Eastern' gives a different UTC offset from the site's zone " in w
    assert "on 1 day of the window (first 2026-03-09, last 2026-03-09)" in w
    # current rules: no warning; a calendar kept in another zone on purpose: no warning
    new = _us_vtimezone("Harbor Eastern", "BYMONTH=3;BYDAY=2SU", "BYMONTH=11;BYDAY=1SU")
    assert not expand_calendar(cal(event, head=new), NY, D(2026, 3, 9), D(2026, 3, 9)).warnings
    assert not expand_calendar(cal(event, head=new), OSLO, D(2026, 3, 9), D(2026, 3, 9)).warnings


def test_overlapping_and_midnight_crossing_events_are_kept_as_they_are():
    c = cal("DTSTART;TZID=Europe/Oslo:20260302T220000\nDTEND;TZID=Europe/Oslo:20260303T060000",
            "DTSTART;TZID=Europe/Oslo:20260303T050000\nDTEND;TZID=Europe/Oslo:20260303T090000")
    res = expand_calendar(c, OSLO, D(2026, 3, 2), D(2026, 3, 3))
    assert local_spans(res, OSLO) == [
        ("2026-03-02T22:00:00+01:00", "2026-03-03T06:00:00+01:00"),
        ("2026-03-03T05:00:00+01:00", "2026-03-03T09:00:00+01:00")]


def test_events_are_clipped_to_the_window():
    c = cal("DTSTART;TZID=Europe/Oslo:20260301T220000\nDTEND;TZID=Europe/Oslo:20260302T060000")
    res = expand_calendar(c, OSLO, D(2026, 3, 2), D(2026, 3, 2))
    assert local_spans(res, OSLO) == [("2026-03-02T00:00:00+01:00", "2026-03-02T06:00:00+01:00")]


def test_cancelled_occurrence_is_not_a_period():
    c = cal("UID:w@x\nDTSTART;TZID=Europe/Oslo:20260302T070000\n"
            "DTEND;TZID=Europe/Oslo:20260302T170000\nRRULE:FREQ=DAILY;COUNT=3",
            "UID:w@x\nRECURRENCE-ID;TZID=Europe/Oslo:20260303T070000\n"
            "DTSTART;TZID=Europe/Oslo:20260303T070000\nDTEND;TZID=Europe/Oslo:20260303T170000\n"
            "STATUS:CANCELLED\nSEQUENCE:1")
    res = expand_calendar(c, OSLO, D(2026, 3, 1), D(2026, 3, 5))
    assert [s[:10] for s, _ in local_spans(res, OSLO)] == ["2026-03-02", "2026-03-04"]


def test_holiday_marker_in_categories():
    c = cal("CATEGORIES:Work,open-on-holidays\nDTSTART:20260302T070000\nDTEND:20260302T080000",
            "CATEGORIES:Work\nDTSTART:20260302T070000\nDTEND:20260302T080000")
    events = c.walk("VEVENT")
    assert is_open_on_holidays(events[0]) and not is_open_on_holidays(events[1])
    res = expand_calendar(c, OSLO, D(2026, 3, 2), D(2026, 3, 2))
    assert sorted(res.events["open_on_holidays"].tolist()) == [False, True]


# -- daylight saving: DTEND ends follow the wall clock (our documented choice), DURATION hours
#    are exact (RFC 5545 section 3.3.6). IANA rules: EU last Sunday of March/October, US second
#    Sunday of March / first Sunday of November --------------------------------------------
NIGHTS = [
    (OSLO, "20260328", 7.0, "07:00"),    # night into 2026-03-29 (spring gap)
    (OSLO, "20261024", 9.0, "05:00"),    # night into 2026-10-25 (autumn fold)
    (NY, "20260307", 7.0, "07:00"),      # night into 2026-03-08
    (NY, "20261031", 9.0, "05:00"),      # night into 2026-11-01
]


@pytest.mark.parametrize("tz,day,expected_h,_exact_end", NIGHTS)
def test_night_event_with_dtend_across_dst_change_follows_wall_clock(tz, day, expected_h,
                                                                     _exact_end):
    d = dt.datetime.strptime(day, "%Y%m%d").date()
    nxt = (d + dt.timedelta(days=1)).strftime("%Y%m%d")
    c = cal(f"DTSTART;TZID={tz}:{day}T220000\nDTEND;TZID={tz}:{nxt}T060000\n"
            "RRULE:FREQ=DAILY;COUNT=2")
    res = expand_calendar(c, tz, d, d + dt.timedelta(days=2))
    assert hours(res) == [expected_h, 8.0]
    ends = [e for _, e in local_spans(res, tz)]
    assert all(e[11:16] == "06:00" for e in ends)


@pytest.mark.validation   # RFC 5545 section 3.3.6: the time part of a duration is exact
@pytest.mark.parametrize("tz,day,_wall_h,exact_end", NIGHTS)
def test_night_event_with_duration_across_dst_change_lasts_exactly(tz, day, _wall_h, exact_end):
    c = cal(f"DTSTART;TZID={tz}:{day}T220000\nDURATION:PT8H\nRRULE:FREQ=DAILY;COUNT=2")
    d = dt.datetime.strptime(day, "%Y%m%d").date()
    res = expand_calendar(c, tz, d, d + dt.timedelta(days=2))
    assert hours(res) == [8.0, 8.0]
    ends = [e for _, e in local_spans(res, tz)]
    assert ends[0][11:16] == exact_end and ends[1][11:16] == "06:00"


@pytest.mark.validation   # expected values from the outside source named in the comments
def test_gap_time_uses_offset_before_the_gap():
    # RFC 5545 section 3.3.5: "TZID=America/New_York:20070311T023000 indicates March 11, 2007
    # at 3:30 A.M. EDT (UTC-04:00), one hour after 1:30 A.M. EST (UTC-05:00)".
    c = cal("DTSTART;TZID=America/New_York:20070311T023000\n"
            "DTEND;TZID=America/New_York:20070311T050000")
    res = expand_calendar(c, NY, D(2007, 3, 11), D(2007, 3, 11))
    assert local_spans(res, NY)[0][0] == "2007-03-11T03:30:00-04:00"


@pytest.mark.validation   # expected values from the outside source named in the comments
def test_fold_time_is_the_first_occurrence():
    # RFC 5545 section 3.3.5: "TZID=America/New_York:20071104T013000 indicates November 4,
    # 2007 at 1:30 A.M. EDT (UTC-04:00)".
    c = cal("DTSTART;TZID=America/New_York:20071104T013000\n"
            "DTEND;TZID=America/New_York:20071104T030000")
    res = expand_calendar(c, NY, D(2007, 11, 4), D(2007, 11, 4))
    assert local_spans(res, NY) == [("2007-11-04T01:30:00-04:00", "2007-11-04T03:00:00-05:00")]
    assert hours(res) == [2.5]


def test_oslo_fold_floating_time_first_occurrence():
    c = cal("DTSTART:20261025T023000\nDTEND:20261025T040000")
    res = expand_calendar(c, OSLO, D(2026, 10, 25), D(2026, 10, 25))
    assert local_spans(res, OSLO) == [("2026-10-25T02:30:00+02:00", "2026-10-25T04:00:00+01:00")]


@pytest.mark.parametrize("start,end,span", [
    ("020000", "030000", ("2026-03-29T03:00:00+02:00", "2026-03-29T04:00:00+02:00")),
    ("023000", "030000", ("2026-03-29T03:30:00+02:00", "2026-03-29T04:00:00+02:00")),
    ("023000", "043000", ("2026-03-29T03:30:00+02:00", "2026-03-29T04:30:00+02:00")),
])
def test_event_starting_in_spring_gap_is_kept_at_the_shifted_time(start, end, span):
    # The start is read with the offset before the gap (RFC 5545 section 3.3.5); where the
    # wall-clock end would come at or before it, the event keeps its written length instead
    # of being dropped (never lose an event because its start fell into a gap).
    c = cal(f"SUMMARY:Gap test\nUID:gap@x\nDTSTART;TZID=Europe/Oslo:20260329T{start}\n"
            f"DTEND;TZID=Europe/Oslo:20260329T{end}")
    res = expand_calendar(c, OSLO, D(2026, 3, 29), D(2026, 3, 29), path="occ.ics")
    assert local_spans(res, OSLO) == [span]
    assert res.warnings == []


def test_duration_event_starting_in_spring_gap_keeps_its_exact_length():
    c = cal("DTSTART;TZID=Europe/Oslo:20260329T023000\nDURATION:PT1H")
    res = expand_calendar(c, OSLO, D(2026, 3, 29), D(2026, 3, 29))
    assert local_spans(res, OSLO) == [("2026-03-29T03:30:00+02:00", "2026-03-29T04:30:00+02:00")]


def test_instant_event_without_end_is_a_warning():
    c = cal("SUMMARY:Blip\nDTSTART:20260302T070000")
    res = expand_calendar(c, OSLO, D(2026, 3, 2), D(2026, 3, 2))
    assert len(res.events) == 0 and "instant" in res.warnings[0]


# -- guard rails: one hostile calendar each -------------------------------------------------
HOSTILE = [
    ("interval zero", "DTSTART:20260302T070000\nDTEND:20260302T080000\n"
     "RRULE:FREQ=DAILY;INTERVAL=0", "INTERVAL=0"),
    ("secondly", "DTSTART:20260302T070000\nDTEND:20260302T080000\nRRULE:FREQ=SECONDLY",
     "SECONDLY"),
    ("minutely", "DTSTART:20260302T070000\nDTEND:20260302T080000\nRRULE:FREQ=MINUTELY;"
     "INTERVAL=15", "MINUTELY"),
    ("unknown tzid", "DTSTART;TZID=Office/Basement:20260302T070000\n"
     "DTEND;TZID=Office/Basement:20260302T080000", "Office/Basement"),
    ("broken rrule", "DTSTART:20260302T070000\nDTEND:20260302T080000\n"
     "RRULE:FREQ=FORTNIGHTLY;BYDAY=MO", "RRULE does not parse"),
    ("bad byday", "DTSTART:20260302T070000\nDTEND:20260302T080000\nRRULE:FREQ=WEEKLY;BYDAY=XY",
     "RRULE"),
    ("no freq", "DTSTART:20260302T070000\nDTEND:20260302T080000\nRRULE:COUNT=3", "RRULE"),
    ("end before start", "DTSTART:20260302T170000\nDTEND:20260302T070000", "before DTSTART"),
    ("missing dtstart", "DTEND:20260302T070000", "no DTSTART"),
    ("dtend and duration", "DTSTART:20260302T070000\nDTEND:20260302T080000\nDURATION:PT1H",
     "both DTEND and DURATION"),
    ("mixed types", "DTSTART;VALUE=DATE:20260302\nDTEND:20260302T080000", "value type"),
    ("negative duration", "DTSTART:20260302T070000\nDURATION:-PT1H", "negative"),
    ("too dense", "DTSTART:20260302T000000\nDURATION:PT10M\nRRULE:FREQ=DAILY;"
     "BYHOUR=0,1,2,3,4,5,6,7,8,9,10,11,12,13,14,15,16,17,18,19,20,21,22,23;BYMINUTE=0,15,30,45",
     "96 starts a day"),
    ("never occurs", "DTSTART:20260302T070000\nDTEND:20260302T080000\n"
     "RRULE:FREQ=DAILY;BYMONTH=2;BYMONTHDAY=30", "can never occur"),
    ("count zero", "DTSTART:20260302T070000\nDTEND:20260302T080000\nRRULE:FREQ=DAILY;COUNT=0",
     "COUNT"),
]


@pytest.mark.parametrize("name,body,needle", HOSTILE, ids=[h[0] for h in HOSTILE])
def test_hostile_calendar_is_refused_naming_file_and_event(name, body, needle):
    c = cal(f"SUMMARY:Hostile {name}\nUID:h@x\n{body}")
    problems = check_calendar(c, path="bad.ics")
    assert problems, name
    text = str(problems[0])
    assert text.startswith("bad.ics: event 'Hostile ") and needle in text
    assert "\n" not in text
    with pytest.raises(InputError, match=needle.replace("(", r"\(")):
        expand_calendar(c, OSLO, D(2026, 3, 1), D(2026, 3, 31), path="bad.ics")


def test_every_problem_is_reported_not_just_the_first():
    c = cal("SUMMARY:A\nDTSTART:20260302T070000\nDTEND:20260302T080000\nRRULE:FREQ=SECONDLY",
            "SUMMARY:B\nDTEND:20260302T070000")
    assert len(check_calendar(c, path="bad.ics")) == 2


def test_huge_count_from_distant_start_hits_the_step_cap():
    c = cal("SUMMARY:Hourly since 1950\nDTSTART:19500101T000000\nDURATION:PT30M\n"
            "RRULE:FREQ=HOURLY;COUNT=999999999")
    with pytest.raises(InputError, match="would step .* times"):
        expand_calendar(c, OSLO, D(2026, 1, 1), D(2026, 12, 31), path="bad.ics")


def test_occurrence_cap(monkeypatch):
    # the real cap is 100,000 (documented); a small one shows the mechanism in a fast test
    monkeypatch.setattr(calendars, "MAX_OCCURRENCES", 50)
    c = cal("SUMMARY:Daily\nDTSTART:20260101T070000\nDTEND:20260101T170000\nRRULE:FREQ=DAILY")
    with pytest.raises(InputError, match="more than 50 occurrences"):
        expand_calendar(c, OSLO, D(2026, 1, 1), D(2026, 3, 31), path="busy.ics")
    assert len(expand_calendar(c, OSLO, D(2026, 1, 1), D(2026, 1, 31)).events) == 31


def test_window_longer_than_cap_is_refused():
    c = cal("DTSTART:20260302T070000\nDTEND:20260302T080000")
    last = D(2026, 1, 1) + dt.timedelta(days=calendars.MAX_WINDOW_DAYS)
    with pytest.raises(InputError, match="1101 days"):
        expand_calendar(c, OSLO, D(2026, 1, 1), last)
    expand_calendar(c, OSLO, D(2026, 1, 1), last - dt.timedelta(days=1))


def test_window_ending_before_start_is_refused():
    with pytest.raises(InputError, match="before it starts"):
        expand_calendar(cal("DTSTART:20260302T070000\nDTEND:20260302T080000"), OSLO,
                        D(2026, 3, 2), D(2026, 3, 1))


# -- calendar files (schedcheck.inputs.calendar_files) ---------------------------------------
def test_read_calendar_errors_name_the_file(tmp_path):
    from schedcheck.inputs.calendar_files import read_calendar

    with pytest.raises(InputError, match="not found"):
        read_calendar(tmp_path / "none.ics")
    (tmp_path / "notes.ics").write_text("just some notes\n", encoding="utf-8")
    with pytest.raises(InputError, match=r"notes\.ics: is not an iCalendar file"):
        read_calendar(tmp_path / "notes.ics")
    (tmp_path / "latin1.ics").write_bytes(b"BEGIN:VCALENDAR\nSUMMARY:Caf\xe9\nEND:VCALENDAR\n")
    with pytest.raises(InputError, match=r"latin1\.ics:2: is not UTF-8"):
        read_calendar(tmp_path / "latin1.ics")


def test_calendar_cut_short_names_the_unclosed_line(tmp_path):
    # a download cut off before END:VCALENDAR said only "holds no VCALENDAR"
    from schedcheck.inputs.calendar_files import read_calendar

    whole = ("BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//t//EN\r\nBEGIN:VEVENT\r\nUID:a\r\n"
             "DTSTART:20260302T070000\r\nDTEND:20260302T080000\r\nEND:VEVENT\r\n"
             "END:VCALENDAR\r\n")
    (tmp_path / "cut.ics").write_text(whole.removesuffix("END:VCALENDAR\r\n"), encoding="utf-8")
    with pytest.raises(InputError) as exc:
        read_calendar(tmp_path / "cut.ics")
    assert str(exc.value) == (f"{tmp_path / 'cut.ics'}:1: BEGIN:VCALENDAR is never closed "
                              "(no END:VCALENDAR); is the file cut short?")
    (tmp_path / "cut2.ics").write_text(whole[:whole.index("END:VEVENT")], encoding="utf-8")
    with pytest.raises(InputError, match=r"cut2\.ics:4: BEGIN:VEVENT is never closed"):
        read_calendar(tmp_path / "cut2.ics")


def test_read_calendar_merges_several_vcalendars(tmp_path):
    from schedcheck.inputs.calendar_files import read_calendar

    one = ("BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//t//EN\r\nBEGIN:VEVENT\r\nUID:{u}\r\n"
           "SUMMARY:{u}\r\nDTSTART:20260302T070000\r\nDTEND:20260302T080000\r\nEND:VEVENT\r\n"
           "END:VCALENDAR\r\n")
    (tmp_path / "two.ics").write_text(one.format(u="a") + one.format(u="b"), encoding="utf-8")
    c = read_calendar(tmp_path / "two.ics")
    assert sorted(str(e["UID"]) for e in c.walk("VEVENT")) == ["a", "b"]


def test_check_calendar_file_reports_every_problem_with_lines(tmp_path):
    from schedcheck.inputs.calendar_files import check_calendar_file

    text = ("BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//t//EN\r\n"
            "BEGIN:VEVENT\r\nUID:a@x\r\nSUMMARY:A\r\nDTSTART:20260302T070000\r\n"
            "DTEND:20260302T080000\r\nRRULE:FREQ=MINUTELY\r\nEND:VEVENT\r\n"
            "BEGIN:VEVENT\r\nUID:b@x\r\nSUMMARY:B\r\nDTEND:20260302T080000\r\nEND:VEVENT\r\n"
            "END:VCALENDAR\r\n")
    path = tmp_path / "occ.ics"
    path.write_text(text, encoding="utf-8")
    problems = [str(p) for p in check_calendar_file(path, OSLO)]
    assert problems[0].startswith(f"{path}:4: event 'A' (a@x): RRULE FREQ=MINUTELY")
    assert problems[1].startswith(f"{path}:11: event 'B' (b@x): has no DTSTART")
    good = tmp_path / "good.ics"
    good.write_text(text.replace("FREQ=MINUTELY", "FREQ=DAILY").replace(
        "DTEND:20260302T080000\r\nEND:VEVENT\r\nEND", "DTSTART:20260302T070000\r\n"
        "DTEND:20260302T080000\r\nEND:VEVENT\r\nEND"), encoding="utf-8")
    assert check_calendar_file(good, OSLO) == []


def test_x_wr_timezone_rules_follow_that_zone_wall_clock():
    # calendar programs that write X-WR-TIMEZONE mean UTC and floating times in that zone:
    # 06:00Z on a winter Monday is 07:00 in Oslo, and stays 07:00 after the spring change
    c = cal("DTSTART:20260302T060000Z\nDTEND:20260302T160000Z\nRRULE:FREQ=WEEKLY",
            head="X-WR-TIMEZONE:Europe/Oslo\r\n")
    res = expand_calendar(c, OSLO, D(2026, 3, 23), D(2026, 4, 5))
    assert [s for s, _ in local_spans(res, OSLO)] == ["2026-03-23T07:00:00+01:00",
                                                      "2026-03-30T07:00:00+02:00"]
    bad = cal("DTSTART:20260302T060000Z\nDTEND:20260302T160000Z",
              head="X-WR-TIMEZONE:Mars/Base\r\n")
    assert "X-WR-TIMEZONE 'Mars/Base'" in str(check_calendar(bad, path="g.ics")[0])


def test_descriptive_cldr_zone_name_is_understood():
    c = cal("DTSTART;TZID=W. Europe Standard Time:20260302T070000\n"
            "DTEND;TZID=W. Europe Standard Time:20260302T170000")
    res = expand_calendar(c, OSLO, D(2026, 3, 2), D(2026, 3, 2))
    assert local_spans(res, OSLO) == [("2026-03-02T07:00:00+01:00", "2026-03-02T17:00:00+01:00")]


def test_date_until_on_timed_event_keeps_the_last_day_with_a_note():
    # RFC 5545 section 3.3.10: UNTIL must have DTSTART's value type; a bare date is a common
    # slip, which the rule library would read as 00:00 UTC and so drop the last day
    c = cal("SUMMARY:Course\nDTSTART;TZID=Europe/Oslo:20260302T070000\n"
            "DTEND;TZID=Europe/Oslo:20260302T170000\nRRULE:FREQ=DAILY;UNTIL=20260305")
    res = expand_calendar(c, OSLO, D(2026, 3, 1), D(2026, 3, 31), path="c.ics")
    assert [s[:10] for s, _ in local_spans(res, OSLO)] == [
        "2026-03-02", "2026-03-03", "2026-03-04", "2026-03-05"]
    assert len(res.warnings) == 1 and "UNTIL=20260305" in res.warnings[0]
    # the caller's calendar is not changed
    assert str(c.walk("VEVENT")[0]["RRULE"]["UNTIL"][0]) == "2026-03-05"


def test_calendar_without_events_is_a_warning():
    res = expand_calendar(cal(), OSLO, D(2026, 3, 1), D(2026, 3, 31), path="empty.ics")
    assert len(res.events) == 0 and res.warnings == ["empty.ics: the calendar holds no events "
                                                     "(VEVENT)"]


def test_calendar_whose_every_event_is_cancelled_is_a_warning():
    # a calendar program's export of a series someone cancelled: no periods, and say so
    c = cal("DTSTART;TZID=Europe/Oslo:20260302T070000\nDTEND;TZID=Europe/Oslo:20260302T170000\n"
            "RRULE:FREQ=DAILY\nSTATUS:CANCELLED")
    res = expand_calendar(c, OSLO, D(2026, 3, 1), D(2026, 3, 31), path="gone.ics")
    assert len(res.events) == 0
    assert res.warnings == ["gone.ics: every event of the calendar is cancelled "
                            "(STATUS:CANCELLED), so it gives no periods"]
    # one cancelled occurrence of a live series is ordinary: no warning
    c = cal("DTSTART;TZID=Europe/Oslo:20260302T070000\nDTEND;TZID=Europe/Oslo:20260302T170000\n"
            "RRULE:FREQ=DAILY", "UID:ev0@example.org\nRECURRENCE-ID;TZID=Europe/Oslo:"
            "20260303T070000\nDTSTART;TZID=Europe/Oslo:20260303T070000\n"
            "DTEND;TZID=Europe/Oslo:20260303T170000\nSTATUS:CANCELLED")
    res = expand_calendar(c, OSLO, D(2026, 3, 1), D(2026, 3, 31), path="live.ics")
    assert len(res.events) == 29 and res.warnings == []   # 2-31 March less the 3rd


def test_mistyped_tzid_gets_a_suggestion():
    c = cal("SUMMARY:Cleaners\nDTSTART;TZID=Europe/Olso:20260302T180000\n"
            "DTEND;TZID=Europe/Olso:20260302T200000")
    assert "did you mean 'Europe/Oslo'?" in str(check_calendar(c, path="c.ics")[0])


def test_check_calendar_file_applies_window_caps_by_a_trial_year(tmp_path):
    from schedcheck.inputs.calendar_files import check_calendar_file

    path = tmp_path / "hourly.ics"
    path.write_text("BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//t//EN\r\nBEGIN:VEVENT\r\n"
                    "UID:h@x\r\nSUMMARY:Hourly since 1950\r\nDTSTART:19500101T000000\r\n"
                    "DURATION:PT30M\r\nRRULE:FREQ=HOURLY\r\nEND:VEVENT\r\nEND:VCALENDAR\r\n",
                    encoding="utf-8")
    problems = [str(p) for p in check_calendar_file(path, OSLO)]
    assert len(problems) == 1 and problems[0].startswith(f"{path}:4: event 'Hourly since 1950'")
    assert "move DTSTART closer" in problems[0]


def test_two_files_defining_one_custom_tzid_differently_each_keep_their_own(tmp_path):
    # the icalendar library kept the first VTIMEZONE parsed for a custom TZID for the whole
    # process: a second file with other daylight-saving rules under the same name was read
    # with the first file's rules (which one won depended on the order of reading)
    from schedcheck.inputs.calendar_files import read_calendar

    def write(name, vtz):
        text = ("BEGIN:VCALENDAR\r\nVERSION:2.0\r\nPRODID:-//t//EN\r\n" + vtz
                + "BEGIN:VEVENT\r\nUID:a@example.org\r\nSUMMARY:Office hours\r\n"
                "DTSTART;TZID=Dockside Eastern:20260309T070000\r\n"
                "DTEND;TZID=Dockside Eastern:20260309T180000\r\nEND:VEVENT\r\nEND:VCALENDAR\r\n")
        (tmp_path / name).write_text(text, encoding="utf-8")
        return tmp_path / name

    # rules since 2007 and before 2007 (Energy Policy Act of 2005, section 110)
    new = write("new.ics", _us_vtimezone("Dockside Eastern", "BYMONTH=3;BYDAY=2SU",
                                         "BYMONTH=11;BYDAY=1SU"))
    old = write("old.ics", _us_vtimezone("Dockside Eastern", "BYMONTH=4;BYDAY=1SU",
                                         "BYMONTH=10;BYDAY=-1SU"))
    for first, second in ((new, old), (old, new)):
        a, b = read_calendar(first), read_calendar(second)
        spans = {p.name: local_spans(expand_calendar(c, NY, D(2026, 3, 9), D(2026, 3, 9)), NY)
                 for p, c in ((first, a), (second, b))}
        assert spans["new.ics"] == [("2026-03-09T07:00:00-04:00", "2026-03-09T18:00:00-04:00")]
        assert spans["old.ics"] == [("2026-03-09T08:00:00-04:00", "2026-03-09T19:00:00-04:00")]


# -- how recurrence is read (docs/calendars.md): RFC 5545 section 3.3.10 -------------------
@pytest.mark.validation   # RFC 5545 section 3.3.10: BYHOUR etc. "MUST be ignored" on a DATE
def test_time_parts_on_an_all_day_rule_are_ignored_and_do_not_use_up_count():
    c = cal("SUMMARY:Day\nDTSTART;VALUE=DATE:20260302\nDTEND;VALUE=DATE:20260303\n"
            "RRULE:FREQ=DAILY;COUNT=3;BYHOUR=9,17;BYMINUTE=30")
    res = expand_calendar(c, OSLO, D(2026, 3, 1), D(2026, 3, 8))
    assert [s[:10] for s, _ in local_spans(res, OSLO)] == ["2026-03-02", "2026-03-03",
                                                           "2026-03-04"]
    assert any("BYHOUR/BYMINUTE ignored on an all-day event" in w for w in res.warnings)


def test_yearly_week_number_without_day_takes_dtstart_s_weekday():
    # Thursday 2026-01-15; ISO week 20 of 2026 and 2027 (date.fromisocalendar, independent)
    c = cal("DTSTART;TZID=Europe/Oslo:20260115T070000\nDTEND;TZID=Europe/Oslo:20260115T170000\n"
            "RRULE:FREQ=YEARLY;BYWEEKNO=20")
    res = expand_calendar(c, OSLO, D(2026, 5, 1), D(2027, 6, 1))
    days = sorted({s[:10] for s, _ in local_spans(res, OSLO)})
    assert days == [str(dt.date.fromisocalendar(2026, 20, 4)),
                    str(dt.date.fromisocalendar(2027, 20, 4))]


def test_weekly_setpos_off_the_week_start_is_refused_naming_file_and_event():
    c = cal("SUMMARY:First of week\nDTSTART;TZID=Europe/Oslo:20260108T070000\n"
            "DTEND;TZID=Europe/Oslo:20260108T080000\nRRULE:FREQ=WEEKLY;BYDAY=MO,WE,FR;BYSETPOS=1")
    with pytest.raises(InputError) as exc:
        expand_calendar(c, OSLO, D(2026, 1, 5), D(2026, 1, 31), path="occ.ics")
    text = str(exc.value)
    assert "occ.ics" in text and "'First of week'" in text and "BYSETPOS" in text
    assert "\n" not in text
    # on the week's first day the same rule is read as RFC 5545 says: Mondays
    ok = cal("DTSTART;TZID=Europe/Oslo:20260105T070000\nDTEND;TZID=Europe/Oslo:20260105T080000\n"
             "RRULE:FREQ=WEEKLY;BYDAY=MO,WE,FR;BYSETPOS=1;COUNT=3")
    res = expand_calendar(ok, OSLO, D(2026, 1, 5), D(2026, 1, 31))
    assert [s[:10] for s, _ in local_spans(res, OSLO)] == ["2026-01-05", "2026-01-12",
                                                           "2026-01-19"]


def test_fortnightly_rule_counts_weeks_from_dtstart_across_new_year():
    c = cal("DTSTART;TZID=Europe/Oslo:20261221T070000\nDTEND;TZID=Europe/Oslo:20261221T170000\n"
            "RRULE:FREQ=WEEKLY;INTERVAL=2;BYDAY=MO")
    res = expand_calendar(c, OSLO, D(2026, 12, 1), D(2027, 1, 31))
    assert [s[:10] for s, _ in local_spans(res, OSLO)] == ["2026-12-21", "2027-01-04",
                                                           "2027-01-18"]


def test_yearly_month_day_without_month_is_once_a_year_in_dtstart_s_month():
    # as libical reads it (src/test/icalrecur_test.txt: YEARLY;BYMONTHDAY=29 from 29 February
    # gives leap days only); the rule library alone gave the 1st of every month
    c = cal("DTSTART;VALUE=DATE:20260101\nDTEND;VALUE=DATE:20260102\n"
            "RRULE:FREQ=YEARLY;BYMONTHDAY=1")
    res = expand_calendar(c, OSLO, D(2026, 1, 1), D(2027, 4, 30))
    assert [s[:10] for s, _ in local_spans(res, OSLO)] == ["2026-01-01", "2027-01-01"]
